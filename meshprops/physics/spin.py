"""A rigid body spinning with angular velocity ω: angular momentum, energy, wobble.

All vectors are in the input frame; ω in rad/s, velocities in m/s.

* Spin angular momentum about the centre of mass: ``L = I_cm ω``.
* Rotational kinetic energy: ``T = ½ ωᵀ I_cm ω``.
* The angle between ``L`` and ``ω`` is zero only when ω lies along a principal
  axis; otherwise ``L`` precesses about ω and the body wobbles on its bearings.
* About another point ``p``, with the centre of mass moving at ``v``:
  ``L_p = (c − p) × m v + I_cm ω`` (orbital part plus spin part). While the
  centre of mass is at rest the spin part is the same about every point.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .mass import MassProperties


@dataclass(frozen=True, slots=True, eq=False)
class SpinState:
    """Dynamics of a body spinning at ``angular_velocity`` (input frame, SI).

    Attributes
    ----------
    angular_velocity : (3,) rad/s
    angular_momentum_about_com : (3,) kg·m²/s, ``I_cm ω``
    rotational_kinetic_energy : J, ``½ ωᵀ I_cm ω``
    angle_between_momentum_and_angular_velocity : rad, or ``None`` when ω = 0
    com_velocity : (3,) m/s, velocity of the centre of mass
    point : (3,) m or ``None``; the point the next two refer to
    orbital_angular_momentum : (3,) kg·m²/s or ``None``, ``(c − p) × m v``
    angular_momentum_about_point : (3,) kg·m²/s or ``None``, orbital + spin
    translational_kinetic_energy : J, ``½ m |v|²``
    """

    angular_velocity: np.ndarray
    angular_momentum_about_com: np.ndarray
    rotational_kinetic_energy: float
    angle_between_momentum_and_angular_velocity: float | None
    com_velocity: np.ndarray
    point: np.ndarray | None
    orbital_angular_momentum: np.ndarray | None
    angular_momentum_about_point: np.ndarray | None
    translational_kinetic_energy: float

    @property
    def kinetic_energy(self) -> float:
        """Total kinetic energy, rotational plus translational (J)."""
        return self.rotational_kinetic_energy + self.translational_kinetic_energy


def angle_between(u: np.ndarray, v: np.ndarray) -> float | None:
    """Angle between two vectors in radians (robust near 0 and π); ``None`` if either is zero."""
    nu, nv = np.linalg.norm(u), np.linalg.norm(v)
    if nu == 0.0 or nv == 0.0:
        return None
    return float(np.arctan2(np.linalg.norm(np.cross(u / nu, v / nv)), np.dot(u / nu, v / nv)))


def spin(
    body: MassProperties,
    angular_velocity,
    *,
    com_velocity=None,
    point=None,
) -> SpinState:
    """Angular momentum and kinetic energy of ``body`` spinning at ``angular_velocity`` (rad/s).

    Parameters
    ----------
    body
        Mass properties in the frame ω is given in.
    angular_velocity : (3,) rad/s
    com_velocity : (3,) m/s, optional
        Velocity of the centre of mass (default at rest).
    point : (3,) m, optional
        Reference point for the total angular momentum ``L_p``.
    """
    omega = np.asarray(angular_velocity, dtype=np.float64)
    velocity = np.zeros(3) if com_velocity is None else np.asarray(com_velocity, dtype=np.float64)
    momentum = body.inertia_about_com @ omega
    orbital = about_point = None
    reference = None
    if point is not None:
        reference = np.asarray(point, dtype=np.float64)
        orbital = np.cross(body.center_of_mass - reference, body.mass * velocity)
        about_point = orbital + momentum
    return SpinState(
        angular_velocity=omega,
        angular_momentum_about_com=momentum,
        rotational_kinetic_energy=float(0.5 * omega @ momentum),
        angle_between_momentum_and_angular_velocity=angle_between(momentum, omega),
        com_velocity=velocity,
        point=reference,
        orbital_angular_momentum=orbital,
        angular_momentum_about_point=about_point,
        translational_kinetic_energy=float(0.5 * body.mass * velocity @ velocity),
    )
