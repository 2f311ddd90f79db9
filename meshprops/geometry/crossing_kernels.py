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

from .mesh_kernels import parallel_and_serial, serial_twin, serial_twins

#: The kernels called from Python (their on-disk cache tells whether a first compile is due).
ENTRY_POINTS = ("face_boxes", "cell_entry_total", "bucket_entries", "grid_pairs", "face_sides_winding")

def serial(name: str):
    """The one-thread twin of this module's parallel kernel ``name`` (same answers, same order)."""
    return serial_twin(__name__, name)


def dispatchers() -> list:
    """Every kernel called from Python, one-thread twins included (for the cache check)."""
    return [globals()[name] for name in ENTRY_POINTS] + serial_twins(__name__)


#: Result codes of :func:`pair_relation`.
NONE = 0
CROSSING = 1
COPLANAR_OVERLAP = 2


@njit(cache=True, inline="always")
def _cross3(ax, ay, az, bx, by, bz):
    return ay * bz - az * by, az * bx - ax * bz, ax * by - ay * bx


@njit(cache=True)
def _coplanar_overlap(a, b, normal, scale, tolerance):
    """Strict 2D overlap of two coplanar triangles' interiors (separating-axis test).

    ``a``, ``b`` tuples of three corners (x, y, z) relative to a common point;
    ``normal`` the plane's normal. The plane is projected on the coordinate plane
    that drops the normal's largest component. Touching along an edge or at a
    corner is no overlap.
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
            mx = t[j][v] - t[k][v]
            my = -(t[j][u] - t[k][u])
            length = np.sqrt(mx * mx + my * my)
            if length == 0.0:
                return False
            low_a = np.inf
            high_a = -np.inf
            low_b = np.inf
            high_b = -np.inf
            for c in range(3):
                pa = a[c][u] * mx + a[c][v] * my
                pb = b[c][u] * mx + b[c][v] * my
                low_a = min(low_a, pa)
                high_a = max(high_a, pa)
                low_b = min(low_b, pb)
                high_b = max(high_b, pb)
            margin = tolerance * 1e2 * length * scale
            if min(high_a, high_b) - max(low_a, low_b) <= margin:
                return False
    return True


@njit(cache=True, inline="always")
def _corner(vertices, faces, face, k, ox, oy, oz):
    v = faces[face, k]
    return (vertices[v, 0] - ox, vertices[v, 1] - oy, vertices[v, 2] - oz)


@njit(cache=True, inline="always")
def _dot_from(n, p, q):
    return n[0] * (p[0] - q[0]) + n[1] * (p[1] - q[1]) + n[2] * (p[2] - q[2])


@njit(cache=True, inline="always")
def _normal(t):
    return _cross3(t[1][0] - t[0][0], t[1][1] - t[0][1], t[1][2] - t[0][2],
                   t[2][0] - t[0][0], t[2][1] - t[0][1], t[2][2] - t[0][2])  # fmt: skip


@njit(cache=True)
def pair_relation(vertices, faces, first, second, tolerance):
    """How faces ``first`` and ``second`` meet: NONE, CROSSING or COPLANAR_OVERLAP.

    The non-coplanar test is the same arithmetic as
    :func:`meshprops.checks.triangles_cross` (Möller's interval test, Möller 1997,
    "A fast triangle-triangle intersection test", J. Graphics Tools 2(2); from
    memory), written per pair on the stack: each triangle must have corners
    strictly on both sides of the other's plane, and the two intervals in which the
    triangles meet the planes' common line must overlap by more than the
    tolerance. Coplanar pairs (every corner of each in the other's plane) get a
    strict 2D overlap test.
    """
    origin = faces[first, 0]
    ox = vertices[origin, 0]
    oy = vertices[origin, 1]
    oz = vertices[origin, 2]
    a = (_corner(vertices, faces, first, 0, ox, oy, oz), _corner(vertices, faces, first, 1, ox, oy, oz),
         _corner(vertices, faces, first, 2, ox, oy, oz))  # fmt: skip
    b = (_corner(vertices, faces, second, 0, ox, oy, oz), _corner(vertices, faces, second, 1, ox, oy, oz),
         _corner(vertices, faces, second, 2, ox, oy, oz))  # fmt: skip
    scale = 0.0
    for k in range(3):
        for i in range(3):
            scale = max(scale, abs(a[k][i]), abs(b[k][i]))
    if scale == 0.0:
        scale = 1.0
    na = _normal(a)
    nb = _normal(b)
    norm_a = np.sqrt(na[0] * na[0] + na[1] * na[1] + na[2] * na[2])
    norm_b = np.sqrt(nb[0] * nb[0] + nb[1] * nb[1] + nb[2] * nb[2])
    if norm_a == 0.0 or norm_b == 0.0:
        return NONE
    limit_a = tolerance * (norm_b * scale)
    limit_b = tolerance * (norm_a * scale)
    da0 = _dot_from(nb, a[0], b[0])
    da1 = _dot_from(nb, a[1], b[0])
    da2 = _dot_from(nb, a[2], b[0])
    db0 = _dot_from(na, b[0], a[0])
    db1 = _dot_from(na, b[1], a[0])
    db2 = _dot_from(na, b[2], a[0])
    da0 = 0.0 if abs(da0) <= limit_a else da0
    da1 = 0.0 if abs(da1) <= limit_a else da1
    da2 = 0.0 if abs(da2) <= limit_a else da2
    db0 = 0.0 if abs(db0) <= limit_b else db0
    db1 = 0.0 if abs(db1) <= limit_b else db1
    db2 = 0.0 if abs(db2) <= limit_b else db2
    line = _cross3(na[0], na[1], na[2], nb[0], nb[1], nb[2])
    line_norm = np.sqrt(line[0] * line[0] + line[1] * line[1] + line[2] * line[2])
    if not line_norm > tolerance * norm_a * norm_b:
        if da0 == 0.0 and da1 == 0.0 and da2 == 0.0 and db0 == 0.0 and db1 == 0.0 and db2 == 0.0:
            if _coplanar_overlap(a, b, na, scale, tolerance):
                return COPLANAR_OVERLAP
        return NONE
    if not (max(da0, da1, da2) > 0.0 and min(da0, da1, da2) < 0.0):
        return NONE
    if not (max(db0, db1, db2) > 0.0 and min(db0, db1, db2) < 0.0):
        return NONE
    low_a, high_a = _plane_interval(a, (da0, da1, da2), line)
    low_b, high_b = _plane_interval(b, (db0, db1, db2), line)
    if min(high_a, high_b) - max(low_a, low_b) > tolerance * 1e2 * line_norm * scale:
        return CROSSING
    return NONE


@njit(cache=True)
def _plane_interval(t, distance, line):
    low = np.inf
    high = -np.inf
    projection = (t[0][0] * line[0] + t[0][1] * line[1] + t[0][2] * line[2],
                  t[1][0] * line[0] + t[1][1] * line[1] + t[1][2] * line[2],
                  t[2][0] * line[0] + t[2][1] * line[1] + t[2][2] * line[2])  # fmt: skip
    for k in range(3):
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


@njit(cache=True, inline="always")
def _down32(x):
    """The largest float32 not above ``x``."""
    y = np.float32(x)
    return np.nextafter(y, np.float32(-np.inf)) if y > x else y


@njit(cache=True, inline="always")
def _up32(x):
    """The smallest float32 not below ``x``."""
    y = np.float32(x)
    return np.nextafter(y, np.float32(np.inf)) if y < x else y


@parallel_and_serial
def face_boxes(vertices, faces):
    """(F, 6) float32 box of each face: lowest x, y, z then highest x, y, z, rounded outwards.

    float32 halves the memory the pair loop reads; rounding outwards keeps every pair of
    boxes that overlap in float64 overlapping (the narrow phase is exact in float64).
    """
    count = faces.shape[0]
    boxes = np.empty((count, 6), dtype=np.float32)
    for face in prange(count):
        for axis in range(3):
            p = vertices[faces[face, 0], axis]
            q = vertices[faces[face, 1], axis]
            r = vertices[faces[face, 2], axis]
            boxes[face, axis] = _down32(min(p, q, r))
            boxes[face, 3 + axis] = _up32(max(p, q, r))
    return boxes


@njit(cache=True, inline="always")
def _cell_of(value, origin, cell_size):
    return np.int64(np.floor((np.float64(value) - origin) / cell_size))


@parallel_and_serial
def cell_entry_total(boxes, origin, cell_size):
    """Number of (face, cell) entries: grid cells overlapped by each face's box, summed."""
    total = 0
    for face in prange(boxes.shape[0]):
        cells = 1
        for axis in range(3):
            cells *= (_cell_of(boxes[face, 3 + axis], origin[axis], cell_size)
                      - _cell_of(boxes[face, axis], origin[axis], cell_size) + 1)  # fmt: skip
        total += cells
    return total


@njit(cache=True, inline="always")
def _bucket(key, mask, scatter):
    """The hash bucket of a linear cell key. Unscattered, the key's low bits: neighbouring cells
    then get nearby buckets, and the pair loop, which runs through the buckets in order, finds
    the faces it has just read still in cache (~15 % less work on a large part). Scattered (a
    multiplicative hash), for the shapes whose cells would pile into a few buckets that way."""
    if scatter:
        return np.int64((np.uint64(key) * np.uint64(0x9E3779B97F4A7C15)) >> np.uint64(29)) & mask
    return key & mask


@njit(cache=True, inline="always")
def _cell_range(boxes, face, origin, cell_size):
    return (_cell_of(boxes[face, 0], origin[0], cell_size), _cell_of(boxes[face, 1], origin[1], cell_size),
            _cell_of(boxes[face, 2], origin[2], cell_size), _cell_of(boxes[face, 3], origin[0], cell_size),
            _cell_of(boxes[face, 4], origin[1], cell_size), _cell_of(boxes[face, 5], origin[2], cell_size))  # fmt: skip


@parallel_and_serial
def bucket_entries(boxes, origin, cell_size, dims, bucket_count, parts, scatter):
    """Every (face, cell) entry, grouped by a hash of its cell into ``bucket_count`` buckets (a power of two).

    Two passes over the faces (count, then place), each enumerating the cells of the
    face's box (``scatter``: see :func:`_bucket`). ``parts`` threads split the buckets between them (each reads every face
    and places the entries of its own range of buckets, so no two threads write one
    place). A bucket may hold several cells whose keys collide; the pair loop compares
    keys, so collisions cost a few extra comparisons and never a wrong pair.
    Returns ``starts`` (B + 1,) int64, ``member_keys`` (E,) int64 linear cell keys,
    ``member_faces`` (E,) int32 and ``member_low_x`` (E,) float32, the lowest x of each
    entry's face (kept beside the entry so that sorting and sweeping a cell read memory
    in order): bucket ``b`` holds entries ``starts[b]:starts[b + 1]``.
    """
    count = boxes.shape[0]
    mask = bucket_count - 1
    share = (bucket_count + parts - 1) // parts
    starts = np.zeros(bucket_count + 1, dtype=np.int64)
    for part in prange(parts):
        first = part * share
        last = min(bucket_count, first + share)
        for face in range(count):
            x0, y0, z0, x1, y1, z1 = _cell_range(boxes, face, origin, cell_size)
            for x in range(x0, x1 + 1):
                for y in range(y0, y1 + 1):
                    for z in range(z0, z1 + 1):
                        b = _bucket((x * dims[1] + y) * dims[2] + z, mask, scatter)
                        if first <= b < last:
                            starts[b + 1] += 1
    for b in range(bucket_count):
        starts[b + 1] += starts[b]
    entries = starts[bucket_count]
    fill = starts[:bucket_count].copy()
    member_keys = np.empty(entries, dtype=np.int64)
    member_faces = np.empty(entries, dtype=np.int32)
    member_low_x = np.empty(entries, dtype=np.float32)
    for part in prange(parts):
        first = part * share
        last = min(bucket_count, first + share)
        for face in range(count):
            x0, y0, z0, x1, y1, z1 = _cell_range(boxes, face, origin, cell_size)
            for x in range(x0, x1 + 1):
                for y in range(y0, y1 + 1):
                    for z in range(z0, z1 + 1):
                        key = (x * dims[1] + y) * dims[2] + z
                        b = _bucket(key, mask, scatter)
                        if first <= b < last:
                            member_keys[fill[b]] = key
                            member_faces[fill[b]] = face
                            member_low_x[fill[b]] = boxes[face, 0]
                            fill[b] += 1
    return starts, member_keys, member_faces, member_low_x


@njit(cache=True)
def sort_bucket(b, starts, member_keys, member_faces, member_low_x):
    """Sort bucket ``b`` by (cell key, lowest x of the face's box), in place (insertion sort: buckets are small).

    The pair loop then sweeps along x within a cell and stops at the first face that
    starts beyond the current one's end.
    """
    begin = starts[b]
    end = starts[b + 1]
    for p in range(begin + 1, end):
        key = member_keys[p]
        face = member_faces[p]
        x = member_low_x[p]
        q = p - 1
        while q >= begin and (member_keys[q] > key or (member_keys[q] == key and member_low_x[q] > x)):
            member_keys[q + 1] = member_keys[q]
            member_faces[q + 1] = member_faces[q]
            member_low_x[q + 1] = member_low_x[q]
            q -= 1
        member_keys[q + 1] = key
        member_faces[q + 1] = face
        member_low_x[q + 1] = x


@njit(cache=True)
def _cell_pairs(c, member_keys, starts, members, member_low_x, vertices, faces, boxes, origin, cell_size, dims,
                tolerance, skip_shared, out_first, out_second, out_kind, position, write):  # fmt: skip
    """Test the pairs of bucket ``c`` (one or, after a hash collision, a few cells).

    The members' boxes, lowest cells and vertex ids are gathered first into small local
    arrays, so that the pair loop reads memory in order (each face is read once per entry,
    not once per pair).
    """
    found = 0
    begin = starts[c]
    end = starts[c + 1]
    n = end - begin
    box = np.empty((n, 6), dtype=np.float32)
    lowest = np.empty((n, 3), dtype=np.int64)
    corners = np.empty((n, 3), dtype=np.int64)
    for t in range(n):
        f = members[begin + t]
        for axis in range(6):
            box[t, axis] = boxes[f, axis]
        for axis in range(3):
            lowest[t, axis] = _cell_of(boxes[f, axis], origin[axis], cell_size)
            corners[t, axis] = faces[f, axis]
    for p in range(n):
        key = member_keys[begin + p]
        cz = key % dims[2]
        cy = (key // dims[2]) % dims[1]
        cx = key // (dims[2] * dims[1])
        for q in range(p + 1, n):
            if member_keys[begin + q] != key:
                break  # sorted by key: the cell's entries end here
            if member_low_x[begin + q] > box[p, 3]:
                break  # sorted by low x within the cell: no later face reaches back to face p
            # bounding boxes must overlap (in x they do: box[q, 0] lies in [box[p, 0], box[p, 3]])
            if box[p, 1] > box[q, 4] or box[q, 1] > box[p, 4] or box[p, 2] > box[q, 5] or box[q, 2] > box[p, 5]:
                continue
            # test each pair once: in the cell holding the low corner of the two boxes' overlap
            # (floor is monotonic, so the overlap's lowest cell is the larger of the two lowest cells)
            if (max(lowest[p, 0], lowest[q, 0]) != cx or max(lowest[p, 1], lowest[q, 1]) != cy
                    or max(lowest[p, 2], lowest[q, 2]) != cz):  # fmt: skip
                continue
            shared = 0
            for s in range(3):
                for t in range(3):
                    if corners[p, s] == corners[q, t]:
                        shared += 1
            if shared >= skip_shared:
                continue
            i = members[begin + p]
            j = members[begin + q]
            kind = pair_relation(vertices, faces, i, j, tolerance)
            if kind != NONE:
                if write:
                    out_first[position + found] = min(i, j)
                    out_second[position + found] = max(i, j)
                    out_kind[position + found] = kind
                found += 1
    return found


@parallel_and_serial
def grid_pairs(member_keys, starts, members, member_low_x, vertices, faces, boxes, origin, cell_size, dims, tolerance,
               skip_shared):  # fmt: skip
    """Every pair of faces that cross (kind 1) or overlap coplanar (kind 2), each once.

    Pairs sharing ``skip_shared`` or more vertices are not tested (1: any shared vertex).
    Parallel over cells, in two passes: count, then (only if anything was found)
    write at each cell's offset. Returns ``first``, ``second`` (P,) int64 face
    numbers (first < second) and ``kind`` (P,) int8.
    """
    cells = starts.shape[0] - 1
    counts = np.zeros(cells + 1, dtype=np.int64)
    dummy = np.empty(0, dtype=np.int64)
    dummy_kind = np.empty(0, dtype=np.int8)
    for c in prange(cells):
        if starts[c + 1] - starts[c] > 1:
            sort_bucket(c, starts, member_keys, members, member_low_x)
            counts[c + 1] = _cell_pairs(c, member_keys, starts, members, member_low_x, vertices, faces, boxes, origin,
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
                _cell_pairs(c, member_keys, starts, members, member_low_x, vertices, faces, boxes, origin, cell_size,
                            dims, tolerance, skip_shared, first, second, kind, counts[c], True)  # fmt: skip
    return first, second, kind


@parallel_and_serial
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
