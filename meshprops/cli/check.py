"""``meshprops check``: every validation check on mesh files or a manifest's meshes.
"""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Optional

import typer

from ..errors import EXIT_INVALID, EXIT_OK
from .app import app, one_line_errors, say, write_report

#: ``meshprops check`` exit code when every file is valid but some finding is a warning.
EXIT_WARNINGS = 3


@app.command()
@one_line_errors
def check(
    files: Annotated[list[Path], typer.Argument(help="Mesh files (STL, OBJ, PLY) to validate, or assembly manifests (.toml): their meshes.", show_default=False)],
    units: Annotated[str, typer.Option("--units", "-u", help="Length unit of the mesh coordinates: m, cm, mm, in, ft.")] = "mm",
    json_output: Annotated[bool, typer.Option("--json", help="Print one JSON document instead of a table.")] = False,
    output: Annotated[Optional[Path], typer.Option("--output", "-o", help="Write the report to this file (atomically) instead of stdout.")] = None,
    html_report: Annotated[Optional[Path], typer.Option("--report", help="Also write one HTML page: a row per file with a picture and its verdict.")] = None,
) -> None:
    """Validate mesh files with every check (self-intersections included) and list the findings.

    Exit codes: 0 no findings; 3 warnings only; 1 at least one error; 2 usage or unreadable file.
    """
    from ..batch.runner import check_files
    from ..output.renderers import to_json
    from ..output.serialize import check_document
    from ..output.table import render_check_table

    results = check_files([str(path) for path in files], units)
    doc = check_document(results, input_length_unit=units)
    text = to_json(doc) if json_output else render_check_table(doc)
    write_report(text, output)
    if html_report is not None:
        _write_html_report(results, html_report)
    for result in results:
        if result.report.errors:
            first = result.report.errors[0]
            say(f"{result.source}: invalid mesh: {first.code}: {first.message}")
    if any(not result.report.valid for result in results):
        raise typer.Exit(EXIT_INVALID)
    raise typer.Exit(EXIT_WARNINGS if any(result.report.findings for result in results) else EXIT_OK)


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
