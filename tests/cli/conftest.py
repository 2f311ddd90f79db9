"""Fixtures shared by the command-line tests of the gate (check, baseline, budget)."""

import pytest
from parts import write_box


@pytest.fixture
def folder(tmp_path, monkeypatch):
    """A repository folder (the working directory) with two exported parts in millimetres."""
    monkeypatch.chdir(tmp_path)
    write_box(tmp_path / "exports" / "plate.stl", (100.0, 60.0, 10.0))  # 60 cm^3
    write_box(tmp_path / "exports" / "sub" / "bracket.stl", (40.0, 20.0, 5.0))  # 4 cm^3
    return tmp_path
