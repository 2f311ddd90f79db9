"""Terminal tables rendered from the serializer's dicts.
"""

from __future__ import annotations

import numpy as np

from .body_table import LABEL_WIDTH, TableDisplay, matrix_lines, render_measure_table
from .numbers import clean, format_number


def render_table(doc: dict, extra_lines: list[str] | None = None, *, display: TableDisplay | None = None) -> str:
    """A readable plain-text report of a measurement document (same data as the JSON).

    The layout is :mod:`meshprops.output.body_table`'s; ``display`` sets the units and digits.
    ``extra_lines`` (assemblies: named points, frames, breakdown) go before the closing
    units line and cautions, which always end the report.
    """
    display = display or TableDisplay()
    return render_measure_table(doc, extra_lines, system=display.system, digits=display.digits)


def render_check_table(doc: dict) -> str:
    """A plain-text table of a check document: one row per finding, the first faces it concerns."""
    lines: list[str] = []
    for entry in doc["files"]:
        mesh = entry["mesh"]
        state = "valid" if entry["valid"] else "INVALID"
        if mesh["faces"] is None:
            lines.append(f"{entry['source']}  [{state}]  could not be read")
        else:
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
        + (f", {summary['unreadable']} file(s) could not be read" if summary.get("unreadable") else "")
    )
    return "\n".join(lines) + "\n"


def render_assembly_table(doc: dict, *, display: TableDisplay | None = None) -> str:
    """Terminal report of an assembly document: per-item and total blocks, then breakdown and warnings."""
    display = display or TableDisplay()
    system, digits = display.system, display.digits
    length, inertia = system.unit("length"), system.unit("inertia")

    def position(values) -> str:
        return " ".join(format_number(v, digits) for v in np.atleast_1d(clean(length.from_si(np.asarray(values)))))

    lines = []
    assembly = doc.get("assembly", {})
    total = doc.get("total") or {}
    for name, entry in (total.get("inertia_about_named_points") or {}).items():
        lines.append(f"total about the point {name} ({position(entry['point'])} {length.symbol}, assembly axes)")
        lines.extend(matrix_lines(inertia.from_si(np.asarray(entry["tensor"])), inertia.symbol, digits=digits,
                                  title="inertia tensor"))
    for name, view in (total.get("in_frames") or {}).items():
        lines.append(f"total in the frame {name}")
        lines.append(f"    {'centre of mass x y z':<{LABEL_WIDTH - 4}}{position(view['center_of_mass'])}  {length.symbol}")
        lines.extend(matrix_lines(inertia.from_si(np.asarray(view["inertia_about_com"])), inertia.symbol,
                                  digits=digits, title="inertia about the com"))
    if doc.get("breakdown"):
        mass = system.unit("mass")
        short = min(digits, 5)
        lines.append("")
        lines.append(f"breakdown of {assembly.get('name', 'assembly')} (inertia about the assembly centre of mass, "
                     f"{inertia.symbol}):")
        lines.append(f"  {'item':<20}{'mass ' + mass.symbol:>14}{'share':>9}{'Ixx':>13}{'Iyy':>13}{'Izz':>13}"
                     f"{'trace share':>13}")
        for entry in doc["breakdown"]:
            tensor = clean(inertia.from_si(np.asarray(entry["inertia_contribution_about_com"], dtype=np.float64)))
            lines.append(
                f"  {entry['name']:<20}{format_number(mass.from_si(entry['mass']), short):>14}"
                f"{100 * entry['mass_share']:>8.2f}%"
                + "".join(f"{format_number(tensor[k, k], min(digits, 4)):>13}" for k in range(3))
                + f"{100 * entry['inertia_trace_share']:>12.2f}%"
            )
    for warning in doc.get("warnings", []):
        lines.append(f"WARNING: {warning}")
    return render_table(doc, lines, display=display)


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
