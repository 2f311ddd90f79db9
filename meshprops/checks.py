"""Mesh validation: is this surface closed and consistently oriented, so that the
divergence theorem gives its solid exactly?

Validation returns data (a :class:`ValidationReport` of :class:`Finding` s),
never log lines. The fast path costs a few sorts of 64-bit keys:

1. Weld corners that have bit-identical coordinates into vertices
   (:func:`weld_exact`): a 64-bit hash of the coordinate bits, sorted with the
   corner index packed into its low bits, then verified against the true
   coordinates, so the result is exact (hash collisions are detected and
   resolved, never trusted).
2. A closed, consistently oriented 2-manifold uses every directed edge
   ``(a, b)`` exactly once and its reverse ``(b, a)`` exactly once. Two sorted
   key arrays decide that. Only when it fails do the slower classifiers run to
   say which edges are open, non-manifold or wound the wrong way, and where.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .io import Mesh
from .moments import Moments

ERROR = "error"
WARNING = "warning"
#: How many example locations a finding carries.
WHERE_LIMIT = 5


@dataclass(frozen=True, slots=True, eq=False)
class Finding:
    """One thing validation found.

    Attributes
    ----------
    code : a stable name (see the README's table of finding codes)
    severity : ``"error"`` (numbers would be wrong) or ``"warning"``
    count : how many faces, edges or shells are affected
    message : one sentence for a person
    where : a few examples, each ``{"face": int, "point": [x, y, z]}`` (m)
    """

    code: str
    severity: str
    count: int
    message: str
    where: tuple[dict, ...] = ()


@dataclass(frozen=True, slots=True, eq=False)
class ValidationReport:
    """What validation found about one mesh.

    ``valid`` is true when no finding is an error.
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


@dataclass(frozen=True, slots=True, eq=False)
class Topology:
    """Faces as welded vertex indices.

    Attributes
    ----------
    face_vertices : (F, 3) int64, indices of welded vertices, in corner order
    vertex_count : number of distinct vertex positions
    """

    face_vertices: np.ndarray
    vertex_count: int


# ------------------------------------------------------------------------- welding

_K1, _K2, _K3, _K4 = (np.uint64(k) for k in (0x9E3779B97F4A7C15, 0xC2B2AE3D27D4EB4F, 0x165667B19E3779F9, 0xFF51AFD7ED558CCD))


def _coordinate_bits(positions: np.ndarray) -> np.ndarray:
    """Reinterpret float coordinates as unsigned integers of the same width (no copy)."""
    unsigned = np.uint32 if positions.dtype.itemsize == 4 else np.uint64
    if positions.dtype not in (np.float32, np.float64):
        positions = positions.astype(np.float64)
        unsigned = np.uint64
    return positions.view(unsigned)


def _hash_rows(bits: np.ndarray) -> np.ndarray:
    """A 64-bit mixing hash of each row of three coordinate bit patterns; -0.0 == +0.0."""
    negative_zero = np.uint64(1) << np.uint64(bits.dtype.itemsize * 8 - 1)
    result = np.zeros(bits.shape[0], dtype=np.uint64)
    column = np.empty(bits.shape[0], dtype=np.uint64)
    for axis, multiplier in enumerate((_K1, _K2, _K3)):
        column[...] = bits[:, axis]
        column[column == negative_zero] = 0
        column *= multiplier
        column ^= column >> np.uint64(31)
        result ^= column
        result *= _K4
    result ^= result >> np.uint64(29)
    return result


def weld_positions(positions: np.ndarray) -> tuple[np.ndarray, int]:
    """Label bit-identical rows of ``positions`` (N, 3) with the same vertex id.

    Returns ``(ids, vertex_count)``: ``ids`` (N,) int64 with values below an upper
    bound (not necessarily dense), and the number of distinct positions. Exact:
    rows get the same id if and only if their coordinates are equal (with -0.0
    equal to +0.0).
    """
    count = positions.shape[0]
    bits = _coordinate_bits(positions)
    index_bits = max(1, int(count - 1).bit_length())
    mask = np.uint64((1 << index_bits) - 1)
    keys = _hash_rows(bits)
    keys >>= np.uint64(index_bits)
    keys <<= np.uint64(index_bits)
    keys |= np.arange(count, dtype=np.uint64)
    keys.sort()
    order = (keys & mask).astype(np.int64)
    keys >>= np.uint64(index_bits)  # now the (truncated) hash, in sorted order
    same_hash = keys[1:] == keys[:-1]
    del keys
    sorted_bits = _normalised_bits(bits, order)
    differs = np.any(sorted_bits[1:] != sorted_bits[:-1], axis=1)
    new_vertex = np.empty(count, dtype=bool)
    new_vertex[0] = True
    np.logical_or(~same_hash, differs, out=new_vertex[1:])
    ranks = np.cumsum(new_vertex, dtype=np.int64) - 1
    upper = int(ranks[-1]) + 1
    collisions = np.flatnonzero(same_hash & differs)
    if collisions.size:
        # Rare: different positions share the truncated hash. Label those groups exactly.
        starts = np.flatnonzero(np.concatenate(([True], ~same_hash)))
        ends = np.concatenate((starts[1:], [count]))
        groups = np.unique(np.searchsorted(starts, collisions + 1, side="right") - 1)
        members = np.concatenate([np.arange(starts[g], ends[g]) for g in groups])
        _, inverse = np.unique(sorted_bits[members], axis=0, return_inverse=True)
        ranks[members] = upper + inverse.reshape(-1)
        upper += int(inverse.max()) + 1
        vertex_count = int(np.count_nonzero(np.bincount(ranks, minlength=upper)))
    else:
        vertex_count = upper
    ids = np.empty(count, dtype=np.int64)
    ids[order] = ranks
    return ids, vertex_count


def _normalised_bits(bits: np.ndarray, order: np.ndarray) -> np.ndarray:
    gathered = bits[order]
    negative_zero = gathered.dtype.type(1 << (gathered.dtype.itemsize * 8 - 1))
    gathered[gathered == negative_zero] = 0
    return gathered


def weld_exact(mesh: Mesh) -> Topology:
    """Faces of ``mesh`` as indices of vertices with bit-identical coordinates."""
    if mesh.soup is not None:
        corners = mesh.soup.reshape(-1, 3) if mesh.soup.flags.c_contiguous else None
        if corners is None:  # strided memory map of STL records: weld the corners without a full copy
            corners = np.empty((mesh.face_count * 3, 3), dtype=mesh.soup.dtype)
            step = 1 << 18
            for start in range(0, mesh.face_count, step):
                block = mesh.soup[start : start + step]
                corners[start * 3 : start * 3 + block.shape[0] * 3] = block.reshape(-1, 3)
        ids, vertex_count = weld_positions(corners)
        return Topology(ids.reshape(-1, 3), vertex_count)
    ids, vertex_count = weld_positions(mesh.vertices)
    return Topology(ids[mesh.faces], vertex_count)


# ------------------------------------------------------------------------- edges


def _directed_edge_keys(face_vertices: np.ndarray, base: int) -> tuple[np.ndarray, np.ndarray]:
    tails = face_vertices
    heads = np.roll(face_vertices, -1, axis=1)  # edges (v0,v1), (v1,v2), (v2,v0)
    forward = (tails * base + heads).reshape(-1)
    backward = (heads * base + tails).reshape(-1)
    return forward, backward


def is_closed_and_oriented(topology: Topology) -> bool:
    """True when every directed edge occurs exactly once and so does its reverse."""
    base = int(topology.face_vertices.max()) + 1
    forward, backward = _directed_edge_keys(topology.face_vertices, base)
    forward.sort()
    if np.any(forward[1:] == forward[:-1]):
        return False
    backward.sort()
    return bool(np.array_equal(forward, backward))


def _where(face_indices: np.ndarray, mesh: Mesh) -> tuple[dict, ...]:
    places = []
    for face in np.unique(face_indices)[:WHERE_LIMIT]:
        face = int(face)
        if mesh.soup is not None:
            corners = np.asarray(mesh.soup[face], dtype=np.float64)
        else:
            corners = mesh.vertices[mesh.faces[face]]
        centroid = corners.mean(axis=0) * mesh.metres_per_unit
        places.append({"face": face, "point": [float(x) for x in centroid]})
    return tuple(places)


def edge_findings(mesh: Mesh, topology: Topology) -> list[Finding]:
    """Classify the edges of a surface that failed :func:`is_closed_and_oriented`."""
    faces = topology.face_vertices
    base = int(faces.max()) + 1
    tails = faces.reshape(-1)
    heads = np.roll(faces, -1, axis=1).reshape(-1)
    face_of_edge = np.repeat(np.arange(faces.shape[0]), 3)
    proper = tails != heads
    low = np.minimum(tails, heads)
    high = np.maximum(tails, heads)
    undirected = low * base + high
    forward_direction = tails < heads
    findings: list[Finding] = []

    degenerate_faces = np.unique(face_of_edge[~proper])
    if degenerate_faces.size:
        findings.append(
            Finding(
                "collapsed_faces",
                WARNING,
                int(degenerate_faces.size),
                f"{degenerate_faces.size} face(s) repeat a vertex (zero area); they enclose nothing",
                _where(degenerate_faces, mesh),
            )
        )
    keys = undirected[proper]
    directions = forward_direction[proper]
    owners = face_of_edge[proper]
    unique_keys, inverse, uses = np.unique(keys, return_inverse=True, return_counts=True)
    forward_uses = np.bincount(inverse, weights=directions, minlength=unique_keys.size)
    open_edges = uses == 1
    nonmanifold = uses > 2
    misoriented = (uses == 2) & (forward_uses != 1)
    for mask, code, text in (
        (open_edges, "open_edges", "edge(s) belong to only one face: the surface has holes"),
        (nonmanifold, "nonmanifold_edges", "edge(s) are shared by more than two faces"),
        (misoriented, "inconsistent_winding", "edge(s) join faces wound in opposite senses"),
    ):
        count = int(np.count_nonzero(mask))
        if count:
            faces_hit = owners[mask[inverse]]
            findings.append(Finding(code, ERROR, count, f"{count} {text}", _where(faces_hit, mesh)))
    return findings


def undirected_edge_count(topology: Topology) -> int:
    faces = topology.face_vertices
    base = int(faces.max()) + 1
    tails = faces.reshape(-1)
    heads = np.roll(faces, -1, axis=1).reshape(-1)
    keys = np.minimum(tails, heads) * base + np.maximum(tails, heads)
    keys.sort()
    return int(np.count_nonzero(keys[1:] != keys[:-1]) + 1)


def validate(mesh: Mesh, moments: Moments) -> ValidationReport:
    """Check that ``mesh`` bounds a solid whose ``moments`` can be trusted.

    Errors: open edges, non-manifold edges, inconsistent winding, an inside-out
    surface (negative enclosed volume), no enclosed volume.
    """
    topology = weld_exact(mesh)
    findings: list[Finding] = []
    closed = is_closed_and_oriented(topology)
    if not closed:
        findings.extend(edge_findings(mesh, topology))
    # A closed, consistent surface has 3F/2 edges.
    edge_count = mesh.face_count * 3 // 2 if closed else undirected_edge_count(topology)
    if not any(f.severity == ERROR for f in findings):
        findings.extend(_volume_findings(mesh, moments))
    return ValidationReport(tuple(findings), mesh.face_count, topology.vertex_count, edge_count)


def _volume_findings(mesh: Mesh, moments: Moments) -> list[Finding]:
    extent = _bounding_extent(mesh)
    if extent.max() == 0.0 or abs(moments.volume) <= 1e-12 * max(extent.max() ** 3, 1e-300):
        return [Finding("no_volume", ERROR, 1, "the surface encloses no volume (flat or empty)")]
    if moments.volume < 0:
        return [
            Finding(
                "inside_out",
                ERROR,
                1,
                f"the surface is inside-out (every normal points inward; signed volume {moments.volume:.6g} m^3)",
            )
        ]
    return []


def _bounding_extent(mesh: Mesh) -> np.ndarray:
    array = mesh.soup if mesh.soup is not None else mesh.vertices
    low = np.full(3, np.inf)
    high = np.full(3, -np.inf)
    step = 1 << 18
    for start in range(0, len(array), step):
        block = np.asarray(array[start : start + step], dtype=np.float64).reshape(-1, 3)
        low = np.minimum(low, block.min(axis=0))
        high = np.maximum(high, block.max(axis=0))
    return (high - low) * mesh.metres_per_unit
