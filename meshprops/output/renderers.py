"""Renderers chosen by name from one table (:data:`RENDERERS`): serializer dict -> text.

Each renderer takes a measurement or assembly document (the serializer's dict) and the
simulator ``inertial_form``, and returns ``(text, warnings)``. Adding an output format is one
function and one line in the table.
"""

from __future__ import annotations

from collections.abc import Callable
from functools import partial

from ..errors import InputValueError
from .body_table import TableDisplay
from .csv_table import breakdown_csv
from .plain_records import to_json
from .simulators import inertial_blocks
from .table import render_assembly_table, render_table


def _json(doc: dict, inertial_form: str) -> tuple[str, tuple[str, ...]]:
    return to_json(doc), ()


def _table(doc: dict, inertial_form: str, *, display: TableDisplay | None = None) -> tuple[str, tuple[str, ...]]:
    return (render_assembly_table(doc, display=display) if "assembly" in doc else render_table(doc, display=display)), ()


def _csv(doc: dict, inertial_form: str) -> tuple[str, tuple[str, ...]]:
    if "assembly" not in doc:
        raise InputValueError("--format", "csv with an assembly manifest (the breakdown is per assembly)", "csv")
    return breakdown_csv(doc), ()


def _simulator(file_format: str, doc: dict, inertial_form: str) -> tuple[str, tuple[str, ...]]:
    export = inertial_blocks(doc, file_format, form=inertial_form)
    return export.text, export.warnings


#: format name -> renderer ``(doc, inertial_form) -> (text, warnings)``.
RENDERERS: dict[str, Callable[[dict, str], tuple[str, tuple[str, ...]]]] = {
    "table": _table,
    "json": _json,
    "urdf": partial(_simulator, "urdf"),
    "sdf": partial(_simulator, "sdf"),
    "mjcf": partial(_simulator, "mjcf"),
    "csv": _csv,
}
OUTPUT_FORMATS = tuple(RENDERERS)


def choose_format(json_flag: bool, output_format: str | None) -> str:
    """The output format from ``--json`` and ``--format`` (``--json`` means ``json``; they must agree)."""
    if output_format is not None and output_format not in OUTPUT_FORMATS:
        raise InputValueError("--format", f"one of {', '.join(OUTPUT_FORMATS)}", output_format)
    if json_flag and output_format not in (None, "json"):
        raise InputValueError("--json/--format", "either --json or --format, not both", f"--json and --format {output_format}")
    return "json" if json_flag else (output_format or "table")


def format_document(
    doc: dict, output_format: str, *, inertial_form: str = "full", display: TableDisplay | None = None
) -> tuple[str, tuple[str, ...]]:
    """Render a measurement or assembly document as text; returns ``(text, warnings)``.

    ``urdf``, ``sdf`` and ``mjcf`` refuse (``SimulatorExportError``) when any
    block would be unsound; ``csv`` needs an assembly document (its breakdown).
    ``display`` (units and significant digits) applies to the table only: the JSON stays SI.
    """
    if output_format == "table":
        return _table(doc, inertial_form, display=display)
    return RENDERERS[output_format](doc, inertial_form)
