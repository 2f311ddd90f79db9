"""Output: one serializer (:func:`body_to_dict`) feeds the JSON document and the
terminal table, so they can never disagree. Everything emitted is SI.
"""

from __future__ import annotations

import json
import math
import os
import tempfile
from collections.abc import Sequence

import numpy as np

from . import __version__
from .body import BodyMeasurement
from .checks import Finding
from .errors import OutputFileError
from .units import SI_UNITS

SCHEMA_NAME = "meshprops.measure"
SCHEMA_VERSION = 1

CONVENTIONS = {
    "frame": "all vectors and tensors are in the axes of the input mesh; lengths converted to metres at load",
    "inertia_tensor": "I_ij = integral of (r^2 delta_ij - x_i x_j) dm; off-diagonal entries are the NEGATIVES "
    "of the products of inertia",
    "products_of_inertia": "P_ij = integral of x_i x_j dm about the centre of mass (P_xy, P_yz, P_zx); P_ij = -I_ij",
    "principal_moments": "ascending I1 <= I2 <= I3, about the centre of mass",
    "principal_axes": "rows e1, e2, e3 of a proper rotation R (det +1) with R I Rᵀ = diag(I1, I2, I3); e1 and e2 "
    "have their largest-magnitude component positive, e3 = e1 x e2; axes flagged not unique where moments coincide",
    "angular_velocity": "rad/s in the input axes; rpm is converted as 2*pi/60 rad/s per rpm",
    "spin": "angular_momentum_about_com = I_cm w; kinetic_energy = 1/2 wᵀ I_cm w (rotational); about a point p: "
    "L_p = (c - p) x m v + I_cm w",
    "density": "uniform density over each body's enclosed volume",
}

CAUTIONS = (
    "Geometry-derived values assume uniform density and an exact, closed CAD surface.",
    "For lifting, rotor balancing, flight weight and balance or any safety-relevant use, confirm mass and centre "
    "of mass by weighing and measurement, and follow local codes and licensed engineering practice.",
)


def vector_to_list(values) -> list[float] | None:
    if values is None:
        return None
    return [float(x) for x in np.asarray(values, dtype=np.float64).reshape(-1)]


def matrix_to_list(values) -> list[list[float]] | None:
    if values is None:
        return None
    return [[float(x) for x in row] for row in np.asarray(values, dtype=np.float64)]


def finding_to_dict(finding: Finding) -> dict:
    """A finding as plain JSON data."""
    return {
        "code": finding.code,
        "severity": finding.severity,
        "count": finding.count,
        "message": finding.message,
        "where": [dict(place) for place in finding.where],
    }


def body_to_dict(body: BodyMeasurement) -> dict:
    """One body as plain JSON data (SI). Numbers are ``null`` when the mesh is invalid."""
    properties = body.properties
    frame = body.principal
    validation = body.validation
    result: dict = {"source": body.source}
    if body.name is not None:
        result["name"] = body.name
    result.update(
        {
            "valid": body.valid,
            "findings": [finding_to_dict(f) for f in body.findings],
            "mesh": {
                "format": body.file_format,
                "length_unit": body.length_unit,
                "faces": body.face_count,
                "vertices": validation.vertex_count if validation else None,
                "edges": validation.edge_count if validation else None,
                "shells": validation.extra.get("shells") if validation else None,
                "voids": validation.extra.get("voids") if validation else None,
                "holes": validation.extra.get("holes") if validation else None,
            },
            "density": body.density,
            "density_assumed": body.density_assumed,
            "volume": properties.volume if properties else None,
            "mass": properties.mass if properties else None,
            "center_of_mass": vector_to_list(properties.center_of_mass) if properties else None,
            "inertia_about_com": matrix_to_list(properties.inertia_about_com) if properties else None,
            "products_of_inertia": dict(zip(("xy", "yz", "zx"), vector_to_list(properties.products_of_inertia)))
            if properties
            else None,
            "radii_of_gyration": vector_to_list(properties.radii_of_gyration) if properties else None,
            "principal_moments": vector_to_list(frame.moments) if frame else None,
            "principal_axes": matrix_to_list(frame.axes) if frame else None,
            "principal_symmetry": frame.symmetry if frame else None,
            "principal_axes_unique": list(frame.unique_axes) if frame else None,
            "triangle_inequality": frame.satisfies_triangle_inequality if frame else None,
        }
    )
    if body.inertia_about_point is not None:
        result["inertia_about_point"] = {"point": vector_to_list(body.point), "tensor": matrix_to_list(body.inertia_about_point)}
    if body.spin is not None:
        result["spin"] = spin_to_dict(body.spin)
    return result


def spin_to_dict(state) -> dict:
    angle = state.angle_between_momentum_and_angular_velocity
    data = {
        "angular_velocity": vector_to_list(state.angular_velocity),
        "angular_momentum_about_com": vector_to_list(state.angular_momentum_about_com),
        "kinetic_energy": state.rotational_kinetic_energy,
        "angle_between_momentum_and_angular_velocity": angle,
        "angle_between_momentum_and_angular_velocity_deg": math.degrees(angle) if angle is not None else None,
        "com_velocity": vector_to_list(state.com_velocity),
        "translational_kinetic_energy": state.translational_kinetic_energy,
        "total_kinetic_energy": state.kinetic_energy,
    }
    if state.point is not None:
        data["about_point"] = {
            "point": vector_to_list(state.point),
            "orbital_angular_momentum": vector_to_list(state.orbital_angular_momentum),
            "spin_angular_momentum": vector_to_list(state.angular_momentum_about_com),
            "angular_momentum": vector_to_list(state.angular_momentum_about_point),
        }
    return data


def document(bodies: Sequence[dict], *, input_length_unit: str, total: dict | None = None, extra=None) -> dict:
    """The whole JSON document around already-serialized bodies."""
    doc = {
        "schema": SCHEMA_NAME,
        "schema_version": SCHEMA_VERSION,
        "meshprops_version": __version__,
        "units": dict(SI_UNITS, input_length_unit=input_length_unit),
        "conventions": CONVENTIONS,
        "cautions": list(CAUTIONS),
        "bodies": list(bodies),
    }
    if total is not None:
        doc["total"] = total
    if extra:
        doc.update(extra)
    return doc


def to_json(doc: dict) -> str:
    """Serialize with full float precision (repr round-trips); NaN is never emitted."""
    return json.dumps(doc, indent=2, allow_nan=False) + "\n"


def write_atomically(path: str, text: str) -> None:
    """Write ``text`` to ``path`` via a temporary file and a rename: never half-written."""
    directory = os.path.dirname(os.path.abspath(path))
    try:
        handle, temporary = tempfile.mkstemp(prefix=".meshprops-", dir=directory)
    except OSError as exc:  # missing or read-only directory: one clear line, not a traceback
        raise OutputFileError(path, exc.strerror or str(exc)) from None
    try:
        with os.fdopen(handle, "w", encoding="utf-8") as stream:
            stream.write(text)
        os.replace(temporary, path)
    except BaseException as exc:
        if os.path.exists(temporary):
            os.unlink(temporary)
        if isinstance(exc, OSError) and not isinstance(exc, OutputFileError):
            raise OutputFileError(path, exc.strerror or str(exc)) from None
        raise


# ---------------------------------------------------------------------------- terminal table


def _fmt(value: float) -> str:
    return f"{value + 0.0: .6g}"  # + 0.0 turns -0.0 into 0.0


def _matrix_row(row) -> str:
    return "    " + "".join(f"{value + 0.0:>15.6g}" for value in row)  # aligned columns


def _row(label: str, values, unit: str) -> str:
    if isinstance(values, (list, tuple)):
        text = "  ".join(_fmt(v) for v in values)
    else:
        text = _fmt(values)
    return f"  {label:<34}{text}  {unit}"


def render_table(doc: dict, extra_lines: list[str] | None = None) -> str:
    """A readable plain-text report of a measurement document (same data as the JSON).

    ``extra_lines`` (assemblies: named points, frames, breakdown) go before the closing
    units line and cautions, which always end the report.
    """
    lines: list[str] = []
    items = list(doc["bodies"]) + ([doc["total"]] if "total" in doc else [])
    for body in items:
        title = body.get("name") or body.get("source", "total")
        lines.append(f"{title}  [{'valid' if body.get('valid', True) else 'INVALID'}]")
        for finding in body.get("findings", []):
            lines.append(f"  {finding['severity']}: {finding['code']}: {finding['message']}")
        if body.get("mass") is None:
            lines.append("  no numbers: the mesh failed validation")
            lines.append("")
            continue
        mesh = body.get("mesh")
        if mesh:
            lines.append(f"  {'mesh':<34}{mesh['format']}, {mesh['faces']} faces, coordinates in {mesh['length_unit']}")
        if body.get("density") is not None:
            assumed = "  (ASSUMED: no density given)" if body.get("density_assumed") else ""
            lines.append(_row("density", body["density"], "kg/m^3") + assumed)
        if body.get("volume") is not None:
            lines.append(_row("volume", body["volume"], "m^3"))
        lines.append(_row("mass", body["mass"], "kg"))
        lines.append(_row("centre of mass (x y z)", body["center_of_mass"], "m"))
        lines.append("  inertia tensor about centre of mass, input axes (kg*m^2; off-diagonals = -products):")
        for row in body["inertia_about_com"]:
            lines.append(_matrix_row(row))
        products = body.get("products_of_inertia")
        if products:
            lines.append(_row("products of inertia Pxy Pyz Pzx", [products[k] for k in ("xy", "yz", "zx")], "kg*m^2"))
        if body.get("radii_of_gyration"):
            lines.append(_row("radii of gyration kx ky kz", body["radii_of_gyration"], "m"))
        lines.append(_row("principal moments I1 I2 I3", body["principal_moments"], "kg*m^2"))
        for k, axis in enumerate(body["principal_axes"], start=1):
            lines.append(_row(f"principal axis e{k}", axis, ""))
        symmetry = body.get("principal_symmetry")
        if symmetry and symmetry != "asymmetric":
            lines.append(f"  {'symmetry':<34}{symmetry} (principal axes not unique where moments coincide)")
        about = body.get("inertia_about_point")
        if about:
            lines.append(_row("inertia about point", about["point"], "m"))
            for row in about["tensor"]:
                lines.append(_matrix_row(row))
        state = body.get("spin")
        if state:
            lines.append(_row("angular velocity", state["angular_velocity"], "rad/s"))
            lines.append(_row("angular momentum about com", state["angular_momentum_about_com"], "kg*m^2/s"))
            lines.append(_row("rotational kinetic energy", state["kinetic_energy"], "J"))
            if state["angle_between_momentum_and_angular_velocity_deg"] is not None:
                lines.append(_row("angle between L and w", state["angle_between_momentum_and_angular_velocity_deg"], "deg"))
            if "about_point" in state:
                lines.append(_row("angular momentum about point", state["about_point"]["angular_momentum"], "kg*m^2/s"))
        lines.append("")
    if extra_lines:
        lines.extend(extra_lines)
        lines.append("")
    lines.append("Units SI. Inertia in tensor convention about the centre of mass unless stated.")
    lines.extend(f"CAUTION: {text}" for text in doc.get("cautions", []))
    return "\n".join(lines) + "\n"


# ---------------------------------------------------------------------------- meshprops check

CHECK_SCHEMA_NAME = "meshprops.check"
CHECK_SCHEMA_VERSION = 1


def check_to_dict(result) -> dict:
    """One checked file (:class:`meshprops.checks.CheckResult`) as plain JSON data."""
    report = result.report
    return {
        "source": result.source,
        "valid": report.valid,
        "errors": len(report.errors),
        "warnings": len(report.warnings),
        "findings": [finding_to_dict(f) for f in report.findings],
        "mesh": {
            "format": result.file_format,
            "length_unit": result.length_unit,
            "faces": result.face_count,
            "vertices": report.vertex_count,
            "edges": report.edge_count,
            "shells": report.extra.get("shells"),
            "voids": report.extra.get("voids"),
            "holes": report.extra.get("holes"),
            "self_intersections_checked": report.extra.get("self_intersections_checked"),
        },
    }


def check_document(results, *, input_length_unit: str) -> dict:
    """The JSON document of ``meshprops check``: one entry per file plus totals."""
    files = [check_to_dict(result) for result in results]
    return {
        "schema": CHECK_SCHEMA_NAME,
        "schema_version": CHECK_SCHEMA_VERSION,
        "meshprops_version": __version__,
        "units": dict(SI_UNITS, input_length_unit=input_length_unit),
        "files": files,
        "summary": {
            "files": len(files),
            "valid": sum(1 for f in files if f["valid"]),
            "errors": sum(f["errors"] for f in files),
            "warnings": sum(f["warnings"] for f in files),
        },
    }


def render_check_table(doc: dict) -> str:
    """A plain-text table of a check document: one row per finding, the first faces it concerns."""
    lines: list[str] = []
    for entry in doc["files"]:
        mesh = entry["mesh"]
        state = "valid" if entry["valid"] else "INVALID"
        lines.append(
            f"{entry['source']}  [{state}]  {mesh['faces']} faces, {mesh['vertices']} vertices, "
            f"{mesh['shells']} shell(s), coordinates in {mesh['length_unit']}"
        )
        if not entry["findings"]:
            lines.append("  no findings")
        else:
            lines.append(f"  {'severity':<8}  {'code':<30}  {'count':>8}  {'faces':<24}  message")
            for finding in entry["findings"]:
                faces = ",".join(str(place["face"]) for place in finding["where"]) or "-"
                lines.append(
                    f"  {finding['severity']:<8}  {finding['code']:<30}  {finding['count']:>8}  {faces:<24}  "
                    f"{finding['message']}"
                )
        lines.append("")
    summary = doc["summary"]
    lines.append(
        f"{summary['files']} file(s): {summary['valid']} valid, {summary['errors']} error finding(s), "
        f"{summary['warnings']} warning finding(s)"
    )
    return "\n".join(lines) + "\n"
