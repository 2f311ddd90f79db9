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

#: Boxes whose intersection is thinner than this fraction of the larger box's size only touch.
TOUCH_TOLERANCE = 1e-9
#: Default number of Monte-Carlo points per candidate pair.
DEFAULT_SAMPLES = 20000
#: Upper bound on (point, triangle) candidate pairs handled at once (memory).
_PAIR_BLOCK = 1 << 21


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


def points_inside(points: np.ndarray, triangles: np.ndarray) -> np.ndarray:
    """Which ``(N, 3)`` points (m) lie inside the closed surface ``(F, 3, 3)`` (m)?

    Ray parity towards +z, with a uniform grid over the points' xy extent so
    each point meets only the triangles above its cell. Returns ``(N,)`` bool.
    The surface must be closed (validated meshes are); its orientation does not
    matter, and voids are handled by the parity.
    """
    points = np.asarray(points, dtype=np.float64)
    result = np.zeros(len(points), dtype=bool)
    if len(points) == 0:
        return result
    tri = np.asarray(triangles, dtype=np.float64)
    low = points[:, :2].min(axis=0)
    high = points[:, :2].max(axis=0)
    tri_low = tri[:, :, :2].min(axis=1)
    tri_high = tri[:, :, :2].max(axis=1)
    a, b, c = tri[:, 0], tri[:, 1], tri[:, 2]
    area2 = (b[:, 0] - a[:, 0]) * (c[:, 1] - a[:, 1]) - (b[:, 1] - a[:, 1]) * (c[:, 0] - a[:, 0])
    keep = (
        (area2 != 0.0)
        & np.all(tri_high >= low, axis=1)
        & np.all(tri_low <= high, axis=1)
        & (tri[:, :, 2].max(axis=1) > points[:, 2].min())
    )
    if not np.any(keep):
        return result
    tri, tri_low, tri_high, area2 = tri[keep], tri_low[keep], tri_high[keep], area2[keep]

    # Each triangle as 12 numbers of linear functions of (x, y): three edge functions, each
    # positive inside the projected triangle (signs folded in), and the height z of its plane.
    sign = np.sign(area2)[:, None]
    x, y, z = tri[..., 0], tri[..., 1], tri[..., 2]
    nxt, prv = [1, 2, 0], [2, 0, 1]
    alpha = -(y[:, prv] - y[:, nxt]) * sign  # edge opposite corner k runs from corner k+1 to k+2
    beta = (x[:, prv] - x[:, nxt]) * sign
    gamma = ((y[:, prv] - y[:, nxt]) * x[:, nxt] - (x[:, prv] - x[:, nxt]) * y[:, nxt]) * sign
    scale = np.abs(area2)
    plane = np.column_stack([(alpha * z).sum(1) / scale, (beta * z).sum(1) / scale, (gamma * z).sum(1) / scale])
    coefficients = np.concatenate([alpha, beta, gamma, plane], axis=1)  # (T, 12)

    cells = int(np.clip(max(np.sqrt(len(tri) / 2.0), np.sqrt(len(points) / 8.0)), 1, 128))
    span = np.where(high > low, high - low, 1.0)
    cell_size = span / cells

    def cell_of(xy):
        return np.clip(((xy - low) / cell_size).astype(np.int64), 0, cells - 1)

    first = cell_of(tri_low)
    last = cell_of(tri_high)
    widths = last - first + 1
    counts = widths[:, 0] * widths[:, 1]
    owner = np.repeat(np.arange(len(tri)), counts)
    step = np.arange(len(owner)) - np.repeat(np.cumsum(counts) - counts, counts)
    cell_x = first[owner, 0] + step % widths[owner, 0]
    cell_y = first[owner, 1] + step // widths[owner, 0]
    cell_id = cell_y * cells + cell_x
    order = np.argsort(cell_id, kind="stable")
    cell_triangles = owner[order]
    per_cell = np.bincount(cell_id, minlength=cells * cells)
    cell_start = np.cumsum(per_cell) - per_cell

    point_cells = cell_of(points[:, :2])
    point_cell_id = point_cells[:, 1] * cells + point_cells[:, 0]
    candidates = per_cell[point_cell_id]
    crossings = np.zeros(len(points), dtype=np.int64)
    start = 0
    while start < len(points):
        # a block of points whose candidate pairs fit in memory
        running = np.cumsum(candidates[start:])
        stop = start + max(1, int(np.searchsorted(running, _PAIR_BLOCK, side="right")))
        block = np.arange(start, stop)
        block_counts = candidates[block]
        pair_point = np.repeat(block, block_counts)
        offsets = np.arange(len(pair_point)) - np.repeat(np.cumsum(block_counts) - block_counts, block_counts)
        c = coefficients[cell_triangles[cell_start[point_cell_id[pair_point]] + offsets]]
        px, py, pz = points[pair_point, 0], points[pair_point, 1], points[pair_point, 2]
        hit = (
            (c[:, 0] * px + c[:, 3] * py + c[:, 6] > 0)
            & (c[:, 1] * px + c[:, 4] * py + c[:, 7] > 0)
            & (c[:, 2] * px + c[:, 5] * py + c[:, 8] > 0)
            & (c[:, 9] * px + c[:, 10] * py + c[:, 11] > pz)
        )
        crossings += np.bincount(pair_point[hit], minlength=len(points))
        start = stop
    return crossings % 2 == 1


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
