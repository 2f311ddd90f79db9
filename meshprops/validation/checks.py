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
4. Self-intersections: a uniform-grid broad phase and a compiled interval test
   (:func:`meshprops.geometry.crossing.find_crossings`, numba), on every mesh of
   every size, in ``measure`` and ``check`` alike.

Severity is ``"error"`` when the numbers would be wrong and ``"warning"``
otherwise; ``valid`` is false exactly when there is an error.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..geometry.compiled import compiled_answers, kernels
from ..geometry.crossing import Crossings, find_crossings
from ..geometry.faces import (
    SMALL_BLOCK_FACES,
    corner_extreme,
    face_blocks,
    face_corners,
    mesh_bounding_box,
    mesh_extent,
    near_pairs,
    reduce_by_label,
)
from ..geometry.inside import winding_numbers
from ..geometry.topology import (
    EdgeUse,
    boundary_loop_count,
    collapsed_faces,
    duplicate_face_groups,
    edge_uses,
    first_use,
    is_closed_and_oriented,
    orientation,
    patch_shells,
    vertex_shells,
)
from ..geometry.welding import Topology, weld_with_box
from ..io import Mesh
from ..physics.moments import Moments
from ..units import LENGTH_UNITS
from .findings import ERROR, WARNING, WHERE_LIMIT, Finding, ValidationReport, where

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




_where = where  # the fast path's original name


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


def zero_area_faces(mesh: Mesh, topology: Topology, diagonal: float) -> np.ndarray:
    """Faces with three distinct vertices but (numerically) zero area: collinear corners.

    A face is degenerate when its height over its longest edge is at most
    ``DEGENERATE_HEIGHT_RELATIVE * diagonal`` plus four units of rounding of its
    largest coordinate (float32 STL slivers come out of CAD slightly off zero).
    Lengths in the file's unit. On large meshes a compiled pass over the welded
    vertices names the candidates (a superset) and only those are tested here.
    """
    faces = topology.face_vertices
    resolution = float(np.finfo(mesh.soup.dtype if mesh.soup is not None else np.float64).eps)
    limit = DEGENERATE_HEIGHT_RELATIVE * diagonal
    if topology.vertex_positions is not None and compiled_answers(mesh.face_count):
        positions = topology.vertex_positions.astype(np.float64)
        candidates = kernels("mesh_kernels").thin_face_candidates(
            positions, np.ascontiguousarray(faces), limit, resolution
        )
        if candidates.size == 0:
            return candidates.astype(np.int64)
        return candidates[_thin(face_corners(mesh, candidates), limit, resolution)].astype(np.int64)
    found = []
    for start, corners in face_blocks(mesh, SMALL_BLOCK_FACES):
        block = faces[start : start + corners.shape[0]]
        distinct = (block[:, 0] != block[:, 1]) & (block[:, 1] != block[:, 2]) & (block[:, 2] != block[:, 0])
        found.append(np.flatnonzero(distinct & _thin(corners, limit, resolution)) + start)
    return np.concatenate(found) if found else np.zeros(0, dtype=np.int64)


def _thin(corners: np.ndarray, limit: float, resolution: float) -> np.ndarray:
    """(k,) whether each face of ``corners`` (k, 3, 3) float64 is no higher than its zero-area tolerance."""
    a, b, c = corners[:, 0], corners[:, 1], corners[:, 2]
    ab, bc, ca = b - a, c - b, a - c
    lengths = np.maximum(np.maximum(np.einsum("fi,fi->f", ab, ab), np.einsum("fi,fi->f", bc, bc)), np.einsum("fi,fi->f", ca, ca))
    normal = np.cross(ab, -ca)  # (b - a) x (c - a)
    doubled_area = np.sqrt(np.einsum("fi,fi->f", normal, normal))
    magnitude = corner_extreme(np.maximum, np.abs(corners)).max(axis=1)
    tolerance = limit + 4.0 * resolution * magnitude
    # height = doubled area / longest edge <= tolerance, without the division (a zero-length face has height 0)
    return doubled_area <= tolerance * np.sqrt(lengths)


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
    tolerance = NEAR_VERTEX_RELATIVE * float(np.linalg.norm(mesh_extent(mesh))) / mesh.metres_per_unit
    if tolerance <= 0:
        return []
    corner_of_id = first_use(topology)
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
    origin = (mesh_bounding_box(mesh) if box is None else box).mean(axis=0)
    for start, block in face_blocks(mesh, SMALL_BLOCK_FACES):
        labels = shell_of_face[start : start + block.shape[0]]
        faces = np.flatnonzero(labels >= 0)
        corners = block[faces] - origin
        labels = labels[faces]
        six = np.einsum("ij,ij->i", corners[:, 0], np.cross(corners[:, 1], corners[:, 2]))
        volume += np.bincount(labels, weights=six, minlength=shell_count)
        if labels.size:
            reduce_by_label(np.minimum, extent_low, labels, corner_extreme(np.minimum, corners))
            reduce_by_label(np.maximum, extent_high, labels, corner_extreme(np.maximum, corners))
            reduce_by_label(np.minimum, first_face, labels, faces + start)
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
        for start, block in face_blocks(mesh, SMALL_BLOCK_FACES):
            labels = shell_of_face[start : start + block.shape[0]]
            face_low = corner_extreme(np.minimum, block)
            face_high = corner_extreme(np.maximum, block)
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


@dataclass(frozen=True, slots=True, eq=False)
class MeshAnalysis:
    """Everything the checks measured about one mesh, before any verdict on shells and crossings.

    Attributes
    ----------
    findings : edge, degenerate-face and duplicate findings (errors among them stop the shell analysis)
    topology : the exact weld
    box : (2, 3) bounding box, file unit
    extent : (3,) bounding-box size, m
    shell_of_face : (F,) int dense shell labels (edge-connected patches; −1 for collapsed faces)
    shell_count : number of shells
    shells : per-shell volumes and nesting, or ``None`` (one shell, or an edge error)
    reference : (3,) a point near the part, file unit
    positions : (V, 3) float64 welded vertex positions relative to ``reference``, file unit
    crossings : faces whose interiors cross (:func:`meshprops.geometry.crossing.find_crossings`)
    edge_count : undirected edges
    holes : boundary loops
    """

    findings: tuple[Finding, ...]
    topology: Topology
    box: np.ndarray
    extent: np.ndarray
    shell_of_face: np.ndarray
    shell_count: int
    shells: Shells | None
    reference: np.ndarray
    positions: np.ndarray
    crossings: Crossings
    edge_count: int
    holes: int

    @property
    def edge_error(self) -> bool:
        return any(f.severity == ERROR for f in self.findings)


def welded_positions(mesh: Mesh, topology: Topology, reference: np.ndarray) -> np.ndarray:
    """(V, 3) float64 position of each welded vertex id relative to ``reference`` (file unit)."""
    if topology.vertex_positions is not None:
        positions = topology.vertex_positions.astype(np.float64)
        positions -= reference
        return positions
    corner = first_use(topology)
    used = corner < 3 * mesh.face_count
    positions = np.zeros((topology.id_bound, 3))
    corners = corner[used]
    face, k = corners // 3, corners % 3
    positions[used] = face_corners(mesh, face)[np.arange(face.size), k] - reference
    return positions


def _one_vertex_connected_piece(topology: Topology) -> bool:
    labels, count = vertex_shells(topology)
    return count == 1


def _six_volume_sign(mesh: Mesh) -> float:
    """Six times the signed volume enclosed (file unit cubed, about the first corner): its sign only."""
    total = 0.0
    origin = None
    for _, block in face_blocks(mesh):
        if origin is None:
            origin = block[0, 0].copy()
        corners = block - origin
        total += float(np.einsum("ij,ij->i", corners[:, 0], np.cross(corners[:, 1], corners[:, 2])).sum())
    return total


def analyse_mesh(mesh: Mesh, volume: float | None = None) -> MeshAnalysis:
    """Every check's measurements on ``mesh``: the same work for ``measure`` and ``check``.

    ``volume``: the signed volume already integrated (any unit; its sign spares a pass).
    """
    topology, box = weld_with_box(mesh)
    findings: list[Finding] = []
    holes = 0
    extent = (box[1] - box[0]) * mesh.metres_per_unit
    closed = is_closed_and_oriented(topology)
    uses = None
    if closed:
        edge_count = mesh.face_count * 3 // 2  # a closed, consistent surface has 3F/2 edges
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
        edge_list, holes = _classify_edges(mesh, topology, uses)
        findings.extend(edge_list)
        findings.extend(duplicate_findings(mesh, topology))
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
    shell_of_face, shell_count = None, 0
    if closed and _one_vertex_connected_piece(topology):
        # A closed, consistently oriented surface that is one vertex-connected piece: one shell,
        # unless two solids touch at a lone vertex; the cheap sufficient test answers first, and
        # only a non-positive volume (an inside-out piece touching another) asks for the patches.
        if (volume if volume is not None else _six_volume_sign(mesh)) > 0:
            shell_of_face, shell_count = np.zeros(mesh.face_count, dtype=np.int32), 1
    if shell_of_face is None:
        shell_of_face, shell_count = patch_shells(topology, uses)
    shells = None
    if shell_count > 1 and not any(f.severity == ERROR for f in findings):
        shells = analyse_shells(mesh, shell_of_face, shell_count, box=box)
    reference = mesh.reference_point()
    positions = welded_positions(mesh, topology, reference)
    crossings = find_crossings(positions, topology.face_vertices)
    return MeshAnalysis(
        tuple(findings), topology, box, extent, shell_of_face, shell_count, shells, reference, positions,
        crossings, edge_count, holes,
    )  # fmt: skip


def validate(mesh: Mesh, moments: Moments, analysis: MeshAnalysis | None = None) -> ValidationReport:
    """Check that ``mesh`` bounds a solid whose ``moments`` can be trusted, exactly as exported.

    This is the strict verdict (``--strict``): every imperfection that could change the
    numbers is an error. :func:`meshprops.validation.solid.resolve_solid` gives the
    default verdict, which recovers the solid where that can be done exactly or within a
    stated bound. Both run the same checks on every mesh (:func:`analyse_mesh`), whatever
    its size, so ``measure`` and ``check`` report the same findings.

    Parameters
    ----------
    mesh
        The mesh as read.
    moments
        Its moments (signed total volume), from :func:`meshprops.physics.moments.integrate_mesh`.
    analysis
        :func:`analyse_mesh` of ``mesh``, when already done.

    Errors: ``open_edges``, ``nonmanifold_edges``, ``inconsistent_winding``,
    ``non_orientable``, ``duplicate_faces`` (same winding), ``inside_out``,
    ``inverted_shell``, ``nested_shell``, ``self_intersection``, ``no_volume``.
    Warnings: ``collapsed_faces``, ``zero_area_faces``, ``duplicate_faces``
    (cancelling pairs), ``near_coincident_vertices``, ``flat_shell``,
    ``implausible_size``, ``nesting_not_checked``.
    """
    analysis = analyse_mesh(mesh, moments.volume) if analysis is None else analysis
    findings = list(analysis.findings)
    extra = base_extra(analysis)
    if not analysis.edge_error:
        if analysis.shells is None:
            findings.extend(_volume_findings(mesh, moments, analysis.extent))
        else:
            findings.extend(shell_findings(mesh, analysis.shells))
            extra["voids"] = count_voids(analysis.shells)
    findings.extend(crossing_findings(mesh, analysis.crossings.pairs))
    findings.extend(unit_findings(mesh, analysis.extent))
    return ValidationReport(tuple(findings), mesh.face_count, analysis.topology.vertex_count, analysis.edge_count, extra)


def base_extra(analysis: MeshAnalysis) -> dict:
    """The report's mesh statistics (``extra``) known before any verdict."""
    return {"holes": analysis.holes, "shells": analysis.shell_count, "voids": 0, "self_intersections_checked": True}


def count_voids(shells: Shells) -> int:
    return int(np.count_nonzero((shells.volume < 0) & (shells.enclosing == 1) & ~shells.flat))


def crossing_findings(mesh: Mesh, pairs: np.ndarray, *, extra_message: str = "") -> list[Finding]:
    """``self_intersection`` (error) when faces that share no vertex cross each other."""
    if pairs.size == 0:
        return []
    involved = np.unique(pairs)
    return [
        Finding(
            "self_intersection",
            ERROR,
            int(involved.size),
            f"{involved.size} faces cross other faces ({len(pairs)} crossing pair(s)): the surface passes "
            f"through itself, so some volume is counted twice or with the wrong sign{extra_message}",
            where(pairs[:WHERE_LIMIT].reshape(-1), mesh, limit=2 * WHERE_LIMIT),
        )
    ]


def _volume_findings(mesh: Mesh, moments: Moments, extent: np.ndarray | None = None) -> list[Finding]:
    extent = mesh_extent(mesh) if extent is None else extent
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
