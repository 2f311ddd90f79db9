"""Divergence-theorem integrator: closed triangle surfaces → the ten volume moments.

Each triangle ``(a, b, c)`` together with a reference origin ``o`` spans a signed
tetrahedron; summed over a closed, outward-oriented surface those tetrahedra add
up to the enclosed solid exactly. With corners taken relative to ``o`` and
``d = a · (b × c)`` (six times the signed volume), the tetrahedron's moments are
(Tonon 2004, "Explicit exact formulas for the 3-D tetrahedron inertia tensor in
terms of its vertex coordinates", J. Math. Stat. 1(1); the standard result)::

    ∫1 dV     = d / 6
    ∫x_i dV   = d / 24 · s_i                       s = a + b + c
    ∫x_i x_j  = d / 120 · (a_i a_j + b_i b_j + c_i c_j + s_i s_j)

Moments are additive over triangles, chunks, shells and bodies, which is what
makes chunked streaming and assemblies exact.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True, slots=True, eq=False)
class Moments:
    """The ten volume moments of a solid about a reference origin.

    Attributes
    ----------
    origin : (3,) float64, m
        The reference point the coordinates are taken relative to.
    volume : float, m³
        ∫ dV (signed: negative for an inside-out surface).
    first : (3,) float64, m⁴
        ∫ (x − o) dV.
    second : (3, 3) float64, m⁵
        ∫ (x − o)(x − o)ᵀ dV (symmetric).
    """

    origin: np.ndarray
    volume: float
    first: np.ndarray
    second: np.ndarray

    @classmethod
    def zero(cls, origin=(0.0, 0.0, 0.0)) -> Moments:
        """Moments of nothing, about ``origin``."""
        return cls(np.asarray(origin, dtype=np.float64).copy(), 0.0, np.zeros(3), np.zeros((3, 3)))

    def shifted_to(self, origin) -> Moments:
        """The same moments about another reference ``origin`` (m). Exact."""
        new_origin = np.asarray(origin, dtype=np.float64)
        delta = self.origin - new_origin  # old origin seen from the new one
        first = self.first + self.volume * delta
        second = (
            self.second
            + np.outer(self.first, delta)
            + np.outer(delta, self.first)
            + self.volume * np.outer(delta, delta)
        )
        return Moments(new_origin.copy(), self.volume, first, second)

    def __add__(self, other: Moments) -> Moments:
        """Sum of two solids' moments, about this one's origin."""
        other = other.shifted_to(self.origin)
        return Moments(self.origin, self.volume + other.volume, self.first + other.first, self.second + other.second)

    def negated(self) -> Moments:
        """The moments of the same surface with every normal flipped."""
        return Moments(self.origin, -self.volume, -self.first, -self.second)

    def transformed(self, rotation, translation) -> Moments:
        """Moments of the solid moved by ``x ↦ R x + t`` (R proper rotation, t in m).

        The result is about the moved origin ``R o + t``.
        """
        rotation = np.asarray(rotation, dtype=np.float64)
        translation = np.asarray(translation, dtype=np.float64)
        return Moments(
            rotation @ self.origin + translation,
            self.volume,
            rotation @ self.first,
            rotation @ self.second @ rotation.T,
        )


def sum_moments(parts: Iterable[Moments]) -> Moments:
    """Add any number of moments; the result is about the first one's origin."""
    iterator = iter(parts)
    total = next(iterator)
    for part in iterator:
        total = total + part
    return total


def integrate_triangles(triangles: np.ndarray, origin) -> Moments:
    """Integrate one batch of triangles about ``origin``.

    Parameters
    ----------
    triangles : (F, 3, 3) float, m
        Corners of each triangle, counter-clockwise seen from outside.
    origin : (3,) float, m
        Reference point; choose one near the part to keep the digits.
    """
    origin = np.asarray(origin, dtype=np.float64)
    corners = np.asarray(triangles, dtype=np.float64) - origin  # float64 even for float32 input
    a, b, c = corners[:, 0], corners[:, 1], corners[:, 2]
    six_volumes = np.einsum("ij,ij->i", a, np.cross(b, c))
    s = a + b + c
    volume = six_volumes.sum() / 6.0
    first = six_volumes @ s / 24.0
    # Σ_f d_f (a aᵀ + b bᵀ + c cᵀ + s sᵀ) as one (3 × 4F) @ (4F × 3) product.
    stacked = np.concatenate([a, b, c, s], axis=0)
    weights = np.tile(six_volumes, 4)
    second = (stacked * weights[:, None]).T @ stacked / 120.0
    return Moments(origin.copy(), float(volume), first, (second + second.T) / 2.0)


def integrate_chunks(chunks: Iterable[np.ndarray], origin=None) -> Moments:
    """Integrate triangles arriving in chunks of ``(k, 3, 3)`` float64 metres.

    The reference origin defaults to the mean corner of the first chunk's first
    triangles, so a part far from the world origin keeps its digits (DESIGN.md,
    "Precision").
    """
    total = None
    for chunk in chunks:
        if len(chunk) == 0:
            continue
        if origin is None:
            origin = chunk[:1024].reshape(-1, 3).mean(axis=0)
        part = integrate_triangles(chunk, origin)
        total = part if total is None else Moments(
            total.origin, total.volume + part.volume, total.first + part.first, total.second + part.second
        )
    if total is None:
        return Moments.zero(origin if origin is not None else (0.0, 0.0, 0.0))
    return total
