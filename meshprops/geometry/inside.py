"""Is a point inside a closed surface? Generalized winding numbers (the solid-angle sum), the
one point-in-solid test that validation (shell nesting) and assembly overlap share.
"""

from __future__ import annotations

import numpy as np

from .faces import corner_extreme

#: Upper bound on (point, triangle) candidate pairs handled at once (memory).
PAIR_BLOCK = 1 << 21


def winding_numbers(points: np.ndarray, triangles: np.ndarray) -> np.ndarray:
    """Winding number of a closed surface around each point, by signed ray crossings.

    Parameters
    ----------
    points : (Q, 3) float64, any length unit
    triangles : (T, 3, 3) float64, same unit, the faces of one or more closed shells

    Returns
    -------
    (Q,) int64: +1 inside an outward shell, −1 inside an inward one (a void), 0 outside.

    A ray from each point along +x crosses faces whose projection on the
    y–z plane covers the point; each counts the sign of its normal's x
    component. Points on a projected edge are given to exactly one of the two
    faces sharing it (the one left of the edge taken from its lexicographically
    smaller end), so rays through edges count once and the result is exact for
    closed, consistently oriented surfaces.
    """
    points = np.asarray(points, dtype=np.float64)
    result = np.zeros(points.shape[0], dtype=np.int64)
    if triangles.shape[0] == 0:
        return result
    low = corner_extreme(np.minimum, triangles)
    high = corner_extreme(np.maximum, triangles)
    low_y, high_y, low_z, high_z, high_x = low[:, 1], high[:, 1], low[:, 2], high[:, 2], high[:, 0]
    for number, (qx, qy, qz) in enumerate(points):
        hit = (low_y <= qy) & (qy <= high_y) & (low_z <= qz) & (qz <= high_z) & (high_x > qx)
        candidates = np.flatnonzero(hit)
        if candidates.size == 0:
            continue
        tri = triangles[candidates]
        py, pz = tri[:, :, 1], tri[:, :, 2]
        cross = (py[:, 1] - py[:, 0]) * (pz[:, 2] - pz[:, 0]) - (pz[:, 1] - pz[:, 0]) * (py[:, 2] - py[:, 0])
        sense = np.sign(cross)
        inside = sense != 0
        functions = []
        for k in range(3):
            ay, az, by, bz = py[:, k], pz[:, k], py[:, (k + 1) % 3], pz[:, (k + 1) % 3]
            swap = (ay > by) | ((ay == by) & (az > bz))
            uy, uz = np.where(swap, by, ay), np.where(swap, bz, az)
            wy, wz = np.where(swap, ay, by), np.where(swap, az, bz)
            value = (wy - uy) * (qz - uz) - (wz - uz) * (qy - uy)  # same arithmetic for both faces of the edge
            direction = np.where(swap, -1.0, 1.0)
            left = sense * direction
            inside &= (left * value > 0) | ((value == 0) & (left > 0))
            functions.append(value * direction)
        if not inside.any():
            continue
        # Barycentric weights: the edge function of the edge opposite each corner.
        e01, e12, e20 = functions
        total = e01 + e12 + e20
        total = np.where(total == 0, 1.0, total)
        x_hit = (e12 * tri[:, 0, 0] + e20 * tri[:, 1, 0] + e01 * tri[:, 2, 0]) / total
        counted = inside & (x_hit > qx)
        result[number] = int(sense[counted].sum())
    return result


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
        stop = start + max(1, int(np.searchsorted(running, PAIR_BLOCK, side="right")))
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
