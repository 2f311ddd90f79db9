"""Precision far from the origin (issue 2, item 10).

A part exported in assembly coordinates can sit kilometres from the origin. Integrated about
the world origin, the inertia about the centre of mass is a small difference of huge numbers
(|c|² V ≈ 4e6 times the part's own second moment at 2 km for a 0.1 m part), and loses most of
its digits. meshprops integrates about a point near the part and shifts exactly.
"""

from __future__ import annotations

import numpy as np
import pytest

from meshprops import load_mesh, measure_mesh, mesh_from_triangles
from meshprops.geometry import shapes
from meshprops.io import writers
from meshprops.physics.mass import MassProperties
from meshprops.physics.moments import integrate_triangles

DENSITY = 2700.0
SIZE = (0.1, 0.06, 0.04)  # m
FAR = np.array([2000.0, -1500.0, 700.0])  # m: a box 2.6 km from the origin, 2 km along x


def _box_handbook(size):
    # Handbook: solid box about its centroid I = m(b² + c²)/12 ... (from memory).
    a, b, c = size
    mass = DENSITY * a * b * c
    return mass, np.diag([b * b + c * c, a * a + c * c, a * a + b * b]) * mass / 12.0


def _tilted_far_box():
    vertices, faces = shapes.box(SIZE)
    angle_z, angle_x = 0.7, -0.4
    turn_z = np.array([[np.cos(angle_z), -np.sin(angle_z), 0], [np.sin(angle_z), np.cos(angle_z), 0], [0, 0, 1]])
    turn_x = np.array([[1, 0, 0], [0, np.cos(angle_x), -np.sin(angle_x)], [0, np.sin(angle_x), np.cos(angle_x)]])
    rotation = turn_x @ turn_z
    return vertices @ rotation.T + FAR, faces, rotation


@pytest.mark.parametrize(("unit", "factor"), [("m", 1.0), ("mm", 1000.0)])
def test_box_2_km_away_in_obj_keeps_its_inertia_to_1e_9(tmp_path, unit, factor):
    vertices, faces, rotation = _tilted_far_box()
    path = tmp_path / "far_box.obj"
    writers.write_obj(path, vertices * factor, faces)  # full-precision (repr) coordinates
    properties = measure_mesh(load_mesh(path, unit), density=DENSITY).properties
    mass, principal = _box_handbook(SIZE)
    expected = rotation @ principal @ rotation.T  # the handbook tensor in the tilted axes
    assert properties.mass == pytest.approx(mass, rel=1e-9)
    np.testing.assert_allclose(properties.center_of_mass, FAR, rtol=1e-12)
    relative = np.abs(properties.inertia_about_com - expected).max() / np.abs(expected).max()
    assert relative < 1e-9


def test_integrating_about_the_world_origin_would_fail_this_check():
    # Shows the check above can fail: the same triangles summed about (0, 0, 0).
    vertices, faces, rotation = _tilted_far_box()
    naive = MassProperties.from_moments(integrate_triangles(vertices[faces], (0.0, 0.0, 0.0)), DENSITY)
    mass, principal = _box_handbook(SIZE)
    expected = rotation @ principal @ rotation.T
    relative = np.abs(naive.inertia_about_com - expected).max() / np.abs(expected).max()
    assert relative > 1e-3  # seen: ~4e5, i.e. no correct digit at all


def test_far_binary_stl_in_millimetres_keeps_float32_digits():
    # Binary STL holds float32; 2 km in mm is 2e6 with a float32 step of 0.125 mm. A part whose
    # corners sit on that grid is stored exactly, and summed in float64 about a nearby point.
    size = (128.0, 64.0, 32.0)  # mm, multiples of the float32 step at 2e6
    vertices, faces = shapes.box(size, (2_000_000.0, 1_000_000.0, 500_000.0))
    triangles = vertices[faces].astype(np.float32)
    assert np.array_equal(triangles.astype(np.float64), vertices[faces])
    properties = measure_mesh(mesh_from_triangles(triangles, length_unit="mm"), density=DENSITY).properties
    mass, principal = _box_handbook(tuple(s / 1000.0 for s in size))
    # Converting 2e6 mm to metres rounds each coordinate by ~2e-13 m (0.001 is not a binary
    # fraction): ~1e-11 of this part's size, so ~1e-12 of its mass.
    assert properties.mass == pytest.approx(mass, rel=1e-10)
    relative = np.abs(properties.inertia_about_com - principal).max() / principal.max()
    assert relative < 1e-9


@pytest.mark.parametrize("offset_mm", [2.0e6, 2.0e7])  # 2 km and 20 km from the origin
def test_a_millimetre_part_far_away_in_mm_keeps_its_inertia_to_round_off(tmp_path, offset_mm):
    """The reference point is subtracted in the file's unit before the mm -> m conversion,
    so even a 1 x 2 x 3 mm block 20 km out keeps its inertia about the centre of mass to
    a few ulps. Reference: box I_xx = m (b^2 + c^2) / 12 (handbook formula, common practice)."""
    vertices, faces = shapes.box((1.0, 2.0, 3.0))
    path = tmp_path / "far_block.obj"
    writers.write_obj(path, vertices + np.array([offset_mm, -offset_mm / 3.0, offset_mm / 7.0]), faces)
    body = measure_mesh(load_mesh(path, "mm"), density=1000.0)
    mass = 1000.0 * 6e-9
    expected = mass * np.array([4.0 + 9.0, 1.0 + 9.0, 1.0 + 4.0]) * 1e-6 / 12.0
    relative = np.abs(np.diag(body.properties.inertia_about_com) - expected).max() / expected.max()
    assert relative < 1e-13  # seen: ~4e-16
