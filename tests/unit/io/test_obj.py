"""The OBJ reader against the Wavefront OBJ format (common practice): ``v x y z [w]``, ``f`` with
1-based or negative (relative) indices and ``v/vt/vn`` forms, polygons, statements that carry no
volume skipped."""

from __future__ import annotations

import numpy as np
import pytest

from meshprops.errors import MeshFileError
from meshprops.io.obj import read_obj


def test_vertices_and_triangles_with_one_based_indices():
    text = b"# a right triangle and one more\nv 0 0 0\nv 2.5 0 0\nv 0 1e-3 0\nv 1 1 1 1.0\nf 1 2 3\nf 4 3 2\n"
    mesh = read_obj("two.obj", text, "mm", 0.001)
    np.testing.assert_array_equal(mesh.vertices, [[0, 0, 0], [2.5, 0, 0], [0, 1e-3, 0], [1, 1, 1]])
    np.testing.assert_array_equal(mesh.faces, [[0, 1, 2], [3, 2, 1]])
    assert mesh.faces.dtype == np.int64 and mesh.file_format == "obj"


def test_a_polygon_is_fan_triangulated_from_its_first_corner():
    text = b"v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\nv -1 0.5 0\nf 1/1/1 2/2/2 3//3 4 5\n"
    mesh = read_obj("pentagon.obj", text, "m", 1.0)
    np.testing.assert_array_equal(mesh.faces, [[0, 1, 2], [0, 2, 3], [0, 3, 4]])


def test_negative_indices_count_back_from_the_last_vertex_read():
    # OBJ: -1 is the most recently defined vertex (common practice).
    text = b"v 0 0 0\nv 1 0 0\nv 0 1 0\nf -3 -2 -1\nv 0 0 1\nf -4 -1 -3\n"
    mesh = read_obj("relative.obj", text, "m", 1.0)
    np.testing.assert_array_equal(mesh.faces, [[0, 1, 2], [0, 3, 1]])


def test_normals_texture_groups_and_materials_are_skipped():
    text = b"mtllib a.mtl\no part\ng side\nusemtl pla\ns 1\nv 0 0 0\nv 1 0 0\nv 0 1 0\nvn 0 0 1\nvt 0 0\nf 1 2 3\nl 1 2\n"
    assert read_obj("skips.obj", text, "m", 1.0).face_count == 1


@pytest.mark.parametrize(
    ("text", "match", "line"),
    [
        (b"v 0 0 0\nv 1 0 0\nv 0 1 0\nf 0 1 2\n", "index 0", 4),
        (b"v 0 0 0\nv 1 0 0\nf 1 2 3\nv 0 1 0\n", "not defined before it", 3),
        (b"v 0 0\n", "found 2 values", 1),
        (b"v 0 0 zero\n", "'zero' is not a number", 1),
        (b"v 0 0 0\nv 1 0 0\nf 1 2\n", "face has 2 vertices", 3),
        (b"v 0 0 0\ncurv 1 2\n", "unknown OBJ statement 'curv'", 2),
        (b"v 0 0 0\n", "no faces", None),
    ],
    ids=["index-zero", "forward-reference", "short-vertex", "not-a-number", "two-corners", "unknown", "no-faces"],
)
def test_malformed_obj_names_the_problem_and_line(text, match, line):
    with pytest.raises(MeshFileError, match=match) as caught:
        read_obj("bad.obj", text, "m", 1.0)
    assert caught.value.line == line


def test_text_that_is_not_utf8_is_refused_with_the_offset():
    with pytest.raises(MeshFileError, match="not UTF-8 text.*offset 7"):
        # bytes 0-4 "# caf", 5-6 a UTF-8 "é", 7 a byte no UTF-8 text holds
        read_obj("latin.obj", b"# caf\xc3\xa9\xff\nv 0 0 0\n", "m", 1.0)
