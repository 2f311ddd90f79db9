"""Safe repairs of a mesh, applied only when asked (``meshprops measure --repair``).

Each repair is reported as a warning finding whose code starts with
``repaired_``, located at the faces of the file as read:

``repaired_degenerate_faces``
    faces that repeat a vertex are dropped; faces with three distinct but
    collinear corners are dropped too when that leaves no edge open (a sliver
    that closes a T-junction is kept: dropping it would open the surface).
``repaired_duplicate_faces``
    faces over the same three vertices are reduced to their net winding: one
    face when copies agree, none when a pair cancels.
``repaired_winding``
    within each edge-connected patch, faces wound against the majority are
    flipped (winding propagated over edges used by exactly two faces).
``repaired_inside_out``
    shells that lie inside no other shell (or inside an even number) and wind
    inward are flipped outward.
``repaired_void_orientation``
    shells inside an odd number of other shells are voids and must wind
    inward; those that wind outward are flipped. A shell nested inside a solid
    is thereby taken as a cavity: if it is really a separate part (an insert of
    another material), measure it as its own body instead.

Never repaired: open edges (holes are never filled), non-manifold edges left
after dropping duplicates, one-sided surfaces, self-intersections. The
repaired mesh is validated again from scratch; whatever is still wrong stays
an error.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from ..geometry.faces import mesh_extent
from ..geometry.topology import (
    collapsed_mask,
    duplicate_face_groups,
    edge_uses,
    orientation,
    patch_shells,
)
from ..geometry.welding import Topology, mesh_rows, weld_positions
from ..io import Mesh
from .checks import analyse_shells, zero_area_faces
from .findings import WARNING, Finding, where


@dataclass(frozen=True, slots=True, eq=False)
class RepairResult:
    """A repaired copy of a mesh and what was done to it.

    Attributes
    ----------
    mesh : the repaired mesh, indexed (``vertices`` in the file's unit, ``faces``)
    original_face : (F',) int64, for each face of ``mesh`` its index in the mesh as read
    findings : one ``repaired_*`` warning per kind of change made (empty when nothing was needed)
    """

    mesh: Mesh
    original_face: np.ndarray
    findings: tuple[Finding, ...]

    @property
    def changed(self) -> bool:
        return bool(self.findings)

    def remap(self, findings) -> tuple[Finding, ...]:
        """Findings about :attr:`mesh` with their face indices turned into indices of the mesh as read."""
        remapped = []
        for finding in findings:
            places = tuple(dict(place, face=int(self.original_face[place["face"]])) for place in finding.where)
            remapped.append(replace(finding, where=places))
        return tuple(remapped)


def repair_mesh(mesh: Mesh) -> RepairResult:
    """Apply the safe repairs to ``mesh`` (see the module docstring); the input is not changed."""
    rows = mesh_rows(mesh)
    ids, vertex_count = weld_positions(rows)
    vertices = np.empty((vertex_count, 3), dtype=np.float64)
    vertices[ids] = rows  # bit-identical rows share an id, so any of them will do
    faces = (ids.reshape(-1, 3) if mesh.soup is not None else ids[mesh.faces]).astype(np.int64)
    del rows, ids
    kept = np.arange(faces.shape[0], dtype=np.int64)
    findings: list[Finding] = []

    dropped = _degenerate_to_drop(mesh, faces, vertex_count)
    if dropped.size:
        findings.append(
            Finding(
                "repaired_degenerate_faces",
                WARNING,
                int(dropped.size),
                f"dropped {dropped.size} degenerate (zero-area) face(s); they enclosed nothing",
                where(dropped, mesh),
            )
        )
        keep = np.ones(faces.shape[0], dtype=bool)
        keep[dropped] = False
        faces, kept = faces[keep], kept[keep]

    faces, kept, finding = _reduce_duplicates(mesh, faces, kept, vertex_count)
    if finding is not None:
        findings.append(finding)

    topology = Topology(faces, vertex_count, vertex_count)
    uses = edge_uses(topology)
    state = orientation(topology, uses)
    flip = state.minority()
    if flip.any():
        faces = faces.copy()
        faces[flip] = faces[flip][:, ::-1]
        findings.append(
            Finding(
                "repaired_winding",
                WARNING,
                int(np.count_nonzero(flip)),
                f"flipped {int(np.count_nonzero(flip))} face(s) wound against their neighbours",
                where(kept[flip], mesh),
            )
        )
        topology = Topology(faces, vertex_count, vertex_count)
        uses = edge_uses(topology)

    shell_of_face, shell_count = patch_shells(topology, uses)
    working = Mesh(mesh.source, mesh.file_format, mesh.length_unit, mesh.metres_per_unit, vertices=vertices, faces=faces)
    if shell_count:
        shells = analyse_shells(working, shell_of_face, shell_count)
        if shells.nesting_checked:
            inward_wanted = shells.depth % 2 == 1
            wrong = ~shells.flat & ((shells.volume < 0) != inward_wanted)
            if wrong.any():
                faces = faces.copy()
                to_flip = wrong[np.maximum(shell_of_face, 0)] & (shell_of_face >= 0)
                faces[to_flip] = faces[to_flip][:, ::-1]
                for mask, code, text in (
                    (wrong & ~inward_wanted, "repaired_inside_out", "flipped {n} inside-out shell(s) outward"),
                    (
                        wrong & inward_wanted,
                        "repaired_void_orientation",
                        "flipped {n} shell(s) nested inside another to wind inward as void(s); if one is a "
                        "separate part, measure it as its own body",
                    ),
                ):
                    count = int(np.count_nonzero(mask))
                    if count:
                        faces_hit = kept[np.flatnonzero(mask[np.maximum(shell_of_face, 0)] & (shell_of_face >= 0))]
                        findings.append(Finding(code, WARNING, count, text.format(n=count), where(faces_hit, mesh)))
                working = Mesh(
                    mesh.source, mesh.file_format, mesh.length_unit, mesh.metres_per_unit, vertices=vertices, faces=faces
                )
    return RepairResult(working, kept, tuple(findings))


def _degenerate_to_drop(mesh: Mesh, faces: np.ndarray, vertex_count: int) -> np.ndarray:
    """Indices of degenerate faces that can be dropped without opening an edge."""
    collapsed = np.flatnonzero(collapsed_mask(faces))
    topology = Topology(faces, vertex_count, vertex_count)
    diagonal = float(np.linalg.norm(mesh_extent(mesh))) / mesh.metres_per_unit
    slivers = zero_area_faces(mesh, topology, diagonal)
    if slivers.size == 0:
        return collapsed
    before = _unpaired_edges(faces)
    keep = np.ones(faces.shape[0], dtype=bool)
    keep[slivers] = False
    if _unpaired_edges(faces[keep]) <= before:
        return np.union1d(collapsed, slivers)
    return collapsed


def _unpaired_edges(faces: np.ndarray) -> int:
    """How many directed edges (of non-collapsed faces) lack exactly one reverse partner."""
    faces = faces[~collapsed_mask(faces)]
    if faces.size == 0:
        return 0
    tails = faces.reshape(-1)
    heads = np.roll(faces, -1, axis=1).reshape(-1)
    low, high = np.minimum(tails, heads), np.maximum(tails, heads)
    base = int(faces.max()) + 1
    keys = low * base + high
    _, inverse, uses = np.unique(keys, return_inverse=True, return_counts=True)
    forward = np.bincount(inverse.reshape(-1), weights=tails < heads, minlength=uses.size)
    balanced = (uses == 2) & (forward == 1)
    return int(uses[~balanced].sum())


def _reduce_duplicates(mesh: Mesh, faces: np.ndarray, kept: np.ndarray, vertex_count: int):
    """Keep one face per duplicated vertex set with the net winding (none when it cancels)."""
    members, group, winding = duplicate_face_groups(Topology(faces, vertex_count, vertex_count))
    if members.size == 0:
        return faces, kept, None
    net = np.bincount(group, weights=winding)
    first_of_group = np.r_[True, group[1:] != group[:-1]]
    # For each group keep the first member whose winding has the sign of the net winding.
    wanted = np.sign(net[group])
    candidate = (winding == wanted) & (wanted != 0)
    candidate_rank = np.cumsum(candidate) - 1
    group_start = np.flatnonzero(first_of_group)
    start_rank = np.repeat(np.r_[0, np.cumsum(candidate)[group_start[1:] - 1]], np.diff(np.r_[group_start, group.size]))
    keep_member = candidate & (candidate_rank == start_rank)
    drop = members[~keep_member]
    keep = np.ones(faces.shape[0], dtype=bool)
    keep[drop] = False
    finding = Finding(
        "repaired_duplicate_faces",
        WARNING,
        int(drop.size),
        f"dropped {drop.size} duplicate face(s), keeping each vertex set once with its net winding",
        where(kept[drop], mesh),
    )
    return faces[keep], kept[keep], finding
