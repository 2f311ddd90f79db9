"""``meshprops fill-inertials``: a URDF / SDFormat / MJCF model's inertials computed from its own meshes.

Writes OUT with only the inertial elements changed, prints one table row per link (old and new
mass and inertia, their ratio, placeholders called out), and exits 1 when a link's mesh failed
validation (that link is left as it was), 2 for bad usage or unreadable input.
"""

from __future__ import annotations

import os
from pathlib import Path
from typing import Annotated, Optional

import typer

from ..errors import EXIT_INVALID, EXIT_OK, InputValueError, ModelFileError
from .app import Command, app, one_line_errors, say, write_report


def _same_file(first: Path, second: Path) -> bool:
    if second.exists():
        return os.path.samefile(first, second)
    return first.resolve() == second.resolve()


@app.command("fill-inertials", cls=Command)
@one_line_errors
def fill_inertials(
    model: Annotated[Path, typer.Argument(help="The model: URDF, SDFormat or MJCF (told by its root element).", show_default=False, metavar="MODEL")],
    output: Annotated[Path, typer.Option("--output", "-o", help="Write the filled model here (never over MODEL).", show_default=False)],
    density: Annotated[Optional[float], typer.Option("--density", "-d", help="Density in kg/m^3 for links the map does not name (default 1000, said as assumed).")] = None,
    material: Annotated[Optional[str], typer.Option("--material", help="A material of `meshprops materials` for links the map does not name.")] = None,
    map_file: Annotated[Optional[Path], typer.Option("--map", help="TOML: [link.NAME] with one of material, density (kg/m^3), measured_mass (kg).")] = None,
) -> None:
    """Fill a model's inertials from its collision (else visual) meshes; everything else stays byte for byte."""
    from ..materials import find_material
    from ..measure.link_inertials import fill_model, load_link_map
    from ..output.fill_report import fill_table, fill_to_dict, new_inertials
    from ..output.inertial_fill import filled_model_bytes

    if not model.is_file():
        raise ModelFileError(str(model), "no such file")
    if _same_file(model, output):
        raise InputValueError("--output", "a file other than MODEL (the input is never overwritten)", str(output))
    if density is not None and material is not None:
        raise InputValueError("--density/--material", "one of --density or --material, not both", f"{density} and {material}")
    chosen_material = find_material(material) if material is not None else None
    link_map = load_link_map(map_file) if map_file is not None else None
    fill = fill_model(model, density=density, material=chosen_material, link_map=link_map,
                      map_source=str(map_file) if map_file is not None else None)  # fmt: skip
    write_report(filled_model_bytes(fill.model, new_inertials(fill)), output)
    write_report(fill_table(fill_to_dict(fill)), None)
    if any(item.density_basis == "assumed" for item in fill.links):
        say("no --density, --material or map entry for some links: assumed 1000 kg/m^3 (water)")
    for item in fill.links:
        if item.status == "invalid_mesh":
            source, finding = next(((s, f) for s, f in item.findings if f.severity == "error"), item.findings[0])
            say(f"{source}: invalid mesh: {finding.code}: {finding.message} (link {item.link.name!r} left unchanged)")
    raise typer.Exit(EXIT_OK if fill.valid else EXIT_INVALID)
