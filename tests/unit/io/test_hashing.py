"""Content hashes against the standard library's SHA-256 of the same bytes (FIPS 180-4 test vector)."""

from __future__ import annotations

import hashlib

import pytest

from meshprops.errors import MeshFileError
from meshprops.io.hashing import file_sha256


def test_the_published_test_vector_of_abc(tmp_path):
    # FIPS 180-4 / NIST example: SHA-256("abc") (from memory; also what hashlib gives).
    path = tmp_path / "abc.bin"
    path.write_bytes(b"abc")
    assert file_sha256(path) == "sha256:ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"


def test_a_file_larger_than_one_block_hashes_as_a_whole(tmp_path):
    data = bytes(range(256)) * 9000  # 2.3 MB: three blocks
    path = tmp_path / "big.bin"
    path.write_bytes(data)
    assert file_sha256(path) == "sha256:" + hashlib.sha256(data).hexdigest()


def test_one_changed_byte_changes_the_hash(tmp_path):
    path = tmp_path / "part.stl"
    path.write_bytes(b"\0" * 200)
    before = file_sha256(path)
    path.write_bytes(b"\0" * 199 + b"\1")
    assert file_sha256(path) != before


def test_a_missing_file_is_a_mesh_file_error(tmp_path):
    with pytest.raises(MeshFileError, match="no such file"):
        file_sha256(tmp_path / "missing.stl")


def test_a_fresh_file_gives_no_stamp_to_remember(tmp_path):
    # Written just now: a write within the file system's time resolution could keep the stamp.
    from meshprops.io.hashing import hash_and_stamp

    path = tmp_path / "part.stl"
    path.write_bytes(b"abc")
    assert hash_and_stamp(path) == (file_sha256(path), None)


def test_a_settled_file_gives_its_stamp_and_a_write_moves_it(tmp_path, monkeypatch):
    import os

    from meshprops.io import hashing

    monkeypatch.setattr(hashing, "SETTLED_NANOSECONDS", 0)  # as if written long ago
    path = tmp_path / "part.stl"
    path.write_bytes(b"abc")
    digest, stamp = hashing.hash_and_stamp(path)
    assert digest == "sha256:" + hashlib.sha256(b"abc").hexdigest()
    assert stamp == hashing.FileStamp.of(os.stat(path)) == hashing.stamp_of(path)
    assert stamp.text() == f"{stamp.device}:{stamp.inode}:{stamp.size}:{stamp.mtime_ns}:{stamp.ctime_ns}"
    before = os.stat(path)
    path.write_bytes(b"abd")  # the same size; setting the old times back leaves the change time moved
    os.utime(path, ns=(before.st_atime_ns, before.st_mtime_ns))
    assert hashing.stamp_of(path) != stamp
    assert hashing.stamp_of(tmp_path / "gone.stl") is None


def test_a_file_system_without_times_gives_no_stamp(tmp_path, monkeypatch):
    import os

    from meshprops.io import hashing

    monkeypatch.setattr(hashing, "SETTLED_NANOSECONDS", 0)
    path = tmp_path / "part.stl"
    path.write_bytes(b"abc")
    os.utime(path, ns=(0, 0))  # modification time 0, as some network and FUSE file systems report
    assert hashing.hash_and_stamp(path)[1] is None
