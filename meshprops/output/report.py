"""Reports with pictures: from a measured part, an assembly or a checked folder to a page.

The numbers come from the same serialized document that ``measure --json``
prints (passed in as ``document``); the pictures come from the full meshes
(decimated for drawing only). Findings are located on the full mesh: the faces
beside open or non-manifold edges, the faces wound against their neighbours,
the faces that cross, and the boxes in which two bodies share volume.
"""

from __future__ import annotations

import os
import tempfile
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from ..errors import OutputFileError
from .drawing import (
    VIEWS,
    BodyPicture,
    Highlight,
    InertiaPicture,
    Picture,
    Scene,
    draw_view,
    draw_views,
)
from .raster import scene_to_png_bytes
from .report_html import (
    CheckRow,
    FindingRow,
    render_check_report,
    render_report,
    table_number,
)

_EMPTY_TRIANGLES = np.zeros((0, 3, 3))


@dataclass(frozen=True, slots=True, eq=False)
class Report:
    """A rendered report.

    Attributes
    ----------
    page : the HTML text
    scenes : the views on it (for ``--png``)
    valid : false when numbers were withheld
    """

    page: str
    scenes: tuple[Scene, ...]
    valid: bool


# ----------------------------------------------------------------------------- where findings are


@dataclass(frozen=True, slots=True, eq=False)
class FindingPlace:
    """Where a finding is on the full mesh.

    Attributes
    ----------
    faces : (k,) int, face numbers as in the file
    edges : (e, 2, 3) m, the edges concerned (open or non-manifold edges), mesh axes
    """

    faces: np.ndarray
    edges: np.ndarray


def finding_place(mesh, finding) -> FindingPlace:
    """Every face a finding concerns, on the full mesh (face numbers as in the file).

    Edge findings are located again on the welded mesh (all faces, not only the few
    examples a finding carries); crossings from the self-intersection test; other
    findings by the faces they name.
    """
    from ..geometry.intersections import self_intersection_pairs
    from ..geometry.topology import edge_uses, orientation
    from ..geometry.welding import weld_exact

    code = finding.code
    no_edges = np.zeros((0, 2, 3))
    if code in ("open_edges", "nonmanifold_edges", "inconsistent_winding", "self_intersection"):
        topology = weld_exact(mesh)
        if code == "self_intersection":
            return FindingPlace(np.unique(self_intersection_pairs(mesh, topology)), no_edges)
        uses = edge_uses(topology)
        per_use = uses.uses[uses.edge]
        if code in ("open_edges", "nonmanifold_edges"):
            chosen = per_use == 1 if code == "open_edges" else per_use > 2
            positions = np.empty((topology.id_bound, 3))
            positions[topology.face_vertices.reshape(-1)] = mesh.triangles().reshape(-1, 3)
            edges = np.stack([positions[uses.tails[chosen]], positions[uses.heads[chosen]]], axis=1)
            return FindingPlace(np.unique(uses.faces[chosen]), edges)
        minority = np.flatnonzero(orientation(topology, uses).minority())
        if not minority.size:
            misoriented = (uses.uses == 2) & (uses.forward_uses != 1)
            minority = np.unique(uses.faces[misoriented[uses.edge]])
        return FindingPlace(minority, no_edges)
    faces = np.unique(np.array([place["face"] for place in finding.where if "face" in place], dtype=np.int64))
    return FindingPlace(faces, no_edges)


def _highlights_for(findings, mesh, body_index: int) -> tuple[list[Highlight], list[bool]]:
    highlights, drawn = [], []
    for finding in findings:
        if mesh is not None:
            place = finding_place(mesh, finding)
        else:
            place = FindingPlace(np.zeros(0, dtype=np.int64), np.zeros((0, 2, 3)))
        faces = place.faces
        points = np.array([where["point"] for where in finding.where if "point" in where], dtype=np.float64).reshape(-1, 3)
        if faces.size or points.size:
            highlights.append(Highlight(finding.code, finding.severity, body_index, faces, points, edges=place.edges))
            drawn.append(True)
        else:
            drawn.append(False)
    return highlights, drawn


def _inertia(properties, principal) -> InertiaPicture | None:
    if properties is None or principal is None:
        return None
    return InertiaPicture(properties.mass, properties.center_of_mass, principal.moments, principal.axes)


def _reasons(findings) -> list[str]:
    return [f"{f.code}: {f.message}" for f in findings if f.severity == "error"]


# ----------------------------------------------------------------------------- one part


def mesh_report(measurement, mesh, document: dict, *, footer: str) -> Report:
    """The report of one measured mesh.

    Parameters
    ----------
    measurement : the body's measurement (numbers ``None`` when invalid)
    mesh : the mesh it was measured from (file as read)
    document : the ``measure --json`` document of that one body
    footer : one line (program version, inputs)
    """
    triangles = mesh.triangles()
    name = measurement.name or os.path.basename(measurement.source)
    properties = measurement.properties
    body = BodyPicture(name, triangles, properties.center_of_mass if properties else None, closed=measurement.valid)
    highlights, drawn = _highlights_for(measurement.findings, mesh, 0)
    picture = Picture(
        (body,), _inertia(properties, measurement.principal), tuple(highlights), numbers_withheld=not measurement.valid
    )
    scenes = draw_views(picture)
    item = document["bodies"][0]
    findings = [FindingRow(name, finding, shown) for finding, shown in zip(item["findings"], drawn)]
    unit = item["mesh"]["length_unit"]
    density = item.get("density")
    subtitle = (
        f"{measurement.source} · {item['mesh']['format']}, {item['mesh']['faces']} faces, coordinates in {unit}"
        + (f" · density {table_number(density)} kg/m³" + (" (assumed)" if item.get("density_assumed") else "") if density else "")
    )
    page = render_report(
        title=f"{name}: mass properties in pictures",
        subtitle=subtitle,
        valid=measurement.valid,
        reasons=_reasons(measurement.findings),
        scenes=scenes,
        items=[(name, "bodies.0", item)],
        findings=findings,
        conventions=document.get("conventions", {}),
        cautions=document.get("cautions", []),
        footer=footer,
    )
    return Report(page, scenes, measurement.valid)


# ----------------------------------------------------------------------------- an assembly


def _bodies_summary(document: dict) -> str:
    from html import escape

    rows = [
        '<table class="values bodies"><tr><th>#</th><th>item</th><th>kind</th><th>mass</th>'
        "<th>centre of mass x</th><th>y</th><th>z</th><th>unit</th></tr>"
    ]
    for index, body in enumerate(document["bodies"]):
        cells = []
        for path, value in [(f"bodies.{index}.mass", body.get("mass"))] + [
            (f"bodies.{index}.center_of_mass.{k}", (body.get("center_of_mass") or [None] * 3)[k]) for k in range(3)
        ]:
            cells.append(
                '<td class="number">–</td>'
                if value is None
                else f'<td class="number" data-path="{path}" data-value="{float(value)!r}">{table_number(float(value))}</td>'
            )
        rows.append(
            f"<tr><td>{index + 1}</td><td>{escape(str(body.get('name')))}</td><td>{escape(str(body.get('kind', 'mesh')))}</td>"
            f"{''.join(cells)}<td class='unit'>kg, m</td></tr>"
        )
    rows.append("</table>")
    return "\n".join(rows)


def assembly_report(result, document: dict, *, footer: str) -> Report:
    """The report of a measured assembly (the ``measure --json`` document of the manifest)."""
    bodies, highlights, drawn_by_body = [], [], []
    for index, item in enumerate(result.items):
        properties = item.properties
        triangles = item.placed_triangles() if item.mesh is not None else _EMPTY_TRIANGLES
        bodies.append(BodyPicture(item.name, triangles, properties.center_of_mass if properties else None, closed=item.valid))
        found, drawn = _highlights_for(item.measurement.findings, item.mesh, index)
        # Locations of a finding are in the mesh's own axes; the picture is in the assembly's.
        placed = []
        rotation, translation = item.placement.rotation, item.placement.translation
        for highlight in found:
            points = highlight.points @ rotation.T + translation if highlight.points.size else highlight.points
            edges = highlight.edges @ rotation.T + translation if highlight.edges.size else highlight.edges
            placed.append(Highlight(highlight.code, highlight.severity, index, highlight.faces, points, edges=edges))
        highlights += placed
        drawn_by_body.append(drawn)
    for overlap in result.overlaps:
        highlights.append(Highlight("bodies_overlap", "warning", overlap.first_index, boxes=overlap.estimate.box[None]))
    total = result.total
    picture = Picture(
        tuple(bodies),
        _inertia(total.properties, total.principal),
        tuple(highlights),
        total_label="total centre of mass",
        numbers_withheld=not result.valid,
    )
    scenes = draw_views(picture)
    findings = []
    for index, body in enumerate(document["bodies"]):
        for finding, shown in zip(body.get("findings", []), drawn_by_body[index] if index < len(drawn_by_body) else []):
            findings.append(FindingRow(body["name"], finding, shown))
    for finding in document["total"].get("findings", []):
        findings.append(FindingRow("total", finding, finding["code"] == "bodies_overlap" and bool(result.overlaps)))
    reasons = [f"{row.item}: {row.finding['code']}: {row.finding['message']}" for row in findings if row.finding["severity"] == "error"]
    items = [("Total, assembly axes, about the total centre of mass", "total", document["total"])]
    items += [(f"{k + 1} {body['name']} ({body.get('kind', 'mesh')})", f"bodies.{k}", body) for k, body in enumerate(document["bodies"])]
    name = result.manifest.name
    page = render_report(
        title=f"{name}: mass properties in pictures",
        subtitle=f"{result.manifest.path} · {len(result.items)} items · lengths in the manifest in {result.manifest.length_unit}",
        valid=result.valid,
        reasons=reasons,
        scenes=scenes,
        items=items,
        findings=findings,
        conventions=document.get("conventions", {}),
        cautions=document.get("cautions", []),
        footer=footer,
        summary_table=_bodies_summary(document),
        sound_text="Sound: every body passed validation and the totals are given",
    )
    return Report(page, scenes, result.valid)


# ----------------------------------------------------------------------------- a checked folder


def check_report(results, meshes, *, cautions: Sequence[str], footer: str) -> str:
    """One page for ``meshprops check``: a row per file, an oblique thumbnail, its verdict.

    ``meshes`` are the loaded meshes in the order of ``results`` (``None`` where the file is not
    drawn).
    """
    from .serialize import finding_to_dict

    rows = []
    for result, mesh in zip(results, meshes):
        report = result.report
        thumbnail = None
        if mesh is not None:
            highlights, _ = _highlights_for(report.findings, mesh, 0)
            picture = Picture(
                (BodyPicture(os.path.basename(result.source), mesh.triangles(), None, closed=report.valid),),
                None,
                tuple(highlights),
            )
            thumbnail = draw_view(picture, VIEWS[3], width=430, height=250, legend_width=170, face_budget=1500)
        rows.append(
            CheckRow(
                result.source,
                report.valid,
                len(report.errors),
                len(report.warnings),
                result.face_count,
                tuple(finding_to_dict(f) for f in report.findings),
                thumbnail,
            )
        )
    valid = sum(1 for row in rows if row.valid)
    return render_check_report(
        title="Checked meshes in pictures",
        subtitle=f"{len(rows)} file(s), {valid} sound, {len(rows) - valid} with errors",
        rows=rows,
        cautions=cautions,
        footer=footer,
    )


# ----------------------------------------------------------------------------- PNG files


def write_pngs(scenes: Sequence[Scene], directory: str, stem: str) -> list[str]:
    """Write each view as ``DIRECTORY/STEM-VIEW.png`` (via a temporary file and a rename).

    All PNGs are rendered before the first is written, so a missing extra writes nothing.
    """
    images = [(f"{stem}-{scene.view.key}.png", scene_to_png_bytes(scene)) for scene in scenes]
    try:
        os.makedirs(directory, exist_ok=True)
    except OSError as exc:
        raise OutputFileError(directory, exc.strerror or str(exc)) from None
    written = []
    for name, data in images:
        path = os.path.join(directory, name)
        try:
            handle, temporary = tempfile.mkstemp(prefix=".meshprops-", dir=directory)
            with os.fdopen(handle, "wb") as stream:
                stream.write(data)
            os.replace(temporary, path)
        except OSError as exc:
            raise OutputFileError(path, exc.strerror or str(exc)) from None
        written.append(path)
    return written
