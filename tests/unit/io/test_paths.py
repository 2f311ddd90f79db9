"""An output path that resolves to an input is refused (same path, relative, symlink, hard link)."""

from __future__ import annotations

import os

import pytest

from meshprops.errors import MeshpropsError, OutputFileError
from meshprops.io.paths import refuse_output_over_inputs, same_file


@pytest.fixture
def part(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "sub").mkdir()
    path = tmp_path / "part.stl"
    path.write_bytes(b"solid part\nendsolid part\n")
    return path


def test_same_path_is_refused(part):
    with pytest.raises(OutputFileError) as caught:
        refuse_output_over_inputs("part.stl", ["part.stl"])
    assert isinstance(caught.value, MeshpropsError) and isinstance(caught.value, OSError)
    assert "input file part.stl" in str(caught.value) and "nothing was read or written" in str(caught.value)


@pytest.mark.parametrize("spelling", ["./part.stl", "sub/../part.stl", "ABSOLUTE"])
def test_other_spellings_of_the_same_path_are_refused(part, spelling):
    output = str(part) if spelling == "ABSOLUTE" else spelling
    with pytest.raises(OutputFileError):
        refuse_output_over_inputs(output, ["other.obj", "part.stl"])


def test_a_symlink_to_an_input_is_refused(part):
    os.symlink("part.stl", "link.stl")
    with pytest.raises(OutputFileError, match="resolves to the input file"):
        refuse_output_over_inputs("link.stl", [str(part)])
    with pytest.raises(OutputFileError):  # and the other way round: the input is the link
        refuse_output_over_inputs(str(part), ["link.stl"])


def test_a_hard_link_to_an_input_is_refused(part):
    os.link("part.stl", "hard.stl")
    assert same_file("hard.stl", "part.stl")
    with pytest.raises(OutputFileError):
        refuse_output_over_inputs("hard.stl", ["part.stl"])


def test_other_outputs_pass(part):
    refuse_output_over_inputs("report.json", ["part.stl"])
    refuse_output_over_inputs("sub/part.stl", ["part.stl"])
    refuse_output_over_inputs(None, ["part.stl"])
    assert not same_file("missing.json", "part.stl")
