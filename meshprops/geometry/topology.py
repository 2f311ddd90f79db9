"""Edge topology of a welded mesh: directed-edge keys, the closed-and-oriented test, edge
uses, shells (connected components by union-find), orientation of patches, boundary loops
and duplicate faces. Pure numpy over face index arrays.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .compiled import all_cores, compiled_answers, kernels
from .welding import Topology, index_dtype


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


def is_closed_and_oriented(topology: Topology, *, force_compiled: bool = False) -> bool:
    """True when every directed edge occurs exactly once and so does its reverse.

    One sort: with the direction in the lowest bit, a closed, consistently
    oriented surface sorts into pairs ``(2k, 2k + 1)`` of the same undirected
    edge, each undirected edge appearing in exactly one pair. Large meshes ask the
    compiled twin (:func:`meshprops.geometry.mesh_kernels.closed_and_oriented`).
    """
    faces = topology.face_vertices
    if force_compiled or compiled_answers(faces.shape[0]):
        compiled = kernels("mesh_kernels")
        test = compiled.closed_and_oriented if all_cores(faces.shape[0]) else compiled.serial("closed_and_oriented")
        return bool(test(np.ascontiguousarray(faces), topology.id_bound))
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


def collapsed_mask(faces: np.ndarray) -> np.ndarray:
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
    proper = np.repeat(~collapsed_mask(faces), 3)
    tails, heads, owner = tails[proper], heads[proper], owner[proper]
    keys = np.minimum(tails, heads) * np.int64(topology.id_bound) + np.maximum(tails, heads)
    unique_keys, inverse, uses = np.unique(keys, return_inverse=True, return_counts=True)
    inverse = inverse.reshape(-1)
    forward = np.bincount(inverse, weights=tails < heads, minlength=unique_keys.size).astype(np.int64)
    return EdgeUse(tails, heads, owner, inverse, uses, forward)


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
    index_type = index_dtype(node_count)
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
    patch[collapsed_mask(topology.face_vertices)] = -1
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
    return np.flatnonzero(collapsed_mask(topology.face_vertices))


def duplicate_face_groups(topology: Topology, *, force_compiled: bool = False) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Faces that use the same three vertices as another face.

    Returns ``(faces, group, winding)``, sorted by group: the face indices, a
    group label per face (same vertex set, same group) and +1/-1 for the
    winding of each face relative to the first face of its group. On large meshes
    the compiled :func:`meshprops.geometry.mesh_kernels.has_duplicate_faces` answers
    "none" first (most meshes stop there).
    """
    none = np.zeros(0, dtype=np.int64)
    if force_compiled or compiled_answers(topology.face_vertices.shape[0]):
        compiled = kernels("mesh_kernels")
        if not compiled.has_duplicate_faces(np.ascontiguousarray(topology.face_vertices), topology.id_bound):
            return none, none, none
    faces = topology.face_vertices.astype(np.int64)
    distinct = (faces[:, 0] != faces[:, 1]) & (faces[:, 1] != faces[:, 2]) & (faces[:, 2] != faces[:, 0])
    candidates = np.flatnonzero(distinct)
    bound = np.int64(topology.id_bound)
    if topology.id_bound < 2**21:
        first, second, third = (faces[candidates, k] for k in range(3))
        least = np.minimum(np.minimum(first, second), third)  # the row sorted, element-wise (cheaper)
        most = np.maximum(np.maximum(first, second), third)
        keys = (least * bound + (first + second + third - least - most)) * bound + most
        del first, second, third, least, most
        ordered = np.sort(keys)  # a plain sort is ~5x cheaper than unique's argsort; most meshes stop here
        if not np.any(ordered[1:] == ordered[:-1]):
            return none, none, none
        del ordered
        _, inverse, counts = np.unique(keys, return_inverse=True, return_counts=True)
    else:
        sorted_vertices = np.sort(faces[candidates], axis=1)
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


def first_use(topology: Topology) -> np.ndarray:
    """For each vertex id, the first corner (3 * face + k) that uses it (a large number where unused)."""
    flat = topology.face_vertices.reshape(-1)
    corner_of_id = np.full(topology.id_bound, np.iinfo(np.int64).max, dtype=np.int64)
    np.minimum.at(corner_of_id, flat, np.arange(flat.size, dtype=np.int64))
    return corner_of_id
