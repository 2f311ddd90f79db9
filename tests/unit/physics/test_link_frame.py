"""A mesh's mass properties in its link's frame: scale, rotation, offset.

Checked against the handbook formula of a solid rectangular cuboid (sides a, b, c,
mass m: I_xx = m (b² + c²) / 12, I_yy = m (a² + c²) / 12, I_zz = m (a² + b²) / 12 about
its centre, box axes; any engineering handbook's table of solids) and against trimesh's
own mass properties of the same mesh moved and scaled by trimesh (the reference library).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import trimesh

from meshprops.errors import InputValueError
from meshprops.physics.link_frame import in_link_frame, scaled, with_mass
from meshprops.physics.mass import MassProperties
from meshprops.physics.rotations import rotation_from_rpy


def box_properties(sides, density, center=(0.0, 0.0, 0.0)) -> MassProperties:
    """Handbook cuboid: m = ρ a b c, I = m/12 diag(b²+c², a²+c², a²+b²) about its centre."""
    a, b, c = sides
    mass = density * a * b * c
    inertia = mass / 12.0 * np.diag([b * b + c * c, a * a + c * c, a * a + b * b])
    return MassProperties(mass, a * b * c, np.array(center, float), inertia)


def test_scaling_a_box_gives_the_box_of_scaled_sides():
    # A 100 x 40 x 20 mm box written in millimetres and scaled by 0.001 is the 0.1 x 0.04 x 0.02 m box.
    raw = box_properties((100.0, 40.0, 20.0), 2700.0, center=(50.0, 20.0, 10.0))
    result = scaled(raw, (0.001, 0.001, 0.001))
    expected = box_properties((0.1, 0.04, 0.02), 2700.0, center=(0.05, 0.02, 0.01))
    assert math.isclose(result.mass, expected.mass, rel_tol=1e-14)
    np.testing.assert_allclose(result.center_of_mass, expected.center_of_mass, rtol=1e-14)
    np.testing.assert_allclose(result.inertia_about_com, expected.inertia_about_com, rtol=1e-13, atol=0)


def test_non_uniform_and_mirror_scale_keep_the_box_formula():
    raw = box_properties((1.0, 2.0, 3.0), 10.0, center=(1.0, 1.0, 1.0))
    result = scaled(raw, (2.0, -0.5, 3.0))  # a mirror in y: the mass stays positive
    expected = box_properties((2.0, 1.0, 9.0), 10.0, center=(2.0, -0.5, 3.0))
    assert math.isclose(result.mass, expected.mass, rel_tol=1e-14)
    np.testing.assert_allclose(result.center_of_mass, expected.center_of_mass, rtol=1e-14)
    np.testing.assert_allclose(result.inertia_about_com, expected.inertia_about_com, rtol=1e-13, atol=1e-15)


def test_quarter_turn_about_z_swaps_the_box_moments():
    raw = box_properties((0.3, 0.1, 0.05), 1000.0, center=(0.15, 0.0, 0.0))
    quarter = rotation_from_rpy(0.0, 0.0, math.pi / 2)
    result = in_link_frame(raw, quarter, (0.0, 0.0, 0.2))
    # Box of sides (0.1, 0.3, 0.05) with its centre at R c + t = (0, 0.15, 0.2).
    expected = box_properties((0.1, 0.3, 0.05), 1000.0)
    np.testing.assert_allclose(result.center_of_mass, [0.0, 0.15, 0.2], atol=1e-15)
    np.testing.assert_allclose(result.inertia_about_com, expected.inertia_about_com, rtol=1e-12, atol=1e-18)


def test_general_placement_matches_trimesh_on_the_moved_mesh():
    sides = np.array([120.0, 45.0, 16.0])  # millimetres, corner at the origin
    mesh = trimesh.creation.box(extents=sides)
    mesh.apply_translation(sides / 2.0 + [7.0, -3.0, 11.0])
    raw = box_properties(sides, 1.0, center=sides / 2.0 + [7.0, -3.0, 11.0])
    scale = np.array([0.001, 0.001, 0.001])
    rotation = rotation_from_rpy(0.4, -1.1, 2.3)
    translation = np.array([0.03, -0.2, 0.05])
    result = in_link_frame(raw, rotation, translation, scale)

    reference = mesh.copy()
    reference.apply_scale(0.001)
    transform = np.eye(4)
    transform[:3, :3] = rotation
    transform[:3, 3] = translation
    reference.apply_transform(transform)
    reference.density = 1.0
    # trimesh: mass, center_mass and moment_inertia (about the centre of mass, tensor convention).
    assert math.isclose(result.mass, reference.mass, rel_tol=1e-12)
    np.testing.assert_allclose(result.center_of_mass, reference.center_mass, rtol=0, atol=1e-15)
    scale_of_tensor = np.abs(reference.moment_inertia).max()
    np.testing.assert_allclose(result.inertia_about_com, reference.moment_inertia, rtol=0, atol=1e-11 * scale_of_tensor)
    assert np.abs(reference.moment_inertia[0, 1]) > 1e-3 * scale_of_tensor  # the products are really tested


def test_with_mass_scales_the_inertia_with_the_mass():
    raw = box_properties((0.2, 0.1, 0.1), 1000.0)
    result = with_mass(raw, 0.5)
    expected = box_properties((0.2, 0.1, 0.1), 0.5 / 0.002)
    np.testing.assert_allclose(result.inertia_about_com, expected.inertia_about_com, rtol=1e-14)
    with pytest.raises(InputValueError):
        with_mass(raw, -1.0)


def test_zero_scale_is_refused():
    with pytest.raises(InputValueError):
        scaled(box_properties((1.0, 1.0, 1.0), 1.0), (1.0, 0.0, 1.0))
