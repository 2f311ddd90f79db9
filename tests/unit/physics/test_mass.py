"""Mass properties from moments: parallel-axis theorem, rotations, combining bodies, conventions."""

from __future__ import annotations

import numpy as np
import pytest

from meshprops import (
    InputValueError,
    MeshpropsError,
    combine,
    measure_mesh,
    mesh_from_arrays,
)
from meshprops.geometry import shapes
from meshprops.physics.mass import MassProperties, parallel_axis_term, rotate_tensor
from meshprops.physics.moments import integrate_triangles


def _measure(vertices, faces, density=1000.0):
    return measure_mesh(mesh_from_arrays(vertices, faces), density=density).properties


def _box_tensor(mass, a, b, c):
    # Handbook: solid rectangular box about its centroid (any engineering-mechanics table of mass
    # moments of inertia, from memory): I_x = m(b² + c²)/12, I_y = m(a² + c²)/12, I_z = m(a² + b²)/12.
    return np.diag([mass * (b * b + c * c), mass * (a * a + c * c), mass * (a * a + b * b)]) / 12.0


def test_box_matches_the_handbook_tensor(close):
    properties = _measure(*shapes.box((0.2, 0.3, 0.5), (1.0, 2.0, 3.0)), density=7850.0)
    mass = 7850.0 * 0.2 * 0.3 * 0.5
    assert properties.mass == pytest.approx(mass, rel=1e-13)
    assert properties.density == pytest.approx(7850.0, rel=1e-13)
    np.testing.assert_allclose(properties.center_of_mass, [1.0, 2.0, 3.0], rtol=1e-13)
    close(properties.inertia_about_com, _box_tensor(mass, 0.2, 0.3, 0.5), 1e-12)


def test_parallel_axis_theorem_box_about_a_corner_edge(close):
    # Handbook (from memory): a box about an edge parallel to z: I = m(a² + b²)/3. I_zz about
    # the corner is the moment about that edge (the z line through the corner). The full tensor
    # is checked against an independent route: the mesh integrated directly about the corner.
    a, b, c = 0.2, 0.3, 0.5
    vertices, faces = shapes.box((a, b, c))
    properties = _measure(vertices, faces)
    corner = np.array([-a / 2, -b / 2, -c / 2])
    about_corner = properties.inertia_about(corner)
    assert about_corner[2, 2] == pytest.approx(properties.mass * (a * a + b * b) / 3.0, rel=1e-13)
    # Direct: I = ρ (tr(S) E − S) with S = ∫ (x − p)(x − p)ᵀ dV about p.
    second = integrate_triangles(shapes.triangles_of(vertices, faces), corner).second
    direct = 1000.0 * (np.trace(second) * np.eye(3) - second)
    close(about_corner, direct, 1e-12)
    # Products of inertia about the corner are m (a/2)(b/2) etc. (all positive; tensor entries negative).
    assert about_corner[0, 1] == pytest.approx(-properties.mass * a * b / 4.0, rel=1e-12)


def test_parallel_axis_term_is_the_steiner_term():
    term = parallel_axis_term(2.0, np.array([1.0, 2.0, 3.0]))
    # m(|d|² E − d dᵀ): the distance-squared of each axis from the shifted line.
    assert term[0, 0] == pytest.approx(2.0 * (4.0 + 9.0))
    assert term[0, 1] == pytest.approx(-2.0 * 2.0)
    assert term[1, 2] == pytest.approx(-2.0 * 6.0)


def test_rotation_of_the_tensor_equals_integrating_the_rotated_mesh(part, rotation, close):
    vertices, faces = part
    matrix = rotation((0.3, -0.7, 0.2, 0.6))
    original = _measure(vertices, faces)
    rotated_mesh = _measure(vertices @ matrix.T, faces)
    close(rotate_tensor(original.inertia_about_com, matrix), rotated_mesh.inertia_about_com, 1e-12)
    described = original.in_axes(matrix)
    close(described.center_of_mass, rotated_mesh.center_of_mass, 1e-13)
    moved = original.moved(matrix, [1.0, 2.0, 3.0])
    close(moved.center_of_mass, rotated_mesh.center_of_mass + [1.0, 2.0, 3.0], 1e-13)
    close(moved.inertia_about_com, rotated_mesh.inertia_about_com, 1e-12)


def test_rotate_tensor_convention_rows_are_the_new_axes():
    # Rows of R are the new axes in old coordinates: a 90° turn about z maps old y to new x.
    tensor = np.diag([1.0, 2.0, 3.0])
    turn = np.array([[0.0, 1.0, 0.0], [-1.0, 0.0, 0.0], [0.0, 0.0, 1.0]])
    np.testing.assert_allclose(rotate_tensor(tensor, turn), np.diag([2.0, 1.0, 3.0]), atol=1e-15)


def test_combining_bodies_equals_measuring_them_as_one_mesh(close):
    first = shapes.box((1.0, 2.0, 0.5), (0.0, 0.0, 0.0))
    second = shapes.cylinder(0.4, 1.5, 32, (3.0, 1.0, -0.5))
    combined = combine([_measure(*first), _measure(*second)])
    merged = _measure(*shapes.merge(first, second))
    assert combined.mass == pytest.approx(merged.mass, rel=1e-13)
    assert combined.volume == pytest.approx(merged.volume, rel=1e-13)
    close(combined.center_of_mass, merged.center_of_mass, 1e-13)
    close(combined.inertia_about_com, merged.inertia_about_com, 1e-12)
    reversed_order = combine([_measure(*second), _measure(*first)])
    close(reversed_order.inertia_about_com, combined.inertia_about_com, 1e-13)


def test_two_point_masses_give_the_dumbbell_formula():
    # Handbook (from memory): two masses m at ±d on x: I_yy = I_zz = 2 m d², I_xx = 0.
    left = MassProperties.point_mass(3.0, [-0.5, 0.0, 0.0])
    right = MassProperties.point_mass(3.0, [0.5, 0.0, 0.0])
    dumbbell = combine([left, right])
    np.testing.assert_allclose(dumbbell.center_of_mass, [0.0, 0.0, 0.0], atol=1e-16)
    np.testing.assert_allclose(dumbbell.inertia_about_com, np.diag([0.0, 1.5, 1.5]), atol=1e-15)
    assert dumbbell.volume == 0.0
    assert dumbbell.density is None


def test_products_of_inertia_are_minus_the_off_diagonals():
    # Hand calculation: unit cubes (mass 2 each) centred at (1, 1, 0) and (−1, −1, 0).
    # P_xy = Σ m x y = 2·1·1 + 2·(−1)(−1) = 4, so the tensor entry I_xy = −4.
    properties = _measure(*shapes.merge(shapes.box((1, 1, 1), (1, 1, 0)), shapes.box((1, 1, 1), (-1, -1, 0))), 2.0)
    assert properties.products_of_inertia[0] == pytest.approx(4.0, rel=1e-13)
    assert properties.inertia_about_com[0, 1] == pytest.approx(-4.0, rel=1e-13)
    assert properties.products_of_inertia[1] == pytest.approx(0.0, abs=1e-13)
    assert properties.products_of_inertia[2] == pytest.approx(0.0, abs=1e-13)


def test_products_of_inertia_come_in_the_order_xy_xz_yz():
    # Hand calculation as above with the cubes at (1, 0, 1) and (-1, 0, -1): P_xz = 4, the others 0.
    properties = _measure(*shapes.merge(shapes.box((1, 1, 1), (1, 0, 1)), shapes.box((1, 1, 1), (-1, 0, -1))), 2.0)
    np.testing.assert_allclose(properties.products_of_inertia, [0.0, 4.0, 0.0], atol=1e-13)
    assert properties.inertia_about_com[0, 2] == pytest.approx(-4.0, rel=1e-13)


def test_radii_of_gyration():
    properties = _measure(*shapes.box((0.2, 0.3, 0.5)))
    # k = sqrt(I/m): for a box k_x = sqrt((b² + c²)/12).
    np.testing.assert_allclose(
        properties.radii_of_gyration,
        np.sqrt(np.array([0.09 + 0.25, 0.04 + 0.25, 0.04 + 0.09]) / 12.0),
        rtol=1e-13,
    )


def test_density_scales_mass_and_inertia_linearly(close):
    vertices, faces = shapes.uv_sphere(0.1, 8, 16)
    light = _measure(vertices, faces, 1000.0)
    heavy = _measure(vertices, faces, 2700.0)
    assert heavy.mass == pytest.approx(2.7 * light.mass, rel=1e-14)
    close(heavy.inertia_about_com, 2.7 * light.inertia_about_com, 1e-14)


@pytest.mark.parametrize("density", [0.0, -1.0, float("nan"), float("inf"), "heavy", None])
def test_bad_density_is_refused(density):
    moments = integrate_triangles(shapes.triangles_of(*shapes.box()), (0.0, 0.0, 0.0))
    with pytest.raises(InputValueError, match="density") as caught:
        MassProperties.from_moments(moments, density)
    assert isinstance(caught.value, ValueError) and isinstance(caught.value, MeshpropsError)


@pytest.mark.parametrize("mass", [0.0, -2.0, float("nan")])
def test_bad_point_mass_is_refused(mass):
    with pytest.raises(InputValueError, match="mass"):
        MassProperties.point_mass(mass, [0.0, 0.0, 0.0])


def test_combining_nothing_is_refused():
    with pytest.raises(InputValueError, match="at least one body"):
        combine([])
