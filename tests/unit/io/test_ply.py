"""The PLY reader against the PLY format (common practice): an ASCII header ending in
``end_header``, then the elements in order, as text or as binary in the declared byte order;
faces are lists with their own count type. Binary bodies here are built with ``struct``."""

from __future__ import annotations

import struct

import numpy as np
import pytest

from meshprops.errors import MeshFileError
from meshprops.io.ply import read_ply

VERTICES = [[0.0, 0.0, 0.0], [1.0, 0.0, 0.0], [1.0, 1.0, 0.0], [0.0, 1.0, 0.25]]


def _header(encoding: str, vertex_type: str = "float", extra: str = "") -> bytes:
    return (
        f"ply\nformat {encoding} 1.0\ncomment hand made\nelement vertex 4\nproperty {vertex_type} x\n"
        f"property {vertex_type} y\nproperty {vertex_type} z\n{extra}element face 2\n"
        "property list uchar int vertex_indices\nend_header\n"
    ).encode("ascii")


def test_ascii_ply_with_a_quad_and_a_triangle():
    body = "\n".join(" ".join(repr(c) for c in v) for v in VERTICES) + "\n4 0 1 2 3\n3 0 2 1\n"
    mesh = read_ply("mixed.ply", _header("ascii") + body.encode("ascii"), "m", 1.0)
    np.testing.assert_array_equal(mesh.vertices, VERTICES)
    # The quad is fan-triangulated from its first corner; the triangle stays as it is.
    np.testing.assert_array_equal(mesh.faces, [[0, 1, 2], [0, 2, 3], [0, 2, 1]])
    assert mesh.file_format == "ply-ascii"


@pytest.mark.parametrize(("order", "encoding"), [("<", "binary_little_endian"), (">", "binary_big_endian")])
def test_binary_ply_in_either_byte_order(order, encoding):
    body = b"".join(struct.pack(order + "3f", *v) for v in VERTICES)
    body += struct.pack(order + "B3i", 3, 0, 1, 2) + struct.pack(order + "B3i", 3, 0, 2, 3)
    mesh = read_ply("binary.ply", _header(encoding) + body, "m", 1.0)
    np.testing.assert_array_equal(mesh.vertices, VERTICES)
    np.testing.assert_array_equal(mesh.faces, [[0, 1, 2], [0, 2, 3]])
    assert mesh.vertices.dtype == np.float64 and mesh.file_format == "ply-binary"


def test_extra_vertex_properties_do_not_shift_the_coordinates():
    header = _header("binary_little_endian", "double", extra="").replace(
        b"property double z\n", b"property double z\nproperty uchar red\n"
    )
    body = b"".join(struct.pack("<3dB", *v, 200) for v in VERTICES)
    body += struct.pack("<B3i", 3, 0, 1, 2) * 2
    mesh = read_ply("coloured.ply", header + body, "m", 1.0)
    np.testing.assert_array_equal(mesh.vertices, VERTICES)


@pytest.mark.parametrize(
    ("data", "match"),
    [
        (b"ply\nformat ascii 1.0\nelement vertex 0\n", "no 'end_header'"),
        (b"ply\nelement vertex 0\nelement face 0\nend_header\n", "no 'format' line"),
        (b"ply\nformat ascii 1.0\nelement vertex 1\nproperty float x\nend_header\n0\n", "'vertex' and a 'face'"),
        (_header("ascii") + b"0 0 0\n1 0 0\n1 1 0\n0 1 0\n3 0 1 9\n3 0 1 2\n", "out of range 0..3"),
        (_header("ascii") + b"0 0 0\n1 0 0\n1 1 0\n0 1 0\n3 0 1 2\n", "truncated"),
        (_header("binary_little_endian") + b"\0" * 20, "truncated inside element 'vertex'"),
    ],
    ids=["no-end", "no-format", "no-face", "index-out-of-range", "ascii-truncated", "binary-truncated"],
)
def test_malformed_ply_names_the_problem(data, match):
    with pytest.raises(MeshFileError, match=match):
        read_ply("bad.ply", data, "m", 1.0)
