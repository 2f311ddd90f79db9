"""``meshprops measure``: mesh files or one assembly manifest -> mass properties.
"""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Optional

import typer

from ..errors import EXIT_INVALID, EXIT_OK, InputValueError
from ..io.paths import refuse_output_over_inputs
from ..units import DEFAULT_LENGTH_UNIT, metres_per
from .app import (
    FILES_METAVAR,
    Command,
    announce_first_compile,
    app,
    one_line_errors,
    say,
    write_report,
)
from .batching import (
    BatchSettings,
    CachePath,
    Jobs,
    JsonLines,
    Scheduler,
    ShipContent,
    line_writer,
    record_stream,
    run_records,
)
from .options import (
    angular_velocity,
    display_settings,
    length_unit,
    manifest_point,
    parse_vector,
)

SIMULATOR_FORMATS = ("urdf", "sdf", "mjcf")


@app.command(cls=Command)
@one_line_errors
def measure(
    files: Annotated[list[Path], typer.Argument(help="Mesh files (STL, OBJ, PLY), one body each, or folders of them (recursive); or one assembly manifest (.toml).", show_default=False, metavar=FILES_METAVAR)],
    units: Annotated[Optional[str], typer.Option("--units", "-u", help="Length unit of the mesh coordinates: m, cm, mm, in, ft, in any letter case or spelt out (default mm; a manifest sets its own).")] = None,
    density: Annotated[Optional[float], typer.Option("--density", "-d", help="Density in kg/m^3, applied to every file (default 1000, flagged as assumed).")] = None,
    about: Annotated[Optional[str], typer.Option("--about", help="Also report the inertia about point X,Y,Z (in --units; with a manifest in its length_unit, or a named point).")] = None,
    spin: Annotated[Optional[str], typer.Option("--spin", help="Angular velocity WX,WY,WZ in rad/s, in the mesh axes.")] = None,
    rpm: Annotated[Optional[float], typer.Option("--rpm", help="Spin speed in rev/min about --axis (instead of --spin).")] = None,
    axis: Annotated[Optional[str], typer.Option("--axis", help="Spin axis AX,AY,AZ for --rpm (normalized).")] = None,
    velocity: Annotated[Optional[str], typer.Option("--velocity", help="Velocity VX,VY,VZ of the centre of mass in m/s (with --spin and --about: orbital angular momentum).")] = None,
    json_output: Annotated[bool, typer.Option("--json", help="Print one JSON document (SI) instead of a table.")] = False,
    output_format: Annotated[Optional[str], typer.Option("--format", "-f", help="Output: table, json, urdf, sdf, mjcf (a manifest: a complete model; mesh files: inertial blocks) or csv (assembly breakdown).")] = None,
    inertial_form: Annotated[str, typer.Option("--inertial-form", help="Simulator blocks: full (six tensor entries) or principal (principal moments plus orientation).")] = "full",
    blocks_only: Annotated[bool, typer.Option("--blocks-only", help="With --format urdf|sdf|mjcf and a manifest: only the inertial blocks, not a complete model.")] = False,
    overlap_samples: Annotated[int, typer.Option("--overlap-samples", help="Manifest: Monte-Carlo points per pair of bodies for the overlap check (0 skips it).")] = 20000,
    output: Annotated[Optional[Path], typer.Option("--output", "-o", help="Write the report to this file (atomically) instead of stdout; never over an input.")] = None,
    strict: Annotated[bool, typer.Option("--strict", help="Recover nothing (no crack closing, shell union or bounded crossings): refuse every imperfection, for a file certified exactly as exported.")] = False,
    weld_tolerance: Annotated[Optional[float], typer.Option("--weld-tolerance", help="Largest crack closed, in the mesh unit (default 1e-6 of the bounding-box diagonal; 0 turns it off).")] = None,
    volume_tolerance: Annotated[float, typer.Option("--volume-tolerance", help="Largest bound on the volume effect of faces crossing their own shell, as a fraction of the volume, for which numbers are given.")] = 1e-6,
    write_solid: Annotated[Optional[Path], typer.Option("--write-solid", help="Write the surface actually integrated (binary STL, or PLY by extension) to this file; one mesh file only.")] = None,
    repair: Annotated[bool, typer.Option("--repair", help="Apply safe repairs first (reorient winding, flip inside-out shells and voids, drop degenerate and duplicate faces), each reported as a repaired_* warning. Holes are never filled.")] = False,
    total: Annotated[bool, typer.Option("--total", help="Also report the total of all the files as one rigid body (summed in input order: the same to the last bit in every mode).")] = False,
    jobs: Jobs = None,
    scheduler: Scheduler = None,
    ship_content: ShipContent = False,
    cache: CachePath = None,
    json_lines: JsonLines = False,
    show_units: Annotated[str, typer.Option("--show-units", help="Units of the table: SI, mm-g, mm-kg or in-lb (JSON always SI).")] = "SI",
    digits: Annotated[int, typer.Option("--digits", help="Significant digits of the table (1 to 17).")] = 6,
) -> None:
    """Measure mesh files: volume, mass, centre of mass, inertia, principal axes, spin."""
    from ..batch.runner import FileJob, expand_inputs, measure_settings_key
    from ..measure.options import MeasureOptions
    from ..output.records import (
        MeasureRecord,
        first_error_line,
        records_of,
        total_record,
        unreadable_measure_record,
    )
    from ..output.renderers import choose_format, format_document
    from ..output.serialize import document
    from ..physics.mass import check_density

    is_manifest = any(path.suffix.lower() == ".toml" for path in files)
    if not is_manifest:  # a manifest's meshes are known once it is parsed (below)
        refuse_output_over_inputs(output, [str(path) for path in files] + expand_inputs([str(path) for path in files]))
    chosen = choose_format(json_output, output_format)
    display = display_settings(show_units, digits)
    if density is not None:
        density = check_density(density, name="--density")
    if blocks_only and chosen not in SIMULATOR_FORMATS:
        raise InputValueError("--blocks-only", "to be used with --format urdf, sdf or mjcf", chosen)
    omega = angular_velocity(spin, rpm, axis)
    com_velocity = parse_vector(velocity, "--velocity")
    if com_velocity is not None and omega is None:
        raise InputValueError("--velocity", "to be used with --spin or --rpm", velocity)
    batch = BatchSettings(jobs, scheduler, ship_content, cache, json_lines)
    if json_lines and (json_output or output_format not in (None, "json")):
        raise InputValueError("--json-lines", "no --json or --format with --json-lines (it writes JSON records)", output_format or "--json")
    if is_manifest:
        if total:
            raise InputValueError("--total", "mesh files or folders (an assembly manifest reports its own total)", "a manifest")
        if not batch.only_local_defaults:
            raise InputValueError(
                "--scheduler/--ship-content/--cache/--json-lines", "mesh files or folders (a manifest is measured in this process)", "a manifest"
            )
        if repair:
            raise InputValueError("--repair", "mesh files (repair is not applied to an assembly manifest)", "a manifest")
        if write_solid is not None:
            raise InputValueError("--write-solid", "one mesh file (not an assembly manifest)", str(write_solid))
        options = MeasureOptions(
            angular_velocity=omega, com_velocity=com_velocity, overlap_samples=overlap_samples, strict=strict,
            weld_tolerance=weld_tolerance, volume_tolerance=volume_tolerance,
        )  # fmt: skip
        _measure_manifest(files, units, density, about, options, chosen, inertial_form, output, blocks_only, display)
    units = length_unit(units) if units is not None else DEFAULT_LENGTH_UNIT
    point = parse_vector(about, "--about")
    options = MeasureOptions(
        length_unit=units,
        density=density,
        about=point * metres_per(units) if point is not None else None,
        angular_velocity=omega,
        com_velocity=com_velocity,
        repair=repair,
        strict=strict,
        weld_tolerance=weld_tolerance,
        volume_tolerance=volume_tolerance,
    )
    if write_solid is not None:
        from .solid_file import check_solid_target

        check_solid_target(write_solid, files)
    announce_first_compile()
    work = [FileJob(path, units) for path in expand_inputs([str(path) for path in files])]
    if not work:  # an empty folder: say so rather than report nothing
        raise InputValueError("FILES", "at least one mesh file (folders are searched for .stl, .obj, .ply)", [str(f) for f in files])
    settings_key = measure_settings_key(options)
    task = MeasureRecord(options)
    if json_lines:
        _measure_lines(work, task, lambda job: settings_key, batch, options, files, output, total, write_solid)
    outcomes = run_records(work, task, lambda job: settings_key, batch, description="measure")
    # every file reported: an unreadable one is its own body (issue 9)
    records = records_of(outcomes, lambda outcome: unreadable_measure_record(outcome, units))
    summed = total_record(records, options, source=", ".join(str(path) for path in files)) if total and records else None
    doc = document(records, input_length_unit=units, total=summed)
    text, notes = format_document(doc, chosen, inertial_form=inertial_form, display=display)
    write_report(text, output)
    for note in notes:
        say(f"warning: {note}")
    if any(record["density_assumed"] for record in records):
        say(DENSITY_ASSUMED_NOTE)
    invalid = [record for record in records if not record["valid"]]
    if write_solid is not None and records and not invalid:
        _write_solid(write_solid, files, options)
    for record in invalid:
        say(f"error: {record['source']}: {first_error_line(record)}")
    if any(not outcome.ok for outcome in outcomes):
        raise typer.Exit(max(outcome.error.exit_code for outcome in outcomes if not outcome.ok))
    raise typer.Exit(EXIT_INVALID if invalid else EXIT_OK)


DENSITY_ASSUMED_NOTE = "no --density given: assumed 1000 kg/m^3 (water); masses and inertias scale with density"


def _write_solid(target, files, options) -> None:
    from ..measure.body import measure_file
    from .solid_file import write_integrated_solid

    write_integrated_solid(target, measure_file(str(files[0]), options, on_invalid="report"))


def _measure_lines(work, task, settings_key, batch, options, files, output, total, write_solid) -> None:
    """``measure --json-lines``: each body's record as one line as soon as it and the files
    before it are done, then the total's line (``--total``, when every file was read); no
    record is kept but for the total. Exits as the document run would."""
    from ..output.plain_records import first_error_line
    from ..output.records import total_record

    kept: list[dict] = []  # only for --total
    error_lines: list[str] = []
    exit_codes: list[int] = []
    readable = invalid = 0
    density_assumed = False
    with record_stream(work, task, settings_key, batch, description="measure") as outcomes, line_writer(output) as emit:
        for outcome in outcomes:
            if not outcome.ok:
                say(f"error: {outcome.error}")
                exit_codes.append(outcome.error.exit_code)
                continue
            record = outcome.result
            emit(record)
            readable += 1
            density_assumed = density_assumed or record["density_assumed"]
            if not record["valid"]:
                invalid += 1
                error_lines.append(f"error: {record['source']}: {first_error_line(record)}")
            if total:
                kept.append(record)
        if total and kept:
            summed = total_record(kept, options, source=", ".join(str(path) for path in files))
            if not exit_codes:
                emit(summed)
    if density_assumed:
        say(DENSITY_ASSUMED_NOTE)
    if write_solid is not None and readable and not invalid:
        _write_solid(write_solid, files, options)
    for line in error_lines:
        say(line)
    if exit_codes:
        raise typer.Exit(max(exit_codes))
    raise typer.Exit(EXIT_INVALID if invalid else EXIT_OK)


def _measure_manifest(files, units, density, about, options, chosen, inertial_form, output, blocks_only, display) -> None:
    """``measure MANIFEST.toml``: totals of an assembly; exits (1 when a body's mesh is invalid)."""
    from ..measure.assembly import measure_assembly, resolve_point
    from ..measure.manifest import load_manifest
    from ..output.renderers import format_document
    from ..output.serialize import assembly_document

    if len(files) != 1:
        raise InputValueError("FILES", "one assembly manifest alone (its bodies are listed inside it)", [str(f) for f in files])
    refuse_output_over_inputs(output, files)  # before the manifest is even read
    if units is not None:
        raise InputValueError("--units", "no --units with a manifest (set length_unit in it)", units)
    if density is not None:
        raise InputValueError("--density", "no --density with a manifest (set material or density per body)", density)
    manifest = load_manifest(files[0])
    refuse_output_over_inputs(output, [body.mesh_path for body in manifest.bodies])
    announce_first_compile()
    result = measure_assembly(manifest, options, about=resolve_point(manifest, manifest_point(manifest, about)))
    doc = assembly_document(result)
    if chosen in SIMULATOR_FORMATS and not blocks_only:
        notes = _write_complete_model(doc, chosen, inertial_form, output)
    else:
        text, notes = format_document(doc, chosen, inertial_form=inertial_form, display=display)
        write_report(text, output)
    for note in tuple(result.warnings) + tuple(notes):
        say(f"warning: {note}")
    for item in result.items:
        if not item.valid:
            first = item.measurement.validation.errors[0]
            say(f"error: {item.measurement.source}: invalid mesh: {first.code}: {first.message}")
    raise typer.Exit(EXIT_OK if result.valid else EXIT_INVALID)


def _write_complete_model(doc: dict, file_format: str, inertial_form: str, output) -> tuple[str, ...]:
    """A complete model of the assembly to ``output`` (mesh copies first), or to stdout; returns warnings.

    Mesh paths are relative to ``output``'s folder (to the current folder on stdout). PLY and
    ASCII STL meshes are copied beside ``output`` as binary STL; on stdout there is no place for
    copies, so the model points at the sources and a warning says so.
    """
    from ..io.writers import copy_as_binary_stl
    from ..output.sim_models import complete_model

    target = output if output is not None else Path.cwd() / "model"
    model = complete_model(doc, file_format, target, form=inertial_form)
    notes = list(model.warnings)
    if output is None and model.mesh_copies:
        model = complete_model(doc, file_format, target, form=inertial_form, copy_meshes=False)
        notes.append(
            "some meshes are PLY or ASCII STL, which some simulators do not read; give -o OUT to get binary STL "
            "copies beside the model"
        )
    for copy in model.mesh_copies:
        copy_as_binary_stl(copy.source, copy.target)
    if file_format == "mjcf" and output is not None and Path(output).suffix.lower() != ".xml":
        notes.append(f"{output}: MuJoCo tells a model's format by its name; name an MJCF file *.xml")
    write_report(model.text, output)
    return tuple(notes)
