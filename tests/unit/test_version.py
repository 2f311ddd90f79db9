"""One version: the installed distribution's metadata (what pip and ``importlib.metadata`` report,
standard library) says the same as ``meshprops.version.__version__``, the one place it is set."""

from __future__ import annotations

import re
from importlib.metadata import version as installed_version

from meshprops import version


def test_the_installed_distribution_has_the_module_version():
    assert installed_version("meshprops") == version.__version__


def test_the_version_is_a_release_number():
    # MAJOR.MINOR.PATCH with an optional pre-release or local part (PEP 440 public versions, common practice).
    assert re.fullmatch(r"\d+\.\d+\.\d+([.-]?(a|b|rc|dev|post)\d*)*(\+[\w.]+)?", version.__version__)


def test_output_documents_carry_this_version():
    from meshprops.output.serialize import check_document

    assert check_document([], input_length_unit="mm")["meshprops_version"] == version.__version__
