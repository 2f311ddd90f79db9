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
        raise InputValueError("--rpm", "an --axis AX,AY,AZ to spin about", None)
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
    files: Annotated[list[Path], typer.Argument(help="Mesh files (STL, OBJ, PLY); one body each.", show_default=False)],
    units: Annotated[str, typer.Option("--units", "-u", help="Length unit of the mesh coordinates: m, cm, mm, in, ft.")] = "mm",
    density: Annotated[Optional[float], typer.Option("--density", "-d", help="Density in kg/m^3, applied to every file (default 1000, flagged as assumed).")] = None,
    about: Annotated[Optional[str], typer.Option("--about", help="Also report the inertia about point X,Y,Z (in --units).")] = None,
    spin: Annotated[Optional[str], typer.Option("--spin", help="Angular velocity WX,WY,WZ in rad/s, in the mesh axes.")] = None,
    rpm: Annotated[Optional[float], typer.Option("--rpm", help="Spin speed in rev/min about --axis (instead of --spin).")] = None,
    axis: Annotated[Optional[str], typer.Option("--axis", help="Spin axis AX,AY,AZ for --rpm (normalized).")] = None,
    velocity: Annotated[Optional[str], typer.Option("--velocity", help="Velocity VX,VY,VZ of the centre of mass in m/s (with --spin and --about: orbital angular momentum).")] = None,
    json_output: Annotated[bool, typer.Option("--json", help="Print one JSON document (SI) instead of a table.")] = False,
    output: Annotated[Optional[Path], typer.Option("--output", "-o", help="Write the report to this file (atomically) instead of stdout.")] = None,
) -> None:
    """Measure mesh files: volume, mass, centre of mass, inertia, principal axes, spin."""
    from .body import measure_files, parse_vector
    from .emit import body_to_dict, document, render_table, to_json, write_atomically
    from .units import metres_per

    scale = metres_per(units)
    point = parse_vector(about, "--about")
    point = point * scale if point is not None else None
    omega = _angular_velocity(spin, rpm, axis)
    com_velocity = parse_vector(velocity, "--velocity")
    if com_velocity is not None and omega is None:
        raise InputValueError("--velocity", "to be used with --spin or --rpm", velocity)

    bodies = measure_files(
        [str(path) for path in files],
        density,
        length_unit=units,
        about=point,
        angular_velocity=omega,
        com_velocity=com_velocity,
        on_invalid="report",
    )
    doc = document([body_to_dict(body) for body in bodies], input_length_unit=units)
    text = to_json(doc) if json_output else render_table(doc)
    if output is not None:
        write_atomically(str(output), text)
    else:
        sys.stdout.write(text)
    if any(body.density_assumed for body in bodies):
        _say("no --density given: assumed 1000 kg/m^3 (water); masses and inertias scale with density")
    invalid = [body for body in bodies if not body.valid]
    for body in invalid:
        first = body.validation.errors[0]
        _say(f"{body.source}: invalid mesh: {first.code}: {first.message}")
    raise typer.Exit(EXIT_INVALID if invalid else EXIT_OK)


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
