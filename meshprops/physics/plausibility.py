"""Plausibility of an inertia: the uniform box with the same mass and principal moments
(sides a_k = sqrt(6 (I_i + I_j - I_k) / m)) compared with the geometry's extent. Any mass inside an
extent e has coordinate variance <= e^2/4, so no real body's equivalent box side exceeds sqrt(3) e.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

#: sqrt(3) bound of the equivalent box over the extent, plus this relative slack.
HIGH_SLACK = 1e-6


#: Below this ratio of equivalent box side to extent on every axis: a warning.
LOW_RATIO = 0.2


@dataclass(frozen=True, slots=True, eq=False)
class Plausibility:
    """The equivalent-box check of one set of mass properties.

    Attributes
    ----------
    equivalent_box : (3,) m, sides of the uniform box with the same mass and principal moments,
        along the principal axes (ascending moments order)
    extent : (3,) m or ``None``, extent of the geometry along the same axes (``None``: unknown)
    ratio : (3,) or ``None``, ``equivalent_box / extent``
    status : ``"ok"``, ``"unusual"`` (all ratios < LOW_RATIO), ``"impossible"`` (some ratio > sqrt 3),
        ``"suspicious"`` (extent partly unknown and the box exceeds sqrt 3 x the known geometry)
        or ``"not_checked"`` (no extent known, or zero inertia)
    message : one sentence
    """

    equivalent_box: np.ndarray
    extent: np.ndarray | None
    ratio: np.ndarray | None
    status: str
    message: str


def equivalent_box(mass: float, principal_moments) -> np.ndarray:
    """Sides (m) of the uniform solid box with this mass (kg) and these principal moments (kg·m²)."""
    i1, i2, i3 = (float(v) for v in principal_moments)
    squares = 6.0 / mass * np.array([i2 + i3 - i1, i1 + i3 - i2, i1 + i2 - i3])
    return np.sqrt(np.clip(squares, 0.0, None))


def _worst_excess(box: np.ndarray, extent: np.ndarray) -> int | None:
    """Principal axis on which ``box`` exceeds sqrt 3 times ``extent`` the most, or ``None``.

    Any mass inside an extent e has coordinate variance <= e^2/4, so the equivalent box
    side (variance a^2/12) is at most sqrt 3 e."""
    ratio = box / extent
    if np.any(ratio > math.sqrt(3.0) * (1.0 + HIGH_SLACK)):
        return int(np.argmax(ratio))
    return None


def check_plausibility(mass: float, principal_moments, extent) -> Plausibility:
    """Compare the equivalent box with the geometry's ``extent`` along the principal axes (m)."""
    box = equivalent_box(mass, principal_moments)
    if extent is None:
        return Plausibility(box, None, None, "not_checked", "extent of the geometry unknown (inertia given by hand)")
    extent = np.asarray(extent, dtype=np.float64)
    if not np.any(box > 0) or not np.all(extent > 0):
        return Plausibility(box, extent, None, "not_checked", "no extent or no inertia to compare")
    ratio = box / extent
    worst = _worst_excess(box, extent)
    if worst is not None:
        return Plausibility(
            box, extent, ratio, "impossible",
            f"equivalent box side {box[worst]:.4g} m is {ratio[worst]:.3g} x the extent {extent[worst]:.4g} m "
            f"along principal axis {worst + 1}; no body that fits its extent can exceed sqrt(3): "
            "check for a placeholder inertia or a unit slip",
        )  # fmt: skip
    if np.all(ratio < LOW_RATIO):
        return Plausibility(
            box, extent, ratio, "unusual",
            f"equivalent box {np.array2string(box, precision=4)} m is under {LOW_RATIO} of the extent "
            f"{np.array2string(extent, precision=4)} m on every axis: mass concentrated at the centre, "
            "or a unit slip in the inertia",
        )  # fmt: skip
    return Plausibility(box, extent, ratio, "ok", "equivalent box fits the extent")


def check_against_known_extent(mass: float, principal_moments, known_extent) -> Plausibility:
    """Plausibility where part of the geometry's extent is unknown (an inertia typed by hand).

    ``known_extent`` (m) is the extent of everything whose size IS known (the assembly's
    meshes, boxes and point positions). An equivalent box larger than sqrt 3 times that is
    ``"suspicious"``: not impossible (the unknown item may really be that large), but the
    typical sign of a placeholder inertia such as an identity matrix, or of a unit slip.
    """
    box = equivalent_box(mass, principal_moments)
    extent = np.asarray(known_extent, dtype=np.float64)
    if not np.any(box > 0) or not np.all(extent > 0):
        return Plausibility(box, None, None, "not_checked", "extent of the geometry unknown (inertia given by hand)")
    ratio = box / extent
    worst = _worst_excess(box, extent)
    if worst is not None:
        return Plausibility(
            box, None, ratio, "suspicious",
            f"equivalent box side {box[worst]:.4g} m is {ratio[worst]:.3g} x the extent {extent[worst]:.4g} m of the "
            "known geometry along that principal axis: a placeholder inertia or a unit slip? (extent partly unknown)",
        )  # fmt: skip
    return Plausibility(box, None, ratio, "not_checked", "extent partly unknown; equivalent box fits the known geometry")
