"""``meshprops check``: every validation check on mesh files or a manifest's meshes.
"""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Optional

import typer

from ..errors import EXIT_INVALID, EXIT_OK, InputValueError
from .app import app, one_line_errors, say, write_report
from .batching import BatchSettings, CachePath, Jobs, JsonLines, Scheduler, ShipContent, run_records

#: ``meshprops check`` exit code when every file is valid but some finding is a warning.
EXIT_WARNINGS = 3


@app.command()
@one_line_errors
def check(
    files: Annotated[list[Path], typer.Argument(help="Mesh files (STL, OBJ, PLY) or folders of them (recursive) to validate, or assembly manifests (.toml): their meshes.", show_default=False)],
    units: Annotated[str, typer.Option("--units", "-u", help="Length unit of the mesh coordinates: m, cm, mm, in, ft.")] = "mm",
    json_output: Annotated[bool, typer.Option("--json", help="Print one JSON document instead of a table.")] = False,
    output: Annotated[Optional[Path], typer.Option("--output", "-o", help="Write the report to this file (atomically) instead of stdout.")] = None,
    html_report: Annotated[Optional[Path], typer.Option("--report", help="Also write one HTML page: a row per file with a picture and its verdict.")] = None,
    jobs: Jobs = None,
    scheduler: Scheduler = None,
    ship_content: ShipContent = False,
    cache: CachePath = None,
    json_lines: JsonLines = False,
) -> None:
    """Validate mesh files with every check (self-intersections included) and list the findings.

    Exit codes: 0 no findings; 3 warnings only; 1 at least one error; 2 usage or unreadable file.
    """
    from ..batch.runner import FileJob, check_inputs, check_settings_key, raise_first_error
    from ..output.records import check_record, first_error_line
    from ..output.renderers import to_json
    from ..output.serialize import check_document_of
    from ..output.table import render_check_table

    batch = BatchSettings(jobs, scheduler, ship_content, cache, json_lines)
    if json_lines and json_output:
        raise InputValueError("--json/--json-lines", "either --json or --json-lines, not both", "both")
    work = [FileJob(path, unit) for path, unit in check_inputs([str(path) for path in files], units)]
    collected = [] if json_lines and output is not None else None
    outcomes = run_records(work, check_record, check_settings_key, batch, description="check", collected=collected)
    if json_lines:
        records = [outcome.result for outcome in outcomes if outcome.ok]
        if collected is not None:
            write_report("".join(collected), output)
    else:
        records = raise_first_error(outcomes)
        doc = check_document_of(records, input_length_unit=units)
        write_report(to_json(doc) if json_output else render_check_table(doc), output)
        if html_report is not None:  # the page draws each mesh: built here, from the files themselves
            from ..batch.runner import check_files

            _write_html_report(check_files([str(path) for path in files], units), html_report)
    for record in records:
        line = first_error_line(record)
        if line is not None:
            say(f"{record['source']}: {line}")
    if any(not outcome.ok for outcome in outcomes):
        raise typer.Exit(max(outcome.error.exit_code for outcome in outcomes if not outcome.ok))
    if any(not record["valid"] for record in records):
        raise typer.Exit(EXIT_INVALID)
    raise typer.Exit(EXIT_WARNINGS if any(record["findings"] for record in records) else EXIT_OK)


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
