"""Writers: every format written and read back gives the very same triangles; the binary STL is
laid out as the STL format says (80-byte header, uint32 count, 50-byte records with a unit
normal; common practice), checked with the standard library's ``struct``."""

from __future__ import annotations

import struct

import numpy as np
import pytest

from meshprops.geometry import shapes
from meshprops.io import load_mesh
from meshprops.io.writers import write_ascii_stl, write_binary_stl, write_obj, write_ply


def _part():
    # Multiples of 1/8 survive float32 exactly; 0.1 and 1/3 do not, and test the text formats' repr.
    return shapes.merge(shapes.box((2.0, 1.0, 0.5), (1.125, -3.0, 7.25)), shapes.box((0.1, 1.0 / 3.0, 0.7), (10.0, 0.0, 0.0)))


def _as_read(path):
    return load_mesh(path, "m").triangles()


@pytest.mark.parametrize("binary", [True, False], ids=["binary", "ascii"])
def test_ply_round_trip_is_exact(tmp_path, binary):
    vertices, faces = _part()
    write_ply(tmp_path / "part.ply", vertices, faces, binary=binary)
    mesh = load_mesh(tmp_path / "part.ply", "m")
    np.testing.assert_array_equal(mesh.vertices, vertices)
    np.testing.assert_array_equal(mesh.faces, faces)


def test_obj_round_trip_is_exact(tmp_path):
    vertices, faces = _part()
    write_obj(tmp_path / "part.obj", vertices, faces, comment="two blocks\nsecond line")
    text = (tmp_path / "part.obj").read_text(encoding="utf-8")
    assert text.startswith("# two blocks\n# second line\nv ")
    mesh = load_mesh(tmp_path / "part.obj", "m")
    np.testing.assert_array_equal(mesh.vertices, vertices)
    np.testing.assert_array_equal(mesh.faces, faces)


def test_ascii_stl_round_trip_is_exact(tmp_path):
    triangles = shapes.triangles_of(*_part())
    write_ascii_stl(tmp_path / "part.stl", triangles, name="blocks")
    text = (tmp_path / "part.stl").read_text(encoding="ascii")
    assert text.startswith("solid blocks\n") and text.endswith("endsolid blocks\n")
    np.testing.assert_array_equal(_as_read(tmp_path / "part.stl"), triangles)


def test_binary_stl_round_trip_is_float32(tmp_path):
    triangles = shapes.triangles_of(*_part())
    write_binary_stl(tmp_path / "part.stl", triangles)
    # Binary STL stores float32 (STL format): the read-back is the float32 rounding of each value.
    np.testing.assert_array_equal(_as_read(tmp_path / "part.stl"), triangles.astype(np.float32).astype(np.float64))


def test_binary_stl_layout_per_the_stl_format(tmp_path):
    triangles = shapes.triangles_of(*shapes.box((2.0, 4.0, 8.0)))
    path = tmp_path / "box.stl"
    write_binary_stl(path, triangles, header=b"rover chassis")
    data = path.read_bytes()
    assert len(data) == 80 + 4 + 50 * len(triangles)
    assert data[:80] == b"rover chassis".ljust(80, b" ")
    assert struct.unpack_from("<I", data, 80) == (12,)
    for k, corners in enumerate(triangles):
        record = struct.unpack_from("<12fH", data, 84 + 50 * k)
        normal, vertices, attribute = np.array(record[:3]), np.array(record[3:12]).reshape(3, 3), record[12]
        np.testing.assert_array_equal(vertices, corners)
        # The facet normal is the unit right-hand-rule normal of the corners (outward for a closed box).
        expected = np.cross(corners[1] - corners[0], corners[2] - corners[0])
        np.testing.assert_allclose(normal, expected / np.linalg.norm(expected), atol=1e-7)
        assert np.dot(normal, corners.mean(axis=0)) > 0
        assert attribute == 0


def test_binary_stl_header_is_cut_to_80_bytes(tmp_path):
    path = tmp_path / "long.stl"
    write_binary_stl(path, shapes.triangles_of(*shapes.box()), header=b"x" * 100)
    data = path.read_bytes()
    assert data[:80] == b"x" * 80 and struct.unpack_from("<I", data, 80) == (12,)


def test_a_collapsed_triangle_gets_a_zero_normal_not_nan(tmp_path):
    triangles = np.array([[[0.0, 0.0, 0.0], [1.0, 0.0, 0.0], [2.0, 0.0, 0.0]]])  # three corners on a line
    write_ascii_stl(tmp_path / "line.stl", triangles)
    assert "facet normal 0.0 0.0 0.0" in (tmp_path / "line.stl").read_text(encoding="ascii")
