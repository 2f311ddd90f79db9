"""``meshprops baseline``: record content hashes and mass properties in ``meshprops-baseline.json``.
"""

from __future__ import annotations

import os
from pathlib import Path
from typing import Annotated, Optional

import typer

from ..errors import EXIT_OK, InputValueError
from .app import Command, app, one_line_errors, say
from .batching import Jobs


@app.command(cls=Command)
@one_line_errors
def baseline(
    paths: Annotated[Optional[list[Path]], typer.Argument(help="Mesh files, folders or manifests to record (default: every mesh under the current directory).", show_default=False, metavar="PATHS...")] = None,
    units: Annotated[Optional[str], typer.Option("--units", "-u", help="Length unit of the mesh coordinates: m, cm, mm, in, ft (default: the configuration's, else mm).")] = None,
    density: Annotated[Optional[float], typer.Option("--density", "-d", help="Density in kg/m^3 for every file (default: the configuration's material or density).")] = None,
    jobs: Jobs = None,
) -> None:
    """Record each mesh's SHA-256, settings and mass properties in meshprops-baseline.json (current directory).

    Without paths every mesh under the current directory is recorded (folders starting with '.'
    skipped) and the file is rewritten from scratch; with paths only their entries are replaced.
    Written atomically; a mesh that fails validation is refused and nothing is written (exit 1).
    """
    from ..gate.baseline import BASELINE_FILE_NAME, empty_baseline, write_baseline
    from ..gate.runner import (
        backend_map,
        gate_inputs,
        iter_mesh_files,
        load_gate,
        record,
    )
    from ..units import LENGTH_UNITS

    if units is not None and units not in LENGTH_UNITS:
        raise InputValueError("--units", f"one of {', '.join(LENGTH_UNITS)}", units)
    config, current = load_gate()
    if paths:
        files, settings = gate_inputs([str(path) for path in paths])
        start = current if current is not None else empty_baseline(os.getcwd())
    else:
        files, settings = [os.path.relpath(p) for p in iter_mesh_files(os.getcwd())], {}
        start = empty_baseline(os.getcwd())
    updated, entries = record(
        files, config=config, baseline=start, length_unit=units, density=density, settings=settings,
        map_function=backend_map(jobs=jobs),
    )  # fmt: skip
    target = os.path.join(os.getcwd(), BASELINE_FILE_NAME)
    write_baseline(target, updated)
    for entry in entries:
        print(f"recorded {entry.path}: mass {entry.mass:.6g} kg ({entry.length_unit}, {entry.density:g} kg/m^3)")
    say(f"{BASELINE_FILE_NAME}: {len(entries)} file(s) recorded, {len(updated.entries)} in the baseline")
    raise typer.Exit(EXIT_OK)
