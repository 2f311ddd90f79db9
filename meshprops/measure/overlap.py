"""Do bodies of an assembly share volume (and so count its mass twice)?

Two phases:

1. **Broad phase**: an R-tree (the ``rtree`` package, imported lazily) over the
   axis-aligned bounding boxes of the placed bodies lists the pairs whose boxes
   meet. Boxes that only touch (their intersection is thinner than
   ``TOUCH_TOLERANCE`` of the larger body) are dropped: two cubes sharing a face
   are not an overlap.
2. **Narrow phase**: points drawn uniformly at random (Monte Carlo, fixed seed,
   so runs repeat exactly) inside the intersection box ``B`` are tested against
   both closed meshes with an exact point-in-solid test: the parity of the
   crossings of a ray from the point towards +z (a closed surface is crossed an
   odd number of times from inside, voids included). With ``k`` of ``N`` points
   inside both, the overlap volume is estimated as ``V = |B| k / N`` with the
   binomial standard error ``|B| sqrt(p (1 − p) / N)``, ``p = k / N`` (common
   practice for Monte-Carlo integration). No point inside both means no overlap
   was found; an overlap smaller than about ``3 |B| / N`` (the "rule of three"
   95 % upper bound for zero hits, common practice) can go unseen, and that
   bound is reported.

A random point lies exactly on a projected triangle edge with probability
zero, so the ray test needs no tie rule; faces seen edge-on from the ray
(vertical faces) are never crossed and are skipped.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

from ..geometry.inside import points_inside

#: Boxes whose intersection is thinner than this fraction of the larger box's size only touch.
TOUCH_TOLERANCE = 1e-9
#: Default number of Monte-Carlo points per candidate pair.
DEFAULT_SAMPLES = 20000


@dataclass(frozen=True, slots=True, eq=False)
class OverlapEstimate:
    """Monte-Carlo estimate of the volume two closed meshes share.

    Attributes
    ----------
    volume : float, m³, estimated shared volume (0 when no sample was inside both)
    standard_error : float, m³, one standard error of ``volume``
    undetected_upper_bound : float, m³, ``3 |B| / N``: overlaps smaller than this may be missed
    samples : N, points drawn
    hits : k, points inside both meshes
    box : (2, 3) float64, m, low and high corner of the sampled intersection box
    """

    volume: float
    standard_error: float
    undetected_upper_bound: float
    samples: int
    hits: int
    box: np.ndarray

    @property
    def overlapping(self) -> bool:
        return self.hits > 0


@dataclass(frozen=True, slots=True, eq=False)
class Overlap:
    """Two bodies that share volume.

    ``double_counted_mass`` is ``(V ρ_low, V ρ_high)`` in kg: the mass of the shared
    volume at the lower and the higher of the two densities. One of them is
    counted twice in the totals; which one depends on which part really fills
    that space.
    """

    first: str
    second: str
    first_index: int
    second_index: int
    estimate: OverlapEstimate
    double_counted_mass: tuple[float, float]
    share_of_smaller_volume: float


def bounding_box(triangles: np.ndarray) -> np.ndarray:
    """``(2, 3)`` low and high corners of ``(F, 3, 3)`` triangles."""
    corners = np.asarray(triangles, dtype=np.float64).reshape(-1, 3)
    return np.array([corners.min(axis=0), corners.max(axis=0)])


def candidate_pairs(boxes: Sequence[np.ndarray]) -> list[tuple[int, int]]:
    """Pairs ``(i, j)``, ``i < j``, whose ``(2, 3)`` boxes intersect (touching included), via an R-tree."""
    from rtree import index  # lazy: only assemblies need it

    properties = index.Property()
    properties.dimension = 3
    tree = index.Index(properties=properties, interleaved=True)
    for k, box in enumerate(boxes):
        tree.insert(k, tuple(np.asarray(box[0], float)) + tuple(np.asarray(box[1], float)))
    pairs = set()
    for k, box in enumerate(boxes):
        for other in tree.intersection(tuple(np.asarray(box[0], float)) + tuple(np.asarray(box[1], float))):
            if other != k:
                pairs.add((min(k, other), max(k, other)))
    return sorted(pairs)


def intersection_box(box_a: np.ndarray, box_b: np.ndarray, tolerance: float = TOUCH_TOLERANCE) -> np.ndarray | None:
    """The ``(2, 3)`` intersection of two boxes, or ``None`` if they are apart or only touch."""
    low = np.maximum(box_a[0], box_b[0])
    high = np.minimum(box_a[1], box_b[1])
    size = max(float(np.max(box_a[1] - box_a[0])), float(np.max(box_b[1] - box_b[0])), np.finfo(float).tiny)
    if np.any(high - low <= tolerance * size):
        return None
    return np.array([low, high])




def estimate_overlap(
    triangles_a: np.ndarray,
    triangles_b: np.ndarray,
    *,
    samples: int = DEFAULT_SAMPLES,
    seed: int = 0,
    box_a: np.ndarray | None = None,
    box_b: np.ndarray | None = None,
) -> OverlapEstimate | None:
    """Estimate the volume two closed meshes (``(F, 3, 3)``, m, same frame) share.

    Returns ``None`` when their bounding boxes are apart or only touch.
    """
    box_a = bounding_box(triangles_a) if box_a is None else box_a
    box_b = bounding_box(triangles_b) if box_b is None else box_b
    box = intersection_box(box_a, box_b)
    if box is None:
        return None
    samples = int(samples)
    if samples < 1:
        raise ValueError(f"samples must be >= 1, got {samples}")
    generator = np.random.default_rng(seed)
    points = box[0] + (box[1] - box[0]) * generator.random((samples, 3))
    inside = points_inside(points, triangles_a)
    if np.any(inside):
        inside[inside] = points_inside(points[inside], triangles_b)
    hits = int(np.count_nonzero(inside))
    box_volume = float(np.prod(box[1] - box[0]))
    share = hits / samples
    return OverlapEstimate(
        volume=box_volume * share,
        standard_error=box_volume * float(np.sqrt(share * (1.0 - share) / samples)),
        undetected_upper_bound=3.0 * box_volume / samples,
        samples=samples,
        hits=hits,
        box=box,
    )


def find_overlaps(
    names: Sequence[str],
    triangles: Sequence[Callable[[], np.ndarray]],
    boxes: Sequence[np.ndarray],
    densities: Sequence[float],
    volumes: Sequence[float],
    *,
    samples: int = DEFAULT_SAMPLES,
    seed: int = 0,
) -> list[Overlap]:
    """Overlapping pairs among placed bodies.

    Parameters
    ----------
    names : body names
    triangles : per body, a function returning its placed ``(F, 3, 3)`` triangles (m);
        called only for bodies in a candidate pair
    boxes : per body, ``(2, 3)`` bounding box (m)
    densities : kg/m³; volumes : m³
    samples, seed : Monte-Carlo settings per pair (the seed is offset by the pair's rank)
    """
    cache: dict[int, np.ndarray] = {}

    def placed(k: int) -> np.ndarray:
        if k not in cache:
            cache[k] = triangles[k]()
        return cache[k]

    found = []
    for rank, (i, j) in enumerate(candidate_pairs(boxes)):
        if intersection_box(boxes[i], boxes[j]) is None:
            continue
        estimate = estimate_overlap(
            placed(i), placed(j), samples=samples, seed=seed + rank, box_a=boxes[i], box_b=boxes[j]
        )
        if estimate is None or not estimate.overlapping:
            continue
        low, high = sorted((densities[i], densities[j]))
        found.append(
            Overlap(
                first=names[i],
                second=names[j],
                first_index=i,
                second_index=j,
                estimate=estimate,
                double_counted_mass=(estimate.volume * low, estimate.volume * high),
                share_of_smaller_volume=estimate.volume / min(volumes[i], volumes[j]),
            )
        )
    return found
