"""Compiled kernels of the welding and edge checks on large meshes (numba, ``cache=True``).

Imported on first use only, through :func:`meshprops.geometry.compiled.kernels`, so that a
command on a small part never pays numba's import. Each kernel gives exactly the answer of the
numpy code beside its caller (tested to agree); they replace sorts of the whole corner or edge
array (tens of nanoseconds an element on 2M faces) by one pass with a hash table or by lists of
each vertex's outgoing edges (a few nanoseconds an element).
"""

from __future__ import annotations

import types

import numpy as np
from numba import njit, prange

#: The kernels called from Python (their on-disk cache tells whether a first compile is due).
ENTRY_POINTS = ("weld_rows", "closed_and_oriented", "has_duplicate_faces", "thin_face_candidates")

_EMPTY = np.int32(-1)

_SERIAL: dict = {}


def parallel_and_serial(function):
    """Compile ``function`` on all cores, and keep a one-thread twin (:func:`serial_twin`).

    For small meshes and in pool workers the twin answers: starting numba's threads costs more
    than the work, and a worker forked from a process whose OpenMP threads started must not
    start its own. The twin is the same code under its own name, so numba caches the two apart.
    """
    twin = types.FunctionType(function.__code__, function.__globals__, function.__name__ + "_serial",
                              function.__defaults__, function.__closure__)  # fmt: skip
    twin.__qualname__ = function.__qualname__ + "_serial"
    twin.__doc__ = function.__doc__
    _SERIAL[(function.__module__, function.__name__)] = njit(cache=True)(twin)
    return njit(cache=True, parallel=True)(function)


def serial_twin(module: str, name: str):
    """The one-thread twin of the parallel kernel ``name`` of kernel module ``module``."""
    return _SERIAL[(module, name)]


def serial_twins(module: str) -> list:
    """The one-thread twins of ``module``'s parallel kernels."""
    return [dispatcher for (owner, _), dispatcher in _SERIAL.items() if owner == module]


@njit(cache=True, inline="always")
def _row_hash(a, b, c):
    """A 64-bit hash of one corner's three coordinate words (uint32 or uint64)."""
    h = (np.uint64(a) ^ (np.uint64(b) << np.uint64(32)) ^ (np.uint64(b) >> np.uint64(32))) * np.uint64(
        0x9E3779B97F4A7C15
    )
    h ^= (h >> np.uint64(29)) ^ (np.uint64(c) * np.uint64(0xBF58476D1CE4E5B9))
    h *= np.uint64(0x94D049BB133111EB)
    return h ^ (h >> np.uint64(32))


@njit(cache=True)
def _rehash(vertex_bits, count, capacity):
    table = np.full(capacity, _EMPTY, dtype=np.int32)
    mask = np.uint64(capacity - 1)
    for v in range(count):
        slot = _row_hash(vertex_bits[v, 0], vertex_bits[v, 1], vertex_bits[v, 2]) & mask
        while table[slot] >= 0:
            slot = (slot + np.uint64(1)) & mask
        table[slot] = v
    return table


@njit(cache=True)
def weld_rows(bits, ids, first_row, table, vertex_bits, count):
    """Give every row of ``bits`` the id of the first earlier row with the same coordinate bits.

    Parameters
    ----------
    bits : (k, 3) uint32 or uint64 coordinate words of one block of rows (-0.0 already made +0.0)
    ids : (N,) int32 or int64 out: ``ids[first_row + r]`` is row ``r``'s vertex id
    first_row : index of the block's first row among all rows
    table : (C,) int32 open-addressing hash table of vertex ids (-1 empty; C a power of two)
    vertex_bits : (M, 3) coordinate words of each vertex id so far (grown as needed)
    count : vertex ids given so far

    Returns ``(table, vertex_bits, count)``: the (possibly grown) state for the next block.
    Ids are dense and in order of first appearance; equal bits and only equal bits share an id
    (the table compares the words themselves, so a hash collision never merges two rows).
    """
    mask = np.uint64(table.shape[0] - 1)
    for r in range(bits.shape[0]):
        a = bits[r, 0]
        b = bits[r, 1]
        c = bits[r, 2]
        slot = _row_hash(a, b, c) & mask
        while True:
            v = table[slot]
            if v < 0:
                if count == vertex_bits.shape[0]:
                    grown = np.empty((2 * vertex_bits.shape[0] + 16, 3), dtype=vertex_bits.dtype)
                    grown[:count] = vertex_bits[:count]
                    vertex_bits = grown
                vertex_bits[count, 0] = a
                vertex_bits[count, 1] = b
                vertex_bits[count, 2] = c
                table[slot] = count
                ids[first_row + r] = count
                count += 1
                if 2 * count > table.shape[0]:  # keep the table at most half full
                    table = _rehash(vertex_bits, count, 2 * table.shape[0])
                    mask = np.uint64(table.shape[0] - 1)
                break
            if vertex_bits[v, 0] == a and vertex_bits[v, 1] == b and vertex_bits[v, 2] == c:
                ids[first_row + r] = v
                break
            slot = (slot + np.uint64(1)) & mask
    return table, vertex_bits, count


@njit(cache=True)
def _outgoing(face_vertices, vertex_count):
    """Each vertex's outgoing half-edges: ``starts`` (V + 1,) and ``heads`` (3F,), by tail vertex."""
    faces = face_vertices.shape[0]
    starts = np.zeros(vertex_count + 1, dtype=np.int64)
    for f in range(faces):
        for k in range(3):
            starts[face_vertices[f, k] + 1] += 1
    for v in range(vertex_count):
        starts[v + 1] += starts[v]
    fill = starts[:vertex_count].copy()
    heads = np.empty(3 * faces, dtype=face_vertices.dtype)
    for f in range(faces):
        for k in range(3):
            tail = face_vertices[f, k]
            heads[fill[tail]] = face_vertices[f, (k + 1) % 3]
            fill[tail] += 1
    return starts, heads


@parallel_and_serial
def closed_and_oriented(face_vertices, vertex_count):
    """True when every directed edge occurs exactly once and so does its reverse.

    The answer of :func:`meshprops.geometry.topology.is_closed_and_oriented`: for each
    half-edge ``a -> b``, ``b`` appears once among ``a``'s heads and ``a`` once among
    ``b``'s (a vertex has a handful of edges, so each look-up is a short scan). A face
    that repeats a vertex has a null edge ``a -> a`` and fails. Parallel over vertices.
    """
    starts, heads = _outgoing(face_vertices, vertex_count)
    failed = 0
    for a in prange(vertex_count):
        for p in range(starts[a], starts[a + 1]):
            b = heads[p]
            if b == a or _edges_to(heads, starts, a, b) != 1 or _edges_to(heads, starts, b, a) != 1:
                failed += 1
                break
    return failed == 0


@njit(cache=True, inline="always")
def _edges_to(heads, starts, tail, head):
    """How many of ``tail``'s outgoing half-edges end at ``head``."""
    found = 0
    for q in range(starts[tail], starts[tail + 1]):
        if heads[q] == head:
            found += 1
    return found


@njit(cache=True)
def has_duplicate_faces(face_vertices, vertex_count):
    """Whether two faces with three distinct vertices use the same vertex set.

    Faces are listed under their smallest vertex; only faces under one vertex are compared.
    """
    faces = face_vertices.shape[0]
    starts = np.zeros(vertex_count + 1, dtype=np.int64)
    for f in range(faces):
        starts[min(face_vertices[f, 0], face_vertices[f, 1], face_vertices[f, 2]) + 1] += 1
    for v in range(vertex_count):
        starts[v + 1] += starts[v]
    fill = starts[:vertex_count].copy()
    middle = np.empty(faces, dtype=face_vertices.dtype)
    top = np.empty(faces, dtype=face_vertices.dtype)
    for f in range(faces):
        p, q, r = face_vertices[f, 0], face_vertices[f, 1], face_vertices[f, 2]
        least = min(p, q, r)
        most = max(p, q, r)
        slot = fill[least]
        fill[least] += 1
        if p == q or q == r or r == p:
            middle[slot] = -1  # a collapsed face is never a duplicate
            top[slot] = -1
        else:
            middle[slot] = p + q + r - least - most
            top[slot] = most
    for v in range(vertex_count):
        for s in range(starts[v], starts[v + 1]):
            if middle[s] < 0:
                continue
            for t in range(s + 1, starts[v + 1]):
                if middle[t] == middle[s] and top[t] == top[s]:
                    return True
    return False


@njit(cache=True)
def thin_face_candidates(positions, face_vertices, limit, resolution):
    """Faces whose height over their longest edge may be at most their zero-area tolerance.

    ``positions`` (V, 3) float64 vertex coordinates; ``limit`` the part of the tolerance that
    is the same for every face; ``resolution`` the rounding unit of the coordinates (relative).
    A superset of the zero-area faces of :func:`meshprops.validation.checks.zero_area_faces`
    (twice its tolerance, plus the face size times 1e-12 for rounding), which tests the few
    faces found here exactly. Faces repeating a vertex are left out.
    """
    faces = face_vertices.shape[0]
    found = np.zeros(faces, dtype=np.bool_)
    for f in range(faces):
        i = face_vertices[f, 0]
        j = face_vertices[f, 1]
        k = face_vertices[f, 2]
        if i == j or j == k or k == i:
            continue
        magnitude = 0.0
        for axis in range(3):
            magnitude = max(magnitude, abs(positions[i, axis]), abs(positions[j, axis]), abs(positions[k, axis]))
        abx = positions[j, 0] - positions[i, 0]
        aby = positions[j, 1] - positions[i, 1]
        abz = positions[j, 2] - positions[i, 2]
        acx = positions[k, 0] - positions[i, 0]
        acy = positions[k, 1] - positions[i, 1]
        acz = positions[k, 2] - positions[i, 2]
        bcx = acx - abx
        bcy = acy - aby
        bcz = acz - abz
        longest = max(abx * abx + aby * aby + abz * abz, acx * acx + acy * acy + acz * acz, bcx * bcx + bcy * bcy + bcz * bcz)
        nx = aby * acz - abz * acy
        ny = abz * acx - abx * acz
        nz = abx * acy - aby * acx
        doubled_area = np.sqrt(nx * nx + ny * ny + nz * nz)
        tolerance = 2.0 * (limit + 4.0 * resolution * magnitude) + 1e-12 * np.sqrt(longest)
        if doubled_area <= tolerance * np.sqrt(longest):
            found[f] = True
    return np.flatnonzero(found)


def serial(name: str):
    """The one-thread twin of this module's parallel kernel ``name``."""
    return serial_twin(__name__, name)


def dispatchers() -> list:
    """Every kernel called from Python, one-thread twins included (for the cache check)."""
    return [globals()[name] for name in ENTRY_POINTS] + serial_twins(__name__)
