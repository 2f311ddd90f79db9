"""Mass properties of a rigid body: mass, centre of mass, inertia tensor.

Convention (stated in every JSON document): the inertia tensor is
``I_ij = ∫ (r² δ_ij − x_i x_j) dm``, so its off-diagonal entries are the
*negatives* of the products of inertia ``P_ij = ∫ x_i x_j dm``. All values SI.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np

from ..errors import InputValueError
from .moments import Moments


def rotate_tensor(tensor: np.ndarray, rotation: np.ndarray) -> np.ndarray:
    """Express a second-order tensor in rotated axes: ``R T Rᵀ``.

    ``rotation`` maps old-axis coordinates to new-axis coordinates (its rows are
    the new axes written in the old ones). This is the one place R·T·Rᵀ is written.
    """
    rotation = np.asarray(rotation, dtype=np.float64)
    result = rotation @ np.asarray(tensor, dtype=np.float64) @ rotation.T
    return (result + result.T) / 2.0


def parallel_axis_term(mass: float, offset: np.ndarray) -> np.ndarray:
    """``m (|d|² E − d dᵀ)``: what moving the reference point by ``d`` from the centre of mass adds."""
    offset = np.asarray(offset, dtype=np.float64)
    return mass * (np.dot(offset, offset) * np.eye(3) - np.outer(offset, offset))


def check_density(density: float, *, source: str | None = None, name: str = "density") -> float:
    """Return ``density`` as a float if it is finite and positive (kg/m³); ``name`` labels the error."""
    try:
        value = float(density)
    except (TypeError, ValueError):
        raise InputValueError(name, "a number in kg/m^3", density, source=source) from None
    if not np.isfinite(value) or value <= 0.0:
        raise InputValueError(name, "a finite density > 0 kg/m^3", density, source=source)
    return value


@dataclass(frozen=True, slots=True, eq=False)
class MassProperties:
    """Mass properties of one rigid body (or a combination), SI units.

    Attributes
    ----------
    mass : float, kg
    volume : float, m³ (0 for a point mass)
    center_of_mass : (3,) float64, m, in the input frame
    inertia_about_com : (3, 3) float64, kg·m², about the centre of mass, input axes,
        tensor convention (off-diagonals are minus the products of inertia)
    """

    mass: float
    volume: float
    center_of_mass: np.ndarray
    inertia_about_com: np.ndarray

    @classmethod
    def from_moments(cls, moments: Moments, density: float) -> MassProperties:
        """Mass properties of a uniform solid of ``density`` (kg/m³) with these ``moments``."""
        density = check_density(density)
        volume = moments.volume
        offset = moments.first / volume  # centre of mass relative to the reference origin
        about_com = moments.second - volume * np.outer(offset, offset)
        # Each diagonal entry from the other two second moments (I_xx = ∫y² + ∫z²), never as the
        # trace minus ∫x²: for a long thin rod ∫x² dwarfs the others and the subtraction cancels digits.
        diagonal = np.array([about_com[1, 1] + about_com[2, 2], about_com[0, 0] + about_com[2, 2], about_com[0, 0] + about_com[1, 1]])
        inertia = density * (np.diag(diagonal) - (about_com - np.diag(np.diag(about_com))))
        return cls(
            mass=density * volume,
            volume=volume,
            center_of_mass=moments.origin + offset,
            inertia_about_com=(inertia + inertia.T) / 2.0,
        )

    @classmethod
    def point_mass(cls, mass: float, position, inertia_about_com=None) -> MassProperties:
        """A concentrated mass (kg) at ``position`` (m), with optional own inertia (kg·m²)."""
        if not np.isfinite(mass) or mass <= 0:
            raise InputValueError("mass", "a finite mass > 0 kg", mass)
        inertia = np.zeros((3, 3)) if inertia_about_com is None else np.asarray(inertia_about_com, dtype=np.float64)
        return cls(float(mass), 0.0, np.asarray(position, dtype=np.float64), inertia)

    @property
    def density(self) -> float | None:
        """Mean density mass / volume (kg/m³); ``None`` without volume."""
        return self.mass / self.volume if self.volume > 0 else None

    @property
    def products_of_inertia(self) -> np.ndarray:
        """``P_ij = ∫ x_i x_j dm`` about the centre of mass (kg·m²), as ``[P_xy, P_xz, P_yz]``
        (the order used everywhere: JSON keys, tables, CSV, simulator blocks)."""
        tensor = self.inertia_about_com
        return -np.array([tensor[0, 1], tensor[0, 2], tensor[1, 2]])

    @property
    def radii_of_gyration(self) -> np.ndarray:
        """``k_i = sqrt(I_ii / m)`` about the centre-of-mass axes parallel to x, y, z (m)."""
        return np.sqrt(np.clip(np.diag(self.inertia_about_com), 0.0, None) / self.mass)

    def inertia_about(self, point) -> np.ndarray:
        """Inertia tensor about ``point`` (m, input frame), input axes (kg·m²); parallel-axis theorem."""
        return self.inertia_about_com + parallel_axis_term(self.mass, self.center_of_mass - np.asarray(point, float))

    def in_axes(self, rotation) -> MassProperties:
        """The same body described in rotated axes (rows of ``rotation`` = new axes in old coordinates)."""
        rotation = np.asarray(rotation, dtype=np.float64)
        return MassProperties(
            self.mass, self.volume, rotation @ self.center_of_mass, rotate_tensor(self.inertia_about_com, rotation)
        )

    def moved(self, rotation, translation) -> MassProperties:
        """The body after the rigid motion ``x ↦ R x + t`` (t in m)."""
        moved = self.in_axes(rotation)
        return MassProperties(
            moved.mass, moved.volume, moved.center_of_mass + np.asarray(translation, float), moved.inertia_about_com
        )


def combine(parts: Iterable[MassProperties]) -> MassProperties:
    """Mass properties of rigid bodies joined together (same frame). Exact.

    Each part's inertia is carried to the common centre of mass with the
    parallel-axis theorem; volumes add.
    """
    parts = list(parts)
    if not parts:
        raise InputValueError("parts", "at least one body", parts)
    mass = sum(part.mass for part in parts)
    reference = parts[0].center_of_mass
    weighted = sum(part.mass * (part.center_of_mass - reference) for part in parts)
    center = reference + weighted / mass
    inertia = sum(part.inertia_about(center) for part in parts)
    return MassProperties(mass, sum(part.volume for part in parts), center, (inertia + inertia.T) / 2.0)
