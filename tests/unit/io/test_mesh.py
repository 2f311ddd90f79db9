"""The Mesh container: triangles in metres in bounded chunks, ``relative_to`` subtracted in the
file's unit before the conversion (exact), the in-memory constructors' checks, and the
coordinate checks every loaded mesh passes."""

from __future__ import annotations

import numpy as np
import pytest

from meshprops.errors import MeshFileError, UnitError
from meshprops.geometry import shapes
from meshprops.io import load_mesh
from meshprops.io.mesh import (
    MAX_ABS_COORDINATE,
    Mesh,
    checked_mesh,
    mesh_from_arrays,
    mesh_from_triangles,
)
from meshprops.io.writers import write_binary_stl

FAR = 1.0e7  # mm: a part 10 km from the file's origin


def _far_box():
    """A box whose corners are FAR + multiples of 1/8 mm: exact in float64 (and their differences too)."""
    return shapes.box((0.25, 0.5, 0.125), (FAR + 0.125, -FAR, FAR / 2))


def test_chunks_are_bounded_in_order_and_cover_every_face():
    vertices, faces = shapes.uv_sphere(1.0, rings=6, sections=8)
    mesh = mesh_from_arrays(vertices, faces, length_unit="mm")
    chunks = list(mesh.triangle_chunks(chunk_faces=7))
    assert [len(c) for c in chunks] == [7] * (mesh.face_count // 7) + ([mesh.face_count % 7] if mesh.face_count % 7 else [])
    np.testing.assert_array_equal(np.concatenate(chunks), shapes.triangles_of(vertices, faces) * 0.001)
    np.testing.assert_array_equal(mesh.triangles(), np.concatenate(chunks))


@pytest.mark.parametrize("representation", ["indexed", "soup", "binary-stl"])
def test_relative_to_subtracts_in_the_file_unit_before_converting(tmp_path, representation):
    vertices, faces = _far_box()
    if representation == "indexed":
        mesh = mesh_from_arrays(vertices, faces, length_unit="mm")
    elif representation == "soup":
        mesh = mesh_from_triangles(shapes.triangles_of(vertices, faces), length_unit="mm")
    else:  # float32 in the file: FAR = 1e7 and steps of 1/8 need 27 bits, so use a nearer part there
        vertices = vertices - [FAR - 1000.0, -FAR + 1000.0, FAR / 2 - 1000.0]
        write_binary_stl(tmp_path / "box.stl", shapes.triangles_of(vertices, faces))
        mesh = load_mesh(tmp_path / "box.stl", "mm")
    reference = vertices[0]
    relative = np.concatenate(list(mesh.triangle_chunks(5, relative_to=reference)))
    # The differences are exact multiples of 1/8 mm; each is then rounded once by the factor 0.001.
    expected = (shapes.triangles_of(vertices, faces) - reference) * 0.001
    np.testing.assert_array_equal(relative, expected)
    assert np.all(np.abs(relative) <= 0.5e-3)


def test_converting_first_would_lose_the_digits_that_relative_to_keeps():
    # The reason for the order: (x * 0.001 - r * 0.001) is not exact at 10 km, (x - r) * 0.001 is.
    vertices, faces = _far_box()
    mesh = mesh_from_arrays(vertices, faces, length_unit="mm")
    reference = vertices[0]
    exact = (shapes.triangles_of(vertices, faces) - reference) * 0.001
    naive = np.concatenate(list(mesh.triangle_chunks())) - reference * 0.001
    assert not np.array_equal(naive, exact)
    np.testing.assert_array_equal(np.concatenate(list(mesh.triangle_chunks(relative_to=reference))), exact)


def test_reference_point_is_the_mean_corner_of_the_first_faces():
    vertices, faces = shapes.box((2.0, 2.0, 2.0), (5.0, 6.0, 7.0))
    mesh = mesh_from_arrays(vertices, faces)
    np.testing.assert_allclose(mesh.reference_point(), vertices[faces].reshape(-1, 3).mean(axis=0), rtol=1e-15)


def test_face_count_of_both_representations():
    vertices, faces = shapes.box()
    assert mesh_from_arrays(vertices, faces).face_count == 12
    assert mesh_from_triangles(shapes.triangles_of(vertices, faces)).face_count == 12


def test_unit_is_looked_up_once_in_the_units_table():
    vertices, faces = shapes.box()
    assert mesh_from_arrays(vertices, faces, length_unit="in").metres_per_unit == 0.0254  # 1 in = 25.4 mm exactly (common practice)
    with pytest.raises(UnitError):
        mesh_from_arrays(vertices, faces, length_unit="furlong")


@pytest.mark.parametrize(
    ("vertices", "faces", "match"),
    [
        (np.zeros((3, 2)), [[0, 1, 2]], "vertices of shape"),
        (np.zeros((3, 3)), [[0, 1]], "integer faces of shape"),
        (np.zeros((3, 3)), [[0, 1, 3]], "out of range 0..2"),
        (np.zeros((3, 3)), [[0, -1, 2]], "out of range"),
        (np.zeros((3, 3)), np.zeros((0, 3), dtype=np.int64), "no triangles"),
    ],
    ids=["flat-vertices", "two-corner-faces", "index-past-end", "negative-index", "no-faces"],
)
def test_mesh_from_arrays_refuses_malformed_arrays(vertices, faces, match):
    with pytest.raises(MeshFileError, match=match):
        mesh_from_arrays(vertices, np.asarray(faces))


@pytest.mark.parametrize("bad", [np.nan, np.inf, -np.inf, 2 * MAX_ABS_COORDINATE])
def test_checked_mesh_names_the_first_bad_vertex(bad):
    vertices, faces = shapes.box()
    vertices[5, 1] = bad
    with pytest.raises(MeshFileError, match="vertex 5 has"):
        mesh_from_arrays(vertices, faces, source="bad-vertex")


def test_checked_mesh_names_the_first_bad_triangle():
    triangles = shapes.triangles_of(*shapes.box())
    triangles[9, 2, 0] = np.nan
    with pytest.raises(MeshFileError, match="triangle 9 has a NaN"):
        checked_mesh(Mesh("soup", "array", "m", 1.0, soup=triangles))
