"""Rotation forms: axis-angle, roll-pitch-yaw and quaternions convert into each other and back,
and every matrix is a proper rotation (orthonormal, det +1). References: the right-hand rule
(common practice), URDF's ``rpy`` = extrinsic x-y-z (common practice), the unit quaternion
(cos(θ/2), sin(θ/2) n) of a turn θ about n (handbook), and trimesh's ``transformations``
module (a general-purpose reference library) on the same angles."""

from __future__ import annotations

import math

import numpy as np
import pytest
import trimesh.transformations as reference

from meshprops.physics.rotations import (
    nearest_rotation,
    quaternion_from_rotation,
    rotation_from_axis_angle,
    rotation_from_quaternion,
    rotation_from_rpy,
    rpy_from_rotation,
)

RNG = np.random.default_rng(20261202)
ANGLES = [tuple(RNG.uniform([-math.pi, -math.pi / 2, -math.pi], [math.pi, math.pi / 2, math.pi])) for _ in range(25)]


def assert_proper_rotation(matrix) -> None:
    np.testing.assert_allclose(matrix.T @ matrix, np.eye(3), rtol=0, atol=1e-14)
    assert np.linalg.det(matrix) == pytest.approx(1.0, abs=1e-14)


def test_a_quarter_turn_about_z_takes_x_to_y():
    # Right-hand rule (common practice): +90 deg about +z maps +x to +y and +y to -x.
    turn = rotation_from_axis_angle([0.0, 0.0, 5.0], math.pi / 2)
    np.testing.assert_allclose(turn @ [1.0, 0.0, 0.0], [0.0, 1.0, 0.0], atol=1e-15)
    np.testing.assert_allclose(turn @ [0.0, 1.0, 0.0], [-1.0, 0.0, 0.0], atol=1e-15)


@pytest.mark.parametrize("rpy", ANGLES)
def test_rpy_matches_the_reference_library_and_round_trips(rpy):
    matrix = rotation_from_rpy(*rpy)
    assert_proper_rotation(matrix)
    # trimesh: 'sxyz' = static (extrinsic) x, then y, then z, i.e. Rz(yaw) Ry(pitch) Rx(roll).
    np.testing.assert_allclose(matrix, reference.euler_matrix(*rpy, axes="sxyz")[:3, :3], rtol=0, atol=1e-15)
    np.testing.assert_allclose(rpy_from_rotation(matrix), rpy, rtol=0, atol=1e-12)


def test_rpy_is_the_product_of_three_fixed_axis_turns():
    roll, pitch, yaw = 0.3, -0.7, 2.1
    x, y, z = np.eye(3)
    product = rotation_from_axis_angle(z, yaw) @ rotation_from_axis_angle(y, pitch) @ rotation_from_axis_angle(x, roll)
    np.testing.assert_allclose(rotation_from_rpy(roll, pitch, yaw), product, rtol=0, atol=1e-15)


@pytest.mark.parametrize("pitch", [math.pi / 2, -math.pi / 2])
def test_rpy_at_gimbal_lock_gives_back_the_same_matrix(pitch):
    matrix = rotation_from_rpy(0.4, pitch, -1.1)
    rpy = rpy_from_rotation(matrix)
    assert rpy[0] == 0.0 and rpy[1] == pytest.approx(pitch, abs=1e-12)
    np.testing.assert_allclose(rotation_from_rpy(*rpy), matrix, rtol=0, atol=1e-12)


@pytest.mark.parametrize("rpy", ANGLES)
def test_quaternion_round_trip_and_reference(rpy):
    matrix = rotation_from_rpy(*rpy)
    quaternion = quaternion_from_rotation(matrix)
    assert np.linalg.norm(quaternion) == pytest.approx(1.0, abs=1e-15) and quaternion[0] >= 0.0
    np.testing.assert_allclose(rotation_from_quaternion(quaternion), matrix, rtol=0, atol=1e-14)
    # trimesh's quaternion_matrix takes (w, x, y, z) as well.
    np.testing.assert_allclose(reference.quaternion_matrix(quaternion)[:3, :3], matrix, rtol=0, atol=1e-14)


@pytest.mark.parametrize("angle", [0.0, 0.5, math.pi / 2, 3.0, math.pi, -2.0])
def test_quaternion_of_an_axis_angle_turn(angle):
    axis = np.array([1.0, -2.0, 2.0]) / 3.0
    matrix = rotation_from_axis_angle(axis * 7.0, angle)  # the axis is normalized
    assert_proper_rotation(matrix)
    expected = np.concatenate([[math.cos(angle / 2)], math.sin(angle / 2) * axis])  # (cos θ/2, sin θ/2 n), handbook
    expected = -expected if expected[0] < 0 else expected
    quaternion = quaternion_from_rotation(matrix)
    if abs(expected[0]) < 1e-12:  # a half turn: q and -q are the same rotation, both have w = 0
        expected = expected * np.sign(expected[1:] @ quaternion[1:])
    np.testing.assert_allclose(quaternion, expected, rtol=0, atol=1e-14)


def test_rotation_from_quaternion_normalizes():
    np.testing.assert_allclose(rotation_from_quaternion([2.0, 0.0, 0.0, 2.0]), rotation_from_axis_angle([0, 0, 1], math.pi / 2), atol=1e-15)


@pytest.mark.parametrize("axis", [[0.0, 0.0, 0.0], [np.nan, 0.0, 1.0], [np.inf, 0.0, 0.0]])
def test_a_degenerate_axis_is_refused(axis):
    with pytest.raises(ValueError, match="non-zero"):
        rotation_from_axis_angle(axis, 1.0)


def test_nearest_rotation_cleans_up_a_matrix_typed_with_four_digits():
    typed = np.array([[0.7071, -0.7071, 0.0], [0.7071, 0.7071, 0.0], [0.0, 0.0, 1.0]])
    cleaned = nearest_rotation(typed)
    assert_proper_rotation(cleaned)
    np.testing.assert_allclose(cleaned, rotation_from_axis_angle([0, 0, 1], math.pi / 4), atol=1e-15)


@pytest.mark.parametrize(
    ("matrix", "match"),
    [
        (np.diag([1.0, 1.0, -1.0]), "reflection"),
        (np.array([[1.0, 0.2, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]]), "not orthonormal"),
        (2.0 * np.eye(3), "not orthonormal"),
        (np.eye(2), "3x3"),
        (np.full((3, 3), np.nan), "finite"),
    ],
    ids=["reflection", "shear", "scale", "2x2", "nan"],
)
def test_nearest_rotation_refuses_what_is_not_a_rotation(matrix, match):
    with pytest.raises(ValueError, match=match):
        nearest_rotation(matrix)
