"""Per-face geometry of a mesh in metres: corners, centroids, blocks of faces, bounding
boxes, near pairs of points.
"""

from __future__ import annotations

import numpy as np

from ..io import Mesh

BLOCK_FACES = 1 << 18  # faces per block when streaming over a mesh  # faces per block when streaming over a mesh
SMALL_BLOCK_FACES = 1 << 15  # faces per block for float64 work on every face (keeps temporaries small)


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


def face_blocks(mesh: Mesh, block_faces: int = BLOCK_FACES):
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


def near_pairs(points: np.ndarray, tolerance: float, *, coincident: bool = False) -> tuple[np.ndarray, np.ndarray]:
    """Pairs ``(i, j)``, ``i < j``, of rows of ``points`` (N, 3) within ``tolerance`` of each other.

    Rows at exactly the same position are paired only with ``coincident``.

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
    close = (distance <= tolerance) if coincident else (distance <= tolerance) & (distance > 0)
    return first[close], second[close]


def corner_extreme(ufunc, corners: np.ndarray) -> np.ndarray:
    """(k, 3) element-wise min or max over the three corners of (k, 3, 3) faces.

    Two element-wise ufunc calls: ``corners.min(axis=1)`` is several times slower.
    """
    return ufunc(ufunc(corners[:, 0], corners[:, 1]), corners[:, 2])


def reduce_by_label(ufunc, out: np.ndarray, labels: np.ndarray, values: np.ndarray) -> None:
    """``out[label] = ufunc(out[label], values)`` for each row; faces of a shell mostly come in runs,
    so each run is reduced first (``reduceat``) and only the run results are scattered."""
    starts = np.flatnonzero(np.r_[True, labels[1:] != labels[:-1]])
    ufunc.at(out, labels[starts], ufunc.reduceat(values, starts, axis=0))


def mesh_bounding_box(mesh: Mesh, corners: np.ndarray | None = None) -> np.ndarray:
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


def mesh_extent(mesh: Mesh, corners: np.ndarray | None = None) -> np.ndarray:
    """(3,) bounding-box size in metres."""
    box = mesh_bounding_box(mesh, corners)
    return (box[1] - box[0]) * mesh.metres_per_unit
