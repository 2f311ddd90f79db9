"""Fast self-intersection finder: a uniform grid broad phase and a compiled narrow phase.

Which faces of a mesh pass through each other (:func:`find_crossings`), and how
much that can change the enclosed volume (:func:`crossing_volume_bound`).

The kernels (:mod:`meshprops.geometry.crossing_kernels`) are compiled by numba on first
use and cached on disk; when they answer, and the notice of their first compile, are
:mod:`meshprops.geometry.compiled`'s business.

Inputs are welded vertices and faces (never an (F, 3, 3) corner array: at 2M faces
that alone is 144 MB and a third of a second to build).

Broad phase: every face is entered in each cubic cell its bounding box overlaps.
The cell edge starts at twice the median face size (about two entries a face:
fewer, larger cells cost less memory and time than many small ones) and grows until the entries are at
most :data:`ENTRIES_PER_FACE` per face, so a few huge faces cannot blow the grid
up. Each pair is tested once, in the cell holding the low corner of the overlap of
the two faces' boxes. A fan of thousands of thin faces around a pole all lands in
the pole's cell; they share the pole vertex, so each pair costs nine integer
comparisons before it is dropped.

Narrow phase: Möller's interval test (:func:`meshprops.geometry.crossing_kernels.pair_relation`),
the same arithmetic as the rtree-based reference :func:`meshprops.checks.triangles_cross`;
faces sharing a vertex never count as crossing. Coplanar pairs get a strict 2D overlap
test, reported apart (``coplanar_pairs``), so the faces of a flat subdivided wall are
not false positives and faces resting on each other (solids stacked face to face) are
not crossings.
"""

from __future__ import annotations

import time
from dataclasses import dataclass

import numpy as np

from .compiled import all_cores, compiled_answers, one_thread, thread_count
from .compiled import kernels as compiled_kernels

#: A face is entered in at most about this many grid cells on average (the cell grows until it holds).
ENTRIES_PER_FACE = 4.0
#: The first cell edge over the median face size (see the module docstring).
CELL_OVER_FACE = 2.0
#: A bucket holding more entries than this means the cells' low key bits collide in a pattern (a
#: long bar along x, for instance); the buckets are then filled again with the keys scattered.
#: Cells hold ~10-30 entries on a surface, and a fan around a pole a few thousand.
PILED_BUCKET_ENTRIES = 20_000
#: Relative tolerance of the narrow phase (as in the rtree-based check).
RELATIVE_TOLERANCE = 1e-10


@dataclass(frozen=True, slots=True, eq=False)
class Crossings:
    """Faces of a mesh that pass through each other.

    Attributes
    ----------
    pairs : (P, 2) int64 face numbers (first < second, rows sorted) whose interiors cross along a
        segment of positive length; faces sharing a vertex are never listed
    coplanar_pairs : (Q, 2) int64 face numbers lying in one plane whose interiors overlap (only
        from the compiled path: empty when ``coplanar_checked`` is false)
    cell_size : the broad phase's cell edge, in the corners' unit
    entries : (face, cell) entries of the grid
    seconds : wall time of the search (compile time excluded), s
    """

    pairs: np.ndarray
    coplanar_pairs: np.ndarray
    cell_size: float
    entries: int
    seconds: float
    coplanar_checked: bool = True

    @property
    def faces(self) -> np.ndarray:
        """(K,) int64 sorted face numbers taking part in a crossing pair."""
        return np.unique(self.pairs)


def _cell_size(boxes: np.ndarray, vertices: np.ndarray, entry_total) -> tuple[float, np.ndarray, int]:
    """Cell edge, grid origin and the number of (face, cell) entries they give (see the module
    docstring); ``boxes`` from the ``face_boxes`` kernel, ``entry_total`` the ``cell_entry_total`` kernel."""
    bottom = np.array([vertices[:, axis].min() for axis in range(3)])
    step = max(1, boxes.shape[0] // 65536)  # the median of a sample is as good a start and 10x cheaper
    sample = boxes[::step].astype(np.float64)
    extent = (sample[:, 3:] - sample[:, :3]).max(axis=1)
    span = float(max(vertices[:, axis].max() - bottom[axis] for axis in range(3)))
    positive = extent[extent > 0]
    size = CELL_OVER_FACE * float(np.median(positive)) if positive.size else max(span, 1.0)
    size = max(size, span * 2.0**-20, 1e-300)  # at most 2^20 cells a side: linear keys stay within int64
    origin = bottom - 0.5 * size
    budget = ENTRIES_PER_FACE * boxes.shape[0] + 64
    while (entries := int(entry_total(boxes, origin, size))) > budget:
        size *= 1.5
        origin = bottom - 0.5 * size
    return size, origin, entries


def find_crossings(
    vertices: np.ndarray,
    faces: np.ndarray,
    *,
    relative_tolerance: float = RELATIVE_TOLERANCE,
    include_vertex_neighbours: bool = False,
    force_compiled: bool = False,
    force_rtree: bool = False,
    _parallel: bool | None = None,
) -> Crossings:
    """Every pair of faces whose interiors cross, and every coplanar pair whose interiors overlap.

    Parameters
    ----------
    vertices : (V, 3) float64 welded vertex positions, any one length unit (best relative to a
        point near the part, so the tolerance sees the part's own digits)
    faces : (F, 3) int vertex ids; pairs sharing any vertex are skipped (a triangle soup with
        ``faces = arange(3F).reshape(F, 3)`` shares none)
    relative_tolerance : corners closer than this fraction of the pair's size to the other's
        plane count as lying in it
    include_vertex_neighbours : also test pairs sharing exactly one vertex (two such faces can
        still cross along a segment from that vertex: a fold). Off by default, as in the
        rtree-based check; the volume bound turns it on.
    force_compiled : use the compiled path below :data:`meshprops.geometry.compiled.COMPILED_FROM_FACES` faces too (it alone
        also finds coplanar overlaps)
    force_rtree : use the rtree path whatever the size and whether the kernels are loaded (it
        does not test faces sharing a vertex, so ``include_vertex_neighbours`` overrides this)

    Returns
    -------
    Crossings
    """
    vertices = np.ascontiguousarray(vertices, dtype=np.float64)
    # int32 ids (the weld's own type: no copy) unless the vertex count needs more
    faces = np.ascontiguousarray(faces, dtype=np.int32 if vertices.shape[0] < 2**31 else np.int64)
    count = faces.shape[0]
    empty = np.zeros((0, 2), dtype=np.int64)
    if count < 2:
        return Crossings(empty, empty, 0.0, 0, 0.0)
    started = time.perf_counter()
    rtree = force_rtree or not (force_compiled or compiled_answers(count))
    if rtree and not include_vertex_neighbours:
        from .intersections import crossing_pairs_of

        pairs = _sorted_rows(np.sort(crossing_pairs_of(vertices[faces], faces), axis=1))
        return Crossings(pairs, empty, 0.0, 0, time.perf_counter() - started, coplanar_checked=False)
    kernels = compiled_kernels("crossing_kernels")
    parallel = all_cores(count) if _parallel is None else _parallel
    kernel = (lambda name: getattr(kernels, name)) if parallel else kernels.serial
    boxes = kernel("face_boxes")(vertices, faces)
    size, origin, entries = _cell_size(boxes, vertices, kernel("cell_entry_total"))
    top = np.array([float(boxes[:, 3 + axis].max()) for axis in range(3)])  # boxes are rounded outwards
    dims = np.maximum(np.floor((top - origin) / size).astype(np.int64) + 2, 1)
    # About a bucket per eight entries: a cell holds ~10-30 entries on a surface, so few buckets hold
    # two cells, and the bucket starts stay small enough to be counted in cache.
    buckets = 1 << max(4, int(np.ceil(np.log2(max(entries, 1) / 8.0))))
    parts = thread_count() if parallel else 1
    grouped = kernel("bucket_entries")(boxes, origin, size, dims, buckets, parts, False)
    if int(np.diff(grouped[0]).max()) > PILED_BUCKET_ENTRIES:  # cells piled up in a few buckets: scatter them
        grouped = kernel("bucket_entries")(boxes, origin, size, dims, buckets, parts, True)
    starts, member_keys, members, member_low_x = grouped
    first, second, kind = kernel("grid_pairs")(
        member_keys, starts, members, member_low_x, vertices, faces, boxes, origin, size, dims, relative_tolerance,
        2 if include_vertex_neighbours else 1,
    )  # fmt: skip
    pairs = np.column_stack([first, second])
    crossing = _sorted_rows(pairs[kind == kernels.CROSSING])
    coplanar = _sorted_rows(pairs[kind == kernels.COPLANAR_OVERLAP])
    return Crossings(crossing, coplanar, size, entries, time.perf_counter() - started)


def _sorted_rows(pairs: np.ndarray) -> np.ndarray:
    if pairs.shape[0] == 0:
        return np.zeros((0, 2), dtype=np.int64)
    order = np.lexsort((pairs[:, 1], pairs[:, 0]))
    return np.ascontiguousarray(pairs[order])


# ----------------------------------------------------------------------------- volume bound


@dataclass(frozen=True, slots=True, eq=False)
class CrossingBound:
    """How much self-crossings of a closed surface can change the volume it encloses.

    The divergence-theorem sum gives ∫ w dV, w the winding number of the surface;
    the solid the surface means is where w ≥ 1. They differ only where w ≥ 2 or
    w ≤ −1 (the "anomalous" regions). See :func:`crossing_volume_bound`.

    Attributes
    ----------
    bounded : false when an anomalous region reaches faces that cross nothing (the
        surface folds over a whole patch), so no local bound holds
    volume_bound : upper bound of |∫ w dV − vol{w ≥ 1}|, in the corners' unit cubed
        (``inf`` when not ``bounded``)
    clusters : number of connected groups of crossing faces
    area : total area of the faces that bound the anomalous regions, unit squared
    faces_tested : non-crossing faces whose two sides were tested
    """

    bounded: bool
    volume_bound: float
    clusters: int
    area: float
    faces_tested: int


#: Above this many faces grown into the anomalous regions the bound gives up.
BOUND_FACE_LIMIT = 20_000


def crossing_volume_bound(vertices: np.ndarray, faces: np.ndarray, pairs: np.ndarray) -> CrossingBound:
    """Bound the volume error of a closed, consistently oriented surface that crosses itself.

    Parameters
    ----------
    vertices : (V, 3) float64 welded vertex positions, any one unit
    faces : (F, 3) int vertex ids: one closed, consistently oriented surface (or several, each closed)
    pairs : (P, 2) crossing face pairs (:attr:`Crossings.pairs`)

    Returns
    -------
    CrossingBound

    Notes
    -----
    Each point of the surface is on the boundary of exactly one level set
    {w ≥ k} or {w ≤ −k} (w jumps by one across a face). A face that crosses
    nothing has each side in one region of constant w, and so do its edge
    neighbours unless a crossing face passes between them. So if every
    non-crossing face that shares an edge with an anomalous face has w = 1
    just inside and w = 0 just outside (tested exactly by a ray from its
    centroid), the anomalous regions are bounded by crossing faces only. Where a
    neighbour fails, it joins the anomalous faces and its own neighbours are
    tested (up to :data:`BOUND_FACE_LIMIT` faces).

    The error is Σ vol of the anomalous level sets; each is bounded by pieces of
    the anomalous faces of one cluster, each piece counted once. Two bounds hold
    for a cluster, and the smaller is taken: the isoperimetric inequality
    (V ≤ A^{3/2} / (6√π), common practice), and the divergence theorem applied to
    the field x − p for a point p of the cluster (3 V = ∮ (x − p)·n dA, so
    V ≤ Σ_f area_f · max over f's corners |(c − p)·n_f| / 3), which is small for a
    thin sliver between nearly parallel sheets.
    """
    vertices = np.ascontiguousarray(vertices, dtype=np.float64)
    faces = np.ascontiguousarray(faces, dtype=np.int64)
    pairs = np.asarray(pairs, dtype=np.int64).reshape(-1, 2)
    if pairs.shape[0] == 0:
        return CrossingBound(True, 0.0, 0, 0.0, 0)
    kernels = compiled_kernels("crossing_kernels")
    # faces sharing a vertex can cross too (a fold): they bound anomalous regions as well
    pairs = np.concatenate([pairs, find_crossings(vertices, faces, include_vertex_neighbours=True).pairs])
    corners = np.ascontiguousarray(vertices[faces])
    count = corners.shape[0]
    normals = np.cross(corners[:, 1] - corners[:, 0], corners[:, 2] - corners[:, 0])
    areas = 0.5 * np.linalg.norm(normals, axis=1)
    neighbours = _edge_neighbours(faces)
    anomalous = np.zeros(count, dtype=bool)
    anomalous[pairs.ravel()] = True
    tested = np.zeros(count, dtype=bool)
    frontier = np.flatnonzero(anomalous)
    bounded = True
    while frontier.size:
        candidates = np.unique(neighbours[frontier].ravel())
        candidates = candidates[(candidates >= 0)]
        candidates = candidates[~anomalous[candidates] & ~tested[candidates]]
        if candidates.size == 0:
            break
        tested[candidates] = True
        axes = np.abs(normals[candidates]).argmax(axis=1).astype(np.int64)
        winding = kernels.serial("face_sides_winding") if one_thread() else kernels.face_sides_winding
        outside = winding(corners, candidates.astype(np.int64), axes)
        bad = candidates[outside != 0]
        anomalous[bad] = True
        frontier = bad
        if np.count_nonzero(anomalous) > BOUND_FACE_LIMIT:
            bounded = False
            break
    faces_in = np.flatnonzero(anomalous)
    labels = _clusters(faces_in, neighbours, pairs, count)[faces_in]
    total_area = float(areas[faces_in].sum())
    if not bounded:
        return CrossingBound(False, float("inf"), int(np.unique(labels).size), total_area, int(tested.sum()))
    bound = 0.0
    unit_normals = normals[faces_in] / np.maximum(2.0 * areas[faces_in], 1e-300)[:, None]
    for label in np.unique(labels):
        members = labels == label
        face_area = areas[faces_in][members]
        cluster = corners[faces_in][members]
        # isoperimetric: V <= A^(3/2) / (6 sqrt(pi))
        isoperimetric = float(face_area.sum()) ** 1.5 / (6.0 * np.sqrt(np.pi))
        # divergence of (x - p): 3 V = integral of (x - p)·n dA <= sum of area × max over corners |(c - p)·n|
        centre = (face_area[:, None] * cluster.mean(axis=1)).sum(axis=0) / max(float(face_area.sum()), 1e-300)
        reach = np.abs(np.einsum("fki,fi->fk", cluster - centre, unit_normals[members])).max(axis=1)
        flux = float((face_area * reach).sum()) / 3.0
        bound += min(isoperimetric, flux)
    return CrossingBound(True, bound, int(np.unique(labels).size), total_area, int(tested.sum()))


def _edge_neighbours(face_vertices: np.ndarray) -> np.ndarray:
    """(F, 3) the face across each edge (−1 where the edge is open or shared by more than two)."""
    count = face_vertices.shape[0]
    tails = face_vertices.ravel()
    heads = face_vertices[:, [1, 2, 0]].ravel()
    low = np.minimum(tails, heads)
    high = np.maximum(tails, heads)
    bound = int(face_vertices.max()) + 1 if count else 1
    keys = low * bound + high
    order = np.argsort(keys, kind="stable")
    sorted_keys = keys[order]
    out = np.full(3 * count, -1, dtype=np.int64)
    same = np.flatnonzero(sorted_keys[1:] == sorted_keys[:-1])
    # keep only edges used exactly twice
    run_start = np.r_[True, sorted_keys[1:] != sorted_keys[:-1]]
    run_id = np.cumsum(run_start) - 1
    run_length = np.bincount(run_id)
    two = same[run_length[run_id[same]] == 2]
    a, b = order[two], order[two + 1]
    out[a] = b // 3
    out[b] = a // 3
    return out.reshape(count, 3)


def _clusters(faces: np.ndarray, neighbours: np.ndarray, pairs: np.ndarray, count: int) -> np.ndarray:
    """(F,) labels joining anomalous faces that are edge neighbours or cross each other."""
    parent = np.arange(count)
    member = np.zeros(count, dtype=bool)
    member[faces] = True
    links = [pairs]
    for k in range(3):
        other = neighbours[faces, k]
        keep = other >= 0
        keep[keep] = member[other[keep]]
        links.append(np.column_stack([faces[keep], other[keep]]))
    edges = np.concatenate(links)
    while True:  # label propagation with pointer jumping, until stable (a split cluster would shrink the bound)
        before = parent.copy()
        low = np.minimum(parent[edges[:, 0]], parent[edges[:, 1]])
        np.minimum.at(parent, edges[:, 0], low)
        np.minimum.at(parent, edges[:, 1], low)
        parent = parent[parent]
        if np.array_equal(parent, before):
            break
    return parent
