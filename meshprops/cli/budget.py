"""``meshprops budget``: the mass budget of the configuration, rolled up (table or JSON).
"""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Optional

import typer

from ..errors import EXIT_USAGE
from .app import Command, app, one_line_errors, say, write_report


@app.command(cls=Command)
@one_line_errors
def budget(
    json_output: Annotated[bool, typer.Option("--json", help="Print one JSON document (kg) instead of a table.")] = False,
    output: Annotated[Optional[Path], typer.Option("--output", "-o", help="Write the report to this file (atomically) instead of stdout.")] = None,
) -> None:
    """Roll up the configuration's mass budget: basic mass, growth allowance by maturity,
    predicted mass, allocation and margin per subsystem and for the product.

    Exit codes: 0 every margin >= 0; 1 a negative margin (named); 2 no configuration or budget,
    or unreadable input.
    """
    from ..gate.runner import budget_rollup, load_gate, manifest_settings
    from ..output.gate import budget_document, render_budget_table
    from ..output.renderers import to_json

    config, current = load_gate()
    if config is None or config.budget is None:
        where = config.path if config is not None else "no meshprops.toml or [tool.meshprops] found from here upward"
        say(f"error: {where}: no [budget] to roll up")
        raise typer.Exit(EXIT_USAGE)
    rollup = budget_rollup(config, current, {}, manifest_settings(config))
    doc = budget_document(rollup, config_path=config.path)
    write_report(to_json(doc) if json_output else render_budget_table(doc["budget"]), output)
    for verdict in rollup.verdicts:
        if verdict.failed:
            say(f"budget: {verdict.message}")
    raise typer.Exit(1 if rollup.failed else 0)
