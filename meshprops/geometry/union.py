"""The solid a body's shells bound: the union of its outward shells minus its voids.

CAD exports often give one body as several closed shells that overlap or nest (a
housing with its bearing, a finger of three overlapping pieces). The
divergence-theorem sum over every shell counts shared volume twice. The solid is
the union of the outward shells minus the voids, computed exactly here by
manifold3d (a maintained boolean library for closed, oriented triangle meshes,
with float64 meshes; from the package registry), and the result is an ordinary
closed triangle mesh, integrated like any other.

Shells are taken level by level of nesting depth (how many other shells wholly
enclose each one): at each depth its voids are subtracted from what was built so
far, then its outward shells are added. So a part inside a cavity (a ball in a
socket, depth 2) survives the cavity (depth 1) that holds it, and a void inside
two overlapping shells is still empty.

Coordinates should be relative to a point near the part (the caller's reference
point), so that manifold's float64 arithmetic keeps the part's own digits.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from meshprops.errors import MeshpropsError

#: Above this many shells the per-shell shared volumes are not computed (one boolean each).
SHARED_VOLUME_SHELL_LIMIT = 64


class ShellUnionError(MeshpropsError, ValueError):
    """The boolean library refused a shell (not closed and oriented as it needs)."""

    def __init__(self, shell: int, status: str):
        self.shell = shell
        self.status = status
        super().__init__(f"shell {shell} could not be combined with the others ({status})")

    def __reduce__(self):
        return (type(self), (self.shell, self.status))


@dataclass(frozen=True, slots=True, eq=False)
class ShellUnion:
    """The solid bounded by several shells, as one closed triangle mesh.

    Attributes
    ----------
    vertices : (V, 3) float64, the input's unit and frame (relative to the caller's reference point)
    faces : (G, 3) int64 vertex indices, outward, closed
    volume : volume of the solid, unit cubed (as manifold3d reports it)
    shell_volume_sum : the plain signed sum of the shells' volumes, unit cubed
    shared_volume : (S,) float64, for each outward shell the volume it shares with the other
        outward shells (counted twice by the plain sum), for each void the volume it shares with
        other voids; unit cubed. NaN when not computed (more than
        :data:`SHARED_VOLUME_SHELL_LIMIT` shells).
    """

    vertices: np.ndarray
    faces: np.ndarray
    volume: float
    shell_volume_sum: float
    shared_volume: np.ndarray

    @property
    def volume_change(self) -> float:
        """Union volume minus the plain sum of the shells (negative: the sum counted volume twice)."""
        return self.volume - self.shell_volume_sum

    def triangles(self) -> np.ndarray:
        """(G, 3, 3) float64 corners of the union's faces."""
        return self.vertices[self.faces]


def _solid(manifold3d, vertices: np.ndarray, faces: np.ndarray, shell: int):
    used, inverse = np.unique(faces.ravel(), return_inverse=True)
    mesh = manifold3d.Mesh64(
        vert_properties=np.ascontiguousarray(vertices[used], dtype=np.float64),
        tri_verts=np.ascontiguousarray(inverse.reshape(-1, 3), dtype=np.uint64),
    )
    solid = manifold3d.Manifold(mesh)
    status = solid.status()
    if status != manifold3d.Error.NoError:
        raise ShellUnionError(shell, str(status).rsplit(".", 1)[-1])
    return solid


def _union(manifold3d, solids):
    if not solids:
        return manifold3d.Manifold()
    if len(solids) == 1:
        return solids[0]
    return manifold3d.Manifold.batch_boolean(list(solids), manifold3d.OpType.Add)


def union_of_shells(
    vertices: np.ndarray,
    faces: np.ndarray,
    shell_of_face: np.ndarray,
    shell_volume: np.ndarray,
    shell_depth: np.ndarray,
    *,
    shared_volumes: bool = True,
) -> ShellUnion:
    """Union of the outward shells minus the voids, level by level of nesting depth.

    Parameters
    ----------
    vertices : (V, 3) float64 welded vertex positions, any one unit, best relative to a point
        near the part
    faces : (F, 3) int vertex indices; every shell closed and consistently oriented
    shell_of_face : (F,) int dense shell labels 0..S-1 (−1: face ignored, e.g. a flat shell)
    shell_volume : (S,) signed volume of each shell (> 0 outward, < 0 a void, 0 ignored), any unit cubed
        (only its sign is used, and its sum is reported in the same unit)
    shell_depth : (S,) int how many other shells wholly enclose each shell
    shared_volumes : also compute each shell's shared volume (one boolean per shell)

    Returns
    -------
    ShellUnion

    Raises
    ------
    ShellUnionError
        When manifold3d refuses a shell (open, non-manifold or self-intersecting beyond its
        tolerance).
    """
    import manifold3d  # lazily: only bodies with several overlapping shells need it

    vertices = np.asarray(vertices, dtype=np.float64)
    faces = np.asarray(faces, dtype=np.int64)
    shell_of_face = np.asarray(shell_of_face)
    shell_volume = np.asarray(shell_volume, dtype=np.float64)
    shell_depth = np.asarray(shell_depth, dtype=np.int64)
    count = shell_volume.size
    order = np.argsort(shell_of_face, kind="stable")
    bounds = np.searchsorted(shell_of_face[order], np.arange(count + 1))
    solids = []
    for shell in range(count):
        shell_faces = faces[order[bounds[shell] : bounds[shell + 1]]]
        if shell_volume[shell] == 0 or shell_faces.shape[0] == 0:  # a flat shell encloses nothing
            solids.append(manifold3d.Manifold())
            continue
        if shell_volume[shell] < 0:
            shell_faces = shell_faces[:, ::-1]  # a void, turned into the solid it removes
        solids.append(_solid(manifold3d, vertices, shell_faces, shell))
    outward = shell_volume > 0
    present = shell_volume != 0
    result = manifold3d.Manifold()
    for depth in np.unique(shell_depth):
        level = shell_depth == depth
        voids = [solids[s] for s in np.flatnonzero(level & ~outward & present)]
        if voids:
            result = result - _union(manifold3d, voids)
        adds = [solids[s] for s in np.flatnonzero(level & outward)]
        if adds:
            result = _union(manifold3d, [result, *adds]) if not result.is_empty() else _union(manifold3d, adds)
    shared = np.full(count, np.nan)
    if shared_volumes and count <= SHARED_VOLUME_SHELL_LIMIT:
        for group in (outward, ~outward & present):
            members = np.flatnonzero(group)
            for shell in members:
                others = [solids[s] for s in members if s != shell]
                shared[shell] = (solids[shell] ^ _union(manifold3d, others)).volume() if others else 0.0
    mesh = result.to_mesh64()
    union_vertices = np.asarray(mesh.vert_properties, dtype=np.float64)[:, :3].copy()
    union_faces = np.asarray(mesh.tri_verts, dtype=np.int64).copy()
    return ShellUnion(union_vertices, union_faces, float(result.volume()), float(shell_volume.sum()), shared)
