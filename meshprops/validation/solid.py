"""The solid a mesh means: recover it where that is exact or bounded, and say what changed.

Real CAD exports are imperfect in three common ways, each recovered here unless
``strict`` (which refuses them as errors, exactly as exported):

1. **Cracks**: open edges whose vertices lie within a tolerance of another vertex
   (inexact export) are merged (:func:`meshprops.geometry.cracks.close_cracks`); the
   result is validated again from scratch. Holes are never filled.
2. **Overlapping or nested shells**: the solid is the union of the outward shells minus
   the voids (:func:`meshprops.geometry.union.union_of_shells`, exact booleans), which is
   integrated instead of the plain sum that counts shared volume twice.
3. **Self-crossings within one shell**: their effect on the volume is bounded
   (:func:`meshprops.geometry.crossing.crossing_volume_bound`); below
   ``volume_tolerance`` of the volume the numbers are given with a warning stating the
   bound, above it they are withheld.

Every recovery is a warning finding carrying the volume it changed
(``volume_change``, m³). A void that crosses its own skin is an error
(``void_crosses_skin``): part of it lies outside the material, where the plain sum
counts negative volume; it may mean a cut or a body exported inside-out, and the
file cannot tell which.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from ..errors import InputValueError
from ..geometry.cracks import CRACK_TOLERANCE_RELATIVE, close_cracks
from ..geometry.crossing import crossing_volume_bound
from ..geometry.faces import face_corners
from ..io import Mesh, mesh_from_arrays
from ..physics.moments import Moments, integrate_mesh, integrate_triangles
from .checks import (
    MeshAnalysis,
    Shells,
    _volume_findings,
    analyse_mesh,
    base_extra,
    count_voids,
    crossing_findings,
    shell_findings,
    unit_findings,
    validate,
)
from .findings import (
    ERROR,
    UNREADABLE,
    WARNING,
    WHERE_LIMIT,
    Finding,
    ValidationReport,
    unreadable_report,
    where,
)

#: Default bound on the volume effect of self-crossings, relative to the volume.
VOLUME_TOLERANCE_RELATIVE = 1e-6
#: Union volumes within this fraction of the plain sum are the same solid (rounding only).
SAME_VOLUME_RELATIVE = 1e-12
#: Above this many shells each is not integrated about its own reference point.
PER_SHELL_INTEGRATION_LIMIT = 256


@dataclass(frozen=True, slots=True, eq=False)
class SolidOptions:
    """How far validation may go to recover the solid a mesh means.

    Attributes
    ----------
    strict : recover nothing: every imperfection that could change the numbers is an error
    weld_tolerance : largest crack closed, in the mesh's length unit; ``None`` for
        :data:`~meshprops.geometry.cracks.CRACK_TOLERANCE_RELATIVE` of the bounding-box
        diagonal; 0 turns crack closing off
    volume_tolerance : largest bound on the volume effect of self-crossings, as a fraction
        of the volume, for which the numbers are still given
    """

    strict: bool = False
    weld_tolerance: float | None = None
    volume_tolerance: float = VOLUME_TOLERANCE_RELATIVE

    def __post_init__(self) -> None:
        if self.weld_tolerance is not None and not (np.isfinite(self.weld_tolerance) and self.weld_tolerance >= 0):
            raise InputValueError("weld tolerance", "a finite length >= 0 in the mesh unit (0 turns it off)", self.weld_tolerance)
        if not (np.isfinite(self.volume_tolerance) and self.volume_tolerance >= 0):
            raise InputValueError("volume tolerance", "a finite fraction >= 0", self.volume_tolerance)


@dataclass(frozen=True, slots=True, eq=False)
class Solid:
    """The validated solid of one mesh.

    Attributes
    ----------
    report : every finding, recoveries included (warnings with ``volume_change``)
    moments : moments of the solid integrated (about a point near the part, m), or ``None``
        when the report has an error
    shell_sum : moments of the plain divergence sum over the mesh as read (every shell added,
        voids subtracted), m
    integrated_vertices, integrated_faces : the surface actually integrated, (V, 3) float64 in
        the mesh's unit relative to ``integrated_offset`` and (G, 3) int64; ``None`` when it is
        the mesh as read
    integrated_offset : (3,) file unit
    """

    report: ValidationReport
    moments: Moments | None
    shell_sum: Moments
    integrated_vertices: np.ndarray | None = None
    integrated_faces: np.ndarray | None = None
    integrated_offset: np.ndarray | None = None

    @property
    def changed(self) -> bool:
        """Whether the surface integrated differs from the mesh as read."""
        return self.integrated_faces is not None


def resolve_solid(mesh: Mesh, options: SolidOptions | None = None, *, density: float | None = None) -> Solid:
    """Validate ``mesh``, recover its solid where allowed, and integrate it.

    Parameters
    ----------
    mesh
        The mesh as read.
    options
        :class:`SolidOptions` (defaults: recover, relative crack tolerance, 1e-6 volume tolerance).
    density
        kg/m³, only to state the mass a recovery changed in its message.
    """
    options = SolidOptions() if options is None else options
    plain = integrate_mesh(mesh)
    analysis = analyse_mesh(mesh, plain.volume)
    if options.strict:
        report = validate(mesh, plain, analysis)
        moments = _per_shell_moments(mesh, analysis, plain) if report.valid else None
        return Solid(report, moments, plain)
    crack = _closed_cracks(mesh, analysis, options, plain, density)
    if crack is not None:
        return crack
    return _recovered(mesh, analysis, plain, options, density)


def _mass_text(volume: float, density: float | None) -> str:
    return f" ({volume * density:.6g} kg at {density:g} kg/m^3)" if density is not None else ""


def _closed_cracks(mesh: Mesh, analysis: MeshAnalysis, options: SolidOptions, plain: Moments, density) -> Solid | None:
    """Close the cracks and validate the result from scratch; ``None`` when nothing closed."""
    if not any(f.code == "open_edges" for f in analysis.findings):
        return None
    absolute = analysis.positions + analysis.reference
    if options.weld_tolerance is None:
        tolerance = CRACK_TOLERANCE_RELATIVE * float(np.linalg.norm(analysis.box[1] - analysis.box[0]))
    else:
        tolerance = float(options.weld_tolerance)
    closure = close_cracks(absolute, analysis.topology.face_vertices, tolerance)
    if not closure.changed or closure.open_edges_after >= closure.open_edges_before:
        return None
    welded = mesh_from_arrays(absolute, closure.faces, length_unit=mesh.length_unit, source=mesh.source)
    inner = resolve_solid(welded, options, density=density)
    kept = closure.kept_faces
    findings = tuple(_remap(f, kept) for f in inner.report.findings)
    after = inner.moments.volume if inner.moments is not None else integrate_mesh(welded).volume
    change = after - plain.volume
    unit = mesh.length_unit
    original = analysis.topology.face_vertices
    differs = closure.faces != original[kept]
    merged = np.unique(np.concatenate([original[kept][differs], closure.faces[differs]]))
    moved = np.flatnonzero(np.isin(original, merged).any(axis=1))  # faces at either side of a closed crack
    crack = Finding(
        "cracks_closed",
        WARNING,
        closure.merged_vertices,
        f"{closure.merged_vertices} vertex(es) on open edges merged with a vertex at most "
        f"{closure.largest_gap:.3g} {unit} away (tolerance {tolerance:.3g} {unit}), closing "
        f"{closure.open_edges_before - closure.open_edges_after} open edge(s)"
        + (f" and dropping {closure.collapsed_faces} sliver face(s)" if closure.collapsed_faces else "")
        + f"; volume changed by {change:.3g} m^3{_mass_text(change, density)}",
        where(moved if moved.size else np.arange(min(mesh.face_count, WHERE_LIMIT)), mesh),
        volume_change=change,
    )
    report = replace(inner.report, findings=(crack, *findings), face_count=mesh.face_count)
    vertices = inner.integrated_vertices
    faces = inner.integrated_faces
    offset = inner.integrated_offset
    if vertices is None:
        vertices, faces, offset = absolute, closure.faces, np.zeros(3)
    return Solid(report, inner.moments if report.valid else None, plain, vertices, faces, offset)


def _remap(finding: Finding, kept: np.ndarray) -> Finding:
    """A finding on the welded mesh, with face numbers of the mesh as read."""
    places = tuple({**place, "face": int(kept[place["face"]])} if "face" in place else place for place in finding.where)
    return replace(finding, where=places)


def _recovered(mesh: Mesh, analysis: MeshAnalysis, plain: Moments, options: SolidOptions, density) -> Solid:
    findings = list(analysis.findings)
    extra = base_extra(analysis)
    shells = analysis.shells
    pairs = analysis.crossings.pairs
    labels = analysis.shell_of_face
    union_needed = False
    if not analysis.edge_error:
        if shells is None:
            findings.extend(_volume_findings(mesh, plain, analysis.extent))
        else:
            recoverable = _recoverable_nesting(shells)
            findings.extend(shell_findings(mesh, _as_expected(shells, recoverable)))
            extra["voids"] = count_voids(shells)
            union_needed = bool(recoverable.any()) or _outward_boxes_overlap(mesh, analysis)
    if pairs.size:
        same = labels[pairs[:, 0]] == labels[pairs[:, 1]]
        within, between = pairs[same], pairs[~same]
        if between.size and shells is not None:
            sign = np.sign(shells.volume)
            mixed = sign[labels[between[:, 0]]] != sign[labels[between[:, 1]]]
            if mixed.any():
                findings.append(_void_crosses_skin(mesh, between[mixed]))
            if (~mixed).any():
                union_needed = True
        elif between.size:
            findings.extend(crossing_findings(mesh, between))
        if within.size:
            finding = _bounded_crossings(mesh, analysis, within, plain, options, density)
            findings.append(finding)
    findings.extend(unit_findings(mesh, analysis.extent))
    report = ValidationReport(tuple(findings), mesh.face_count, analysis.topology.vertex_count, analysis.edge_count, extra)
    if not report.valid:
        return Solid(report, None, plain)
    if union_needed:
        union_solid = _union(mesh, analysis, plain, report, density)
        if union_solid is not None:
            return union_solid
    return Solid(report, _per_shell_moments(mesh, analysis, plain), plain)


def _recoverable_nesting(shells: Shells) -> np.ndarray:
    """(S,) bool: shells whose nesting the union resolves (outward inside material, voids inside overlaps)."""
    outward = shells.volume > 0
    solid = ~shells.flat
    if not shells.nesting_checked:
        return np.zeros(shells.count, dtype=bool)
    flipped_ok = np.all(~solid | (-shells.enclosing == np.where(outward, 1, 0)))
    if flipped_ok and np.any(solid & (shells.enclosing != np.where(outward, 0, 1))):
        return np.zeros(shells.count, dtype=bool)  # the whole mesh is inside-out: an error, not an overlap
    return solid & ((outward & (shells.enclosing > 0)) | (~outward & (shells.enclosing >= 2)))


def _as_expected(shells: Shells, recoverable: np.ndarray) -> Shells:
    """The same shells, with the nesting of the recoverable ones set to what a lone shell would have."""
    enclosing = np.where(recoverable, np.where(shells.volume > 0, 0, 1), shells.enclosing)
    return replace(shells, enclosing=enclosing)


def _outward_boxes_overlap(mesh: Mesh, analysis: MeshAnalysis) -> bool:
    """Whether the bounding boxes of two outward shells overlap (surfaces crossing exactly along
    edges escape the strict crossing test; the union catches them)."""
    shells = analysis.shells
    outward = np.flatnonzero((shells.volume > 0) & ~shells.flat)
    if outward.size < 2 or outward.size > 2000:
        return False
    low = np.full((shells.count, 3), np.inf)
    high = np.full((shells.count, 3), -np.inf)
    positions = analysis.positions
    faces = analysis.topology.face_vertices
    labels = analysis.shell_of_face
    valid = labels >= 0
    corners = positions[faces[valid]]
    np.minimum.at(low, labels[valid], corners.min(axis=1))
    np.maximum.at(high, labels[valid], corners.max(axis=1))
    low, high = low[outward], high[outward]
    overlap = np.all((low[:, None] < high[None]) & (low[None] < high[:, None]), axis=2)
    np.fill_diagonal(overlap, False)
    return bool(overlap.any())


def _void_crosses_skin(mesh: Mesh, pairs: np.ndarray) -> Finding:
    involved = np.unique(pairs)
    return Finding(
        "void_crosses_skin",
        ERROR,
        int(involved.size),
        f"a void (an inward shell) passes through the skin of the material around it ({len(pairs)} crossing "
        "pair(s)): the part of it outside the material counts as negative volume, and whether it means a cut "
        "or a body exported inside-out cannot be told from the file",
        where(pairs[:WHERE_LIMIT].reshape(-1), mesh, limit=2 * WHERE_LIMIT),
    )


def _bounded_crossings(mesh, analysis: MeshAnalysis, pairs, plain: Moments, options: SolidOptions, density):
    """A warning stating the bound when self-crossings within shells are below the tolerance, else the error."""
    scale = mesh.metres_per_unit
    labels = analysis.shell_of_face
    faces = analysis.topology.face_vertices
    total = 0.0
    bounded = True
    for shell in np.unique(labels[pairs[:, 0]]):
        members = np.flatnonzero(labels == shell)
        renumber = np.full(faces.shape[0], -1, dtype=np.int64)
        renumber[members] = np.arange(members.size)
        chosen = pairs[labels[pairs[:, 0]] == shell]
        bound = crossing_volume_bound(analysis.positions, faces[members], renumber[chosen])
        bounded &= bound.bounded
        total += bound.volume_bound * scale**3
    limit = options.volume_tolerance * abs(plain.volume)
    involved = np.unique(pairs)
    if bounded and total <= limit:
        return (
            Finding(
                "crossing_bounded",
                WARNING,
                int(involved.size),
                f"{involved.size} faces cross faces of their own shell ({len(pairs)} pair(s)); their effect on the "
                f"volume is at most {total:.3g} m^3{_mass_text(total, density)}, {total / max(abs(plain.volume), 1e-300):.2g} "
                f"of it (tolerance {options.volume_tolerance:g}), so the numbers are given",
                where(pairs[:WHERE_LIMIT].reshape(-1), mesh, limit=2 * WHERE_LIMIT),
                volume_change=total,
            )
        )
    note = (
        f"; their effect on the volume is bounded by {total:.3g} m^3, above the tolerance of "
        f"{options.volume_tolerance:g} of the volume"
        if bounded
        else "; the crossing folds a whole patch over, so no local bound on its effect holds"
    )
    return crossing_findings(mesh, pairs, extra_message=note)[0]


def _union(mesh: Mesh, analysis: MeshAnalysis, plain: Moments, report: ValidationReport, density) -> Solid | None:
    """The union of the shells as the solid, with a ``shells_overlap`` warning; ``None`` when it changes nothing."""
    from ..geometry.union import union_of_shells

    shells = analysis.shells
    scale = mesh.metres_per_unit
    volume = np.where(shells.flat, 0.0, shells.volume)
    labels = np.where(shells.flat[np.maximum(analysis.shell_of_face, 0)] | (analysis.shell_of_face < 0), -1, analysis.shell_of_face)
    union = union_of_shells(analysis.positions, analysis.topology.face_vertices, labels, volume / scale**3, shells.depth)
    change = union.volume * scale**3 - plain.volume
    if abs(change) <= SAME_VOLUME_RELATIVE * abs(plain.volume):
        return None
    local = integrate_triangles(union.triangles() * scale, np.zeros(3))
    moments = Moments(analysis.reference * scale, local.volume, local.first, local.second)
    involved = np.flatnonzero(np.nan_to_num(union.shared_volume) > SAME_VOLUME_RELATIVE * abs(union.volume))
    first_faces = np.array([np.flatnonzero(labels == s)[0] for s in involved], dtype=np.int64)
    named = ", ".join(f"{s} (face {f})" for s, f in zip(involved, first_faces)) or "several"
    counted = -change
    finding = Finding(
        "shells_overlap",
        WARNING,
        int(max(involved.size, 2)),
        f"shells {named} overlap or nest: the plain sum of the shells counts {counted:.6g} m^3"
        f"{_mass_text(counted, density)} twice; measured as their union (volume changed by {change:.3g} m^3)",
        where(first_faces, mesh),
        volume_change=change,
    )
    report = replace(report, findings=(*report.findings, finding))
    return Solid(report, moments, plain, union.vertices, union.faces, analysis.reference.copy())


def _per_shell_moments(mesh: Mesh, analysis: MeshAnalysis, plain: Moments) -> Moments:
    """Each shell integrated about its own nearby reference point, then shifted exactly and summed.

    Two small parts far apart in one file keep their own digits (a single reference point
    between them would lose them to the distance).
    """
    count = analysis.shell_count
    if count <= 1 or count > PER_SHELL_INTEGRATION_LIMIT:
        return plain
    labels = analysis.shell_of_face
    scale = mesh.metres_per_unit
    order = np.argsort(labels, kind="stable")
    bounds = np.searchsorted(labels[order], np.arange(-1, count + 1))
    total = None
    for shell in range(count):
        faces = order[bounds[shell + 1] : bounds[shell + 2]]
        if faces.size == 0:
            continue
        corners = face_corners(mesh, faces)
        reference = corners[: min(1024, faces.size)].reshape(-1, 3).mean(axis=0)
        local = integrate_triangles((corners - reference) * scale, np.zeros(3))
        part = Moments(reference * scale, local.volume, local.first, local.second)
        total = part if total is None else total + part
    return plain if total is None else total.shifted_to(plain.origin)


@dataclass(frozen=True, slots=True, eq=False)
class CheckResult:
    """The validation of one mesh file (``meshprops check``): the same findings ``measure`` gives.

    Attributes
    ----------
    source, file_format, length_unit : as read
    face_count : number of triangles in the file
    report : the findings (:func:`resolve_solid`)
    """

    source: str
    file_format: str | None
    length_unit: str
    face_count: int | None
    report: ValidationReport

    @property
    def unreadable(self) -> bool:
        """True for the entry of a file that could not be read (:func:`unreadable_check`)."""
        return any(f.code == UNREADABLE for f in self.report.findings)


def unreadable_check(path: str, length_unit: str, error) -> CheckResult:
    """The entry of a file that could not be read: invalid, one ``unreadable`` finding giving the reason."""
    return CheckResult(path, None, length_unit, None, unreadable_report(error))


def check_mesh(mesh: Mesh, options: SolidOptions | None = None) -> CheckResult:
    """Every check on ``mesh`` (self-intersections included whatever its size), as ``measure`` runs them."""
    report = resolve_solid(mesh, options).report
    return CheckResult(mesh.source, mesh.file_format, mesh.length_unit, mesh.face_count, report)
