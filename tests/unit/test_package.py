"""The package root loads its public names on first use: importing it (as ``python -m meshprops``
does first) costs no numpy, and every public name and subpackage is still there."""

from __future__ import annotations

import subprocess
import sys


def _fresh(code: str) -> str:
    return subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.strip()


def test_importing_the_package_or_the_command_line_loads_no_numpy():
    assert _fresh("import sys, meshprops, meshprops.cli.app; print('numpy' in sys.modules)") == "False"
    # the whole help text, every command registered, still without numpy
    code = (
        "import sys, contextlib, io\n"
        "from meshprops.cli.app import main\n"
        "with contextlib.redirect_stdout(io.StringIO()) as text:\n"
        "    try:\n        main(['--help'])\n    except SystemExit:\n        pass\n"
        "print('numpy' in sys.modules, 'check' in text.getvalue() and 'measure' in text.getvalue())"
    )
    assert _fresh(code) == "False True"


def test_every_public_name_and_subpackage_is_reachable():
    code = (
        "import meshprops\n"
        "missing = [name for name in meshprops.__all__ if getattr(meshprops, name, None) is None]\n"
        "print(missing, meshprops.physics.mass.MassProperties is meshprops.MassProperties,"
        " meshprops.io.loaders.load_mesh is meshprops.load_mesh, set(meshprops.__all__) <= set(dir(meshprops)))"
    )
    assert _fresh(code) == "[] True True True"


def test_an_unknown_name_is_an_attribute_error():
    import pytest

    import meshprops

    with pytest.raises(AttributeError, match="no attribute 'no_such_name'"):
        meshprops.no_such_name  # noqa: B018
