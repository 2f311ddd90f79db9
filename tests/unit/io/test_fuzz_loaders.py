"""Loader hardening (issue 4, item 5): random bytes and mutations of small valid files of every
format never crash the loaders, validation or the CLI with a traceback, and never hang.

Every input either loads as a :class:`meshprops.Mesh` (and then validates and measures, with
any problem reported as findings or a :class:`MeshpropsError`) or is refused with a
:class:`MeshFileError` whose message is one line.
"""

from __future__ import annotations

import os
import re
import struct
import subprocess
import sys
import tempfile
import warnings
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from typer.testing import CliRunner

from meshprops import Mesh, MeshFileError, MeshpropsError, load_mesh, measure_mesh
from meshprops.cli import app
from meshprops.geometry import shapes
from meshprops.io import writers
from meshprops.validation.solid import check_mesh


def _seed_files() -> dict[str, bytes]:
    """A small closed part (a 12-triangle box plus an offset cube: 24 faces) in every format."""
    vertices, faces = shapes.merge(shapes.box((4.0, 3.0, 2.0)), shapes.box((1.0, 1.0, 1.0), (5.0, 0.0, 0.0)))
    seeds = {}
    with tempfile.TemporaryDirectory() as directory:
        root = Path(directory)
        writers.write_binary_stl(root / "a.stl", shapes.triangles_of(vertices, faces), header=b"solid box (binary)")
        writers.write_ascii_stl(root / "b.stl", shapes.triangles_of(vertices, faces))
        writers.write_obj(root / "c.obj", vertices, faces, comment="fuzz seed")
        writers.write_ply(root / "d.ply", vertices, faces, binary=False)
        writers.write_ply(root / "e.ply", vertices, faces, binary=True)
        for name, path in (("stl-binary", "a.stl"), ("stl-ascii", "b.stl"), ("obj", "c.obj"), ("ply-ascii", "d.ply"), ("ply-binary", "e.ply")):
            seeds[name] = (root / path).read_bytes()
    header = (
        f"ply\nformat binary_big_endian 1.0\nelement vertex {len(vertices)}\nproperty float x\nproperty float y\n"
        f"property float z\nelement face {len(faces)}\nproperty list uchar int vertex_indices\nend_header\n"
    ).encode()
    table = np.zeros(len(faces), dtype=[("n", "u1"), ("i", ">i4", (3,))])
    table["n"], table["i"] = 3, faces
    seeds["ply-binary-big-endian"] = header + vertices.astype(">f4").tobytes() + table.tobytes()
    return seeds


SEEDS = _seed_files()
EXTENSION = {"stl-binary": ".stl", "stl-ascii": ".stl", "obj": ".obj", "ply-ascii": ".ply", "ply-binary": ".ply",
             "ply-binary-big-endian": ".ply"}  # fmt: skip
KEYWORDS = [b"float", b"double", b"int", b"uint", b"uchar", b"list", b"vertex", b"face", b"element", b"property",
            b"vertex_indices", b"format", b"ascii", b"binary_big_endian", b"end_header", b"v", b"f", b"vn", b"o",
            b"solid", b"endsolid", b"facet", b"normal", b"outer", b"loop", b"endloop", b"endfacet", b"1/2/3", b"-1"]  # fmt: skip
NASTY_TOKENS = [b"nan", b"-inf", b"1e999", b"-0", b"0x1F", b"", b"99999999999999999999", b"-1", b"4294967296",
                b"3", b"0", b"1.5", b"facet", b"endloop", b"vertex", b"\xff\xfe", b"1e-320", b"end_header"]  # fmt: skip


@st.composite
def mutated(draw):
    """A seed file with a few random edits: byte changes, cuts, insertions, token swaps, count fields."""
    name = draw(st.sampled_from(sorted(SEEDS)))
    data = bytearray(SEEDS[name])
    for _ in range(draw(st.integers(1, 4))):
        operation = draw(
            st.sampled_from(
                ["flip", "set", "delete", "insert", "truncate", "token", "count", "duplicate", "word", "line", "record"]
            )
        )
        position = draw(st.integers(0, max(0, len(data) - 1)))
        if operation == "flip" and data:
            data[position] ^= 1 << draw(st.integers(0, 7))
        elif operation == "set" and data:
            data[position] = draw(st.integers(0, 255))
        elif operation == "delete":
            del data[position : position + draw(st.integers(1, 64))]
        elif operation == "insert":
            data[position:position] = draw(st.binary(min_size=1, max_size=16))
        elif operation == "truncate":
            del data[position:]
        elif operation == "token":
            tokens = bytes(data).split(b" ")
            if len(tokens) > 1:
                index = draw(st.integers(0, len(tokens) - 1))
                tokens[index] = draw(st.sampled_from(NASTY_TOKENS))
                data = bytearray(b" ".join(tokens))
        elif operation == "count" and len(data) >= 84:
            data[80:84] = struct.pack("<I", draw(st.sampled_from([0, 1, 23, 25, 2**31, 2**32 - 1])))
        elif operation == "duplicate" and data:
            end = min(len(data), position + draw(st.integers(1, 200)))
            data[end:end] = data[position:end]
        elif operation == "word":  # swap one whitespace-separated word for a keyword of some format
            parts = re.split(rb"(\s+)", bytes(data))
            words = [k for k in range(0, len(parts), 2) if parts[k]]
            if words:
                parts[draw(st.sampled_from(words))] = draw(st.sampled_from(KEYWORDS + NASTY_TOKENS))
                data = bytearray(b"".join(parts))
        elif operation == "line":  # drop or repeat a whole line: loadable meshes with holes or duplicates
            lines = bytes(data).split(b"\n")
            index = draw(st.integers(0, len(lines) - 1))
            if draw(st.booleans()):
                del lines[index]
            else:
                lines.insert(index, lines[index])
            data = bytearray(b"\n".join(lines))
        elif operation == "record" and name == "stl-binary" and len(data) >= 134:
            # drop, repeat or flip a whole 50-byte triangle and keep the header count honest
            count = (len(data) - 84) // 50
            index = draw(st.integers(0, count - 1))
            record = bytes(data[84 + 50 * index : 134 + 50 * index])
            choice = draw(st.sampled_from(["drop", "repeat", "flip"]))
            if choice == "drop":
                del data[84 + 50 * index : 134 + 50 * index]
            elif choice == "repeat":
                data[84 + 50 * index : 84 + 50 * index] = record
            else:
                data[84 + 50 * index : 134 + 50 * index] = record[:12] + record[24:36] + record[12:24] + record[36:]
            data[80:84] = struct.pack("<I", (len(data) - 84) // 50)
    return EXTENSION[name], bytes(data)


@st.composite
def random_bytes(draw):
    prefix = draw(st.sampled_from([b"", b"solid ", b"solid x\nfacet normal 0 0 1\n", b"ply\n", b"ply\nformat ascii 1.0\n",
                                   b"v 1 2 3\n", b"f 1 2 3\n", b"\x00" * 80]))  # fmt: skip
    return draw(st.sampled_from([".stl", ".obj", ".ply", ".mesh", ""])), prefix + draw(st.binary(max_size=300))


def _exercise(extension: str, data: bytes) -> None:
    """Load; on success validate and measure. Only meshprops' own errors may come out, and no
    warning either (numpy's RuntimeWarnings would print extra lines on the command line)."""
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        _load_and_measure(extension, data)


def _load_and_measure(extension: str, data: bytes) -> None:
    handle, name = tempfile.mkstemp(suffix=extension)
    try:
        with os.fdopen(handle, "wb") as stream:
            stream.write(data)
        try:
            mesh = load_mesh(name, "mm")
        except MeshFileError as error:
            message = str(error)
            assert message and "\n" not in message and name in message
            return
        assert isinstance(mesh, Mesh) and mesh.face_count > 0
        try:
            body = measure_mesh(mesh, density=1000.0, on_invalid="report")
            assert body.valid == (body.properties is not None)
            check_mesh(mesh)
            measure_mesh(mesh, density=1000.0, on_invalid="report", repair=True)
        except MeshpropsError as error:
            assert str(error) and "\n" not in str(error)
    finally:
        os.unlink(name)


FUZZ = settings(max_examples=250, deadline=5000, suppress_health_check=[HealthCheck.too_slow], database=None)


@FUZZ
@given(mutated())
def test_mutated_files_load_or_are_refused_with_one_line(case):
    _exercise(*case)


@settings(max_examples=150, deadline=5000, database=None)
@given(random_bytes())
def test_random_bytes_load_or_are_refused_with_one_line(case):
    _exercise(*case)


@pytest.mark.parametrize("name", sorted(SEEDS))
def test_every_seed_is_a_sound_mesh(name, tmp_path):
    path = tmp_path / f"seed{EXTENSION[name]}"
    path.write_bytes(SEEDS[name])
    body = measure_mesh(load_mesh(path, "mm"), density=1000.0, on_invalid="report")
    assert body.valid and body.properties.volume == pytest.approx((24.0 + 1.0) * 1e-9, rel=1e-12)


PLY_HEAD = b"ply\nformat ascii 1.0\nelement vertex 3\nproperty float x\nproperty float y\nproperty float z\nelement face 1\n"
PLY_TRIANGLE = b"0 0 0\n1 0 0\n0 1 0\n"

BROKEN = {
    "scalar-indices.ply": PLY_HEAD + b"property int vertex_indices\nend_header\n" + PLY_TRIANGLE + b"2\n",
    "nan-list-length.ply": PLY_HEAD + b"property list uchar int vertex_indices\nend_header\n" + PLY_TRIANGLE + b"nan 0 1 2\n",
    "infinite-index.ply": PLY_HEAD + b"property list uchar int vertex_indices\nend_header\n" + PLY_TRIANGLE + b"3 0 inf 2\n",
    "property-twice.ply": PLY_HEAD.replace(b"property float y", b"property float x")
    + b"property list uchar int vertex_indices\nend_header\n" + PLY_TRIANGLE + b"3 0 1 2\n",
    "float-indices.ply": PLY_HEAD.replace(b"ascii", b"binary_little_endian")
    + b"property list uchar float vertex_indices\nend_header\n"
    + np.array([0, 0, 0, 1, 0, 0, 0, 1, 0], "<f4").tobytes()
    + bytes([3])
    + np.array([0, np.nan, 1.5], "<f4").tobytes(),
    "truncated.stl": SEEDS["stl-binary"][:-7],
    "header-lies.stl": SEEDS["stl-binary"][:80] + struct.pack("<I", 2**32 - 1) + SEEDS["stl-binary"][84:],
    "bad-index.obj": SEEDS["obj"] + b"f 1 2 999\n",
    "absurd-coordinate.obj": SEEDS["obj"].replace(b"v -2.0 ", b"v -2e200 ", 1),
    "not-a-number.ply": SEEDS["ply-ascii"].replace(b"\n-2.0 ", b"\nminus-two ", 1),
    "noise.mesh": bytes(range(256)) * 3,
}


@pytest.mark.parametrize("name", sorted(BROKEN))
@pytest.mark.parametrize("command", ["measure", "check"])
def test_the_command_line_refuses_broken_files_with_one_line(name, command, tmp_path):
    path = tmp_path / name
    path.write_bytes(BROKEN[name])
    result = CliRunner().invoke(app, [command, str(path)])
    assert result.exit_code == 2, result.output
    lines = [line for line in result.stderr.splitlines() if line.strip()]
    assert len(lines) == 1 and lines[0].startswith("meshprops: error: ") and str(path) in lines[0]
    # The report still lists the file, as unreadable (issue 9: every file reported).
    assert "Traceback" not in result.output and str(path) in result.stdout and "unreadable" not in lines[0]
    assert "could not be read" in result.stdout or "unreadable" in result.stdout


@pytest.mark.parametrize("name", ["truncated.stl", "noise.mesh"])
def test_the_installed_entry_point_refuses_broken_files_with_one_line(name, tmp_path):
    path = tmp_path / name
    path.write_bytes(BROKEN[name])
    done = subprocess.run([sys.executable, "-m", "meshprops", "check", str(path)], capture_output=True, text=True, timeout=60)
    assert done.returncode == 2
    assert str(path) in done.stdout and "could not be read" in done.stdout and "Traceback" not in done.stderr
    assert len(done.stderr.strip().splitlines()) == 1 and str(path) in done.stderr
