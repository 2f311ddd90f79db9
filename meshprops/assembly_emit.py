"""Output of assemblies: the JSON document (bodies, total, breakdown, overlaps),
its terminal table and the CSV breakdown, all fed by the same dictionaries.

Numbers of bodies and total go through :func:`meshprops.emit.body_to_dict`, the
serializer of single meshes, so a body reads the same in both documents; the
assembly adds its own keys around them (see the README's key list).
"""

from __future__ import annotations

import csv
import io
from typing import TYPE_CHECKING

import numpy as np

if TYPE_CHECKING:  # the assembly machinery is imported only where a manifest is measured
    from .assembly import AssemblyItem, AssemblyResult
from .emit import CONVENTIONS, body_to_dict, document, matrix_to_list, render_table, vector_to_list
from .materials import material_to_dict
from .simulators import plausibility_to_dict


ASSEMBLY_CONVENTIONS = {
    "frame": "assembly frame: every body's values after its placement x -> R x + t (t in m); a mesh body's values "
    "in its own mesh frame are under body_frame; totals in the assembly frame, and in each named frame under "
    "total.in_frames",
    "placement": "rotation R (rows written out) maps body-local coordinates x to assembly coordinates R x + t",
    "named_frames": "a frame with origin o and rotation R has axes = columns of R in assembly coordinates; "
    "coordinates in it are R^T (x - o), tensors R^T I R",
    "breakdown": "inertia_contribution_about_com is each item's inertia about the ASSEMBLY centre of mass (own "
    "inertia plus parallel-axis term), assembly axes; contributions sum to total.inertia_about_com",
    "overlap": "Monte-Carlo estimate of shared volume (uniform points in the intersection of bounding boxes, exact "
    "ray-parity point-in-solid test); standard_error is one binomial standard error",
}


#: Keys only a mesh body has values for; point masses and the total carry them as null, so that
#: every item and the total have the same keys.
MESH_BODY_KEYS = (
    "material", "density_basis", "measured_mass", "implied_density", "implied_density_ratio_to_material",
    "placement", "body_frame",
)  # fmt: skip


def _item_to_dict(item: "AssemblyItem") -> dict:
    data = body_to_dict(item.measurement)
    data["name"] = item.name
    data["kind"] = item.kind
    if item.kind == "point_mass":
        data["source"] = None  # not modelled: no mesh file
        data["mesh"] = None
        spec = item.spec
        data.update(dict.fromkeys(MESH_BODY_KEYS))
        data["own_inertia_given"] = spec.inertia_given
        data["box_size"] = vector_to_list(spec.box_size)
    else:
        spec = item.spec
        data["material"] = material_to_dict(spec.material) if spec.material else None
        data["density_basis"] = item.density_basis
        data["measured_mass"] = spec.measured_mass
        data["implied_density"] = item.measurement.density if spec.measured_mass is not None else None
        data["implied_density_ratio_to_material"] = item.implied_density_ratio
        data["placement"] = {
            "rotation": matrix_to_list(item.placement.rotation),
            "translation": vector_to_list(item.placement.translation),
        }
        if item.local is not None:
            from .principal import principal_frame

            frame = principal_frame(item.local.inertia_about_com)
            data["body_frame"] = {
                "center_of_mass": vector_to_list(item.local.center_of_mass),
                "inertia_about_com": matrix_to_list(item.local.inertia_about_com),
                "principal_moments": vector_to_list(frame.moments),
                "principal_axes": matrix_to_list(frame.axes),
            }
        else:
            data["body_frame"] = None
    data["plausibility"] = plausibility_to_dict(item.plausibility) if item.plausibility else None
    return data


def _summed_mesh(bodies: list[dict], length_unit: str) -> dict:
    meshes = [body["mesh"] for body in bodies if body.get("mesh")]
    summed = {"format": "assembly", "length_unit": length_unit}
    for key in ("faces", "vertices", "edges", "shells", "voids", "holes"):
        values = [mesh.get(key) for mesh in meshes]
        summed[key] = None if any(v is None for v in values) else int(sum(values))
    return summed


def assembly_document(result: "AssemblyResult") -> dict:
    """The JSON document of an assembly (SI): every item in ``bodies``, the ``total`` with the same keys."""
    manifest = result.manifest
    bodies = [_item_to_dict(item) for item in result.items]
    total = body_to_dict(result.total)
    # The same keys as a body: the manifest is the total's source, its mesh the sum of the bodies' meshes.
    total["source"] = manifest.path
    total["mesh"] = _summed_mesh(bodies, manifest.length_unit)
    total.update(dict.fromkeys(MESH_BODY_KEYS))
    total["name"] = "total"
    total["kind"] = "total"
    total["inertia_about_named_points"] = {
        name: {"point": vector_to_list(point), "tensor": matrix_to_list(tensor)} for name, (point, tensor) in result.named_points.items()
    }
    total["in_frames"] = {
        name: {
            "origin": vector_to_list(view.frame.origin),
            "axes": matrix_to_list(view.frame.rotation.T),
            "center_of_mass": vector_to_list(view.properties.center_of_mass),
            "inertia_about_com": matrix_to_list(view.properties.inertia_about_com),
            "inertia_about_origin": matrix_to_list(view.inertia_about_origin),
            "principal_moments": vector_to_list(view.principal.moments),
            "principal_axes": matrix_to_list(view.principal.axes),
        }
        for name, view in result.frames.items()
    }
    total["plausibility"] = plausibility_to_dict(result.total_plausibility) if result.total_plausibility else None
    breakdown = [
        {
            "name": entry.name,
            "kind": entry.kind,
            "mass": entry.mass,
            "mass_share": entry.mass_share,
            "inertia_contribution_about_com": matrix_to_list(entry.inertia_contribution),
            "inertia_trace_share": entry.trace_share,
        }
        for entry in result.breakdown
    ]
    overlaps = [
        {
            "bodies": [o.first, o.second],
            "volume": o.estimate.volume,
            "standard_error": o.estimate.standard_error,
            "samples": o.estimate.samples,
            "hits": o.estimate.hits,
            "sampled_box": matrix_to_list(o.estimate.box),
            "undetected_upper_bound": o.estimate.undetected_upper_bound,
            "double_counted_mass": list(o.double_counted_mass),
            "share_of_smaller_volume": o.share_of_smaller_volume,
        }
        for o in result.overlaps
    ]
    doc = document(
        bodies,
        input_length_unit=manifest.length_unit,
        total=total,
        extra={
            "assembly": {
                "name": manifest.name,
                "manifest": manifest.path,
                "length_unit": manifest.length_unit,
                "points": {name: vector_to_list(p) for name, p in manifest.points.items()},
                "frames": {
                    name: {"origin": vector_to_list(f.origin), "axes": matrix_to_list(f.rotation.T)} for name, f in manifest.frames.items()
                },
                "user_materials": {name: material_to_dict(m) for name, m in manifest.materials.items()},
            },
            "breakdown": breakdown if result.valid else None,
            "overlap_check": {"samples_per_pair": result.overlap_samples, "performed": bool(result.overlap_samples)},
            "overlaps": overlaps,
            "warnings": list(result.warnings),
        },
    )
    doc["conventions"] = dict(CONVENTIONS, **ASSEMBLY_CONVENTIONS)
    return doc


# ------------------------------------------------------------------------------ table and CSV


def render_assembly_table(doc: dict) -> str:
    """Terminal report of an assembly document: per-item and total blocks, then breakdown and warnings."""
    lines = []
    assembly = doc.get("assembly", {})
    total = doc.get("total") or {}
    for name, entry in (total.get("inertia_about_named_points") or {}).items():
        lines.append(f"total inertia about point {name} {_short(entry['point'])} m (kg*m^2, assembly axes):")
        lines.extend("    " + _short(row) for row in entry["tensor"])
    for name, view in (total.get("in_frames") or {}).items():
        lines.append(f"total in frame {name}: centre of mass {_short(view['center_of_mass'])} m; inertia about com:")
        lines.extend("    " + _short(row) for row in view["inertia_about_com"])
    if doc.get("breakdown"):
        lines.append("")
        lines.append(f"breakdown of {assembly.get('name', 'assembly')} (inertia about the assembly centre of mass):")
        lines.append(f"  {'item':<20}{'mass kg':>12}{'share':>9}{'Ixx':>13}{'Iyy':>13}{'Izz':>13}{'trace share':>13}")
        for entry in doc["breakdown"]:
            tensor = entry["inertia_contribution_about_com"]
            lines.append(
                f"  {entry['name']:<20}{entry['mass']:>12.5g}{100 * entry['mass_share']:>8.2f}%"
                f"{tensor[0][0]:>13.4g}{tensor[1][1]:>13.4g}{tensor[2][2]:>13.4g}{100 * entry['inertia_trace_share']:>12.2f}%"
            )
    for warning in doc.get("warnings", []):
        lines.append(f"WARNING: {warning}")
    return render_table(doc, lines)


def _short(values) -> str:
    return "  ".join(f"{v + 0.0: .6g}" for v in values)


#: CSV columns: (header with unit, function of a breakdown entry and its body dict).
CSV_COLUMNS = (
    ("name", lambda e, b: e["name"]),
    ("kind", lambda e, b: e["kind"]),
    ("material", lambda e, b: (b.get("material") or {}).get("name", "")),
    ("density [kg/m^3]", lambda e, b: b.get("density")),
    ("volume [m^3]", lambda e, b: b.get("volume")),
    ("mass [kg]", lambda e, b: e["mass"]),
    ("mass share [1]", lambda e, b: e["mass_share"]),
    ("com x [m]", lambda e, b: b["center_of_mass"][0]),
    ("com y [m]", lambda e, b: b["center_of_mass"][1]),
    ("com z [m]", lambda e, b: b["center_of_mass"][2]),
    ("Ixx about assembly com [kg*m^2]", lambda e, b: e["inertia_contribution_about_com"][0][0]),
    ("Iyy about assembly com [kg*m^2]", lambda e, b: e["inertia_contribution_about_com"][1][1]),
    ("Izz about assembly com [kg*m^2]", lambda e, b: e["inertia_contribution_about_com"][2][2]),
    ("Ixy about assembly com (tensor entry = -product of inertia) [kg*m^2]", lambda e, b: e["inertia_contribution_about_com"][0][1]),
    ("Iyz about assembly com (tensor entry = -product of inertia) [kg*m^2]", lambda e, b: e["inertia_contribution_about_com"][1][2]),
    ("Izx about assembly com (tensor entry = -product of inertia) [kg*m^2]", lambda e, b: e["inertia_contribution_about_com"][2][0]),
    ("inertia trace share [1]", lambda e, b: e["inertia_trace_share"]),
)


def breakdown_csv(doc: dict) -> str:
    """CSV of the per-item breakdown plus a ``total`` row; header row with units.

    Inertia columns are tensor entries (off-diagonals = minus the products of
    inertia) about the assembly centre of mass, in assembly axes. Numbers are
    written with ``repr`` precision.
    """
    from .errors import SimulatorExportError

    if not doc.get("breakdown"):
        raise SimulatorExportError("no breakdown to write: a body's mesh failed validation")
    bodies = {body["name"]: body for body in doc["bodies"]}
    stream = io.StringIO()
    writer = csv.writer(stream, lineterminator="\n")
    writer.writerow([header for header, _ in CSV_COLUMNS])
    for entry in doc["breakdown"]:
        writer.writerow([_cell(column(entry, bodies[entry["name"]])) for _, column in CSV_COLUMNS])
    total = doc["total"]
    total_entry = {
        "name": "total",
        "kind": "total",
        "mass": total["mass"],
        "mass_share": 1.0,
        "inertia_contribution_about_com": total["inertia_about_com"],
        "inertia_trace_share": 1.0,
    }
    writer.writerow([_cell(column(total_entry, dict(total, density=None, material=None))) for _, column in CSV_COLUMNS])
    return stream.getvalue()


def _cell(value):
    if value is None:
        return ""
    if isinstance(value, float):
        return repr(value)
    if isinstance(value, (np.floating,)):
        return repr(float(value))
    return value


# ------------------------------------------------------------------------------ output selection

OUTPUT_FORMATS = ("table", "json", "urdf", "sdf", "mjcf", "csv")


def choose_format(json_flag: bool, output_format: str | None) -> str:
    """The output format from ``--json`` and ``--format`` (``--json`` means ``json``; they must agree)."""
    from .errors import InputValueError

    if output_format is not None and output_format not in OUTPUT_FORMATS:
        raise InputValueError("--format", f"one of {', '.join(OUTPUT_FORMATS)}", output_format)
    if json_flag and output_format not in (None, "json"):
        raise InputValueError("--json/--format", "either --json or --format, not both", f"--json and --format {output_format}")
    return "json" if json_flag else (output_format or "table")


def format_document(doc: dict, output_format: str, *, inertial_form: str = "full") -> tuple[str, tuple[str, ...]]:
    """Render a measurement or assembly document as text; returns ``(text, warnings)``.

    ``urdf``, ``sdf`` and ``mjcf`` refuse (``SimulatorExportError``) when any
    block would be unsound; ``csv`` needs an assembly document (its breakdown).
    """
    from .emit import to_json
    from .errors import InputValueError
    from .simulators import inertial_blocks

    if output_format == "json":
        return to_json(doc), ()
    if output_format == "table":
        return (render_assembly_table(doc) if "assembly" in doc else render_table(doc)), ()
    if output_format == "csv":
        if "assembly" not in doc:
            raise InputValueError("--format", "csv with an assembly manifest (the breakdown is per assembly)", "csv")
        return breakdown_csv(doc), ()
    export = inertial_blocks(doc, output_format, form=inertial_form)
    return export.text, export.warnings


def materials_document() -> dict:
    """The built-in materials table as JSON data (densities in kg/m³)."""
    from .materials import MATERIALS

    return {
        "schema": "meshprops.materials",
        "schema_version": 1,
        "units": {"density": "kg/m^3"},
        "note": "nominal densities of solid material; every value recalled from memory of the cited source "
        "(from_memory true): verify before relying on it",
        "materials": [material_to_dict(m) for m in MATERIALS.values()],
    }


def render_materials_table(doc: dict) -> str:
    """The materials table for a terminal."""
    lines = [f"{'name':<22}{'density kg/m^3':>15}  source"]
    for material in doc["materials"]:
        mark = " (from memory)" if material["from_memory"] else ""
        lines.append(f"{material['name']:<22}{material['density']:>15g}  {material['source']}{mark}")
        lines.append(f"{'':<39}{material['description']}")
    lines.append("")
    lines.append(doc["note"] + ".")
    return "\n".join(lines) + "\n"
