"""``meshprops materials``: the built-in materials table.
"""

from __future__ import annotations

import sys
from typing import Annotated

import typer

from .app import Command, app, one_line_errors


@app.command(cls=Command)
@one_line_errors
def materials(
    json_output: Annotated[bool, typer.Option("--json", help="Print the table as one JSON document.")] = False,
) -> None:
    """List the built-in materials table: name, density (kg/m^3) and the published source of each value."""
    from ..output.renderers import to_json
    from ..output.serialize import materials_document
    from ..output.table import render_materials_table

    doc = materials_document()
    sys.stdout.write(to_json(doc) if json_output else render_materials_table(doc))
