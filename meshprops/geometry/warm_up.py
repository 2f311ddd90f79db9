"""Compile (or load from numba's disk cache) every kernel of :mod:`meshprops.geometry.compiled`.

For test sessions and golden-output recordings, so that no output depends on whether a
first compile happened; a user's command compiles what it needs on first use instead.
"""

from __future__ import annotations

import numpy as np

from .compiled import kernels
from .crossing import crossing_volume_bound, find_crossings
from .shapes import box
from .topology import duplicate_face_groups, is_closed_and_oriented
from .welding import weld_compiled


def warm_up() -> None:
    """Compile (or load from the cache) every kernel, on tiny inputs of every type they are given."""
    vertices = np.array([[0.0, 0, 0], [1, 0, 0], [0, 1, 0], [0.2, 0.2, -1], [0.2, 0.2, 1], [1, 1, 0]])
    faces = np.array([[0, 1, 2], [3, 4, 5]], dtype=np.int64)
    crossing_volume_bound(vertices, faces, find_crossings(vertices, faces, force_compiled=True).pairs)
    find_crossings(vertices, faces, force_compiled=True, _parallel=True)
    find_crossings(vertices, faces, force_compiled=True, _parallel=False)
    corners = np.ascontiguousarray(vertices[faces])
    crossing_kernels = kernels("crossing_kernels")
    for winding in (crossing_kernels.face_sides_winding, crossing_kernels.serial("face_sides_winding")):
        winding(corners, np.zeros(1, dtype=np.int64), np.zeros(1, dtype=np.int64))
    cube, cube_faces = box()
    rows = cube[cube_faces].reshape(-1, 3)
    for dtype in (np.float32, np.float64):
        for index_type in (np.int32, np.int64):
            topology = weld_compiled(rows.astype(dtype), index_type=index_type)
            is_closed_and_oriented(topology, force_compiled=True)
            kernels("mesh_kernels").closed_and_oriented(topology.face_vertices, topology.id_bound)  # all cores
            duplicate_face_groups(topology, force_compiled=True)
            kernels("mesh_kernels").thin_face_candidates(cube, cube_faces.astype(index_type), 0.0, 1e-16)
