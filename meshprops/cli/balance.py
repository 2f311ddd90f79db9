"""``meshprops balance``: a mesh or an assembly manifest spinning about a shaft -> unbalance,
balance-grade check, bearing forces, spin at speed, free-spin stability, flywheel figures.
"""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Optional

import typer

from ..errors import EXIT_INVALID, EXIT_OK, InputValueError
from ..units import DEFAULT_LENGTH_UNIT
from .app import Command, app, one_line_errors, say, write_report
from .options import length_unit, parse_vector


def parse_pair(text: str | None, name: str) -> tuple[float, float] | None:
    """``"A,B"`` -> two finite numbers; ``None`` passes through."""
    if text is None:
        return None
    parts = [p.strip() for p in str(text).split(",")]
    try:
        values = tuple(float(p) for p in parts)
    except ValueError:
        raise InputValueError(name, "two comma-separated positions A,B", text) from None
    if len(values) != 2 or not all(v == v and abs(v) != float("inf") for v in values):
        raise InputValueError(name, "two finite comma-separated positions A,B", text)
    return values


@app.command(cls=Command)
@one_line_errors
def balance(
    body: Annotated[Path, typer.Argument(help="A mesh file (STL, OBJ, PLY) or an assembly manifest (.toml).", show_default=False, metavar="BODY")],
    axis_point: Annotated[str, typer.Option("--axis-point", help="A point X,Y,Z of the shaft axis, in the input length unit (--units, or the manifest's).", show_default=False)],
    axis_direction: Annotated[str, typer.Option("--axis-direction", help="Shaft direction X,Y,Z (normalized); the rotor spins right-handed about it.", show_default=False)],
    rpm: Annotated[float, typer.Option("--rpm", help="Service speed in rev/min (> 0).", show_default=False)],
    grade: Annotated[str, typer.Option("--grade", help="Balance quality grade G (ISO 21940-11): 0.4, 1, 2.5, 6.3, 16, 40, 100, 250, 630, 1600 or 4000 (also written G6.3).", show_default=False)],
    units: Annotated[Optional[str], typer.Option("--units", "-u", help="Length unit of the mesh coordinates: m, cm, mm, in, ft (default mm; a manifest sets its own).")] = None,
    density: Annotated[Optional[float], typer.Option("--density", "-d", help="Density in kg/m^3 (default 1000, flagged as assumed; a manifest sets its own).")] = None,
    bearings: Annotated[Optional[str], typer.Option("--bearings", help="Two bearing positions A,B along the shaft from the axis point (input unit): rotating bearing forces.")] = None,
    planes: Annotated[Optional[str], typer.Option("--planes", help="Two correction-plane positions A,B along the shaft from the axis point (input unit); default: the part's two ends.")] = None,
    correction_radius: Annotated[Optional[float], typer.Option("--correction-radius", help="Radius (input unit) at which correction masses are added or removed.")] = None,
    angle_reference: Annotated[Optional[str], typer.Option("--angle-reference", help="Direction X,Y,Z that angles are measured from (projected perpendicular to the shaft); default: the input axis least along the shaft.")] = None,
    precession_axis: Annotated[Optional[str], typer.Option("--precession-axis", help="Axis X,Y,Z the shaft itself turns about (with --precession-rate): gyroscopic moment.")] = None,
    precession_rate: Annotated[Optional[float], typer.Option("--precession-rate", help="Rate in rad/s at which the shaft turns about --precession-axis.")] = None,
    json_output: Annotated[bool, typer.Option("--json", help="Print one JSON document (SI plus g*mm figures) instead of a table.")] = False,
    output: Annotated[Optional[Path], typer.Option("--output", "-o", help="Write the report to this file (atomically) instead of stdout.")] = None,
) -> None:
    """Unbalance of a part about a shaft, its balance-grade check, bearing loads and spin."""
    from ..measure.rotor import RotorOptions, measure_rotor
    from ..output.balance import balance_document, render_balance_table
    from ..output.renderers import to_json

    # Every option is checked before any file is read.
    rotor = RotorOptions(
        axis_point=parse_vector(axis_point, "--axis-point"),
        axis_direction=parse_vector(axis_direction, "--axis-direction"),
        rpm=rpm,
        grade=grade,
        bearing_positions=parse_pair(bearings, "--bearings"),
        correction_planes=parse_pair(planes, "--planes"),
        correction_radius=correction_radius,
        angle_reference=parse_vector(angle_reference, "--angle-reference"),
        precession_axis=parse_vector(precession_axis, "--precession-axis"),
        precession_rate=precession_rate,
    )
    from ..io.paths import refuse_output_over_inputs
    from ..measure.options import MeasureOptions

    refuse_output_over_inputs(output, [body])  # (a manifest's meshes are read, never written)
    if body.suffix.lower() == ".toml":
        if units is not None:
            raise InputValueError("--units", "no --units with a manifest (set length_unit in it)", units)
        if density is not None:
            raise InputValueError("--density", "no --density with a manifest (set material or density per body)", density)
        options = MeasureOptions()
    else:
        options = MeasureOptions(length_unit=length_unit(units) if units is not None else DEFAULT_LENGTH_UNIT, density=density)
    measured = measure_rotor(str(body), rotor, options)
    doc = balance_document(measured)
    write_report(to_json(doc) if json_output else render_balance_table(doc), output)
    if doc["input"].get("density_assumed"):
        say("no --density given: assumed 1000 kg/m^3 (water); unbalance, loads and energy scale with density")
    passes = doc["passes"]
    raise typer.Exit(EXIT_OK if passes else EXIT_INVALID)  # a failed grade is a failed check
