"""Per-file records of batch runs: the plain JSON data of one checked or measured file.

A record is exactly what the file contributes to the JSON document (``check_to_dict`` /
``body_to_dict``), so documents, tables, ``--json-lines``, exit codes and stderr lines are all
built from records alike, whether a record was computed here, in a pool worker, on a cluster,
or read back from the cache (JSON keeps every float bit: Python writes the shortest text
that reads back as the same float64).

The tasks below are module-level (a frozen value for measuring), so they pickle by
reference to pool and cluster workers.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

from ..batch.runner import FileJob, FileOutcome, check_task
from ..errors import MeshFileError
from ..measure.body import measure_mesh, unreadable_measurement
from ..measure.options import MeasureOptions
from ..measure.total import measure_total
from ..physics.mass import MassProperties
from ..validation.findings import UNREADABLE
from ..validation.solid import unreadable_check
from .serialize import body_to_dict, check_to_dict, summed_mesh


def check_record(job: FileJob) -> dict:
    """Run every check on one file; its record (``check_to_dict``)."""
    return check_to_dict(check_task(job))


@dataclass(frozen=True, slots=True, eq=False)
class MeasureRecord:
    """The task of ``measure``: one file -> its record (``body_to_dict``) under ``options``."""

    options: MeasureOptions

    def __call__(self, job: FileJob) -> dict:
        return body_to_dict(measure_mesh(job.load(), self.options, on_invalid="report"))


def records_of(outcomes, unreadable: Callable[[FileOutcome], dict]) -> list[dict]:
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


def unreadable_check_record(outcome: FileOutcome, length_unit: str) -> dict:
    """The ``check`` record of a file that could not be read."""
    return check_to_dict(unreadable_check(outcome.path, length_unit, outcome.error))


def unreadable_measure_record(outcome: FileOutcome, length_unit: str) -> dict:
    """The ``measure`` record of a file that could not be read."""
    return body_to_dict(unreadable_measurement(outcome.path, length_unit, outcome.error))


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


def mass_properties_of(record: dict) -> MassProperties | None:
    """The mass properties a measure record states (``None`` when it has no numbers)."""
    if not record.get("valid") or record.get("mass") is None:
        return None
    return MassProperties(
        float(record["mass"]),
        float(record["volume"]),
        np.array(record["center_of_mass"], dtype=np.float64),
        np.array(record["inertia_about_com"], dtype=np.float64),
    )


def total_record(records: Sequence[dict], options: MeasureOptions, *, source: str) -> dict:
    """The record of the folder total (``measure DIR --total``): all bodies joined in input order.

    The same keys as a body; ``name`` and ``kind`` are ``"total"``, ``mesh`` sums the bodies'
    meshes, ``parts`` counts them. Without numbers when any body has none.
    """
    faces = sum(int(record["mesh"]["faces"]) for record in records if record.get("mesh") and record["mesh"]["faces"] is not None)
    total = measure_total([mass_properties_of(record) for record in records], options, source=source, face_count=faces)
    data = body_to_dict(total)
    data["mesh"] = summed_mesh(list(records), options.length_unit, file_format="total")
    data["kind"] = "total"
    data["parts"] = len(records)
    return data
