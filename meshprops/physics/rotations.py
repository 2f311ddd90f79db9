"""Rotation matrices from and to the forms people type and simulators read.

Every matrix here is a proper rotation ``R`` (orthonormal, det +1) that acts
*actively* on column vectors: a body-local point ``x`` sits at ``R x + t`` in the
assembly. Equivalently, the columns of ``R`` are the body's axes written in
assembly coordinates.

Forms:

* axis-angle: right-hand rule about a unit ``axis`` by ``angle`` (Rodrigues' formula).
* roll-pitch-yaw ``(r, p, y)``: ``R = Rz(y) · Ry(p) · Rx(r)``, i.e. rotate about
  the fixed x axis by roll, then the fixed y axis by pitch, then the fixed z axis
  by yaw (extrinsic x-y-z), which is the same rotation as intrinsic z-y'-x''.
  This is the convention of URDF ``rpy`` and SDF ``pose`` (common practice).
* quaternion ``(w, x, y, z)``, scalar first, as MJCF ``quat`` writes it; the
  returned ``w`` is non-negative.
"""

from __future__ import annotations

import math

import numpy as np

#: How far a typed 3×3 matrix may be from orthonormal (max |RᵀR − E| entry): 4 significant digits pass.
ORTHONORMAL_TOLERANCE = 1e-4


def rotation_from_axis_angle(axis, angle: float) -> np.ndarray:
    """Rotation by ``angle`` (rad) about ``axis`` (any non-zero length), right-hand rule."""
    axis = np.asarray(axis, dtype=np.float64)
    length = float(np.linalg.norm(axis))
    if not np.isfinite(length) or length == 0.0:
        raise ValueError(f"rotation axis must be a finite non-zero vector, got {axis.tolist()}")
    x, y, z = axis / length
    c, s = math.cos(angle), math.sin(angle)
    v = 1.0 - c
    return np.array(
        [
            [c + x * x * v, x * y * v - z * s, x * z * v + y * s],
            [y * x * v + z * s, c + y * y * v, y * z * v - x * s],
            [z * x * v - y * s, z * y * v + x * s, c + z * z * v],
        ]
    )


def rotation_from_rpy(roll: float, pitch: float, yaw: float) -> np.ndarray:
    """``Rz(yaw) Ry(pitch) Rx(roll)`` (angles in rad); see the module docstring."""
    cr, sr = math.cos(roll), math.sin(roll)
    cp, sp = math.cos(pitch), math.sin(pitch)
    cy, sy = math.cos(yaw), math.sin(yaw)
    return np.array(
        [
            [cy * cp, cy * sp * sr - sy * cr, cy * sp * cr + sy * sr],
            [sy * cp, sy * sp * sr + cy * cr, sy * sp * cr - cy * sr],
            [-sp, cp * sr, cp * cr],
        ]
    )


def rpy_from_rotation(rotation) -> np.ndarray:
    """Roll, pitch, yaw (rad) with ``rotation_from_rpy(*rpy) == rotation``.

    Pitch is in [−π/2, π/2]. At gimbal lock (pitch = ±π/2) roll is set to 0 and
    the whole turn about the (then parallel) x and z axes goes into yaw.
    """
    r = np.asarray(rotation, dtype=np.float64)
    cos_pitch = math.hypot(r[0, 0], r[1, 0])
    pitch = math.atan2(-r[2, 0], cos_pitch)  # not asin: it loses half the digits near ±π/2
    if cos_pitch > 1e-12:
        roll = math.atan2(r[2, 1], r[2, 2])
        yaw = math.atan2(r[1, 0], r[0, 0])
    else:  # cos(pitch) ~ 0: R = Rz(yaw) Ry(±π/2) with roll folded into yaw
        roll = 0.0
        yaw = math.atan2(-r[0, 1], r[1, 1])
    return np.array([roll, pitch, yaw])


def quaternion_from_rotation(rotation) -> np.ndarray:
    """Unit quaternion ``(w, x, y, z)`` of a rotation matrix, ``w >= 0`` (Shepperd's method)."""
    r = np.asarray(rotation, dtype=np.float64)
    trace = r[0, 0] + r[1, 1] + r[2, 2]
    candidates = (trace, r[0, 0], r[1, 1], r[2, 2])
    k = int(np.argmax(candidates))
    if k == 0:
        s = 2.0 * math.sqrt(1.0 + trace)
        q = [s / 4.0, (r[2, 1] - r[1, 2]) / s, (r[0, 2] - r[2, 0]) / s, (r[1, 0] - r[0, 1]) / s]
    elif k == 1:
        s = 2.0 * math.sqrt(1.0 + r[0, 0] - r[1, 1] - r[2, 2])
        q = [(r[2, 1] - r[1, 2]) / s, s / 4.0, (r[0, 1] + r[1, 0]) / s, (r[0, 2] + r[2, 0]) / s]
    elif k == 2:
        s = 2.0 * math.sqrt(1.0 + r[1, 1] - r[0, 0] - r[2, 2])
        q = [(r[0, 2] - r[2, 0]) / s, (r[0, 1] + r[1, 0]) / s, s / 4.0, (r[1, 2] + r[2, 1]) / s]
    else:
        s = 2.0 * math.sqrt(1.0 + r[2, 2] - r[0, 0] - r[1, 1])
        q = [(r[1, 0] - r[0, 1]) / s, (r[0, 2] + r[2, 0]) / s, (r[1, 2] + r[2, 1]) / s, s / 4.0]
    q = np.array(q)
    q /= np.linalg.norm(q)
    return -q if q[0] < 0 else q


def rotation_from_quaternion(quaternion) -> np.ndarray:
    """Rotation matrix of a quaternion ``(w, x, y, z)`` (normalized here)."""
    q = np.asarray(quaternion, dtype=np.float64)
    w, x, y, z = q / np.linalg.norm(q)
    return np.array(
        [
            [1 - 2 * (y * y + z * z), 2 * (x * y - z * w), 2 * (x * z + y * w)],
            [2 * (x * y + z * w), 1 - 2 * (x * x + z * z), 2 * (y * z - x * w)],
            [2 * (x * z - y * w), 2 * (y * z + x * w), 1 - 2 * (x * x + y * y)],
        ]
    )


def nearest_rotation(matrix, tolerance: float = ORTHONORMAL_TOLERANCE) -> np.ndarray:
    """Check that ``matrix`` is a proper rotation within ``tolerance`` and return the exact nearest one.

    A matrix typed with a few digits (``0.7071``) is within tolerance of a
    rotation; the nearest rotation in the Frobenius norm (``U Vᵀ`` of its SVD)
    is returned so that no scaling or shear sneaks into the placement.

    Raises
    ------
    ValueError
        Not 3×3 and finite, not orthonormal within ``tolerance`` (the largest
        ``|RᵀR − E|`` entry is quoted), or a reflection (det −1).
    """
    m = np.asarray(matrix, dtype=np.float64)
    if m.shape != (3, 3) or not np.all(np.isfinite(m)):
        raise ValueError(f"expected a finite 3x3 matrix, got shape {m.shape}")
    deviation = float(np.abs(m.T @ m - np.eye(3)).max())
    if deviation > tolerance:
        raise ValueError(f"matrix is not orthonormal: max |R^T R - I| entry {deviation:.3g} > {tolerance:g}")
    if np.linalg.det(m) < 0:
        raise ValueError("matrix is a reflection (det -1), not a rotation")
    u, _, vt = np.linalg.svd(m)
    return u @ vt
