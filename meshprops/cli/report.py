"""``meshprops report``: one self-contained HTML page with pictures of a part or an assembly.
"""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Optional

import typer

from ..errors import EXIT_INVALID, EXIT_OK, InputValueError
from ..units import DEFAULT_LENGTH_UNIT
from .app import Command, app, one_line_errors, say
from .options import length_unit


@app.command(cls=Command)
@one_line_errors
def report(
    source: Annotated[Path, typer.Argument(help="A mesh file (STL, OBJ, PLY) or an assembly manifest (.toml).", show_default=False, metavar="INPUT")],
    output: Annotated[Path, typer.Option("--output", "-o", help="Write the HTML report to this file (atomically).", show_default=False)],
    units: Annotated[Optional[str], typer.Option("--units", "-u", help="Length unit of the mesh coordinates: m, cm, mm, in, ft (default mm; a manifest sets its own).")] = None,
    density: Annotated[Optional[float], typer.Option("--density", "-d", help="Density in kg/m^3 (default 1000, flagged as assumed).")] = None,
    png: Annotated[Optional[Path], typer.Option("--png", help="Also write each view as a PNG file into this folder (needs the extra meshprops[report]).")] = None,
    overlap_samples: Annotated[int, typer.Option("--overlap-samples", help="Manifest: Monte-Carlo points per pair of bodies for the overlap check (0 skips it).")] = 20000,
) -> None:
    """Write one HTML page (no network needed to open it) with views, values and findings.

    Exit codes: 0 the numbers are given; 1 a mesh failed validation (the page says why);
    2 usage or unreadable input.
    """
    from ..io import load_mesh
    from ..io.atomic import write_atomically
    from ..io.paths import refuse_output_over_inputs
    from ..measure.options import MeasureOptions
    from ..output.report import assembly_report, mesh_report, write_pngs
    from ..version import __version__

    refuse_output_over_inputs(output, [source])  # before anything is read or written
    footer = f"Written by meshprops {__version__} from {source}. Open it from disk; it loads nothing from elsewhere."
    if source.suffix.lower() == ".toml":
        from ..measure.assembly import measure_assembly
        from ..measure.manifest import load_manifest
        from ..output.serialize import assembly_document

        if units is not None:
            raise InputValueError("--units", "no --units with a manifest (set length_unit in it)", units)
        if density is not None:
            raise InputValueError("--density", "no --density with a manifest (set material or density per body)", density)
        manifest = load_manifest(source)
        refuse_output_over_inputs(output, [body.mesh_path for body in manifest.bodies])
        result = measure_assembly(manifest, MeasureOptions(overlap_samples=overlap_samples))
        page = assembly_report(result, assembly_document(result), footer=footer)
        invalid = [item.measurement for item in result.items if not item.valid]
        warnings = tuple(result.warnings)
    else:
        from ..measure.body import measure_mesh
        from ..output.serialize import body_to_dict, document

        unit = length_unit(units) if units is not None else DEFAULT_LENGTH_UNIT
        mesh = load_mesh(source, unit)
        body = measure_mesh(mesh, MeasureOptions(length_unit=unit, density=density), on_invalid="report")
        page = mesh_report(body, mesh, document([body_to_dict(body)], input_length_unit=unit), footer=footer)
        invalid = [body] if not body.valid else []
        warnings = ("no --density given: assumed 1000 kg/m^3 (water); masses and inertias scale with density",) if body.density_assumed else ()
    if png is not None:  # rendered before anything is written: a missing extra leaves no file behind
        write_pngs(page.scenes, str(png), source.stem)
    write_atomically(str(output), page.page)
    for note in warnings:
        say(f"warning: {note}")
    for measurement in invalid:
        first = measurement.validation.errors[0]
        say(f"error: {measurement.source}: invalid mesh: {first.code}: {first.message} (the report shows where)")
    raise typer.Exit(EXIT_INVALID if invalid else EXIT_OK)
