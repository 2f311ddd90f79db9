"""``meshprops check``: every validation check on mesh files or a manifest's meshes, and the gate:
the configuration's units, materials and rules, the baseline comparison and the mass budget.

Without a configuration or a baseline in force (and without ``--all``) a check is the plain
batch run of every check (records, ``--cache``, ``--json-lines``, ``--ship-content``); with one,
the gate runs, its measuring spread over ``--jobs`` or ``--scheduler`` the same way.
"""

from __future__ import annotations

import os
from pathlib import Path
from typing import Annotated, Optional

import typer

from ..errors import EXIT_INVALID, EXIT_OK, EXIT_USAGE, InputValueError
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
from .options import length_unit

#: ``--volume-tolerance`` when not given: SolidOptions' own default (a test holds them equal).
DEFAULT_VOLUME_TOLERANCE = 1e-6


@app.command(cls=Command)
@one_line_errors
def check(
    files: Annotated[Optional[list[Path]], typer.Argument(help="Mesh files (STL, OBJ, PLY) or folders of them (recursive) to check, or assembly manifests (.toml): their meshes.", show_default=False, metavar=FILES_METAVAR)] = None,
    units: Annotated[Optional[str], typer.Option("--units", "-u", help="Length unit of the mesh coordinates: m, cm, mm, in, ft, in any letter case or spelt out (default: the configuration's, else mm).")] = None,
    density: Annotated[Optional[float], typer.Option("--density", "-d", help="Density in kg/m^3 for every file (default: the configuration's material or density).")] = None,
    all_files: Annotated[bool, typer.Option("--all", help="Check every mesh under the current directory (recursively) and every baseline entry: the CI mode.")] = False,
    json_output: Annotated[bool, typer.Option("--json", help="Print one JSON document instead of a table.")] = False,
    output: Annotated[Optional[Path], typer.Option("--output", "-o", help="Write the report to this file (atomically) instead of stdout; never over an input.")] = None,
    html_report: Annotated[Optional[Path], typer.Option("--report", help="Also write one HTML page: a row per file with a picture and its verdict.")] = None,
    jobs: Jobs = None,
    scheduler: Scheduler = None,
    ship_content: ShipContent = False,
    cache: CachePath = None,
    json_lines: JsonLines = False,
    strict: Annotated[bool, typer.Option("--strict", help="Recover nothing (no crack closing, shell union or bounded crossings): every imperfection is an error.")] = False,
    weld_tolerance: Annotated[Optional[float], typer.Option("--weld-tolerance", help="Largest crack closed, in the mesh unit (default 1e-6 of the bounding-box diagonal; 0 turns it off).")] = None,
    volume_tolerance: Annotated[float, typer.Option("--volume-tolerance", help="Largest bound on the volume effect of faces crossing their own shell, as a fraction of the volume.")] = DEFAULT_VOLUME_TOLERANCE,
) -> None:
    """Validate mesh files with every check (self-intersections included), apply the gate's
    rules, compare with the baseline and roll up the mass budget.

    Exit codes: 0 passed (warnings printed, allowed unless fail_on = "warning"); 1 an error
    finding or a rule, baseline or budget violation; 2 usage or unreadable input.
    """
    from ..gate.discovery import gate_files
    from ..io.paths import refuse_output_over_inputs

    refuse_output_over_inputs(output, files or [])  # before anything is read, even a manifest
    refuse_output_over_inputs(html_report, files or [])
    if units is not None:
        units = length_unit(units)
    batch = BatchSettings(jobs, scheduler, ship_content, cache, json_lines)
    if json_lines and json_output:
        raise InputValueError("--json/--json-lines", "either --json or --json-lines, not both", "both")
    given = [str(path) for path in files or []]
    if not given and not all_files:
        say("error: give mesh files or folders to check, or --all for every mesh under the current directory")
        raise typer.Exit(EXIT_USAGE)
    solid = None  # the defaults; SolidOptions (and the validation code) is loaded only when needed
    if strict or weld_tolerance is not None or volume_tolerance != DEFAULT_VOLUME_TOLERANCE:
        from ..validation.solid import SolidOptions

        solid = SolidOptions(strict=strict, weld_tolerance=weld_tolerance, volume_tolerance=volume_tolerance)
    if gate_files() == (None, None) and not all_files:
        _plain_check(given, units or "mm", batch, json_output, output, html_report, solid)
    from ..gate.runner import load_gate

    announce_first_compile()
    config, baseline = load_gate()
    if solid is not None:
        raise InputValueError(
            "--strict/--weld-tolerance/--volume-tolerance", "the plain check (not yet with the gate in force)", "given"
        )
    if ship_content or cache is not None or json_lines:
        raise InputValueError(
            "--ship-content/--cache/--json-lines",
            "none of them while the gate is in force (a meshprops.toml or meshprops-baseline.json, or --all): "
            "the baseline already skips unchanged files",
            " ".join(o for o, on in (("--ship-content", ship_content), ("--cache", cache), ("--json-lines", json_lines)) if on),
        )
    _gate_check(given, config, baseline, units, density, all_files, batch, json_output, output, html_report)


def _plain_check(given, units, batch, json_output, output, html_report, solid=None) -> None:
    """Every check on every file through the batch loop; no gate is in force. Exits."""
    from ..batch.runner import (
        FileJob,
        check_inputs,
        check_settings_key,
        check_task,
        expand_inputs,
    )
    from ..io.paths import refuse_output_over_inputs
    from ..output.plain_records import (
        check_document_of,
        first_error_line,
        is_unreadable,
        plain_gate_fields,
        records_of,
        to_json,
    )
    from ..output.records import check_record

    pairs = check_inputs(given, units)
    inputs = expand_inputs(given) + [path for path, _ in pairs]
    refuse_output_over_inputs(output, inputs)
    refuse_output_over_inputs(html_report, inputs)
    work = [FileJob(path, unit, check_options=solid) for path, unit in pairs]
    if not work:  # an empty folder: say so rather than report nothing
        raise InputValueError("FILES", "at least one mesh file (folders are searched for .stl, .obj, .ply)", given)
    if batch.json_lines:
        _check_lines(work, batch, output)
    units_of = {job.path: job.length_unit for job in work}
    outcomes = run_records(
        work, check_record, check_settings_key, batch, description="check", before_computing=announce_first_compile
    )
    # Every file reported: an unreadable one is its own entry (issue 9).
    records = records_of(outcomes, lambda outcome: _unreadable_record(outcome, units_of[outcome.path]))
    doc = plain_gate_fields(check_document_of(records, input_length_unit=units))
    write_report(to_json(doc) if json_output else _check_table(doc), output)
    if html_report is not None:  # the page draws each mesh: built here, from the files themselves
        readable = [job for job, record in zip(work, records) if not is_unreadable(record)]  # nothing to draw
        _write_html_report([check_task(job) for job in readable], html_report)
    for record in records:
        line = first_error_line(record)
        if line is not None:
            say(f"error: {record['source']}: {line}")
    if any(not outcome.ok for outcome in outcomes):
        raise typer.Exit(max(outcome.error.exit_code for outcome in outcomes if not outcome.ok))
    # warnings inform without blocking: a pre-commit hook refuses on any non-zero code
    raise typer.Exit(EXIT_INVALID if any(not record["valid"] for record in records) else EXIT_OK)


def _check_lines(work, batch, output) -> None:
    """``check --json-lines``: each file's record as one line as soon as it and the files before
    it are done, an unreadable file's error on stderr at its place; no record is kept (only the
    error lines that follow the run). Exits as the document run would."""
    from ..batch.runner import check_settings_key
    from ..output.plain_records import first_error_line
    from ..output.records import check_record

    error_lines: list[str] = []
    exit_codes: list[int] = []
    invalid = False
    with record_stream(
        work, check_record, check_settings_key, batch, description="check", before_computing=announce_first_compile
    ) as outcomes, line_writer(output) as emit:
        for outcome in outcomes:
            if not outcome.ok:
                say(f"error: {outcome.error}")
                exit_codes.append(outcome.error.exit_code)
                continue
            emit(outcome.result)
            invalid = invalid or not outcome.result["valid"]
            line = first_error_line(outcome.result)
            if line is not None:
                error_lines.append(f"error: {outcome.result['source']}: {line}")
    for line in error_lines:
        say(line)
    if exit_codes:
        raise typer.Exit(max(exit_codes))
    raise typer.Exit(EXIT_INVALID if invalid else EXIT_OK)


def _unreadable_record(outcome, length_unit: str) -> dict:
    from ..output.records import unreadable_check_record

    return unreadable_check_record(outcome, length_unit)


def _check_table(doc: dict) -> str:
    from ..output.table import render_check_table

    return render_check_table(doc)


def _gate_check(given, config, baseline, units, density, all_files, batch, json_output, output, html_report) -> None:
    """The gate: configuration, baseline and budget. Exits."""
    from ..gate.runner import backend_map, gate_inputs, iter_mesh_files, run_gate
    from ..io.paths import refuse_output_over_inputs
    from ..output.gate import gate_check_document, render_gate_text
    from ..output.renderers import to_json

    paths, overrides = gate_inputs(given)
    if all_files:
        paths = list(dict.fromkeys(paths + [os.path.relpath(p) for p in iter_mesh_files(os.getcwd())]))
    refuse_output_over_inputs(output, paths)
    refuse_output_over_inputs(html_report, paths)
    report = run_gate(
        paths, config=config, baseline=baseline, length_unit=units, density=density, settings=overrides,
        missing_entries=all_files, map_function=backend_map(jobs=batch.jobs, scheduler=batch.scheduler),
    )  # fmt: skip
    doc = gate_check_document(report, input_length_unit=units or "mm")
    write_report(to_json(doc) if json_output else render_gate_text(doc), output)
    if html_report is not None:
        _write_gate_html_report(report, html_report)
    for outcome in report.files:
        if outcome.errors:
            first = outcome.errors[0]
            say(f"error: {outcome.source}: invalid mesh: {first.code}: {first.message}")
        for verdict in outcome.failed_verdicts:
            say(f"{outcome.source}: {verdict.rule}: {verdict.message}")
    if report.budget is not None:
        for verdict in report.budget.verdicts:
            if verdict.failed:
                say(f"budget: {verdict.message}")
    if not report.passed and not report.error_count and not report.failed_verdicts:
        say(f"warnings fail the gate (fail_on = \"warning\" in {report.config_path})")
    raise typer.Exit(report.exit_code)


def _write_html_report(results, target: Path) -> None:
    """``--report``: the checked meshes drawn, one row each, in the order of ``results``."""
    from ..io import load_mesh
    from ..io.atomic import write_atomically
    from ..output.report import check_report
    from ..output.serialize import CAUTIONS
    from ..version import __version__

    meshes = [load_mesh(result.source, result.length_unit) for result in results]
    footer = f"Written by meshprops {__version__} (meshprops check). Open it from disk; it loads nothing from elsewhere."
    write_atomically(str(target), check_report(results, meshes, cautions=CAUTIONS, footer=footer))


def _write_gate_html_report(report, target: Path) -> None:
    """``--report`` of a gate run: a file the gate skipped as unchanged is read and checked here,
    since drawing needs it; a baseline entry whose file is missing has no row."""
    from ..io import load_mesh
    from ..validation.solid import check_mesh

    results = []
    for outcome in report.files:
        if outcome.status == "missing":
            continue
        results.append(
            outcome.measured if outcome.measured is not None else check_mesh(load_mesh(outcome.source, outcome.settings.length_unit))
        )
    _write_html_report(results, target)
