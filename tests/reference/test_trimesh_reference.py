"""trimesh's own mass properties as an independent reference on the same meshes.

trimesh (a general-purpose mesh library from the package registry) integrates with its own
code; it is used here only as a test reference. Found by the tests below: its
``moment_inertia`` / ``mass_properties["inertia"]`` is about the centre of mass, in the input
axes, in the same *tensor* convention as meshprops (off-diagonals are minus the products of
inertia). trimesh integrates about the world origin, so the meshes here sit near it.
"""

from __future__ import annotations

import numpy as np
import pytest
import trimesh  # a declared dependency: a missing install must fail here, not skip

from meshprops import load_mesh, measure_mesh, mesh_from_arrays
from meshprops.geometry import shapes

DENSITY = 1250.0
RTOL = 1e-9


def _rotated(vertices_faces, quaternion, offset):
    vertices, faces = vertices_faces
    w, x, y, z = np.asarray(quaternion) / np.linalg.norm(quaternion)
    matrix = np.array(
        [
            [1 - 2 * (y * y + z * z), 2 * (x * y - z * w), 2 * (x * z + y * w)],
            [2 * (x * y + z * w), 1 - 2 * (x * x + z * z), 2 * (y * z - x * w)],
            [2 * (x * z - y * w), 2 * (y * z + x * w), 1 - 2 * (x * x + y * y)],
        ]
    )
    return vertices @ matrix.T + offset, faces


CASES = {
    "box": shapes.box((0.3, 0.2, 0.1), (0.05, -0.02, 0.01)),
    "rotated box": _rotated(shapes.box((0.3, 0.2, 0.1)), (0.9, 0.2, -0.3, 0.1), (0.1, 0.0, -0.05)),
    "cylinder": shapes.cylinder(0.05, 0.12, 48, (0.02, 0.01, 0.0)),
    "cone": shapes.cone(0.04, 0.1, 40),
    "sphere": shapes.uv_sphere(0.06, 20, 40, (0.0, 0.03, 0.0)),
    "torus": shapes.torus(0.1, 0.03, 48, 24),
    "tilted torus": _rotated(shapes.torus(0.1, 0.03, 32, 16), (0.6, -0.5, 0.4, 0.2), (0.0, 0.05, 0.02)),
    "hollow box": shapes.hollow_box((0.2, 0.15, 0.1), (0.1, 0.05, 0.04), (0.01, 0.02, 0.03)),
    "tube": _rotated(shapes.tube(0.05, 0.035, 0.2, 36), (0.8, 0.1, 0.5, -0.2), (0.0, 0.0, 0.0)),
    "two disjoint parts": shapes.merge(
        _rotated(shapes.box((0.1, 0.04, 0.02)), (0.7, 0.3, 0.2, 0.1), (0.1, 0.0, 0.0)),
        shapes.cone(0.03, 0.05, 24, (-0.1, 0.05, 0.0)),
    ),
}


@pytest.mark.parametrize("name", list(CASES))
def test_mass_properties_agree_with_trimesh(name):
    vertices, faces = CASES[name]
    reference = trimesh.Trimesh(vertices=vertices, faces=faces, process=False)
    reference.density = DENSITY
    expected = reference.mass_properties
    ours = measure_mesh(mesh_from_arrays(vertices, faces), density=DENSITY).properties
    assert ours.volume == pytest.approx(float(expected["volume"]), rel=RTOL)
    assert ours.mass == pytest.approx(float(expected["mass"]), rel=RTOL)
    size = float(np.abs(vertices).max())
    np.testing.assert_allclose(ours.center_of_mass, expected["center_mass"], rtol=0, atol=RTOL * size)
    tensor = np.asarray(expected["inertia"])
    np.testing.assert_allclose(ours.inertia_about_com, tensor, rtol=0, atol=RTOL * np.abs(tensor).max())
    np.testing.assert_allclose(ours.inertia_about_com, reference.moment_inertia, rtol=0, atol=RTOL * np.abs(tensor).max())


def test_trimesh_sign_convention_on_an_asymmetric_shape():
    # Two unit cubes centred at (1, 1, 0) and (−1, −1, 0): by hand the product of inertia
    # P_xy = Σ m x y = +2m, so the tensor entry is −2m. Both libraries must say −2m.
    vertices, faces = shapes.merge(shapes.box((1, 1, 1), (1, 1, 0)), shapes.box((1, 1, 1), (-1, -1, 0)))
    reference = trimesh.Trimesh(vertices=vertices, faces=faces, process=False)
    reference.density = 1.0
    assert reference.moment_inertia[0, 1] == pytest.approx(-2.0, rel=1e-12)
    ours = measure_mesh(mesh_from_arrays(vertices, faces), density=1.0).properties
    assert ours.inertia_about_com[0, 1] == pytest.approx(-2.0, rel=1e-12)
    assert ours.products_of_inertia[0] == pytest.approx(2.0, rel=1e-12)


def test_agrees_with_trimesh_on_a_file_read_by_both(tmp_path, write_mesh, part):
    # The same OBJ file through each library's own loader (trimesh without vertex merging).
    path = write_mesh(tmp_path, "bracket", *part, "obj")
    reference = trimesh.load(path, process=False, force="mesh")
    reference.density = DENSITY
    ours = measure_mesh(load_mesh(path, "m"), density=DENSITY).properties
    assert ours.mass == pytest.approx(reference.mass, rel=RTOL)
    np.testing.assert_allclose(ours.center_of_mass, reference.center_mass, rtol=RTOL)
    np.testing.assert_allclose(
        ours.inertia_about_com, reference.moment_inertia, rtol=0, atol=RTOL * np.abs(reference.moment_inertia).max()
    )
