"""Per-file records of batch runs: the plain JSON data of one checked or measured file.

A record is exactly what the file contributes to the JSON document (``check_to_dict`` /
``body_to_dict``), so documents, tables, ``--json-lines``, exit codes and stderr lines are all
built from records alike, whether a record was computed here, in a pool worker, on a cluster,
or read back from the cache (JSON keeps every float bit: Python writes the shortest text
that reads back as the same float64).

The tasks below are module-level (a frozen value for measuring), so they pickle by
reference to pool and cluster workers. Importing this module is cheap: the checking and
measuring code (numpy, the validation) loads on a task's first call, so a run served wholly
from the cache never loads it.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING

from ..batch.runner import FileJob, FileOutcome, check_task
from .plain_records import first_error_line, is_unreadable, records_of  # noqa: F401  (re-exported)

if TYPE_CHECKING:
    from ..measure.options import MeasureOptions
    from ..physics.mass import MassProperties


def check_record(job: FileJob) -> dict:
    """Run every check on one file; its record (``check_to_dict``)."""
    from .serialize import check_to_dict

    return check_to_dict(check_task(job))


@dataclass(frozen=True, slots=True, eq=False)
class MeasureRecord:
    """The task of ``measure``: one file -> its record (``body_to_dict``) under ``options``."""

    options: MeasureOptions

    def __call__(self, job: FileJob) -> dict:
        from ..measure.body import measure_mesh
        from .serialize import body_to_dict

        return body_to_dict(measure_mesh(job.load(), self.options, on_invalid="report"))


def unreadable_check_record(outcome: FileOutcome, length_unit: str) -> dict:
    """The ``check`` record of a file that could not be read."""
    from ..validation.solid import unreadable_check
    from .serialize import check_to_dict

    return check_to_dict(unreadable_check(outcome.path, length_unit, outcome.error))


def unreadable_measure_record(outcome: FileOutcome, length_unit: str) -> dict:
    """The ``measure`` record of a file that could not be read."""
    from ..measure.body import unreadable_measurement
    from .serialize import body_to_dict

    return body_to_dict(unreadable_measurement(outcome.path, length_unit, outcome.error))


def mass_properties_of(record: dict) -> MassProperties | None:
    """The mass properties a measure record states (``None`` when it has no numbers)."""
    import numpy as np

    from ..physics.mass import MassProperties

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
    from ..measure.total import measure_total
    from .serialize import body_to_dict, summed_mesh

    faces = sum(int(record["mesh"]["faces"]) for record in records if record.get("mesh") and record["mesh"]["faces"] is not None)
    total = measure_total([mass_properties_of(record) for record in records], options, source=source, face_count=faces)
    data = body_to_dict(total)
    data["mesh"] = summed_mesh(list(records), options.length_unit, file_format="total")
    data["kind"] = "total"
    data["parts"] = len(records)
    return data
