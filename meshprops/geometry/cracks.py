"""Close the cracks of inexact CAD export: merge open-edge vertices closer than a tolerance.

An export that writes each patch of a surface on its own leaves the patches'
shared seams with vertices a hair apart (often ~1e-7 of the part's size): the
surface is closed to the eye but open to an exact weld. Merging the vertices of
open edges that lie within a tolerance of each other closes such cracks. Only
vertices on open edges move, each onto the vertex of its group that most faces use,
so every other vertex keeps its exact position; a face two of whose corners merge
(a sliver spanning the crack) is dropped. No face is ever added: a gap wider than
the tolerance, or a missing face, stays open.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .faces import near_pairs

#: Default crack tolerance, as a fraction of the bounding-box diagonal.
CRACK_TOLERANCE_RELATIVE = 1e-6


def default_crack_tolerance(vertices: np.ndarray) -> float:
    """:data:`CRACK_TOLERANCE_RELATIVE` times the bounding-box diagonal of ``vertices`` (same unit)."""
    vertices = np.asarray(vertices, dtype=np.float64)
    if vertices.shape[0] == 0:
        return 0.0
    return CRACK_TOLERANCE_RELATIVE * float(np.linalg.norm(vertices.max(axis=0) - vertices.min(axis=0)))


@dataclass(frozen=True, slots=True, eq=False)
class CrackClosure:
    """The result of :func:`close_cracks`.

    Attributes
    ----------
    faces : (G, 3) int64 faces over the same vertex array, with merged vertices renumbered
        to their group's representative (G ≤ F: faces that collapsed are dropped)
    kept_faces : (G,) int64 the input face number of each output face
    merged_vertices : how many vertices were moved onto another
    largest_gap : largest distance a vertex moved, in the vertices' unit (0 when none moved)
    collapsed_faces : input faces dropped because two of their corners merged
    open_edges_before, open_edges_after : undirected edges used by one face only
    tolerance : the tolerance used, vertices' unit
    """

    faces: np.ndarray
    kept_faces: np.ndarray
    merged_vertices: int
    largest_gap: float
    collapsed_faces: int
    open_edges_before: int
    open_edges_after: int
    tolerance: float

    @property
    def changed(self) -> bool:
        return self.merged_vertices > 0


def open_edge_vertices(faces: np.ndarray) -> tuple[np.ndarray, int]:
    """Vertex ids on edges used by exactly one face, and the number of such edges."""
    faces = np.asarray(faces, dtype=np.int64)
    if faces.shape[0] == 0:
        return np.zeros(0, dtype=np.int64), 0
    tails = faces.ravel()
    heads = faces[:, [1, 2, 0]].ravel()
    low, high = np.minimum(tails, heads), np.maximum(tails, heads)
    proper = low != high
    low, high = low[proper], high[proper]
    bound = int(faces.max()) + 1
    keys, counts = np.unique(low * bound + high, return_counts=True)
    single = keys[counts == 1]
    vertices = np.unique(np.concatenate([single // bound, single % bound]))
    return vertices, int(single.size)




def close_cracks(vertices: np.ndarray, faces: np.ndarray, tolerance: float) -> CrackClosure:
    """Merge open-edge vertices within ``tolerance`` of each other.

    Parameters
    ----------
    vertices : (V, 3) float64 welded vertex positions, any one length unit
    faces : (F, 3) int vertex ids
    tolerance : largest distance merged, same unit as ``vertices``; 0 (or less) merges nothing

    Returns
    -------
    CrackClosure
    """
    vertices = np.asarray(vertices, dtype=np.float64)
    faces = np.asarray(faces, dtype=np.int64)
    boundary, open_before = open_edge_vertices(faces)
    unchanged = CrackClosure(faces, np.arange(faces.shape[0]), 0, 0.0, 0, open_before, open_before, float(tolerance))
    if tolerance <= 0 or boundary.size < 2:
        return unchanged
    first, second = near_pairs(vertices[boundary], float(tolerance), coincident=True)
    if first.size == 0:
        return unchanged
    # union-find over the boundary vertices: hook roots to the smaller root, then jump pointers
    parent = np.arange(boundary.size)
    while True:
        root_a, root_b = parent[first], parent[second]
        low = np.minimum(root_a, root_b)
        before = parent.copy()
        np.minimum.at(parent, root_a, low)
        np.minimum.at(parent, root_b, low)
        parent = parent[parent]
        parent = parent[parent]
        if np.array_equal(parent, before):
            break
    # Each group keeps the position most faces use (ties: the lowest id): the corner an export wrote
    # once, apart from the others, is the one that moves.
    uses = np.bincount(faces.ravel(), minlength=vertices.shape[0])[boundary]
    order = np.lexsort((boundary, -uses, parent))
    first_of_group = np.r_[True, parent[order][1:] != parent[order][:-1]]
    keeper = np.empty(boundary.size, dtype=np.int64)
    keeper[parent[order][first_of_group]] = order[first_of_group]
    target = np.arange(vertices.shape[0])
    target[boundary] = boundary[keeper[parent]]
    moved = np.flatnonzero(target != np.arange(vertices.shape[0]))
    if moved.size == 0:
        return unchanged
    gap = float(np.linalg.norm(vertices[moved] - vertices[target[moved]], axis=1).max())
    renumbered = target[faces]
    collapsed = (
        (renumbered[:, 0] == renumbered[:, 1])
        | (renumbered[:, 1] == renumbered[:, 2])
        | (renumbered[:, 2] == renumbered[:, 0])
    )
    kept = np.flatnonzero(~collapsed)
    result = renumbered[kept]
    _, open_after = open_edge_vertices(result)
    return CrackClosure(
        result, kept, int(moved.size), gap, int(collapsed.sum()), open_before, open_after, float(tolerance)
    )
