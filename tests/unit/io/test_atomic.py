"""Atomic report writing: the whole text or nothing, no temporary file left behind, the old file
kept when writing fails, and one ``OutputFileError`` for an unwritable place."""

from __future__ import annotations

import os
import stat

import pytest

from meshprops.errors import MeshpropsError, OutputFileError
from meshprops.io.atomic import write_atomically


def test_writes_the_whole_text_and_leaves_no_temporary_file(tmp_path):
    target = tmp_path / "report.json"
    text = '{"mass": 0.125}\n' + "é∑ unicode survives\n" * 1000
    write_atomically(str(target), text)
    assert target.read_text(encoding="utf-8") == text
    assert os.listdir(tmp_path) == ["report.json"]


def test_replaces_an_existing_file(tmp_path):
    target = tmp_path / "report.txt"
    target.write_text("old report\n", encoding="utf-8")
    write_atomically(str(target), "new report\n")
    assert target.read_text(encoding="utf-8") == "new report\n"
    assert os.listdir(tmp_path) == ["report.txt"]


def test_a_failed_write_keeps_the_old_file_and_removes_the_temporary_one(tmp_path):
    target = tmp_path / "report.txt"
    target.write_text("old report\n", encoding="utf-8")
    # A lone surrogate cannot be encoded as UTF-8 (Python's codec raises UnicodeEncodeError,
    # stdlib behaviour): the write fails after the temporary file was created.
    with pytest.raises(UnicodeEncodeError):
        write_atomically(str(target), "half of a report, then \ud800")
    assert target.read_text(encoding="utf-8") == "old report\n"
    assert os.listdir(tmp_path) == ["report.txt"]


def test_a_missing_folder_is_one_output_file_error(tmp_path):
    target = tmp_path / "no" / "such" / "folder" / "report.txt"
    with pytest.raises(OutputFileError) as caught:
        write_atomically(str(target), "text")
    error = caught.value
    assert isinstance(error, MeshpropsError) and isinstance(error, OSError)
    assert str(target) in str(error) and "cannot write output" in str(error)
    assert "\n" not in str(error)
    assert not (tmp_path / "no").exists()


def test_a_folder_in_the_way_is_one_output_file_error(tmp_path):
    target = tmp_path / "report.txt"
    target.mkdir()
    with pytest.raises(OutputFileError, match="cannot write output"):
        write_atomically(str(target), "text")
    assert os.listdir(tmp_path) == ["report.txt"] and target.is_dir()


posix_only = pytest.mark.skipif(os.name != "posix", reason="POSIX permission bits")


@posix_only
def test_a_new_report_gets_the_permissions_of_a_plain_open(tmp_path):
    plain, atomic = tmp_path / "plain.txt", tmp_path / "atomic.txt"
    with open(plain, "w", encoding="utf-8") as handle:  # what the umask gives (POSIX open(2), stdlib)
        handle.write("x")
    write_atomically(str(atomic), "x")
    assert stat.S_IMODE(atomic.stat().st_mode) == stat.S_IMODE(plain.stat().st_mode)


@posix_only
def test_replacing_a_report_keeps_its_permissions(tmp_path):
    target = tmp_path / "report.txt"
    target.write_text("old", encoding="utf-8")
    os.chmod(target, 0o640)
    write_atomically(str(target), "new")
    assert stat.S_IMODE(target.stat().st_mode) == 0o640 and target.read_text(encoding="utf-8") == "new"


def test_a_stream_replaces_the_file_only_when_its_block_ends(tmp_path):
    from meshprops.io.atomic import atomic_stream

    target = tmp_path / "lines.jsonl"
    target.write_text("old\n")
    with atomic_stream(str(target)) as write:
        write('{"source": "a.stl"}\n')
        assert target.read_text() == "old\n"  # nothing replaced half-way
        write('{"source": "b.stl"}\n')
    assert target.read_text() == '{"source": "a.stl"}\n{"source": "b.stl"}\n'
    with pytest.raises(KeyError):
        with atomic_stream(str(target)) as write:
            write("partial\n")
            raise KeyError("stopped")
    assert target.read_text() == '{"source": "a.stl"}\n{"source": "b.stl"}\n'
    assert sorted(os.listdir(tmp_path)) == ["lines.jsonl"]  # the temporary file is gone
    with pytest.raises(OutputFileError):
        with atomic_stream(str(tmp_path / "missing" / "lines.jsonl")):
            pass
