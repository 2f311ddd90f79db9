"""The ``meshprops`` command: parse options, call the library, hand the result to
a reporter, exit. No physics here.

Exit codes: 0 ok; 1 a mesh failed validation (or a check failed); 2 bad usage or
unreadable input. Errors are one line on stderr, never a traceback.
"""

from __future__ import annotations

import functools
import sys
from pathlib import Path
from typing import Annotated, Optional

import typer

from .errors import EXIT_INVALID, EXIT_OK, EXIT_USAGE, InputValueError, MeshpropsError

app = typer.Typer(
    name="meshprops",
    help="Exact mass properties (mass, centre of mass, inertia, principal axes, spin) from closed triangle meshes.",
    add_completion=False,
    no_args_is_help=True,
    pretty_exceptions_enable=False,
    rich_markup_mode=None,
)


@app.callback()
def _root() -> None:
    """Exact mass properties from closed triangle meshes. SI output; see README for conventions."""


def _say(message: str) -> None:
    print(f"meshprops: {message}", file=sys.stderr)


def one_line_errors(function):
    """Decorate every command with this: a MeshpropsError becomes one stderr line and its exit code.

    Done per command (not only in :func:`main`) so that typer's CliRunner sees the same behaviour.
    """

    @functools.wraps(function)
    def wrapper(*args, **kwargs):
        try:
            return function(*args, **kwargs)
        except MeshpropsError as error:
            _say(f"error: {error}")
            raise typer.Exit(error.exit_code) from None

    return wrapper


def _angular_velocity(spin_text, rpm, axis_text):
    from .body import parse_vector
    from .units import rpm_to_rad_per_s

    if spin_text is not None and rpm is not None:
        raise InputValueError("--spin/--rpm", "one of --spin or --rpm, not both", f"{spin_text} and {rpm}")
    if spin_text is not None:
        return parse_vector(spin_text, "--spin")
    if rpm is None:
        if axis_text is not None:
            raise InputValueError("--axis", "to be used with --rpm", axis_text)
        return None
    if axis_text is None:
        raise InputValueError("--rpm", "an --axis AX,AY,AZ to spin about", "no --axis")
    axis = parse_vector(axis_text, "--axis")
    length = float((axis @ axis) ** 0.5)
    if length == 0.0:
        raise InputValueError("--axis", "a non-zero direction", axis_text)
    if not (rpm == rpm and abs(rpm) != float("inf")):
        raise InputValueError("--rpm", "a finite speed in rpm", rpm)
    return axis / length * rpm_to_rad_per_s(rpm)


@app.command()
@one_line_errors
def measure(
    files: Annotated[list[Path], typer.Argument(help="Mesh files (STL, OBJ, PLY), one body each; or one assembly manifest (.toml).", show_default=False)],
    units: Annotated[Optional[str], typer.Option("--units", "-u", help="Length unit of the mesh coordinates: m, cm, mm, in, ft (default mm; a manifest sets its own).")] = None,
    density: Annotated[Optional[float], typer.Option("--density", "-d", help="Density in kg/m^3, applied to every file (default 1000, flagged as assumed).")] = None,
    about: Annotated[Optional[str], typer.Option("--about", help="Also report the inertia about point X,Y,Z (in --units; with a manifest in its length_unit, or a named point).")] = None,
    spin: Annotated[Optional[str], typer.Option("--spin", help="Angular velocity WX,WY,WZ in rad/s, in the mesh axes.")] = None,
    rpm: Annotated[Optional[float], typer.Option("--rpm", help="Spin speed in rev/min about --axis (instead of --spin).")] = None,
    axis: Annotated[Optional[str], typer.Option("--axis", help="Spin axis AX,AY,AZ for --rpm (normalized).")] = None,
    velocity: Annotated[Optional[str], typer.Option("--velocity", help="Velocity VX,VY,VZ of the centre of mass in m/s (with --spin and --about: orbital angular momentum).")] = None,
    json_output: Annotated[bool, typer.Option("--json", help="Print one JSON document (SI) instead of a table.")] = False,
    output_format: Annotated[Optional[str], typer.Option("--format", "-f", help="Output: table, json, urdf, sdf, mjcf (inertial blocks) or csv (assembly breakdown).")] = None,
    inertial_form: Annotated[str, typer.Option("--inertial-form", help="Simulator blocks: full (six tensor entries) or principal (principal moments plus orientation).")] = "full",
    overlap_samples: Annotated[int, typer.Option("--overlap-samples", help="Manifest: Monte-Carlo points per pair of bodies for the overlap check (0 skips it).")] = 20000,
    output: Annotated[Optional[Path], typer.Option("--output", "-o", help="Write the report to this file (atomically) instead of stdout.")] = None,
    repair: Annotated[bool, typer.Option("--repair", help="Apply safe repairs first (reorient winding, flip inside-out shells and voids, drop degenerate and duplicate faces), each reported as a repaired_* warning. Holes are never filled.")] = False,
) -> None:
    """Measure mesh files: volume, mass, centre of mass, inertia, principal axes, spin."""
    from .assembly_emit import choose_format, format_document
    from .body import measure_files, parse_vector
    from .emit import body_to_dict, document, write_atomically
    from .units import metres_per

    chosen = choose_format(json_output, output_format)
    omega = _angular_velocity(spin, rpm, axis)
    com_velocity = parse_vector(velocity, "--velocity")
    if com_velocity is not None and omega is None:
        raise InputValueError("--velocity", "to be used with --spin or --rpm", velocity)
    if any(path.suffix.lower() == ".toml" for path in files):
        if repair:
            raise InputValueError("--repair", "mesh files (repair is not applied to an assembly manifest)", "a manifest")
        _measure_manifest(files, units, density, about, omega, com_velocity, chosen, inertial_form, overlap_samples, output)
    units = units or "mm"
    scale = metres_per(units)
    point = parse_vector(about, "--about")
    point = point * scale if point is not None else None

    bodies = measure_files(
        [str(path) for path in files],
        density,
        length_unit=units,
        about=point,
        angular_velocity=omega,
        com_velocity=com_velocity,
        on_invalid="report",
        repair=repair,
    )
    doc = document([body_to_dict(body) for body in bodies], input_length_unit=units)
    text, notes = format_document(doc, chosen, inertial_form=inertial_form)
    if output is not None:
        write_atomically(str(output), text)
    else:
        sys.stdout.write(text)
    for note in notes:
        _say(f"warning: {note}")
    if any(body.density_assumed for body in bodies):
        _say("no --density given: assumed 1000 kg/m^3 (water); masses and inertias scale with density")
    invalid = [body for body in bodies if not body.valid]
    for body in invalid:
        first = body.validation.errors[0]
        _say(f"{body.source}: invalid mesh: {first.code}: {first.message}")
    raise typer.Exit(EXIT_INVALID if invalid else EXIT_OK)


def _measure_manifest(files, units, density, about, omega, com_velocity, chosen, inertial_form, overlap_samples, output) -> None:
    """``measure MANIFEST.toml``: totals of an assembly; exits (1 when a body's mesh is invalid)."""
    from .assembly import load_manifest, measure_assembly, resolve_point
    from .assembly_emit import assembly_document, format_document
    from .emit import write_atomically

    if len(files) != 1:
        raise InputValueError("FILES", "one assembly manifest alone (its bodies are listed inside it)", [str(f) for f in files])
    if units is not None:
        raise InputValueError("--units", "no --units with a manifest (set length_unit in it)", units)
    if density is not None:
        raise InputValueError("--density", "no --density with a manifest (set material or density per body)", density)
    manifest = load_manifest(files[0])
    result = measure_assembly(
        manifest,
        about=resolve_point(manifest, about),
        angular_velocity=omega,
        com_velocity=com_velocity,
        overlap_samples=overlap_samples,
    )
    text, notes = format_document(assembly_document(result), chosen, inertial_form=inertial_form)
    if output is not None:
        write_atomically(str(output), text)
    else:
        sys.stdout.write(text)
    for note in tuple(result.warnings) + tuple(notes):
        _say(f"warning: {note}")
    for item in result.items:
        if not item.valid:
            first = item.measurement.validation.errors[0]
            _say(f"{item.measurement.source}: invalid mesh: {first.code}: {first.message}")
    raise typer.Exit(EXIT_OK if result.valid else EXIT_INVALID)


@app.command()
@one_line_errors
def materials(
    json_output: Annotated[bool, typer.Option("--json", help="Print the table as one JSON document.")] = False,
) -> None:
    """List the built-in materials table: name, density (kg/m^3) and the published source of each value."""
    from .assembly_emit import materials_document, render_materials_table
    from .emit import to_json

    doc = materials_document()
    sys.stdout.write(to_json(doc) if json_output else render_materials_table(doc))


#: ``meshprops check`` exit code when every file is valid but some finding is a warning.
EXIT_WARNINGS = 3


@app.command()
@one_line_errors
def check(
    files: Annotated[list[Path], typer.Argument(help="Mesh files (STL, OBJ, PLY) to validate, or assembly manifests (.toml): their meshes.", show_default=False)],
    units: Annotated[str, typer.Option("--units", "-u", help="Length unit of the mesh coordinates: m, cm, mm, in, ft.")] = "mm",
    json_output: Annotated[bool, typer.Option("--json", help="Print one JSON document instead of a table.")] = False,
    output: Annotated[Optional[Path], typer.Option("--output", "-o", help="Write the report to this file (atomically) instead of stdout.")] = None,
) -> None:
    """Validate mesh files with every check (self-intersections included) and list the findings.

    Exit codes: 0 no findings; 3 warnings only; 1 at least one error; 2 usage or unreadable file.
    """
    from .checks import check_files
    from .emit import check_document, render_check_table, to_json, write_atomically

    results = check_files([str(path) for path in files], units)
    doc = check_document(results, input_length_unit=units)
    text = to_json(doc) if json_output else render_check_table(doc)
    if output is not None:
        write_atomically(str(output), text)
    else:
        sys.stdout.write(text)
    for result in results:
        if result.report.errors:
            first = result.report.errors[0]
            _say(f"{result.source}: invalid mesh: {first.code}: {first.message}")
    if any(not result.report.valid for result in results):
        raise typer.Exit(EXIT_INVALID)
    raise typer.Exit(EXIT_WARNINGS if any(result.report.findings for result in results) else EXIT_OK)


def main(argv: list[str] | None = None) -> None:
    """Console entry point: run the app and turn every error into one line and an exit code."""
    command = typer.main.get_command(app)
    try:
        # Without standalone mode the parser returns the command's exit code instead of exiting.
        status = command.main(args=argv if argv is not None else sys.argv[1:], prog_name="meshprops", standalone_mode=False)
    except MeshpropsError as error:
        _say(f"error: {error}")
        sys.exit(error.exit_code)
    except typer.Exit as done:
        sys.exit(done.exit_code)
    except typer.Abort:
        _say("aborted")
        sys.exit(EXIT_USAGE)
    except typer.TyperException as error:  # usage errors of the command-line parser
        if type(error).__name__ == "NoArgsIsHelpError":
            print(error.format_message())
        else:
            _say(f"error: {error.format_message()}")
        sys.exit(EXIT_USAGE)
    except MemoryError:
        _say("error: out of memory")
        sys.exit(EXIT_USAGE)
    except BrokenPipeError:
        sys.exit(EXIT_OK)
    sys.exit(status if isinstance(status, int) else EXIT_OK)
