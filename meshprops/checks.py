"""Mesh validation: does this surface bound a solid whose mass properties the
divergence theorem gives exactly, and if not, what is wrong and where?

Validation returns data (a :class:`ValidationReport` of :class:`Finding` s),
never log lines. Every check is vectorized with numpy; the checks that run
inside every measurement cost a few sorts of 64-bit keys on a closed mesh:

1. Weld corners that have bit-identical coordinates into vertices
   (:func:`weld_exact`): a 64-bit hash of the coordinate bits, sorted with the
   corner index packed into its low bits, then verified against the true
   coordinates, so the result is exact (hash collisions are detected and
   resolved, never trusted). Vertices are numbered in order of first
   appearance, which keeps later gathers local (cache-friendly).
2. A closed, consistently oriented 2-manifold uses every directed edge
   ``(a, b)`` exactly once and its reverse ``(b, a)`` exactly once: one sort of
   undirected edge keys carrying the direction in their lowest bit decides it
   (:func:`is_closed_and_oriented`). Only when it fails do the slower
   classifiers run to say which edges are open, non-manifold or wound the
   wrong way, and where.
3. Shells (connected components) are labelled by union-find with pointer
   jumping over the edge list (:func:`connected_components`). With more than
   one shell, each shell's signed volume and its winding number inside the
   others decide whether it is a correct void, an inside-out shell or a shell
   nested in solid material (:func:`shell_findings`).
4. Self-intersections: an rtree broad phase over face bounding boxes and a
   vectorized triangle-triangle interval test (:func:`self_intersection_findings`).
   It costs about 20 µs per face, so inside ``measure`` it runs only up to
   :data:`SELF_INTERSECTION_FACE_LIMIT` faces; ``meshprops check`` always runs it.

Severity is ``"error"`` when the numbers would be wrong and ``"warning"``
otherwise; ``valid`` is false exactly when there is an error.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .io import Mesh
from .moments import Moments
from .units import LENGTH_UNITS

ERROR = "error"
WARNING = "warning"
#: How many example locations a finding carries.
WHERE_LIMIT = 5
#: ``measure`` looks for self-intersections only in meshes with at most this many
#: faces (the rtree broad phase costs about 20 µs per face on a 2-core machine,
#: so 50,000 faces add about one second); above it a warning says it was not checked.
SELF_INTERSECTION_FACE_LIMIT = 50_000
#: A face is degenerate (zero area) when its height over its longest edge is below
#: this fraction of the bounding-box diagonal (plus the rounding of its coordinates).
DEGENERATE_HEIGHT_RELATIVE = 1e-9
#: Open-edge vertices closer than this fraction of the bounding-box diagonal to
#: another vertex are reported as near-coincident (the hole looks like a crack).
NEAR_VERTEX_RELATIVE = 1e-6
#: The largest extent of a part, in metres, that does not raise a unit warning
#: (our own heuristic: from a 2 mm pin to a 50 m blade).
PLAUSIBLE_EXTENT_M = (2e-3, 50.0)
#: Above this many shells the nesting test is skipped (it is quadratic in the shell count).
NESTING_SHELL_LIMIT = 5000
#: A shell whose |volume| is below this fraction of the cube of its largest extent is flat (encloses nothing).
FLAT_VOLUME_RELATIVE = 1e-12

_STEP = 1 << 18  # faces per block when streaming over a mesh
_SMALL_STEP = 1 << 15  # faces per block for float64 work on every face (keeps temporaries small)


@dataclass(frozen=True, slots=True, eq=False)
class Finding:
    """One thing validation found.

    Attributes
    ----------
    code : a stable name (see the README's table of finding codes)
    severity : ``"error"`` (numbers would be wrong) or ``"warning"``
    count : how many faces, edges, vertices or shells are affected (the message says which)
    message : one sentence for a person
    where : a few examples, each ``{"face": int, "point": [x, y, z]}`` (face index in the
        file as read, centroid in m, input axes)
    """

    code: str
    severity: str
    count: int
    message: str
    where: tuple[dict, ...] = ()


@dataclass(frozen=True, slots=True, eq=False)
class ValidationReport:
    """What validation found about one mesh.

    ``valid`` is true when no finding is an error. ``extra`` holds mesh
    statistics: ``shells`` (connected pieces), ``voids`` (correctly inward
    shells inside another), ``holes`` (boundary loops), ``self_intersections_checked``.
    """

    findings: tuple[Finding, ...]
    face_count: int
    vertex_count: int
    edge_count: int
    extra: dict = field(default_factory=dict)

    @property
    def valid(self) -> bool:
        return not any(f.severity == ERROR for f in self.findings)

    @property
    def errors(self) -> tuple[Finding, ...]:
        return tuple(f for f in self.findings if f.severity == ERROR)

    @property
    def warnings(self) -> tuple[Finding, ...]:
        return tuple(f for f in self.findings if f.severity == WARNING)


@dataclass(frozen=True, slots=True, eq=False)
class Topology:
    """Faces as welded vertex ids.

    Attributes
    ----------
    face_vertices : (F, 3) int32 (int64 for huge meshes), welded vertex ids in corner
        order, dense and numbered in order of first appearance (so nearby faces
        have nearby ids, which keeps later gathers local)
    vertex_count : number of distinct vertex positions
    id_bound : every id is smaller than this (``vertex_count`` after welding)
    """

    face_vertices: np.ndarray
    vertex_count: int
    id_bound: int


# ------------------------------------------------------------------------- welding

_SEED = np.uint64(0x9E3779B97F4A7C15)  # the golden-ratio constant: any fixed odd seed works


def _index_dtype(count: int):
    return np.int32 if count < 2**31 - 1 else np.int64


def _coordinate_rows(positions: np.ndarray) -> np.ndarray:
    """Contiguous float32/float64 rows with -0.0 made +0.0 (a copy only when needed)."""
    data = positions
    if data.dtype not in (np.float32, np.float64):
        data = data.astype(np.float64)
    data = np.ascontiguousarray(data)
    unsigned = np.uint32 if data.dtype.itemsize == 4 else np.uint64
    negative_zero = unsigned(1 << (data.dtype.itemsize * 8 - 1))
    if np.any(data.view(unsigned) == negative_zero):  # -0.0 + 0.0 is +0.0; every other value is unchanged
        data = data + data.dtype.type(0.0)
    return data


_MIX1 = np.uint64(0xBF58476D1CE4E5B9)
_MIX2 = np.uint64(0x94D049BB133111EB)


def _mix_into(out: np.ndarray, tmp: np.ndarray) -> None:
    """The splitmix64 finalizer, in place. Every input bit reaches every output bit, which
    matters here: round coordinates (1.0, 0.5, 25.0) have all-zero low mantissa bits, and a
    bare multiply only carries bits upwards, so a weaker mix makes false collisions common."""
    np.right_shift(out, np.uint64(30), out=tmp)
    out ^= tmp
    out *= _MIX1
    np.right_shift(out, np.uint64(27), out=tmp)
    out ^= tmp
    out *= _MIX2
    np.right_shift(out, np.uint64(31), out=tmp)
    out ^= tmp


def _hash_rows(data: np.ndarray) -> np.ndarray:
    """A 64-bit hash of the coordinate bits of each row of ``data`` (N, 3) float32/float64.

    The row's words are absorbed one at a time, ``h = mix(h ^ word)``.
    """
    count = data.shape[0]
    result = np.empty(count, dtype=np.uint64)
    block = 1 << 20
    scratch = np.empty(min(count, block), dtype=np.uint64)
    if data.dtype == np.float32:
        # x and y together are one (unaligned) 64-bit word, z a 32-bit one.
        pair = np.ndarray((count,), dtype=np.uint64, buffer=data, offset=0, strides=(12,))
        last = np.ndarray((count,), dtype=np.uint32, buffer=data, offset=8, strides=(12,))
        words = (pair, last)
    else:
        bits = data.view(np.uint64)
        words = (bits[:, 0], bits[:, 1], bits[:, 2])
    for start in range(0, count, block):
        stop = min(count, start + block)
        out, tmp = result[start:stop], scratch[: stop - start]
        out[...] = _SEED
        for word in words:
            np.bitwise_xor(out, word[start:stop], out=out, casting="unsafe")
            _mix_into(out, tmp)
    return result


def _hash_runs(keys: np.ndarray, index_type) -> tuple[np.ndarray, int, np.ndarray]:
    """Group rows by hash, numbering the groups densely in order of first appearance.

    ``keys`` (N,) uint64 row hashes, consumed (sorted in place). The top bits of
    each hash are packed with the row index and sorted; within a run of equal
    hashes rows come in index order, so the run's first row is its smallest.

    Returns ``(ids, count, firsts)``: (N,) the group of each row, the number of
    groups, and (count,) the first row of each group (ascending).
    """
    count = keys.shape[0]
    index_bits = max(1, int(count - 1).bit_length())
    keys >>= np.uint64(index_bits)
    keys <<= np.uint64(index_bits)
    for start in range(0, count, 1 << 20):
        stop = min(count, start + (1 << 20))
        keys[start:stop] |= np.arange(start, stop, dtype=np.uint64)
    keys.sort()
    order = np.empty(count, dtype=index_type)
    np.bitwise_and(keys, np.uint64((1 << index_bits) - 1), out=order, casting="unsafe")
    keys >>= np.uint64(index_bits)  # the truncated hash, in sorted order
    run_start = np.empty(count, dtype=bool)
    run_start[0] = True
    np.not_equal(keys[1:], keys[:-1], out=run_start[1:])
    starts = np.flatnonzero(run_start)
    del run_start
    firsts = order[starts]  # first row of each run, in hash order
    # Rank the runs by first row: mark first rows in row order and count the marks.
    rank = np.zeros(count, dtype=index_type)
    rank[firsts] = 1
    np.cumsum(rank, out=rank)
    group = rank[firsts] - 1
    del rank
    lengths = np.diff(np.append(starts, count))
    ids = np.empty(count, dtype=index_type)
    ids[order] = np.repeat(group, lengths)
    firsts.sort()
    return ids, int(starts.size), firsts


def weld_positions(positions: np.ndarray) -> tuple[np.ndarray, int]:
    """Label bit-identical rows of ``positions`` (N, 3) with the same vertex id.

    Returns ``(ids, vertex_count)``: ``ids`` (N,) int32 (int64 above 2**31 rows)
    in ``0 .. vertex_count - 1``, numbered in order of first appearance (rows split
    off by a rare truncated-hash collision get the last ids), and the number of
    distinct positions. Exact: rows get the same id if and only if
    their coordinates are equal (with -0.0 equal to +0.0).

    Sort (truncated hash | row index) keys; each run of equal hashes names its
    first row; then every row is compared with the row it was given (in file
    order, so the gather is mostly local) and runs holding a hash collision are
    relabelled exactly.
    """
    count = positions.shape[0]
    index_type = _index_dtype(count)
    if count == 0:
        return np.zeros(0, dtype=index_type), 0
    data = _coordinate_rows(positions)
    ids, group_count, firsts = _hash_runs(_hash_rows(data), index_type)
    unsigned = data.view(np.uint32 if data.dtype.itemsize == 4 else np.uint64)
    block = 1 << 20
    blocks = ((start, unsigned[start : start + block]) for start in range(0, count, block))
    return ids, _resolve_collisions(ids, group_count, unsigned[firsts], blocks)


def _resolve_collisions(ids: np.ndarray, count: int, table: np.ndarray, blocks) -> int:
    """Verify every row against the first row of its id and split off the rows that differ.

    ``table`` (count, 3) holds the coordinate bits of each id's first row; ``blocks``
    yields ``(first_row, bits (k, 3))`` over all rows, normalized like the table. A
    row that differs shares only a truncated hash with its id's first row; rows
    equal to each other within the same id get a new id together. ``ids`` is
    updated in place; returns the new count. Collisions are rare (a few rows per
    million vertices), so exact grouping by ``np.unique`` is cheap.
    """
    wrong_rows, wrong_bits = [], []
    for start, bits in blocks:
        named = np.take(table, ids[start : start + bits.shape[0]], axis=0)
        if not np.array_equal(named, bits):
            local = np.flatnonzero(np.any(named != bits, axis=1))
            wrong_rows.append(local + start)
            wrong_bits.append(bits[local].copy())
    if not wrong_rows:
        return count
    rows = np.concatenate(wrong_rows)
    keys = np.column_stack([ids[rows].astype(np.uint64), np.concatenate(wrong_bits).astype(np.uint64)])
    _, inverse = np.unique(keys, axis=0, return_inverse=True)
    inverse = inverse.reshape(-1)
    ids[rows] = count + inverse
    return count + int(inverse.max()) + 1


def _weld_memory_map(mesh: Mesh) -> tuple[np.ndarray, int, np.ndarray]:
    """Weld the corners of a memory-mapped soup without copying it whole.

    Hashes are taken block by block (the file's pages released behind the
    reader); each corner is then compared, block by block again, with the
    first corner of its vertex, gathered once into a table of one row per
    vertex; corners that differ (a truncated-hash collision) are split off
    exactly by :func:`_resolve_collisions`. Returns ``(ids (3F,), vertex_count, box (2, 3))``.
    """
    soup = mesh.soup
    count = mesh.face_count * 3
    keys = np.empty(count, dtype=np.uint64)
    buffer = np.empty((_STEP, 3, 3), dtype=soup.dtype)
    low = np.full(3, np.inf)
    high = np.full(3, -np.inf)
    for start, corners in _soup_corner_blocks(mesh, buffer):
        keys[start : start + corners.shape[0]] = _hash_rows(corners)
        for axis in range(3):  # per column: numpy's min(axis=0) over (k, 3) rows is ~20x slower
            column = corners[:, axis]
            low[axis] = min(low[axis], float(column.min()))
            high[axis] = max(high[axis], float(column.max()))
    dense, vertex_count, representatives = _hash_runs(keys, _index_dtype(count))
    del keys
    table = np.ascontiguousarray(soup[representatives // 3, representatives % 3])
    table += table.dtype.type(0.0)
    unsigned = np.uint32 if soup.dtype.itemsize == 4 else np.uint64
    blocks = ((start, corners.view(unsigned)) for start, corners in _soup_corner_blocks(mesh, buffer))
    vertex_count = _resolve_collisions(dense, vertex_count, table.view(unsigned), blocks)
    return dense, vertex_count, np.stack([low, high])


def _soup_corner_blocks(mesh: Mesh, buffer: np.ndarray):
    """Yield ``(first_corner_row, corners (k, 3))`` of a memory-mapped soup, copied into
    ``buffer`` (one strided copy out of the file's records) with -0.0 made +0.0."""
    for start, block in mesh.coordinate_blocks(_STEP):
        buffer[: block.shape[0]] = block
        corners = buffer[: block.shape[0]].reshape(-1, 3)
        corners += corners.dtype.type(0.0)  # -0.0 + 0.0 is +0.0; every other value is unchanged
        yield 3 * start, corners


def _soup_corners(mesh: Mesh) -> np.ndarray:
    """``(3F, 3)`` contiguous corner coordinates of a soup mesh, in the file's dtype.

    A memory-mapped binary STL is copied block by block with its pages released
    behind the copy (:meth:`meshprops.io.Mesh.coordinate_blocks`), so the file
    does not stay resident next to the copy.
    """
    soup = mesh.soup
    if soup.flags.c_contiguous:
        return soup.reshape(-1, 3)
    corners = np.empty((mesh.face_count * 3, 3), dtype=soup.dtype)
    blocks = mesh.coordinate_blocks(_STEP) if hasattr(mesh, "coordinate_blocks") else (
        (start, soup[start : start + _STEP]) for start in range(0, mesh.face_count, _STEP)
    )
    for start, block in blocks:
        corners[start * 3 : (start + block.shape[0]) * 3] = block.reshape(-1, 3)
    return corners


def weld_exact(mesh: Mesh) -> Topology:
    """Faces of ``mesh`` as dense ids of vertices with bit-identical coordinates."""
    return _weld_with_box(mesh)[0]


def _weld_with_box(mesh: Mesh) -> tuple[Topology, np.ndarray]:
    """The welded topology and the (2, 3) bounding box (file unit), in one pass over the data."""
    if mesh.soup is not None and not mesh.soup.flags.c_contiguous and mesh.soup.dtype in (np.float32, np.float64):
        ids, vertex_count, box = _weld_memory_map(mesh)
        return Topology(ids.reshape(-1, 3), vertex_count, vertex_count), box
    rows = mesh_rows(mesh)
    ids, vertex_count = weld_positions(rows)
    box = _bounding_box(mesh, rows)
    if mesh.soup is not None:
        return Topology(ids.reshape(-1, 3), vertex_count, vertex_count), box
    return Topology(ids[mesh.faces], vertex_count, vertex_count), box


def mesh_rows(mesh: Mesh) -> np.ndarray:
    """The coordinate rows to weld: (3F, 3) contiguous corners of a soup, or the (V, 3) vertices."""
    return _soup_corners(mesh) if mesh.soup is not None else mesh.vertices


# ------------------------------------------------------------------------- edges


def _edge_keys(face_vertices: np.ndarray, base: int) -> np.ndarray:
    """(F, 3) uint64 keys ``(min * base + max) * 2 + (tail > head)`` of the edges (v0,v1), (v1,v2), (v2,v0)."""
    tails = face_vertices
    heads = np.roll(tails, -1, axis=1)
    backward = tails > heads
    keys = np.empty(tails.shape, dtype=np.uint64)
    np.minimum(tails, heads, out=keys, casting="unsafe")
    np.maximum(tails, heads, out=heads)
    keys *= np.uint64(base)
    np.add(keys, heads, out=keys, casting="unsafe")
    del heads
    keys <<= np.uint64(1)
    np.bitwise_or(keys, backward, out=keys, casting="unsafe")
    return keys


def is_closed_and_oriented(topology: Topology) -> bool:
    """True when every directed edge occurs exactly once and so does its reverse.

    One sort: with the direction in the lowest bit, a closed, consistently
    oriented surface sorts into pairs ``(2k, 2k + 1)`` of the same undirected
    edge, each undirected edge appearing in exactly one pair.
    """
    keys = _edge_keys(topology.face_vertices, topology.id_bound).reshape(-1)
    if keys.size % 2:
        return False
    keys.sort()
    even, odd = keys[0::2], keys[1::2]
    if np.any(even & np.uint64(1)):
        return False
    if not np.array_equal(odd, even | np.uint64(1)):
        return False
    return bool(np.all(even[1:] > odd[:-1]))


def undirected_edge_count(topology: Topology) -> int:
    """Number of distinct undirected edges (null edges of collapsed faces excluded)."""
    keys = _edge_keys(topology.face_vertices, topology.id_bound).reshape(-1)
    faces = topology.face_vertices
    keys = keys[(faces != np.roll(faces, -1, axis=1)).reshape(-1)]
    keys >>= np.uint64(1)
    keys.sort()
    return int(np.count_nonzero(keys[1:] != keys[:-1]) + 1) if keys.size else 0


def face_centroids(mesh: Mesh, faces: np.ndarray) -> np.ndarray:
    """(k, 3) float64 centroids in metres of the given face indices."""
    faces = np.asarray(faces, dtype=np.int64)
    return face_corners(mesh, faces).mean(axis=1) * mesh.metres_per_unit


def face_corners(mesh: Mesh, faces: np.ndarray) -> np.ndarray:
    """(k, 3, 3) float64 corners of the given face indices, in the file's unit."""
    faces = np.asarray(faces, dtype=np.int64)
    if mesh.soup is not None:
        return np.asarray(mesh.soup[faces], dtype=np.float64)
    return mesh.vertices[mesh.faces[faces]]


def face_blocks(mesh: Mesh, block_faces: int = _STEP):
    """Yield ``(start, corners)``: consecutive ``(k, 3, 3)`` float64 blocks of face corners in the file's unit.

    A memory-mapped binary STL is read through :meth:`meshprops.io.Mesh.coordinate_blocks`,
    which releases the file's pages behind the reader.
    """
    if mesh.soup is not None and hasattr(mesh, "coordinate_blocks"):
        for start, block in mesh.coordinate_blocks(block_faces):
            yield start, np.asarray(block, dtype=np.float64)
        return
    for start in range(0, mesh.face_count, block_faces):
        yield start, face_corners(mesh, np.arange(start, min(mesh.face_count, start + block_faces)))


def where(face_indices, mesh: Mesh, *, limit: int = WHERE_LIMIT) -> tuple[dict, ...]:
    """A few ``{"face": index, "point": centroid in m}`` locations (sorted face indices)."""
    chosen = np.unique(np.asarray(face_indices, dtype=np.int64))[:limit]
    if chosen.size == 0:
        return ()
    centroids = face_centroids(mesh, chosen)
    return tuple({"face": int(f), "point": [float(x) for x in c]} for f, c in zip(chosen, centroids))


_where = where  # the fast path's original name


@dataclass(frozen=True, slots=True, eq=False)
class EdgeUse:
    """Undirected edges of a mesh with the faces that use them (collapsed faces excluded).

    Attributes
    ----------
    tails, heads : (U,) vertex ids of each edge as traversed by its face
    faces : (U,) the face each use belongs to
    edge : (U,) index of the undirected edge of each use, in ``0..edge_count-1``
    uses : (edge_count,) how many faces use each undirected edge
    forward_uses : (edge_count,) how many of those traverse it from lower to higher id
    """

    tails: np.ndarray
    heads: np.ndarray
    faces: np.ndarray
    edge: np.ndarray
    uses: np.ndarray
    forward_uses: np.ndarray


def _collapsed_mask(faces: np.ndarray) -> np.ndarray:
    return (faces[:, 0] == faces[:, 1]) | (faces[:, 1] == faces[:, 2]) | (faces[:, 2] == faces[:, 0])


def edge_uses(topology: Topology) -> EdgeUse:
    """Group the face edges of ``topology`` by undirected edge (the slow path: one argsort).

    Faces that repeat a vertex (collapsed) are left out.
    """
    faces = topology.face_vertices
    tails = faces.reshape(-1).astype(np.int64)
    heads = np.roll(faces, -1, axis=1).reshape(-1).astype(np.int64)
    owner = np.repeat(np.arange(faces.shape[0], dtype=np.int64), 3)
    # A collapsed face (a, a, b) encloses nothing; its edges a-b and b-a would only pose as
    # non-manifold edges of its neighbours, so all of its edges are left out.
    proper = np.repeat(~_collapsed_mask(faces), 3)
    tails, heads, owner = tails[proper], heads[proper], owner[proper]
    keys = np.minimum(tails, heads) * np.int64(topology.id_bound) + np.maximum(tails, heads)
    unique_keys, inverse, uses = np.unique(keys, return_inverse=True, return_counts=True)
    inverse = inverse.reshape(-1)
    forward = np.bincount(inverse, weights=tails < heads, minlength=unique_keys.size).astype(np.int64)
    return EdgeUse(tails, heads, owner, inverse, uses, forward)


# ------------------------------------------------------------------------- connected components


def connected_components(node_count: int, edge_lists) -> np.ndarray:
    """Label the connected components of an undirected graph (union-find, numpy).

    Parameters
    ----------
    node_count : nodes are ``0 .. node_count - 1``
    edge_lists : iterable of ``(a, b)`` pairs of equal-length integer arrays; each
        ``(a[i], b[i])`` is an edge

    Returns
    -------
    (node_count,) int array: each node's label is the smallest node of its component.

    Each round hooks every root to the smallest root it shares an edge with
    (``np.minimum.at``) and then jumps pointers until every node points at its
    root; edges inside one tree are dropped. Only roots are ever re-pointed, so
    no union is lost. A handful of rounds suffice on meshes.
    """
    index_type = _index_dtype(node_count)
    parent = np.arange(node_count, dtype=index_type)
    pending = [(np.asarray(a), np.asarray(b)) for a, b in edge_lists]
    while pending:
        hooks = []
        still = []
        for a, b in pending:
            root_a, root_b = parent[a], parent[b]
            apart = root_a != root_b
            if not apart.any():
                continue
            a, b, root_a, root_b = a[apart], b[apart], root_a[apart], root_b[apart]
            hooks.append((np.maximum(root_a, root_b), np.minimum(root_a, root_b)))
            still.append((a, b))
        for high, low in hooks:
            np.minimum.at(parent, high, low)
        while True:
            jumped = parent[parent]
            if np.array_equal(jumped, parent):
                break
            parent = jumped
        pending = still
    return parent


def vertex_shells(topology: Topology) -> tuple[np.ndarray, int]:
    """Shell of every face (faces sharing a vertex are in one shell).

    Returns ``(shell_of_face, shell_count)``: (F,) dense labels ``0..shell_count-1``
    numbered by each shell's first face.
    """
    faces = topology.face_vertices
    if faces.shape[0] and _connected_by_first_appearance(faces, topology.id_bound):
        return np.zeros(faces.shape[0], dtype=np.int32), 1
    labels = connected_components(topology.id_bound, [(faces[:, 0], faces[:, 1]), (faces[:, 0], faces[:, 2])])
    return dense_labels(labels[faces[:, 0]])


def _connected_by_first_appearance(faces: np.ndarray, vertex_count: int) -> bool:
    """A sufficient test of connectivity: every vertex but vertex 0 shares a face with a smaller one.

    Following "a smaller neighbour" from any vertex then always ends at vertex
    0, so all vertices are in one piece. With vertices numbered in order of
    first appearance this holds for most files written face by face across a
    surface; when it does not, the caller runs the full union-find.
    """
    smallest = np.minimum(np.minimum(faces[:, 0], faces[:, 1]), faces[:, 2])
    has_smaller = np.zeros(vertex_count, dtype=bool)
    for k in range(3):
        column = faces[:, k]
        has_smaller[column[column > smallest]] = True
    return bool(has_smaller[1:].all()) and bool(np.any(faces == 0))


def dense_labels(labels: np.ndarray) -> tuple[np.ndarray, int]:
    """Relabel ``labels`` (F,) as ``0..count-1`` numbered by first appearance.

    Negative labels mean "in no shell" and stay −1. Returns ``(labels, count)``.
    """
    if labels.size == 0:
        return np.zeros(0, dtype=np.int32), 0
    if labels[0] >= 0 and np.all(labels == labels[0]):
        return np.zeros(labels.size, dtype=np.int32), 1
    kept = labels >= 0
    unique, first, inverse = np.unique(labels[kept], return_index=True, return_inverse=True)
    rank = np.empty(unique.size, dtype=np.int32)
    rank[np.argsort(first, kind="stable")] = np.arange(unique.size, dtype=np.int32)
    result = np.full(labels.size, -1, dtype=np.int32)
    result[kept] = rank[inverse.reshape(-1)]
    return result, int(unique.size)


def patch_shells(topology: Topology, uses: EdgeUse | None = None) -> tuple[np.ndarray, int]:
    """Shell of every face where shells are edge-connected patches (collapsed faces: −1).

    Unlike :func:`vertex_shells`, two solids touching at a single vertex are two shells.
    """
    patch = orientation(topology, uses).patch.copy()
    patch[_collapsed_mask(topology.face_vertices)] = -1
    return dense_labels(patch)


@dataclass(frozen=True, slots=True, eq=False)
class Orientation:
    """How the faces of each edge-connected patch agree in winding.

    Attributes
    ----------
    patch : (F,) int64 label of the edge-connected patch of each face (faces joined
        across edges used by exactly two faces)
    parity : (F,) bool, faces of one patch with equal parity are wound consistently
    orientable : (F,) bool, false for faces of a patch that cannot be oriented
        (a one-sided surface such as a Möbius band)
    """

    patch: np.ndarray
    parity: np.ndarray
    orientable: np.ndarray

    def minority(self) -> np.ndarray:
        """(F,) bool: faces wound against the majority of their patch (ties: parity 1)."""
        patch = self.patch
        ones = np.bincount(patch, weights=self.parity, minlength=int(patch.max()) + 1 if patch.size else 0)
        totals = np.bincount(patch, minlength=ones.size)
        majority_is_one = ones * 2 > totals
        return (self.parity != majority_is_one[patch]) & self.orientable


def orientation(topology: Topology, uses: EdgeUse | None = None) -> Orientation:
    """Propagate winding over the manifold edges (used by exactly two faces).

    Union-find on a doubled graph: node ``2f`` is face ``f`` as wound, ``2f + 1``
    the same face flipped. Two faces that traverse their shared edge in opposite
    directions agree (``2f~2g``, ``2f+1~2g+1``); in the same direction they
    disagree (``2f~2g+1``, ``2f+1~2g``).
    """
    uses = uses if uses is not None else edge_uses(topology)
    face_count = topology.face_vertices.shape[0]
    manifold = uses.uses[uses.edge] == 2
    edge = uses.edge[manifold]
    order = np.argsort(edge, kind="stable")
    pair_faces = uses.faces[manifold][order].reshape(-1, 2)
    pair_forward = (uses.tails[manifold] < uses.heads[manifold])[order].reshape(-1, 2)
    same_direction = pair_forward[:, 0] == pair_forward[:, 1]
    f, g = pair_faces[:, 0], pair_faces[:, 1]
    flip = same_direction.astype(np.int64)
    labels = connected_components(2 * face_count, [(2 * f, 2 * g + flip), (2 * f + 1, 2 * g + 1 - flip)])
    as_wound = labels[0::2].astype(np.int64)
    flipped = labels[1::2].astype(np.int64)
    return Orientation(np.minimum(as_wound, flipped), as_wound > flipped, as_wound != flipped)


# ------------------------------------------------------------------------- classifiers


def edge_findings(mesh: Mesh, topology: Topology, uses: EdgeUse | None = None) -> list[Finding]:
    """Classify the edges of a surface that failed :func:`is_closed_and_oriented`.

    Findings: ``open_edges`` (with the number of holes they form and, when the
    hole is a crack, ``near_coincident_vertices``), ``nonmanifold_edges`` and
    ``inconsistent_winding`` (located at the faces wound against the majority
    of their patch: the ones ``--repair`` would flip).
    """
    return _classify_edges(mesh, topology, uses if uses is not None else edge_uses(topology))[0]


def _classify_edges(mesh: Mesh, topology: Topology, uses: EdgeUse) -> tuple[list[Finding], int]:
    """Edge findings and the number of holes (boundary loops)."""
    findings: list[Finding] = []
    per_use = uses.uses[uses.edge]
    holes = 0
    open_count = int(np.count_nonzero(uses.uses == 1))
    if open_count:
        boundary = per_use == 1
        holes = boundary_loop_count(uses.tails[boundary], uses.heads[boundary])
        findings.append(
            Finding(
                "open_edges",
                ERROR,
                open_count,
                f"{open_count} edge(s) belong to only one face: the surface has {holes} hole(s) "
                "(meshprops never fills holes)",
                where(uses.faces[boundary], mesh),
            )
        )
        boundary_vertices = np.unique(np.concatenate([uses.tails[boundary], uses.heads[boundary]]))
        findings.extend(near_coincident_findings(mesh, topology, boundary_vertices))
    count = int(np.count_nonzero(uses.uses > 2))
    if count:
        findings.append(
            Finding(
                "nonmanifold_edges",
                ERROR,
                count,
                f"{count} edge(s) are shared by more than two faces",
                where(uses.faces[per_use > 2], mesh),
            )
        )
    misoriented = (uses.uses == 2) & (uses.forward_uses != 1)
    count = int(np.count_nonzero(misoriented))
    if count:
        state = orientation(topology, uses)
        minority = np.flatnonzero(state.minority())
        wrong = minority if minority.size else uses.faces[misoriented[uses.edge]]
        findings.append(
            Finding(
                "inconsistent_winding",
                ERROR,
                int(wrong.size),
                f"{wrong.size} face(s) are wound against their neighbours ({count} edge(s) join faces "
                "wound in the same sense)",
                where(wrong, mesh),
            )
        )
        if not state.orientable.all():
            bad = np.flatnonzero(~state.orientable)
            findings.append(
                Finding(
                    "non_orientable",
                    ERROR,
                    int(bad.size),
                    f"{bad.size} face(s) form a one-sided surface that no winding can make consistent",
                    where(bad, mesh),
                )
            )
    return findings, holes


def boundary_loop_count(tails: np.ndarray, heads: np.ndarray) -> int:
    """Number of connected loops formed by the open edges ``tails[i] -> heads[i]``."""
    if tails.size == 0:
        return 0
    nodes, inverse = np.unique(np.concatenate([tails, heads]), return_inverse=True)
    inverse = inverse.reshape(-1)
    labels = connected_components(nodes.size, [(inverse[: tails.size], inverse[tails.size :])])
    return int(np.unique(labels).size)


def collapsed_faces(topology: Topology) -> np.ndarray:
    """Indices of faces that repeat a welded vertex (zero area, they enclose nothing)."""
    return np.flatnonzero(_collapsed_mask(topology.face_vertices))


def zero_area_faces(mesh: Mesh, topology: Topology, diagonal: float) -> np.ndarray:
    """Faces with three distinct vertices but (numerically) zero area: collinear corners.

    A face is degenerate when its height over its longest edge is at most
    ``DEGENERATE_HEIGHT_RELATIVE * diagonal`` plus four units of rounding of its
    largest coordinate (float32 STL slivers come out of CAD slightly off zero).
    Lengths in the file's unit.
    """
    found = []
    faces = topology.face_vertices
    resolution = np.finfo(mesh.soup.dtype if mesh.soup is not None else np.float64).eps
    for start, corners in face_blocks(mesh, _SMALL_STEP):
        stop = start + corners.shape[0]
        edges = corners[:, [1, 2, 0]] - corners
        lengths = np.einsum("fki,fki->fk", edges, edges)
        longest = np.sqrt(lengths.max(axis=1))
        doubled_area = np.linalg.norm(np.cross(edges[:, 0], edges[:, 1]), axis=1)
        height = np.divide(doubled_area, longest, out=np.zeros_like(longest), where=longest > 0)
        tolerance = DEGENERATE_HEIGHT_RELATIVE * diagonal + 4.0 * resolution * np.abs(corners).max(axis=(1, 2))
        block = faces[start:stop]
        distinct = (block[:, 0] != block[:, 1]) & (block[:, 1] != block[:, 2]) & (block[:, 2] != block[:, 0])
        found.append(np.flatnonzero(distinct & (height <= tolerance)) + start)
    return np.concatenate(found) if found else np.zeros(0, dtype=np.int64)


def duplicate_face_groups(topology: Topology) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Faces that use the same three vertices as another face.

    Returns ``(faces, group, winding)``, sorted by group: the face indices, a
    group label per face (same vertex set, same group) and +1/-1 for the
    winding of each face relative to the first face of its group.
    """
    faces = topology.face_vertices.astype(np.int64)
    distinct = (faces[:, 0] != faces[:, 1]) & (faces[:, 1] != faces[:, 2]) & (faces[:, 2] != faces[:, 0])
    candidates = np.flatnonzero(distinct)
    sorted_vertices = np.sort(faces[candidates], axis=1)
    bound = np.int64(topology.id_bound)
    if topology.id_bound < 2**21:
        keys = (sorted_vertices[:, 0] * bound + sorted_vertices[:, 1]) * bound + sorted_vertices[:, 2]
        _, inverse, counts = np.unique(keys, return_inverse=True, return_counts=True)
    else:
        _, inverse, counts = np.unique(sorted_vertices, axis=0, return_inverse=True, return_counts=True)
    inverse = inverse.reshape(-1)
    repeated = counts[inverse] > 1
    members = candidates[repeated]
    group = inverse[repeated]
    # Winding parity: rotate each face so its smallest id comes first; it is then
    # (min, mid, max) or (min, max, mid), and two faces agree when they match.
    rows = faces[members]
    shift = np.argmin(rows, axis=1)
    rotated = np.take_along_axis(rows, (shift[:, None] + np.arange(3)) % 3, axis=1)
    even = rotated[:, 1] < rotated[:, 2]
    order = np.argsort(group, kind="stable")
    members, group, even = members[order], group[order], even[order]
    first_even = even[np.searchsorted(group, group)]
    winding = np.where(even == first_even, 1, -1)
    return members, group, winding


def duplicate_findings(mesh: Mesh, topology: Topology) -> list[Finding]:
    """``duplicate_faces``: an error when a vertex set is covered twice with the same winding."""
    members, group, winding = duplicate_face_groups(topology)
    if members.size == 0:
        return []
    first_of_group = np.r_[True, group[1:] != group[:-1]]
    net = np.bincount(group, weights=winding)[group[first_of_group]]
    doubled = bool(np.any(np.abs(net) >= 2))
    extras = members[~first_of_group]
    if doubled:
        text = "repeat another face with the same winding: that area is counted twice"
    else:
        text = "repeat another face with the opposite winding; the pairs cancel, but they are not part of a solid"
    return [
        Finding(
            "duplicate_faces",
            ERROR if doubled else WARNING,
            int(extras.size),
            f"{extras.size} face(s) {text}",
            where(extras, mesh),
        )
    ]


def near_coincident_findings(mesh: Mesh, topology: Topology, vertex_ids: np.ndarray) -> list[Finding]:
    """``near_coincident_vertices``: open-edge vertices within tolerance of another open-edge vertex.

    Cracks left by inexact export close when such vertices are welded; meshprops
    reports them but does not weld them. Tolerance: :data:`NEAR_VERTEX_RELATIVE`
    of the bounding-box diagonal.
    """
    if vertex_ids.size < 2:
        return []
    tolerance = NEAR_VERTEX_RELATIVE * float(np.linalg.norm(_bounding_extent(mesh))) / mesh.metres_per_unit
    if tolerance <= 0:
        return []
    corner_of_id = _first_use(topology)
    corners = corner_of_id[vertex_ids]
    positions = face_corners(mesh, corners // 3)[np.arange(corners.size), corners % 3]
    first, second = near_pairs(positions, tolerance)
    if first.size == 0:
        return []
    involved = np.unique(np.concatenate([first, second]))
    metres = tolerance * mesh.metres_per_unit
    return [
        Finding(
            "near_coincident_vertices",
            WARNING,
            int(involved.size),
            f"{involved.size} open-edge vertices lie within {metres:.3g} m of another vertex: the holes look like "
            "cracks from inexact export (weld the file within that tolerance; meshprops does not)",
            where(corners[involved] // 3, mesh),
        )
    ]


def _first_use(topology: Topology) -> np.ndarray:
    """For each vertex id, the first corner (3 * face + k) that uses it (a large number where unused)."""
    flat = topology.face_vertices.reshape(-1)
    corner_of_id = np.full(topology.id_bound, np.iinfo(np.int64).max, dtype=np.int64)
    np.minimum.at(corner_of_id, flat, np.arange(flat.size, dtype=np.int64))
    return corner_of_id


def near_pairs(points: np.ndarray, tolerance: float) -> tuple[np.ndarray, np.ndarray]:
    """Pairs ``(i, j)``, ``i < j``, of distinct rows of ``points`` (N, 3) closer than ``tolerance``.

    A uniform grid of cell ``tolerance``: close points lie in the same or a
    neighbouring cell; each of the 27 neighbour offsets is one ``searchsorted``.
    """
    points = np.asarray(points, dtype=np.float64)
    low = points.min(axis=0)
    span = points.max(axis=0) - low
    cell = max(tolerance, float(span.max()) / 2**19)
    cells = np.floor((points - low) / cell).astype(np.int64) + 1
    shift = np.int64(21)

    def key(c):
        return (c[:, 0] << (2 * shift)) | (c[:, 1] << shift) | c[:, 2]

    keys = key(cells)
    order = np.argsort(keys, kind="stable")
    sorted_keys = keys[order]
    firsts, seconds = [], []
    for dx in (-1, 0, 1):
        for dy in (-1, 0, 1):
            for dz in (-1, 0, 1):
                target = key(cells + np.array([dx, dy, dz]))
                low_index = np.searchsorted(sorted_keys, target, side="left")
                high_index = np.searchsorted(sorted_keys, target, side="right")
                counts = high_index - low_index
                if not counts.any():
                    continue
                source = np.repeat(np.arange(points.shape[0]), counts)
                offsets = np.arange(counts.sum()) - np.repeat(np.cumsum(counts) - counts, counts)
                other = order[np.repeat(low_index, counts) + offsets]
                keep = source < other
                firsts.append(source[keep])
                seconds.append(other[keep])
    if not firsts:
        return np.zeros(0, dtype=np.int64), np.zeros(0, dtype=np.int64)
    first, second = np.concatenate(firsts), np.concatenate(seconds)
    distance = np.linalg.norm(points[first] - points[second], axis=1)
    close = (distance <= tolerance) & (distance > 0)
    return first[close], second[close]


# ------------------------------------------------------------------------- shells and nesting


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
    low = _corner_extreme(np.minimum, triangles)
    high = _corner_extreme(np.maximum, triangles)
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


@dataclass(frozen=True, slots=True, eq=False)
class Shells:
    """Shells of a closed mesh and how they nest.

    Attributes
    ----------
    shell_of_face : (F,) int32, dense shell labels
    volume : (S,) float64 signed volume of each shell, m³
    enclosing : (S,) int64 winding number of the other shells at a point on each shell
        (0 outside everything, 1 inside one outward shell, −1 inside a void ...)
    depth : (S,) int64 how many other shells enclose each shell whole (bounding box inside theirs
        and probe inside), whatever their winding
    flat : (S,) bool, shells that enclose no volume
    nesting_checked : false when ``enclosing`` was not computed (too many shells)
    """

    shell_of_face: np.ndarray
    volume: np.ndarray
    enclosing: np.ndarray
    depth: np.ndarray
    flat: np.ndarray
    nesting_checked: bool

    @property
    def count(self) -> int:
        return int(self.volume.size)


def analyse_shells(
    mesh: Mesh, shell_of_face: np.ndarray, shell_count: int, *, nesting: bool = True, box: np.ndarray | None = None
) -> Shells:
    """Per-shell signed volume and, with ``nesting``, the winding number of the other shells at each shell.

    ``shell_of_face`` (F,) holds dense labels ``0..shell_count-1``; faces labelled −1 are
    ignored. Two streaming passes over the faces (the second only with several shells).
    """
    extent_low = np.full((shell_count, 3), np.inf)
    extent_high = np.full((shell_count, 3), -np.inf)
    first_face = np.full(shell_count, mesh.face_count, dtype=np.int64)
    volume = np.zeros(shell_count)
    origin = (_bounding_box(mesh) if box is None else box).mean(axis=0)
    for start, block in face_blocks(mesh, _SMALL_STEP):
        labels = shell_of_face[start : start + block.shape[0]]
        faces = np.flatnonzero(labels >= 0)
        corners = block[faces] - origin
        labels = labels[faces]
        six = np.einsum("ij,ij->i", corners[:, 0], np.cross(corners[:, 1], corners[:, 2]))
        volume += np.bincount(labels, weights=six, minlength=shell_count)
        if labels.size:
            _reduce_by_label(np.minimum, extent_low, labels, _corner_extreme(np.minimum, corners))
            _reduce_by_label(np.maximum, extent_high, labels, _corner_extreme(np.maximum, corners))
            _reduce_by_label(np.minimum, first_face, labels, faces + start)
    scale = mesh.metres_per_unit
    volume *= scale**3 / 6.0
    cube = (np.maximum(extent_high - extent_low, 0.0).max(axis=1) * scale) ** 3
    flat = np.abs(volume) <= FLAT_VOLUME_RELATIVE * np.maximum(cube, 1e-300)
    enclosing = np.zeros(shell_count, dtype=np.int64)
    depth = np.zeros(shell_count, dtype=np.int64)
    checked = nesting and shell_count <= NESTING_SHELL_LIMIT
    if checked and shell_count > 1:
        low, high = extent_low + origin, extent_high + origin
        enclosing, depth = _enclosing_windings(mesh, shell_of_face, first_face, low, high, flat, volume)
    return Shells(shell_of_face, volume, enclosing, depth, flat, checked)


def _corner_extreme(ufunc, corners: np.ndarray) -> np.ndarray:
    """(k, 3) element-wise min or max over the three corners of (k, 3, 3) faces.

    Two element-wise ufunc calls: ``corners.min(axis=1)`` is several times slower.
    """
    return ufunc(ufunc(corners[:, 0], corners[:, 1]), corners[:, 2])


def _reduce_by_label(ufunc, out: np.ndarray, labels: np.ndarray, values: np.ndarray) -> None:
    """``out[label] = ufunc(out[label], values)`` for each row; faces of a shell mostly come in runs,
    so each run is reduced first (``reduceat``) and only the run results are scattered."""
    starts = np.flatnonzero(np.r_[True, labels[1:] != labels[:-1]])
    ufunc.at(out, labels[starts], ufunc.reduceat(values, starts, axis=0))


def _shell_probes(mesh, shell_of_face, first_face, volume) -> np.ndarray:
    """(S, 3) one point per shell, just inside the region it encloses (file unit).

    The centroid of the largest of the shell's first faces (within 64 faces of
    its first one), moved a hair (1e-6 of that face's longest edge) into the
    region the shell encloses, so that a shell resting on another (a face lying
    in the other's face) is not probed on that other surface.
    """
    probes = np.empty((first_face.size, 3))
    for shell, first in enumerate(first_face):
        window = np.arange(first, min(mesh.face_count, first + 64))
        faces = window[shell_of_face[window] == shell]
        corners = face_corners(mesh, faces)
        normals = np.cross(corners[:, 1] - corners[:, 0], corners[:, 2] - corners[:, 0])
        area = np.linalg.norm(normals, axis=1)
        best = int(np.argmax(area))
        longest = float(np.linalg.norm(corners[best] - corners[best][[1, 2, 0]], axis=1).max())
        inward = -np.sign(volume[shell]) * normals[best] / max(area[best], 1e-300)
        probes[shell] = corners[best].mean(axis=0) + 1e-6 * longest * inward
    return probes


def _enclosing_windings(mesh, shell_of_face, first_face, low, high, flat, volume):
    """Winding number of every other shell at each shell's probe, and the nesting depth.

    One streaming pass: for every (container, probe) pair whose boxes allow it,
    the container's faces in each block that the probe's +x ray can cross are
    counted with :func:`winding_numbers`.
    """
    shell_count = first_face.size
    probes = _shell_probes(mesh, shell_of_face, first_face, volume)
    inside = np.all((probes[None, :, :] >= low[:, None, :]) & (probes[None, :, :] <= high[:, None, :]), axis=2)
    inside &= ~flat[:, None]
    np.fill_diagonal(inside, False)
    containers, queries = np.nonzero(inside)  # pairs (container shell, probed shell)
    pair_winding = np.zeros(containers.size, dtype=np.int64)
    if containers.size:
        for start, block in face_blocks(mesh, _SMALL_STEP):
            labels = shell_of_face[start : start + block.shape[0]]
            face_low = _corner_extreme(np.minimum, block)
            face_high = _corner_extreme(np.maximum, block)
            for number, (container, query) in enumerate(zip(containers, queries)):
                qx, qy, qz = probes[query]
                hit = (
                    (labels == container)
                    & (face_low[:, 1] <= qy) & (qy <= face_high[:, 1])
                    & (face_low[:, 2] <= qz) & (qz <= face_high[:, 2])
                    & (face_high[:, 0] > qx)
                )  # fmt: skip
                candidates = np.flatnonzero(hit)
                if candidates.size:
                    pair_winding[number] += int(winding_numbers(probes[query][None], block[candidates])[0])
    windings = np.bincount(queries, weights=pair_winding, minlength=shell_count).astype(np.int64)
    # Nesting depth counts only containers that hold the whole shell (its box inside theirs):
    # a shell that merely overlaps another is not nested in it.
    whole = np.all((low[queries] >= low[containers]) & (high[queries] <= high[containers]), axis=1)
    depth = np.bincount(queries, weights=np.abs(pair_winding) * whole, minlength=shell_count).astype(np.int64)
    return windings, depth


def shell_findings(mesh: Mesh, shells: Shells) -> list[Finding]:
    """Findings about the shells of a closed, consistently wound mesh with several shells.

    A shell that winds outward must not lie inside solid material
    (``enclosing == 0``); an inward one (a void) must lie inside exactly one
    layer of material (``enclosing == 1``). Otherwise: ``inside_out`` when
    flipping every face would fix the whole mesh, else ``inverted_shell`` (an
    inward shell outside everything) or ``nested_shell`` (a shell inside solid
    material with outward normals: a duplicate body, or a void exported the
    wrong way round). ``flat_shell`` warns of shells that enclose nothing.
    """
    findings: list[Finding] = []
    first_faces = _first_face_of_shells(shells)
    if shells.flat.any():
        flat = np.flatnonzero(shells.flat)
        findings.append(
            Finding(
                "flat_shell",
                WARNING,
                int(flat.size),
                f"{flat.size} shell(s) enclose no volume (a sheet or a two-sided surface); they add nothing",
                where(first_faces[flat], mesh),
            )
        )
    solid = ~shells.flat
    if not solid.any():
        return findings + [Finding("no_volume", ERROR, 1, "the surface encloses no volume (flat or empty)")]
    if not shells.nesting_checked:
        findings.append(
            Finding(
                "nesting_not_checked",
                WARNING,
                shells.count,
                f"{shells.count} shells are too many to test how they nest (limit {NESTING_SHELL_LIMIT}); "
                "inward shells are assumed to be voids",
            )
        )
        return findings
    outward = shells.volume > 0
    expected = np.where(outward, 0, 1)
    wrong = solid & (shells.enclosing != expected)
    if not wrong.any():
        return findings
    flipped_ok = np.all(~solid | (-shells.enclosing == np.where(outward, 1, 0)))
    if flipped_ok:
        findings.append(
            Finding(
                "inside_out",
                ERROR,
                int(solid.sum()),
                f"the surface is inside-out (every normal points inward; signed volume "
                f"{shells.volume[solid].sum():.6g} m^3 over {int(solid.sum())} shells)",
                where(first_faces[solid], mesh),
            )
        )
        return findings
    inverted = wrong & ~outward & (shells.enclosing == 0)
    nested = wrong & ~inverted
    if inverted.any():
        indices = np.flatnonzero(inverted)
        findings.append(
            Finding(
                "inverted_shell",
                ERROR,
                int(indices.size),
                f"{indices.size} shell(s) are inside-out (signed volume {shells.volume[indices].sum():.6g} m^3) "
                "and lie inside no other shell, so they cannot be voids",
                where(first_faces[indices], mesh),
            )
        )
    if nested.any():
        indices = np.flatnonzero(nested)
        findings.append(
            Finding(
                "nested_shell",
                ERROR,
                int(indices.size),
                f"{indices.size} shell(s) lie inside solid material with the wrong winding for a void "
                "(a duplicate body, or a void whose normals point outward)",
                where(first_faces[indices], mesh),
            )
        )
    return findings


def _first_face_of_shells(shells: Shells) -> np.ndarray:
    labels = shells.shell_of_face
    faces = np.flatnonzero(labels >= 0)
    first = np.full(shells.count, labels.size, dtype=np.int64)
    np.minimum.at(first, labels[faces], faces)
    return first


# ------------------------------------------------------------------------- self-intersections


def triangles_cross(first: np.ndarray, second: np.ndarray, *, relative_tolerance: float = 1e-10) -> np.ndarray:
    """Which pairs of triangles cross each other along a segment of positive length.

    Parameters
    ----------
    first, second : (P, 3, 3) float64 corners, any one length unit

    Returns
    -------
    (P,) bool. Coplanar pairs and pairs that only touch (at a point, or along
    an edge lying in the other's plane: a face resting on another) are not
    counted, so solids stacked on or touching each other are not flagged. Möller's interval test (Möller 1997, "A fast triangle-triangle
    intersection test", J. Graphics Tools 2(2); from memory): each triangle
    meets the other's plane in an interval of the planes' common line, and the
    triangles cross when the two intervals overlap.
    """
    first = np.asarray(first, dtype=np.float64)
    second = np.asarray(second, dtype=np.float64)
    reference = first[:, :1, :]
    a, b = first - reference, second - reference
    scale = np.maximum(np.abs(a).max(axis=(1, 2)), np.abs(b).max(axis=(1, 2)))
    scale = np.where(scale == 0, 1.0, scale)
    normal_a = np.cross(a[:, 1] - a[:, 0], a[:, 2] - a[:, 0])
    normal_b = np.cross(b[:, 1] - b[:, 0], b[:, 2] - b[:, 0])
    norm_a = np.linalg.norm(normal_a, axis=1)
    norm_b = np.linalg.norm(normal_b, axis=1)
    # Signed distances (times |n|) of each triangle's corners from the other's plane.
    dist_a = np.einsum("pi,pki->pk", normal_b, a - b[:, :1])
    dist_b = np.einsum("pi,pki->pk", normal_a, b - a[:, :1])
    zero_a = np.abs(dist_a) <= relative_tolerance * (norm_b * scale)[:, None]
    zero_b = np.abs(dist_b) <= relative_tolerance * (norm_a * scale)[:, None]
    dist_a = np.where(zero_a, 0.0, dist_a)
    dist_b = np.where(zero_b, 0.0, dist_b)
    line = np.cross(normal_a, normal_b)
    line_norm = np.linalg.norm(line, axis=1)
    usable = (line_norm > relative_tolerance * norm_a * norm_b) & (norm_a > 0) & (norm_b > 0)
    # Each triangle must have corners strictly on both sides of the other's plane: one that only
    # touches the plane (a corner or an edge in it) rests on the other face, it does not pass through.
    straddle_a = (dist_a.max(axis=1) > 0) & (dist_a.min(axis=1) < 0)
    straddle_b = (dist_b.max(axis=1) > 0) & (dist_b.min(axis=1) < 0)
    candidate = usable & straddle_a & straddle_b
    low_a, high_a = _plane_interval(a, dist_a, line)
    low_b, high_b = _plane_interval(b, dist_b, line)
    overlap = np.minimum(high_a, high_b) - np.maximum(low_a, low_b)
    return candidate & (overlap > relative_tolerance * 1e2 * line_norm * scale)


def _plane_interval(corners: np.ndarray, distance: np.ndarray, line: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Interval, along ``line``, where a triangle meets a plane (corners' signed distances given)."""
    projection = np.einsum("pki,pi->pk", corners, line)
    low = np.where(distance == 0, projection, np.inf).min(axis=1)
    high = np.where(distance == 0, projection, -np.inf).max(axis=1)
    for k in range(3):
        j = (k + 1) % 3
        crossing = distance[:, k] * distance[:, j] < 0
        denominator = np.where(crossing, distance[:, k] - distance[:, j], 1.0)
        t = projection[:, k] + (projection[:, j] - projection[:, k]) * distance[:, k] / denominator
        low = np.where(crossing, np.minimum(low, t), low)
        high = np.where(crossing, np.maximum(high, t), high)
    return low, high


def self_intersection_pairs(mesh: Mesh, topology: Topology, *, block: int = 20_000) -> np.ndarray:
    """(P, 2) int64 pairs of faces that cross each other and share no vertex.

    Broad phase: an rtree of the faces' bounding boxes, bulk-loaded from numpy
    arrays and queried in blocks with ``intersection_v``. Narrow phase:
    :func:`triangles_cross`.
    """
    from rtree import index  # lazily: only this check needs it

    faces = topology.face_vertices
    count = mesh.face_count
    if count < 2:
        return np.zeros((0, 2), dtype=np.int64)
    corners = np.concatenate([block for _, block in face_blocks(mesh)])
    low, high = _corner_extreme(np.minimum, corners), _corner_extreme(np.maximum, corners)
    properties = index.Property()
    properties.dimension = 3
    properties.leaf_capacity = 32
    properties.index_capacity = 32
    tree = index.Index((np.arange(count, dtype=np.int64), low, high), properties=properties)
    found = []
    for start in range(0, count, block):
        stop = min(count, start + block)
        ids, counts = tree.intersection_v(low[start:stop], high[start:stop])
        first = np.repeat(np.arange(start, stop, dtype=np.int64), counts.astype(np.int64))
        second = ids.astype(np.int64)
        keep = first < second
        first, second = first[keep], second[keep]
        shared = (faces[first][:, :, None] == faces[second][:, None, :]).any(axis=(1, 2))
        first, second = first[~shared], second[~shared]
        for piece in range(0, first.size, 1 << 18):
            f, s = first[piece : piece + (1 << 18)], second[piece : piece + (1 << 18)]
            crossing = triangles_cross(corners[f], corners[s])
            if crossing.any():
                found.append(np.column_stack([f[crossing], s[crossing]]))
    return np.concatenate(found) if found else np.zeros((0, 2), dtype=np.int64)


def self_intersection_findings(mesh: Mesh, topology: Topology) -> list[Finding]:
    """``self_intersection`` (error) when faces that share no vertex cross each other."""
    pairs = self_intersection_pairs(mesh, topology)
    if pairs.size == 0:
        return []
    involved = np.unique(pairs)
    return [
        Finding(
            "self_intersection",
            ERROR,
            int(involved.size),
            f"{involved.size} faces cross other faces ({len(pairs)} crossing pair(s)): the surface passes "
            "through itself, so some volume is counted twice or with the wrong sign",
            where(pairs[:WHERE_LIMIT].reshape(-1), mesh, limit=2 * WHERE_LIMIT),
        )
    ]


# ------------------------------------------------------------------------- units


def unit_findings(mesh: Mesh, extent: np.ndarray) -> list[Finding]:
    """``implausible_size`` (warning) when the part's size suggests the declared unit is wrong.

    ``extent`` (3,) is the bounding-box size in metres. A part whose largest side
    is outside :data:`PLAUSIBLE_EXTENT_M` gets suggestions: each of mm, m, in, cm,
    ft that would make it between 5 mm and 5 m.
    """
    largest = float(np.max(extent)) if extent.size else 0.0
    low, high = PLAUSIBLE_EXTENT_M
    if largest == 0.0 or low <= largest <= high:
        return []
    declared = mesh.length_unit
    candidates = []  # units that would make the part between 5 mm and 5 m: the usual slips are x1000 and x25.4
    for unit in ("mm", "m", "in", "cm", "ft"):
        factor = LENGTH_UNITS[unit] / mesh.metres_per_unit
        if unit != declared and 5e-3 <= largest * factor <= 5.0 and len(candidates) < 2:
            ratio, direction = (factor, "larger") if factor > 1 else (1.0 / factor, "smaller")
            candidates.append(f"{largest * factor:.4g} m in {unit} ({ratio:g} times {direction}: --units {unit})")
    suggestion = f"; it would be {' or '.join(candidates)}" if candidates else ""
    return [
        Finding(
            "implausible_size",
            WARNING,
            1,
            f"largest extent {largest:.4g} m (read as {declared}) is outside the plausible "
            f"{low:g}-{high:g} m for a part{suggestion}",
        )
    ]


# ------------------------------------------------------------------------- validate


def validate(mesh: Mesh, moments: Moments, *, thorough: bool = False) -> ValidationReport:
    """Check that ``mesh`` bounds a solid whose ``moments`` can be trusted.

    Parameters
    ----------
    mesh
        The mesh as read.
    moments
        Its moments (signed total volume), from :func:`meshprops.moments.integrate_chunks`.
    thorough
        ``False`` (inside ``measure``): the fast path; zero-area and duplicate faces
        are looked for only when the edge test fails (a closed, consistently
        oriented surface can hold duplicates only as opposite pairs, which
        cancel exactly), and self-intersections only up to
        :data:`SELF_INTERSECTION_FACE_LIMIT` faces. ``True`` (``meshprops check``):
        every check on every mesh.

    Errors: ``open_edges``, ``nonmanifold_edges``, ``inconsistent_winding``,
    ``non_orientable``, ``duplicate_faces`` (same winding), ``inside_out``,
    ``inverted_shell``, ``nested_shell``, ``self_intersection``, ``no_volume``.
    Warnings: ``collapsed_faces``, ``zero_area_faces``, ``duplicate_faces``
    (cancelling pairs), ``near_coincident_vertices``, ``flat_shell``,
    ``implausible_size``, ``nesting_not_checked``, ``self_intersection_not_checked``.
    """
    topology, box = _weld_with_box(mesh)
    findings: list[Finding] = []
    extra: dict = {"holes": 0}
    extent = (box[1] - box[0]) * mesh.metres_per_unit
    closed = is_closed_and_oriented(topology)
    if closed:
        edge_count = mesh.face_count * 3 // 2  # a closed, consistent surface has 3F/2 edges
        if thorough:
            findings.extend(duplicate_findings(mesh, topology))
    else:
        collapsed = collapsed_faces(topology)
        if collapsed.size:
            findings.append(
                Finding(
                    "collapsed_faces",
                    WARNING,
                    int(collapsed.size),
                    f"{collapsed.size} face(s) repeat a vertex (zero area); they enclose nothing",
                    where(collapsed, mesh),
                )
            )
        uses = edge_uses(topology)
        edge_count = int(uses.uses.size)
        edge_list, extra["holes"] = _classify_edges(mesh, topology, uses)
        findings.extend(edge_list)
        findings.extend(duplicate_findings(mesh, topology))
    if not closed or thorough:
        diagonal = float(np.linalg.norm(extent)) / mesh.metres_per_unit
        slivers = zero_area_faces(mesh, topology, diagonal)
        if slivers.size:
            findings.append(
                Finding(
                    "zero_area_faces",
                    WARNING,
                    int(slivers.size),
                    f"{slivers.size} face(s) have collinear corners (zero area); they enclose nothing",
                    where(slivers, mesh),
                )
            )
    if thorough:
        shell_of_face, shell_count = patch_shells(topology, uses if not closed else None)
    else:
        shell_of_face, shell_count = vertex_shells(topology)
    extra["shells"] = shell_count
    if not any(f.severity == ERROR for f in findings):
        if shell_count <= 1:
            findings.extend(_volume_findings(mesh, moments, extent))
            extra["voids"] = 0
        else:
            shells = analyse_shells(mesh, shell_of_face, shell_count, box=box)
            findings.extend(shell_findings(mesh, shells))
            extra["voids"] = int(np.count_nonzero((shells.volume < 0) & (shells.enclosing == 1) & ~shells.flat))
    if thorough or mesh.face_count <= SELF_INTERSECTION_FACE_LIMIT:
        findings.extend(self_intersection_findings(mesh, topology))
        extra["self_intersections_checked"] = True
    else:
        extra["self_intersections_checked"] = False
        findings.append(
            Finding(
                "self_intersection_not_checked",
                WARNING,
                mesh.face_count,
                f"self-intersections were not checked: {mesh.face_count} faces is above the measure limit of "
                f"{SELF_INTERSECTION_FACE_LIMIT}; run 'meshprops check' on this file",
            )
        )
    findings.extend(unit_findings(mesh, extent))
    return ValidationReport(tuple(findings), mesh.face_count, topology.vertex_count, edge_count, extra)


def _volume_findings(mesh: Mesh, moments: Moments, extent: np.ndarray | None = None) -> list[Finding]:
    extent = _bounding_extent(mesh) if extent is None else extent
    if extent.max() == 0.0 or abs(moments.volume) <= FLAT_VOLUME_RELATIVE * max(float(extent.max()) ** 3, 1e-300):
        return [Finding("no_volume", ERROR, 1, "the surface encloses no volume (flat or empty)")]
    if moments.volume < 0:
        return [
            Finding(
                "inside_out",
                ERROR,
                1,
                f"the surface is inside-out (every normal points inward; signed volume {moments.volume:.6g} m^3)",
                where(np.arange(min(mesh.face_count, WHERE_LIMIT)), mesh),
            )
        ]
    return []


def _bounding_box(mesh: Mesh, corners: np.ndarray | None = None) -> np.ndarray:
    """(2, 3) lowest and highest coordinates, in the file's unit.

    ``corners`` (N, 3), when given, are the mesh's corner or vertex rows already in
    memory. Reduced one column at a time (``min(axis=0)`` of an (N, 3) array is
    ten times slower).
    """
    if corners is None:
        corners = mesh.soup if mesh.soup is not None else mesh.vertices
    columns = [corners[..., axis] for axis in range(3)]
    low = [float(column.min()) for column in columns]
    high = [float(column.max()) for column in columns]
    return np.array([low, high], dtype=np.float64)


def _bounding_extent(mesh: Mesh, corners: np.ndarray | None = None) -> np.ndarray:
    """(3,) bounding-box size in metres."""
    box = _bounding_box(mesh, corners)
    return (box[1] - box[0]) * mesh.metres_per_unit


# ------------------------------------------------------------------------- the check command's library side


@dataclass(frozen=True, slots=True, eq=False)
class CheckResult:
    """The thorough validation of one mesh file (``meshprops check``).

    Attributes
    ----------
    source, file_format, length_unit : as read
    face_count : number of triangles in the file
    report : every check (:func:`validate` with ``thorough=True``)
    """

    source: str
    file_format: str
    length_unit: str
    face_count: int
    report: ValidationReport


def check_mesh(mesh: Mesh) -> CheckResult:
    """Run every check on ``mesh``, self-intersections included whatever its size."""
    from .moments import integrate_mesh

    moments = integrate_mesh(mesh)
    report = validate(mesh, moments, thorough=True)
    return CheckResult(mesh.source, mesh.file_format, mesh.length_unit, mesh.face_count, report)


def check_files(paths, length_unit: str = "mm") -> list[CheckResult]:
    """Load every file first (an unreadable one fails the whole call), then check each.

    An assembly manifest (``.toml``) stands for the mesh files it lists, each read in
    its body's own length unit (``length_unit`` does not apply to them); a file used by
    several bodies is checked once.
    """
    from .io import load_mesh

    files: list[tuple[str, str]] = []
    for path in paths:
        if str(path).lower().endswith(".toml"):
            from .assembly import load_manifest

            files.extend((body.mesh_path, body.length_unit) for body in load_manifest(path).bodies)
        else:
            files.append((str(path), length_unit))
    files = list(dict.fromkeys(files))
    meshes = [load_mesh(path, unit) for path, unit in files]
    return [check_mesh(mesh) for mesh in meshes]
