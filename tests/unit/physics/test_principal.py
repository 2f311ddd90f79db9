"""Principal frame: ascending moments, proper rotation, the documented sign rule, symmetry flags,
the triangle inequality."""

from __future__ import annotations

import numpy as np
import pytest

from meshprops import measure_mesh, mesh_from_arrays
from meshprops.geometry import shapes
from meshprops.physics.principal import principal_frame


def _sign_rule(axis):
    """The documented rule (principal.py, README): the largest-magnitude component is positive."""
    index = int(np.argmax(np.abs(axis)))
    return -axis if axis[index] < 0 else axis


QUATERNIONS = [(1.0, 0.0, 0.0, 0.0), (0.9, 0.1, -0.3, 0.2), (0.2, -0.7, 0.6, 0.3), (-0.4, 0.5, 0.5, -0.6)]


@pytest.mark.parametrize("quaternion", QUATERNIONS)
def test_recovers_known_axes_with_the_sign_rule(quaternion, rotation):
    truth = rotation(quaternion)  # rows are the body axes in input coordinates
    moments = np.array([1.0, 2.5, 3.0])
    tensor = truth.T @ np.diag(moments) @ truth
    frame = principal_frame(tensor)
    np.testing.assert_allclose(frame.moments, moments, rtol=1e-13)
    expected_first = _sign_rule(truth[0])
    expected_second = _sign_rule(truth[1])
    np.testing.assert_allclose(frame.axes[0], expected_first, atol=1e-12)
    np.testing.assert_allclose(frame.axes[1], expected_second, atol=1e-12)
    np.testing.assert_allclose(frame.axes[2], np.cross(expected_first, expected_second), atol=1e-12)
    assert frame.symmetry == "asymmetric"
    assert frame.unique_axes == (True, True, True)


def test_axes_form_a_proper_rotation_that_diagonalizes(part, close):
    inertia = measure_mesh(mesh_from_arrays(*part), density=1000.0).properties.inertia_about_com
    frame = principal_frame(inertia)
    assert np.all(np.diff(frame.moments) >= 0.0)
    close(frame.axes @ frame.axes.T, np.eye(3), 1e-14)
    assert np.linalg.det(frame.axes) == pytest.approx(1.0, abs=1e-14)
    close(frame.axes @ inertia @ frame.axes.T, np.diag(frame.moments), 1e-13)


def test_same_body_same_axes_whatever_the_face_order(part):
    vertices, faces = part
    shuffled = np.random.default_rng(7).permutation(faces)
    first = principal_frame(measure_mesh(mesh_from_arrays(vertices, faces), density=1.0).properties.inertia_about_com)
    second = principal_frame(measure_mesh(mesh_from_arrays(vertices, shuffled), density=1.0).properties.inertia_about_com)
    # Deterministic signs: the two frames agree, not just up to a flip.
    np.testing.assert_allclose(first.axes, second.axes, atol=1e-12)


@pytest.mark.parametrize(
    ("vertices_faces", "symmetry", "unique"),
    [
        (shapes.box((1.0, 1.0, 1.0)), "spherical", (False, False, False)),  # a cube: every axis principal
        # Inscribed latitude-ring sphere: its n-fold symmetry keeps I_x = I_y; for this mesh the
        # polar moment comes out the smallest.
        (shapes.uv_sphere(1.0, 16, 32), "axisymmetric", (True, False, False)),
        (shapes.cylinder(1.0, 0.1, 64), "axisymmetric", (False, False, True)),  # disk: I1 = I2 < I3
        (shapes.cylinder(0.1, 2.0, 64), "axisymmetric", (True, False, False)),  # rod: I1 < I2 = I3
        (shapes.box((1.0, 2.0, 3.0)), "asymmetric", (True, True, True)),
    ],
)
def test_symmetry_flags(vertices_faces, symmetry, unique):
    frame = measure_mesh(mesh_from_arrays(*vertices_faces), density=1000.0).principal
    assert frame.symmetry == symmetry
    assert frame.unique_axes == unique
    assert np.linalg.det(frame.axes) == pytest.approx(1.0, abs=1e-12)
    if symmetry == "axisymmetric":  # the one unique axis is the axis of revolution
        np.testing.assert_allclose(np.abs(frame.axes[unique.index(True)]), [0.0, 0.0, 1.0], atol=1e-9)


def test_triangle_inequality():
    # Every physical body has I1 + I2 >= I3 (from I_z = ∫(x² + y²) ≤ ∫(x² + z²) + ∫(y² + z²)); a flat
    # plate reaches equality (perpendicular-axis theorem, handbook).
    assert principal_frame(np.diag([1.0, 2.0, 3.0])).satisfies_triangle_inequality
    plate = measure_mesh(mesh_from_arrays(*shapes.box((1.0, 2.0, 1e-4))), density=1000.0).principal
    assert plate.satisfies_triangle_inequality
    assert plate.moments[0] + plate.moments[1] == pytest.approx(plate.moments[2], rel=1e-7)
    assert not principal_frame(np.diag([1.0, 1.0, 3.0])).satisfies_triangle_inequality
    assert not principal_frame(np.diag([-1.0, 2.0, 3.0])).satisfies_triangle_inequality


def test_symmetry_tolerance_is_relative_to_the_largest_moment():
    base = np.diag([1.0, 1.0 + 5e-7, 2.0])
    assert principal_frame(base).symmetry == "axisymmetric"
    assert principal_frame(base, symmetry_rtol=1e-8).symmetry == "asymmetric"
    assert principal_frame(base * 1e-9).symmetry == "axisymmetric"  # scale-free
