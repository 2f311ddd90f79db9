"""Principal moments and a deterministic, right-handed principal frame.

Sign rule (documented in the README): the principal moments are ascending,
``I1 <= I2 <= I3``. The axes are the rows ``e1, e2, e3`` of a proper rotation
``R`` (det +1), with ``R I Rᵀ = diag(I1, I2, I3)``. ``e1`` and ``e2`` each have
their component of largest magnitude positive (the first such component on a
tie), and ``e3 = e1 × e2``.

Where two moments coincide within ``rtol`` of the largest, the axes in that
plane are not unique (axisymmetric body); where all three coincide, no axis is
(spherical symmetry, e.g. a cube or a sphere). The flag says so.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

#: Relative tolerance for "these principal moments coincide" (relative to the largest).
SYMMETRY_RTOL = 1e-6
#: Relative tolerance of the triangle-inequality check (relative to the trace).
TRIANGLE_RTOL = 1e-9


@dataclass(frozen=True, slots=True, eq=False)
class PrincipalFrame:
    """Principal moments and axes of an inertia tensor about the centre of mass.

    Attributes
    ----------
    moments : (3,) float64, kg·m², ascending
    axes : (3, 3) float64, rows are the principal axes in the input frame; det +1
    symmetry : ``"asymmetric"``, ``"axisymmetric"`` or ``"spherical"``
    unique_axes : tuple of bool, per axis whether its direction is unique
    satisfies_triangle_inequality : bool
        ``I1 + I2 >= I3`` (within tolerance) and all moments ``>= 0``: every
        physical body satisfies it; a violation means a broken mesh or bad input.
    """

    moments: np.ndarray
    axes: np.ndarray
    symmetry: str
    unique_axes: tuple[bool, bool, bool]
    satisfies_triangle_inequality: bool


def _largest_component_positive(axis: np.ndarray) -> np.ndarray:
    index = int(np.argmax(np.abs(axis) >= np.abs(axis).max() * (1 - 1e-12)))
    return -axis if axis[index] < 0 else axis


def principal_frame(
    inertia: np.ndarray, *, symmetry_rtol: float = SYMMETRY_RTOL, triangle_rtol: float = TRIANGLE_RTOL
) -> PrincipalFrame:
    """Diagonalize a symmetric ``(3, 3)`` inertia tensor (kg·m²)."""
    tensor = np.asarray(inertia, dtype=np.float64)
    tensor = (tensor + tensor.T) / 2.0
    moments, vectors = np.linalg.eigh(tensor)  # ascending, orthonormal columns
    first = _largest_component_positive(vectors[:, 0])
    second = _largest_component_positive(vectors[:, 1])
    axes = np.array([first, second, np.cross(first, second)])

    scale = max(abs(moments).max(), np.finfo(float).tiny)
    close_12 = moments[1] - moments[0] <= symmetry_rtol * scale
    close_23 = moments[2] - moments[1] <= symmetry_rtol * scale
    if close_12 and close_23:
        symmetry, unique = "spherical", (False, False, False)
    elif close_12:
        symmetry, unique = "axisymmetric", (False, False, True)
    elif close_23:
        symmetry, unique = "axisymmetric", (True, False, False)
    else:
        symmetry, unique = "asymmetric", (True, True, True)

    slack = triangle_rtol * max(float(np.trace(tensor)), np.finfo(float).tiny)
    physical = bool(moments[0] >= -slack and moments[0] + moments[1] >= moments[2] - slack)
    return PrincipalFrame(moments, axes, symmetry, unique, physical)
