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

from ..errors import InputValueError


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


#: Faces per inner block of the integrator: its float64 work arrays (~3 MB) stay in cache.
_BLOCK_FACES = 1 << 14


class _MomentSums:
    """Running raw sums over triangles about one ``origin`` (m), with reusable work arrays.

    With corners ``a, b, c`` relative to the origin, ``s = a + b + c`` and
    ``d = a · (b × c)``, it accumulates ``Σ d`` (``six_volume``), ``Σ d s``
    (``first``, (3,)) and ``Σ d (a aᵀ + b bᵀ + c cᵀ + s sᵀ)`` (``second``, (3, 3)).

    Each block is laid out as ``rows[axis, kind, face]`` (kind: a, b, c, s) so that
    every coordinate is one contiguous float64 row: ``d`` is then a handful of
    whole-row ufunc calls, and the second moments are six dot products of
    ``4 k``-long rows: no stacked ``(4k, 3)`` copies, and faster than a
    ``(3, 4k) @ (4k, 3)`` matrix product, which numpy runs poorly for so thin a
    shape (measured; see DEVELOPERS.md).
    """

    __slots__ = ("origin", "six_volume", "first", "second", "_rows", "_weighted", "_d", "_u", "_w")

    def __init__(self, origin: np.ndarray) -> None:
        self.origin = origin
        self.six_volume = 0.0
        self.first = np.zeros(3)
        self.second = np.zeros((3, 3))
        self._rows = np.empty(12 * _BLOCK_FACES)
        self._weighted = np.empty(12 * _BLOCK_FACES)
        self._d = np.empty(_BLOCK_FACES)
        self._u = np.empty(_BLOCK_FACES)
        self._w = np.empty(_BLOCK_FACES)

    def add(self, triangles: np.ndarray) -> None:
        """Add ``(F, 3, 3)`` corners (m, any float dtype, any memory layout)."""
        for start in range(0, triangles.shape[0], _BLOCK_FACES):
            self._add_block(triangles[start : start + _BLOCK_FACES])

    def _add_block(self, block: np.ndarray) -> None:
        k = block.shape[0]
        rows = self._rows[: 12 * k].reshape(3, 4, k)
        # float64 corners relative to the origin (a float32 input is widened exactly first).
        np.subtract(block.transpose(2, 1, 0), self.origin[:, None, None], out=rows[:, :3])
        a, b, c, s = rows[:, 0], rows[:, 1], rows[:, 2], rows[:, 3]
        np.add(a, b, out=s)
        s += c
        d, u, w = self._d[:k], self._u[:k], self._w[:k]
        # d = a · (b × c), the cross product's components as np.cross forms them.
        np.multiply(b[1], c[2], out=u)
        np.multiply(b[2], c[1], out=w)
        u -= w
        np.multiply(a[0], u, out=d)
        np.multiply(b[2], c[0], out=u)
        np.multiply(b[0], c[2], out=w)
        u -= w
        u *= a[1]
        d += u
        np.multiply(b[0], c[1], out=u)
        np.multiply(b[1], c[0], out=w)
        u -= w
        u *= a[2]
        d += u
        self.six_volume += float(d.sum())
        # einsum, not np.dot / @: those go to a multi-threaded BLAS, which on a busy 2-core
        # machine ran this loop 5-25x slower (threads waiting for a core); einsum's own
        # single-threaded loops are as fast here and steady.
        self.first += np.einsum("ik,k->i", s, d)
        weighted = self._weighted[: 12 * k].reshape(3, 4, k)
        np.multiply(rows, d, out=weighted)
        flat_rows = rows.reshape(3, 4 * k)
        flat_weighted = weighted.reshape(3, 4 * k)
        second = self.second
        for i in range(3):
            for j in range(i, 3):
                second[i, j] += np.einsum("m,m->", flat_weighted[i], flat_rows[j])

    def moments(self) -> Moments:
        """The summed moments about ``origin``."""
        second = np.triu(self.second) + np.triu(self.second, 1).T
        return Moments(self.origin.copy(), self.six_volume / 6.0, self.first / 24.0, second / 120.0)


def _triangle_array(triangles) -> np.ndarray:
    array = np.asarray(triangles)
    if array.ndim != 3 or array.shape[1:] != (3, 3):
        raise InputValueError("triangles", "an array of shape (F, 3, 3)", array.shape)
    return array


def integrate_triangles(triangles: np.ndarray, origin) -> Moments:
    """Integrate one batch of triangles about ``origin``.

    Parameters
    ----------
    triangles : (F, 3, 3) float, m
        Corners of each triangle, counter-clockwise seen from outside. Any
        float dtype (summed in float64) and any memory layout.
    origin : (3,) float, m
        Reference point; choose one near the part to keep the digits.

    Returns
    -------
    Moments
        About ``origin``, in the axes of the input.
    """
    sums = _MomentSums(np.array(origin, dtype=np.float64).reshape(3))
    sums.add(_triangle_array(triangles))
    return sums.moments()


def integrate_chunks(chunks: Iterable[np.ndarray], origin=None) -> Moments:
    """Integrate triangles arriving in chunks of ``(k, 3, 3)`` float64 metres.

    The reference origin defaults to the mean corner of the first chunk's first
    triangles, so a part far from the world origin keeps its digits (DESIGN.md,
    "Precision"). The chunks are summed in float64 as they arrive; none is kept.
    """
    sums = None if origin is None else _MomentSums(np.array(origin, dtype=np.float64).reshape(3))
    for chunk in chunks:
        chunk = _triangle_array(chunk)
        if chunk.shape[0] == 0:
            continue
        if sums is None:
            sums = _MomentSums(np.asarray(chunk[:1024], dtype=np.float64).reshape(-1, 3).mean(axis=0))
        sums.add(chunk)
    if sums is None:
        return Moments.zero()
    return sums.moments()


def integrate_mesh(mesh) -> Moments:
    """Integrate a :class:`meshprops.io.Mesh` about a reference point near the part.

    Corners are taken relative to :meth:`Mesh.reference_point` in the file's own unit
    and only then converted to metres, so a part exported kilometres from the origin
    loses no digits to the unit conversion. The result is about that point (in m).
    """
    reference = mesh.reference_point()
    local = integrate_chunks(mesh.triangle_chunks(relative_to=reference), origin=(0.0, 0.0, 0.0))
    return Moments(reference * mesh.metres_per_unit, local.volume, local.first, local.second)
