"""The parts of the output that work on plain JSON data alone (no numpy, no measuring code):
the ``check`` document around its file records, the gate fields of a plain check, the record
helpers that exit codes and stderr lines are made from, and JSON text.

A batch run served wholly from the cache (:mod:`meshprops.batch.cache`) needs only these, so
they live apart from the serializer of result objects (:mod:`meshprops.output.serialize`),
which re-exports them.
"""

from __future__ import annotations

import json
from collections.abc import Callable, Sequence

from ..errors import MeshFileError
from ..units import SI_UNITS
from ..version import __version__

CHECK_SCHEMA_NAME = "meshprops.check"


CHECK_SCHEMA_VERSION = 1

#: The code of the one finding of a file that could not be read (as
#: :data:`meshprops.validation.findings.UNREADABLE`; a test holds them equal).
UNREADABLE = "unreadable"


def to_json(doc: dict) -> str:
    """Serialize with full float precision (repr round-trips); NaN is never emitted."""
    return json.dumps(doc, indent=2, allow_nan=False) + "\n"


def check_document_of(files: Sequence[dict], *, input_length_unit: str) -> dict:
    """The JSON document of ``meshprops check`` around already-serialized files (``check_to_dict``)."""
    files = list(files)
    return {
        "schema": CHECK_SCHEMA_NAME,
        "schema_version": CHECK_SCHEMA_VERSION,
        "meshprops_version": __version__,
        "units": dict(SI_UNITS, input_length_unit=input_length_unit),
        "files": files,
        "summary": {
            "files": len(files),
            "valid": sum(1 for f in files if f["valid"]),
            "errors": sum(f["errors"] for f in files),
            "warnings": sum(f["warnings"] for f in files),
            "unreadable": sum(1 for f in files if any(x["code"] == UNREADABLE for x in f["findings"])),
        },
    }


def plain_gate_fields(doc: dict) -> dict:
    """A check document made without a gate, with the gate's top-level keys: ``gate`` (no
    configuration, no baseline) and ``budget`` (null). Its file entries stay the batch records
    (each ``--json-lines`` line is exactly one of them)."""
    passed = all(entry["valid"] for entry in doc["files"])
    doc["gate"] = {"config": None, "baseline": None, "fail_on": "error", "passed": passed, "exit_code": 0 if passed else 1, "notes": []}
    doc["budget"] = None
    return doc


def records_of(outcomes, unreadable: Callable) -> list[dict]:
    """Every outcome's record, in order: a file that could not be read (:class:`MeshFileError`)
    gets ``unreadable(outcome)``, its own record with one ``unreadable`` finding; any other error
    (an overflow, say) is raised, the first in input order."""
    records = []
    for outcome in outcomes:
        if outcome.ok:
            records.append(outcome.result)
        elif isinstance(outcome.error, MeshFileError):
            records.append(unreadable(outcome))
        else:
            raise outcome.error
    return records


def is_unreadable(record: dict) -> bool:
    return any(finding["code"] == UNREADABLE for finding in record.get("findings", ()))


def first_error_line(record: dict) -> str | None:
    """``"invalid mesh: CODE: message"`` for a record's first error finding, or ``None``."""
    for finding in record.get("findings", ()):
        if finding["code"] == UNREADABLE:
            return finding["message"]
        if finding["severity"] == "error":
            return f"invalid mesh: {finding['code']}: {finding['message']}"
    return None
