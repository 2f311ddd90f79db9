"""Operating-system errors on input files become one MeshFileError naming the file."""

from __future__ import annotations

import os

import pytest

from meshprops.errors import MeshFileError
from meshprops.io.reading import file_errors


def _open(path):
    with file_errors(str(path)), open(path, "rb") as handle:
        return handle.read()


def test_a_missing_file(tmp_path):
    with pytest.raises(MeshFileError, match="missing.stl: no such file"):
        _open(tmp_path / "missing.stl")


def test_a_folder(tmp_path):
    with pytest.raises(MeshFileError, match="is a directory"):
        _open(tmp_path)


@pytest.mark.skipif(os.geteuid() == 0, reason="root reads files whatever their mode")
def test_an_unreadable_file(tmp_path):
    path = tmp_path / "locked.stl"
    path.write_bytes(b"solid x")
    path.chmod(0)
    with pytest.raises(MeshFileError, match="cannot read"):
        _open(path)


def test_other_errors_pass_through(tmp_path):
    with pytest.raises(ZeroDivisionError), file_errors("x.stl"):
        1 / 0
