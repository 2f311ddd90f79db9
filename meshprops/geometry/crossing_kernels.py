"""Compiled kernels of the self-intersection finder (numba, ``cache=True``).

Kept apart from :mod:`meshprops.geometry.crossing` so that importing that module
(and every command that never looks for crossings) does not pay numba's import
cost (~0.4 s); this module is imported on first use only.

Every kernel takes plain float64 / int64 arrays. Coordinates are in any one
length unit; the tolerances are relative, so the unit does not matter.
"""

from __future__ import annotations

import numpy as np
from numba import njit, prange

#: Result codes of :func:`pair_relation`.
NONE = 0
CROSSING = 1
COPLANAR_OVERLAP = 2


@njit(cache=True, inline="always")
def _sub(p, q):
    return p[0] - q[0], p[1] - q[1], p[2] - q[2]


@njit(cache=True, inline="always")
def _cross3(ax, ay, az, bx, by, bz):
    return ay * bz - az * by, az * bx - ax * bz, ax * by - ay * bx


@njit(cache=True)
def _coplanar_overlap(a, b, normal, scale, tolerance):
    """Strict 2D overlap of two coplanar triangles' interiors (separating-axis test).

    ``a``, ``b`` (3, 3) corners relative to a common point; ``normal`` the plane's
    normal. The plane is projected on the coordinate plane that drops the normal's
    largest component. Touching along an edge or at a corner is no overlap.
    """
    drop = 0
    if abs(normal[1]) > abs(normal[drop]):
        drop = 1
    if abs(normal[2]) > abs(normal[drop]):
        drop = 2
    u = (drop + 1) % 3
    v = (drop + 2) % 3
    for which in range(2):
        t = a if which == 0 else b
        for k in range(3):
            j = (k + 1) % 3
            # 2D normal of edge k of triangle t
            mx = t[j, v] - t[k, v]
            my = -(t[j, u] - t[k, u])
            length = np.sqrt(mx * mx + my * my)
            if length == 0.0:
                return False
            low_a = np.inf
            high_a = -np.inf
            low_b = np.inf
            high_b = -np.inf
            for c in range(3):
                pa = a[c, u] * mx + a[c, v] * my
                pb = b[c, u] * mx + b[c, v] * my
                low_a = min(low_a, pa)
                high_a = max(high_a, pa)
                low_b = min(low_b, pb)
                high_b = max(high_b, pb)
            margin = tolerance * 1e2 * length * scale
            if min(high_a, high_b) - max(low_a, low_b) <= margin:
                return False
    return True


@njit(cache=True)
def pair_relation(corners, first, second, tolerance):
    """How faces ``first`` and ``second`` meet: NONE, CROSSING or COPLANAR_OVERLAP.

    The non-coplanar test is the same arithmetic as
    :func:`meshprops.checks.triangles_cross` (Möller's interval test, Möller 1997,
    "A fast triangle-triangle intersection test", J. Graphics Tools 2(2); from
    memory), written per pair: each triangle must have corners strictly on both
    sides of the other's plane, and the two intervals in which the triangles meet
    the planes' common line must overlap by more than the tolerance. Coplanar pairs
    (every corner of each in the other's plane) get a strict 2D overlap test.
    """
    a = np.empty((3, 3))
    b = np.empty((3, 3))
    scale = 0.0
    for k in range(3):
        for i in range(3):
            a[k, i] = corners[first, k, i] - corners[first, 0, i]
            b[k, i] = corners[second, k, i] - corners[first, 0, i]
            scale = max(scale, abs(a[k, i]), abs(b[k, i]))
    if scale == 0.0:
        scale = 1.0
    nax, nay, naz = _cross3(a[1, 0] - a[0, 0], a[1, 1] - a[0, 1], a[1, 2] - a[0, 2],
                            a[2, 0] - a[0, 0], a[2, 1] - a[0, 1], a[2, 2] - a[0, 2])  # fmt: skip
    nbx, nby, nbz = _cross3(b[1, 0] - b[0, 0], b[1, 1] - b[0, 1], b[1, 2] - b[0, 2],
                            b[2, 0] - b[0, 0], b[2, 1] - b[0, 1], b[2, 2] - b[0, 2])  # fmt: skip
    norm_a = np.sqrt(nax * nax + nay * nay + naz * naz)
    norm_b = np.sqrt(nbx * nbx + nby * nby + nbz * nbz)
    if norm_a == 0.0 or norm_b == 0.0:
        return NONE
    dist_a = np.empty(3)
    dist_b = np.empty(3)
    zeros_a = 0
    zeros_b = 0
    for k in range(3):
        da = nbx * (a[k, 0] - b[0, 0]) + nby * (a[k, 1] - b[0, 1]) + nbz * (a[k, 2] - b[0, 2])
        db = nax * (b[k, 0] - a[0, 0]) + nay * (b[k, 1] - a[0, 1]) + naz * (b[k, 2] - a[0, 2])
        if abs(da) <= tolerance * (norm_b * scale):
            da = 0.0
            zeros_a += 1
        if abs(db) <= tolerance * (norm_a * scale):
            db = 0.0
            zeros_b += 1
        dist_a[k] = da
        dist_b[k] = db
    lx, ly, lz = _cross3(nax, nay, naz, nbx, nby, nbz)
    line_norm = np.sqrt(lx * lx + ly * ly + lz * lz)
    if not line_norm > tolerance * norm_a * norm_b:
        if zeros_a == 3 and zeros_b == 3:
            normal = np.array([nax, nay, naz])
            if _coplanar_overlap(a, b, normal, scale, tolerance):
                return COPLANAR_OVERLAP
        return NONE
    if not (max(dist_a[0], dist_a[1], dist_a[2]) > 0.0 and min(dist_a[0], dist_a[1], dist_a[2]) < 0.0):
        return NONE
    if not (max(dist_b[0], dist_b[1], dist_b[2]) > 0.0 and min(dist_b[0], dist_b[1], dist_b[2]) < 0.0):
        return NONE
    low_a, high_a = _plane_interval(a, dist_a, lx, ly, lz)
    low_b, high_b = _plane_interval(b, dist_b, lx, ly, lz)
    if min(high_a, high_b) - max(low_a, low_b) > tolerance * 1e2 * line_norm * scale:
        return CROSSING
    return NONE


@njit(cache=True)
def _plane_interval(t, distance, lx, ly, lz):
    projection = np.empty(3)
    low = np.inf
    high = -np.inf
    for k in range(3):
        projection[k] = t[k, 0] * lx + t[k, 1] * ly + t[k, 2] * lz
        if distance[k] == 0.0:
            low = min(low, projection[k])
            high = max(high, projection[k])
    for k in range(3):
        j = (k + 1) % 3
        if distance[k] * distance[j] < 0.0:
            value = projection[k] + (projection[j] - projection[k]) * distance[k] / (distance[k] - distance[j])
            low = min(low, value)
            high = max(high, value)
    return low, high


@njit(cache=True, parallel=True)
def cell_entry_counts(low, high, origin, cell_size):
    """(F,) int64 number of grid cells each face's bounding box overlaps."""
    count = low.shape[0]
    out = np.empty(count, dtype=np.int64)
    for face in prange(count):
        total = 1
        for axis in range(3):
            first = np.int64(np.floor((low[face, axis] - origin[axis]) / cell_size))
            last = np.int64(np.floor((high[face, axis] - origin[axis]) / cell_size))
            total *= last - first + 1
        out[face] = total
    return out


@njit(cache=True, parallel=True)
def cell_entries(low, high, origin, cell_size, dims, offsets):
    """Linear cell key of every (face, cell) entry; ``offsets`` (F + 1,) from the counts."""
    count = low.shape[0]
    keys = np.empty(offsets[count], dtype=np.int64)
    faces = np.empty(offsets[count], dtype=np.int64)
    for face in prange(count):
        lo = np.empty(3, dtype=np.int64)
        hi = np.empty(3, dtype=np.int64)
        for axis in range(3):
            lo[axis] = np.int64(np.floor((low[face, axis] - origin[axis]) / cell_size))
            hi[axis] = np.int64(np.floor((high[face, axis] - origin[axis]) / cell_size))
        position = offsets[face]
        for x in range(lo[0], hi[0] + 1):
            for y in range(lo[1], hi[1] + 1):
                for z in range(lo[2], hi[2] + 1):
                    keys[position] = (x * dims[1] + y) * dims[2] + z
                    faces[position] = face
                    position += 1
    return keys, faces


@njit(cache=True)
def group_by_cell(keys, faces):
    """Dense cell numbering by an open-addressing hash table, then a counting sort.

    Returns ``cell_keys`` (C,), ``starts`` (C + 1,) and ``members`` (E,): the faces of
    cell ``c`` are ``members[starts[c]:starts[c + 1]]``.
    """
    entries = keys.shape[0]
    size = 1
    while size < 2 * entries + 2:
        size *= 2
    mask = size - 1
    slot_key = np.full(size, -1, dtype=np.int64)
    slot_id = np.empty(size, dtype=np.int64)
    dense = np.empty(entries, dtype=np.int64)
    cell_keys = np.empty(entries, dtype=np.int64)
    cells = 0
    for e in range(entries):
        key = keys[e]
        h = np.uint64(key) * np.uint64(0x9E3779B97F4A7C15)
        slot = np.int64(h >> np.uint64(33)) & mask
        while True:
            if slot_key[slot] == key:
                dense[e] = slot_id[slot]
                break
            if slot_key[slot] == -1:
                slot_key[slot] = key
                slot_id[slot] = cells
                cell_keys[cells] = key
                dense[e] = cells
                cells += 1
                break
            slot = (slot + 1) & mask
    starts = np.zeros(cells + 1, dtype=np.int64)
    for e in range(entries):
        starts[dense[e] + 1] += 1
    for c in range(cells):
        starts[c + 1] += starts[c]
    fill = starts[:cells].copy()
    members = np.empty(entries, dtype=np.int64)
    for e in range(entries):
        members[fill[dense[e]]] = faces[e]
        fill[dense[e]] += 1
    return cell_keys[:cells].copy(), starts, members


@njit(cache=True)
def _cell_pairs(c, cell_keys, starts, members, corners, face_vertices, low, high, origin, cell_size, dims,
                tolerance, skip_shared, out_first, out_second, out_kind, position, write):  # fmt: skip
    key = cell_keys[c]
    cz = key % dims[2]
    cy = (key // dims[2]) % dims[1]
    cx = key // (dims[2] * dims[1])
    found = 0
    begin = starts[c]
    end = starts[c + 1]
    for p in range(begin, end):
        i = members[p]
        for q in range(p + 1, end):
            j = members[q]
            # bounding boxes must overlap
            if (low[i, 0] > high[j, 0] or low[j, 0] > high[i, 0] or low[i, 1] > high[j, 1]
                    or low[j, 1] > high[i, 1] or low[i, 2] > high[j, 2] or low[j, 2] > high[i, 2]):  # fmt: skip
                continue
            # test each pair once: in the cell holding the low corner of the two boxes' overlap
            ox = np.int64(np.floor((max(low[i, 0], low[j, 0]) - origin[0]) / cell_size))
            oy = np.int64(np.floor((max(low[i, 1], low[j, 1]) - origin[1]) / cell_size))
            oz = np.int64(np.floor((max(low[i, 2], low[j, 2]) - origin[2]) / cell_size))
            if ox != cx or oy != cy or oz != cz:
                continue
            shared = 0
            for s in range(3):
                for t in range(3):
                    if face_vertices[i, s] == face_vertices[j, t]:
                        shared += 1
            if shared >= skip_shared:
                continue
            kind = pair_relation(corners, i, j, tolerance)
            if kind != NONE:
                if write:
                    out_first[position + found] = min(i, j)
                    out_second[position + found] = max(i, j)
                    out_kind[position + found] = kind
                found += 1
    return found


@njit(cache=True, parallel=True)
def grid_pairs(cell_keys, starts, members, corners, face_vertices, low, high, origin, cell_size, dims, tolerance,
               skip_shared):  # fmt: skip
    """Every pair of faces that cross (kind 1) or overlap coplanar (kind 2), each once.

    Pairs sharing ``skip_shared`` or more vertices are not tested (1: any shared vertex).
    Parallel over cells, in two passes: count, then (only if anything was found)
    write at each cell's offset. Returns ``first``, ``second`` (P,) int64 face
    numbers (first < second) and ``kind`` (P,) int8.
    """
    cells = cell_keys.shape[0]
    counts = np.zeros(cells + 1, dtype=np.int64)
    dummy = np.empty(0, dtype=np.int64)
    dummy_kind = np.empty(0, dtype=np.int8)
    for c in prange(cells):
        if starts[c + 1] - starts[c] > 1:
            counts[c + 1] = _cell_pairs(c, cell_keys, starts, members, corners, face_vertices, low, high, origin,
                                        cell_size, dims, tolerance, skip_shared, dummy, dummy, dummy_kind, 0,
                                        False)  # fmt: skip
    for c in range(cells):
        counts[c + 1] += counts[c]
    total = counts[cells]
    first = np.empty(total, dtype=np.int64)
    second = np.empty(total, dtype=np.int64)
    kind = np.empty(total, dtype=np.int8)
    if total > 0:
        for c in prange(cells):
            if counts[c + 1] > counts[c]:
                _cell_pairs(c, cell_keys, starts, members, corners, face_vertices, low, high, origin, cell_size,
                            dims, tolerance, skip_shared, first, second, kind, counts[c], True)  # fmt: skip
    return first, second, kind


@njit(cache=True, parallel=True)
def face_sides_winding(corners, queries, axes):
    """Winding number of the closed surface just outside each query face.

    For query face ``f`` (normal ``n``), a ray from its centroid ``c`` along axis
    ``axes[k]`` (the axis of ``n``'s largest component, so the ray leaves the face
    steeply) counts every other face it crosses beyond ``c`` with the sign of that
    face's normal along the ray. Seen from just outside ``f`` the ray also passes
    ``f`` itself when ``n`` points against it. Ties on a projected edge go to
    exactly one of the faces sharing it (the one left of the edge taken from its
    lexicographically smaller end), as in :func:`meshprops.checks.winding_numbers`.
    The winding just inside ``f`` is this value plus one.
    """
    count = queries.shape[0]
    result = np.zeros(count, dtype=np.int64)
    faces = corners.shape[0]
    for k in prange(count):
        f = queries[k]
        ray = axes[k]
        u = (ray + 1) % 3
        v = (ray + 2) % 3
        qx = (corners[f, 0, ray] + corners[f, 1, ray] + corners[f, 2, ray]) / 3.0
        qu = (corners[f, 0, u] + corners[f, 1, u] + corners[f, 2, u]) / 3.0
        qv = (corners[f, 0, v] + corners[f, 1, v] + corners[f, 2, v]) / 3.0
        total = 0
        for g in range(faces):
            if g == f:
                continue
            pu0 = corners[g, 0, u]
            pu1 = corners[g, 1, u]
            pu2 = corners[g, 2, u]
            if (pu0 < qu and pu1 < qu and pu2 < qu) or (pu0 > qu and pu1 > qu and pu2 > qu):
                continue
            pv0 = corners[g, 0, v]
            pv1 = corners[g, 1, v]
            pv2 = corners[g, 2, v]
            if (pv0 < qv and pv1 < qv and pv2 < qv) or (pv0 > qv and pv1 > qv and pv2 > qv):
                continue
            if corners[g, 0, ray] <= qx and corners[g, 1, ray] <= qx and corners[g, 2, ray] <= qx:
                continue
            area = (pu1 - pu0) * (pv2 - pv0) - (pv1 - pv0) * (pu2 - pu0)
            if area == 0.0:
                continue
            sense = 1.0 if area > 0 else -1.0
            inside = True
            weights = np.empty(3)
            for e in range(3):
                n = (e + 1) % 3
                ay = corners[g, e, u]
                az = corners[g, e, v]
                by = corners[g, n, u]
                bz = corners[g, n, v]
                swap = (ay > by) or (ay == by and az > bz)
                if swap:
                    ay, az, by, bz = by, bz, ay, az
                value = (by - ay) * (qv - az) - (bz - az) * (qu - ay)
                direction = -1.0 if swap else 1.0
                left = sense * direction
                if not (left * value > 0 or (value == 0 and left > 0)):
                    inside = False
                    break
                weights[e] = value * direction
            if not inside:
                continue
            # weights[e] is the edge function of edge e, i.e. the weight of the corner opposite it
            weight_sum = weights[0] + weights[1] + weights[2]
            if weight_sum == 0.0:
                continue
            hit = (weights[1] * corners[g, 0, ray] + weights[2] * corners[g, 1, ray]
                   + weights[0] * corners[g, 2, ray]) / weight_sum  # fmt: skip
            if hit > qx:
                total += 1 if sense > 0 else -1
        # the face itself, seen from just outside: crossed when its normal points against the ray
        au = corners[f, 1, u] - corners[f, 0, u]
        av = corners[f, 1, v] - corners[f, 0, v]
        bu = corners[f, 2, u] - corners[f, 0, u]
        bv = corners[f, 2, v] - corners[f, 0, v]
        if au * bv - av * bu < 0:
            total -= 1
        result[k] = total
    return result
