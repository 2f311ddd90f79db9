"""Triangle-triangle crossing: an rtree broad phase over face bounding boxes and a vectorized
interval (Moller) test of the candidate pairs. Faces that share a vertex are not crossings.
"""

from __future__ import annotations

import numpy as np

from ..io import Mesh
from .faces import corner_extreme, face_blocks
from .welding import Topology


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
    if mesh.face_count < 2:
        return np.zeros((0, 2), dtype=np.int64)
    corners = np.concatenate([block for _, block in face_blocks(mesh)])
    return crossing_pairs_of(corners, topology.face_vertices, block=block)


def crossing_pairs_of(corners: np.ndarray, faces: np.ndarray, *, block: int = 20_000) -> np.ndarray:
    """:func:`self_intersection_pairs` of (F, 3, 3) float64 ``corners`` with (F, 3) vertex ids ``faces``."""
    from rtree import index  # lazily: only this check needs it

    count = corners.shape[0]
    if count < 2:
        return np.zeros((0, 2), dtype=np.int64)
    low, high = corner_extreme(np.minimum, corners), corner_extreme(np.maximum, corners)
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
