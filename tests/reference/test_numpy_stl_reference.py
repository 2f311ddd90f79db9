"""numpy-stl's own mass properties as a second independent reference on the same binary STL files.

numpy-stl (``stl.mesh.Mesh.get_mass_properties``) reads the float32 file itself and integrates
in float64; it returns the volume, the centre of gravity and the inertia tensor about it per unit
density. Checked by running it here: it uses the tensor convention (off-diagonals are minus the
products of inertia), the same as ours — the rotated L bracket below has a large off-diagonal
entry, so a sign difference could not pass.
"""

from __future__ import annotations

import numpy as np
import pytest
from stl import mesh as stl_mesh

from meshprops import load_mesh, measure_mesh
from meshprops.geometry import shapes
from meshprops.io import writers

TURN = np.array([[0.8, 0.6, 0.0], [-0.6, 0.8, 0.0], [0.0, 0.0, 1.0]])  # exact 3-4-5 rotation about z

CASES = {
    "L bracket, turned and moved": (
        lambda: shapes.extrusion([(1, 1), (1, 6), (0, 6), (0, 0), (4, 0), (4, 1)], 2.0),
        TURN,
        (3.0, -2.0, 1.5),
    ),
    "box": (lambda: shapes.box((2.0, 1.0, 0.5)), np.eye(3), (0.25, 0.5, 0.125)),
    "cylinder": (lambda: shapes.cylinder(1.0, 3.0, sections=48), TURN, (0.0, 0.0, 0.0)),
    "torus": (lambda: shapes.torus(2.0, 0.5, 48, 24), TURN, (-1.0, 4.0, 2.0)),
    "hollow box (void shell)": (lambda: shapes.hollow_box((4.0, 3.0, 2.0), (2.0, 1.0, 1.0)), np.eye(3), (1.0, 1.0, 1.0)),
    "tube": (lambda: shapes.tube(2.0, 1.0, 1.5, sections=40), TURN, (0.5, 0.0, -0.5)),
}


@pytest.mark.parametrize("name", sorted(CASES))
def test_binary_stl_agrees_with_numpy_stl(tmp_path, name):
    build, rotation, translation = CASES[name]
    vertices, faces = build()
    vertices = vertices @ rotation.T + np.asarray(translation)
    path = tmp_path / "part.stl"
    writers.write_binary_stl(path, shapes.triangles_of(vertices, faces))

    volume, center, inertia = stl_mesh.Mesh.from_file(str(path)).get_mass_properties()
    ours = measure_mesh(load_mesh(path, "m"), density=1.0).properties  # unit density, like numpy-stl

    assert ours.volume == pytest.approx(float(volume), rel=1e-9)
    size = np.ptp(vertices, axis=0).max()
    assert np.abs(ours.center_of_mass - center).max() <= 1e-9 * size
    assert np.abs(ours.inertia_about_com - inertia).max() <= 1e-9 * np.abs(inertia).max()


def test_the_reference_sees_the_products_of_inertia_with_our_sign(tmp_path):
    vertices, faces = shapes.extrusion([(1, 1), (1, 6), (0, 6), (0, 0), (4, 0), (4, 1)], 2.0)
    path = tmp_path / "bracket.stl"
    writers.write_binary_stl(path, shapes.triangles_of(vertices, faces))
    _, _, inertia = stl_mesh.Mesh.from_file(str(path)).get_mass_properties()
    ours = measure_mesh(load_mesh(path, "m"), density=1.0).properties
    # An L with legs along +x and +y has its mass concentrated where x and y have opposite
    # signs about the centre of mass, so P_xy = ∫xy dm < 0 and the tensor entry I_xy = -P_xy > 0.
    assert ours.products_of_inertia[0] < 0 < inertia[0, 1]
    assert ours.inertia_about_com[0, 1] == pytest.approx(inertia[0, 1], rel=1e-9)
