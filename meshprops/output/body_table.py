"""The terminal layout of one measured body, from its serialized dict (the JSON data).

Our own layout: a short header with the body's basis (mesh, density, volume,
mass), then two groups, "about the centre of mass" (where it is, the inertia
tensor as an aligned matrix, the products of inertia in the order xy, xz, yz,
the radii of gyration) and "principal frame" (moments and axes together, one
row per axis), then the optional views (about a point, spin).

Values are converted to a display system (:data:`meshprops.units.DISPLAY_SYSTEMS`)
and printed with a chosen number of significant digits; round-off below 1e-12
of a quantity's own scale prints as 0 (:mod:`meshprops.output.numbers`). The
JSON document is never touched: it stays SI with exact floats.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from ..units import DISPLAY_SYSTEMS, DisplaySystem
from .numbers import DEFAULT_DIGITS, clean, format_number, quantity_scale


@dataclass(frozen=True, slots=True, eq=False)
class TableDisplay:
    """How the table shows numbers: the display unit system and the significant digits."""

    system: DisplaySystem = field(default_factory=lambda: DISPLAY_SYSTEMS["SI"])
    digits: int = DEFAULT_DIGITS


#: The order of the products of inertia everywhere (table, JSON keys, CSV): xy, xz, yz.
PRODUCT_ORDER = ("xy", "xz", "yz")
#: Width of the label column.
LABEL_WIDTH = 30
_AXES = ("x", "y", "z")


def format_values(values, scale: float | None, digits: int) -> list[str]:
    """Cleaned, formatted entries of a vector (flat list of strings)."""
    cleaned = np.atleast_1d(clean(values, scale))
    return [format_number(value, digits) for value in cleaned.reshape(-1)]


def aligned_row(label: str, cells: Sequence[str], unit: str = "", *, indent: int = 4, width: int | None = None) -> str:
    """``label`` then right-aligned cells of a common width, then the unit."""
    width = width or max((len(cell) for cell in cells), default=1)
    text = "  ".join(cell.rjust(width) for cell in cells)
    line = f"{' ' * indent}{label:<{LABEL_WIDTH - indent}}{text}"
    return f"{line}  {unit}" if unit else line


def grid_lines(
    title: str,
    headers: Sequence[str],
    row_labels: Sequence[str],
    columns: Sequence[Sequence[str]],
    *,
    indent: int = 4,
    unit: str = "",
) -> list[str]:
    """A small grid: a title/header row, then one row per label; every column right-aligned to its widest cell."""
    widths = [max([len(header)] + [len(cell) for cell in column]) for header, column in zip(headers, columns)]
    pad = " " * indent
    header = "  ".join(name.rjust(width) for name, width in zip(headers, widths))
    lines = [f"{pad}{title:<{LABEL_WIDTH - indent}}{header}  {unit}".rstrip()]
    for k, label in enumerate(row_labels):
        cells = "  ".join(column[k].rjust(width) for column, width in zip(columns, widths))
        lines.append(f"{pad}{'  ' + label:<{LABEL_WIDTH - indent}}{cells}")
    return lines


def matrix_lines(
    matrix,
    unit: str,
    *,
    digits: int,
    scale: float | None = None,
    indent: int = 4,
    title: str = "",
) -> list[str]:
    """A 3x3 matrix as column-aligned rows under a header naming the columns x, y, z (and the unit)."""
    array = np.asarray(matrix, dtype=np.float64)
    cleaned = clean(array, scale if scale is not None else quantity_scale(array))
    columns = [[format_number(value, digits) for value in cleaned[:, j]] for j in range(3)]
    return grid_lines(title, _AXES, _AXES, columns, indent=indent, unit=unit)


def _length_scale(body: dict, system: DisplaySystem) -> float:
    """A size of the body in display units (largest radius of gyration or centre-of-mass coordinate)."""
    radii = body.get("radii_of_gyration") or [0.0]
    com = body.get("center_of_mass") or [0.0]
    return max(quantity_scale(system.from_si("length", np.asarray(radii))),
               quantity_scale(system.from_si("length", np.asarray(com))))


def _density_note(body: dict) -> str:
    if body.get("implied_density") is not None:
        return "  (implied from measured_mass)"
    if body.get("density_assumed"):
        return "  (ASSUMED: no density given)"
    return ""


def body_lines(body: dict, *, system: DisplaySystem, digits: int = DEFAULT_DIGITS, axes: str = "mesh axes") -> list[str]:
    """The lines of one body (or an assembly total) in the table, ending with a blank line.

    Parameters
    ----------
    body : dict, one entry of a measure document's ``bodies`` (or its ``total``), SI
    system : the display system
    digits : significant digits
    axes : name of the axes the values are in (``"mesh axes"``, ``"assembly axes"``)
    """
    units = system.symbol
    title = body.get("name") or body.get("source") or "total"
    if body.get("kind") == "point_mass":
        title += "  (point mass)"
    lines = [f"{title}  [{'valid' if body.get('valid', True) else 'INVALID'}]"]
    for finding in body.get("findings", []):
        lines.append(f"  {finding['severity']}: {finding['code']}: {finding['message']}")
    if body.get("mass") is None:
        lines.append("  no numbers: the mesh failed validation or could not be read")
        lines.append("")
        return lines

    def row(label, values, quantity, scale=None, indent=2):
        converted = system.from_si(quantity, np.asarray(values, dtype=np.float64)) if quantity else np.asarray(values)
        return aligned_row(label, format_values(converted, scale, digits), units(quantity) if quantity else "",
                           indent=indent)

    mesh = body.get("mesh")
    if mesh and mesh.get("faces") is not None:
        lines.append(f"  {'mesh':<{LABEL_WIDTH - 2}}{mesh['format']}, {mesh['faces']} faces, "
                     f"coordinates in {mesh['length_unit']}")
    if body.get("density") is not None:
        lines.append(row("density", body["density"], "density") + _density_note(body))
    if body.get("volume") is not None:
        lines.append(row("volume", body["volume"], "volume"))
    lines.append(row("mass", body["mass"], "mass"))

    length_scale = _length_scale(body, system)
    inertia = system.from_si("inertia", np.asarray(body["inertia_about_com"], dtype=np.float64))
    inertia_scale = quantity_scale(inertia)
    lines.append("")
    lines.append(f"  about the centre of mass ({axes})")
    lines.append(row("position x y z", body["center_of_mass"], "length", scale=length_scale, indent=4))
    lines.extend(matrix_lines(inertia, units("inertia"), digits=digits, scale=inertia_scale,
                              title="inertia tensor"))
    lines.append(f"    {'':<{LABEL_WIDTH - 4}}(tensor convention: off-diagonal entries are minus the products)")
    products = body.get("products_of_inertia")
    if products:
        values = system.from_si("inertia", np.array([products[key] for key in PRODUCT_ORDER], dtype=np.float64))
        lines.append(aligned_row("products Pxy Pxz Pyz", format_values(values, inertia_scale, digits),
                                 units("inertia"), indent=4))
    if body.get("radii_of_gyration"):
        lines.append(row("radii of gyration", body["radii_of_gyration"], "length", indent=4))

    if body.get("principal_moments") is not None:
        moments = system.from_si("inertia", np.asarray(body["principal_moments"], dtype=np.float64))
        lines.append("")
        lines.append(f"  principal frame (moments ascending; each axis a unit vector in {axes})")
        axes_rows = [format_values(axis, 1.0, digits) for axis in body["principal_axes"]]
        columns = [format_values(moments, inertia_scale, digits)] + [[row[j] for row in axes_rows] for j in range(3)]
        lines.extend(grid_lines("", (f"moment {units('inertia')}", "axis x", "axis y", "axis z"),
                                [f"I{k}, e{k}" for k in (1, 2, 3)], columns))
        symmetry = body.get("principal_symmetry")
        if symmetry and symmetry != "asymmetric":
            lines.append(f"    {'symmetry':<{LABEL_WIDTH - 4}}{symmetry} (axes not unique where moments coincide)")

    about = body.get("inertia_about_point")
    if about:
        lines.append("")
        lines.append(f"  about the point {' '.join(format_values(system.from_si('length', np.asarray(about['point'])), length_scale, digits))}"
                     f" {units('length')} ({axes})")
        tensor = system.from_si("inertia", np.asarray(about["tensor"], dtype=np.float64))
        lines.extend(matrix_lines(tensor, units("inertia"), digits=digits, title="inertia tensor"))
    state = body.get("spin")
    if state:
        lines.append("")
        lines.append(f"  spin ({axes})")
        lines.append(row("angular velocity", state["angular_velocity"], "angular_velocity", indent=4))
        lines.append(row("angular momentum (com)", state["angular_momentum_about_com"], "angular_momentum", indent=4))
        lines.append(row("rotational energy", state["kinetic_energy"], "energy", indent=4))
        if state.get("angle_between_momentum_and_angular_velocity_deg") is not None:
            lines.append(aligned_row("angle between L and w",
                                     format_values(state["angle_between_momentum_and_angular_velocity_deg"], None, digits),
                                     "deg", indent=4))
        if state.get("com_velocity") is not None:
            lines.append(row("velocity of the com", state["com_velocity"], "velocity", indent=4))
            lines.append(row("total kinetic energy", state["total_kinetic_energy"], "energy", indent=4))
        if "about_point" in state:
            lines.append(row("angular momentum (point)", state["about_point"]["angular_momentum"], "angular_momentum",
                             indent=4))
    lines.append("")
    return lines


def units_line(system: DisplaySystem) -> str:
    """The closing line naming the display units (the JSON is always SI)."""
    shown = ", ".join(system.symbol(q) for q in ("length", "mass", "inertia", "density"))
    return (f"Units {system.name} ({shown}); JSON output is always SI. Inertia in tensor convention about the "
            "centre of mass unless stated.")


def render_measure_table(
    doc: dict,
    extra_lines: list[str] | None = None,
    *,
    system: DisplaySystem | None = None,
    digits: int = DEFAULT_DIGITS,
) -> str:
    """The plain-text report of a measure (or assembly) document; same data as the JSON.

    ``extra_lines`` (assemblies: named points, frames, breakdown) go before the closing
    units line and cautions, which always end the report.
    """
    system = system or DISPLAY_SYSTEMS["SI"]
    axes = "assembly axes" if "assembly" in doc else "mesh axes"
    lines: list[str] = []
    for body in list(doc["bodies"]) + ([doc["total"]] if doc.get("total") else []):
        lines.extend(body_lines(body, system=system, digits=digits, axes=axes))
    if extra_lines:
        lines.extend(extra_lines)
        lines.append("")
    lines.append(units_line(system))
    lines.extend(f"CAUTION: {text}" for text in doc.get("cautions", []))
    return "\n".join(lines) + "\n"
