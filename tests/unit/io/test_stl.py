"""STL readers against the STL format itself: an 80-byte header, a little-endian uint32 count,
then 50-byte records of normal, three vertices (12 float32) and a uint16 attribute count (the
STL format, common practice); ASCII ``solid / facet normal / outer loop / vertex / endloop /
endfacet / endsolid``. Files here are built byte by byte with the standard library's ``struct``,
independently of meshprops' writers."""

from __future__ import annotations

import struct

import numpy as np
import pytest

from meshprops.errors import MeshFileError
from meshprops.io.mesh import STL_HEADER_BYTES, STL_RECORD
from meshprops.io.stl import read_ascii_stl, read_binary_stl

# Two triangles; every coordinate is exact in float32.
TRIANGLES = np.array(
    [
        [[0.0, 0.0, 0.0], [1.5, 0.0, 0.0], [0.0, 2.25, 0.0]],
        [[-3.0, 0.5, 1.0], [0.125, -4.0, 8.0], [6.0, 7.0, -0.75]],
    ]
)


def _binary_stl(triangles, attribute=0) -> bytes:
    data = b"made by hand".ljust(80, b"\0") + struct.pack("<I", len(triangles))
    for corners in triangles:
        data += struct.pack("<12fH", 0.0, 0.0, 1.0, *np.asarray(corners).reshape(-1), attribute)
    return data


def test_the_record_dtype_is_the_50_byte_stl_record():
    # STL format (common practice): normal at byte 0, vertices at 12, attribute count at 48, 50 bytes.
    assert STL_RECORD.itemsize == 50 == struct.calcsize("<12fH")
    assert [STL_RECORD.fields[name][1] for name in ("normal", "vertices", "attribute")] == [0, 12, 48]
    assert STL_HEADER_BYTES == 80 + 4


def test_binary_stl_reads_the_vertices_of_each_record(tmp_path):
    path = tmp_path / "pair.stl"
    data = _binary_stl(TRIANGLES, attribute=0xBEEF)  # a non-zero attribute count must not shift anything
    path.write_bytes(data)
    mesh = read_binary_stl(str(path), len(data), "mm", 0.001)
    assert mesh.file_format == "stl-binary" and mesh.face_count == 2
    np.testing.assert_array_equal(np.asarray(mesh.soup, dtype=np.float64), TRIANGLES)
    assert mesh.length_unit == "mm" and mesh.metres_per_unit == 0.001


def test_binary_stl_without_records_is_refused(tmp_path):
    path = tmp_path / "empty.stl"
    data = _binary_stl(TRIANGLES[:0])
    path.write_bytes(data)
    with pytest.raises(MeshFileError, match="no triangles"):
        read_binary_stl(str(path), len(data), "mm", 0.001)


def _ascii(triangles) -> bytes:
    lines = ["solid pair"]
    for corners in triangles:
        lines += ["facet normal 0 0 1", " outer loop"]
        lines += ["  vertex {!r} {!r} {!r}".format(*map(float, corner)) for corner in corners]
        lines += [" endloop", "endfacet"]
    return ("\n".join(lines + ["endsolid pair"]) + "\n").encode("ascii")


def test_ascii_stl_reads_every_vertex_exactly():
    mesh = read_ascii_stl("pair.stl", _ascii(TRIANGLES), "m", 1.0)
    assert mesh.file_format == "stl-ascii"
    np.testing.assert_array_equal(mesh.soup, TRIANGLES)


@pytest.mark.parametrize(
    ("edit", "match", "line"),
    [
        (lambda t: t.replace(b"endsolid pair\n", b""), "missing 'endsolid'", 15),
        (lambda t: t.replace(b"  vertex 0.0 2.25 0.0\n", b"", 1), "facet has 2 vertices", 6),
        (lambda t: t.replace(b"vertex 1.5 0.0 0.0", b"vertex 1.5 zero 0.0"), "'zero' is not a number", None),  # no line: numbers are parsed in one pass after the keywords
        (lambda t: t.replace(b"solid pair", b"slab pair", 1), "expected 'solid'", 1),
    ],
    ids=["truncated", "two-vertices", "not-a-number", "no-solid"],
)
def test_malformed_ascii_stl_names_the_problem_and_line(edit, match, line):
    with pytest.raises(MeshFileError, match=match) as caught:
        read_ascii_stl("pair.stl", edit(_ascii(TRIANGLES)), "m", 1.0)
    assert caught.value.line == line
