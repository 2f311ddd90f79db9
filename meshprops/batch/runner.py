"""The one loop over many files that ``check`` and ``measure`` share.

Each input file becomes one task; each task ends in a :class:`FileOutcome` that holds its
result or the :class:`~meshprops.errors.MeshpropsError` that stopped it, in input order, so
that one unreadable file never hides the others' results. How the outcomes are reported
(stop at the first error, or report every file) is the caller's choice.
"""

from __future__ import annotations

import os
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass

from ..errors import MeshpropsError
from ..io import load_mesh
from ..measure.body import BodyMeasurement, measure_mesh
from ..measure.manifest import load_manifest
from ..measure.options import MeasureOptions
from ..validation.checks import CheckResult, check_mesh

#: File extensions taken from a folder (compared case-insensitively).
MESH_EXTENSIONS = (".stl", ".obj", ".ply")
MANIFEST_EXTENSION = ".toml"


@dataclass(frozen=True, slots=True, eq=False)
class FileOutcome:
    """What became of one input: ``result`` (when it could be computed) or ``error``."""

    path: str
    result: object | None = None
    error: MeshpropsError | None = None

    @property
    def ok(self) -> bool:
        return self.error is None


def expand_inputs(paths: Iterable[str | os.PathLike]) -> list[str]:
    """Files as given, and every mesh file below each folder (recursively, sorted by path).

    A path that is neither a file nor a folder is kept, so that reading it reports the problem.
    """
    files: list[str] = []
    for path in paths:
        path = os.fspath(path)
        if os.path.isdir(path):
            found = []
            for folder, subfolders, names in os.walk(path):
                subfolders.sort()
                found.extend(os.path.join(folder, n) for n in names if n.lower().endswith(MESH_EXTENSIONS))
            files.extend(sorted(found))
        else:
            files.append(path)
    return files


def run_files(items: Sequence, task: Callable, *, label: Callable = str) -> list[FileOutcome]:
    """Run ``task(item)`` for every item, serially and in order; errors are kept per item."""
    outcomes = []
    for item in items:
        try:
            outcomes.append(FileOutcome(label(item), result=task(item)))
        except MeshpropsError as error:
            outcomes.append(FileOutcome(label(item), error=error))
    return outcomes


def raise_first_error(outcomes: Sequence[FileOutcome]) -> list:
    """The results, in order; or the first error (in input order) raised again."""
    for outcome in outcomes:
        if outcome.error is not None:
            raise outcome.error
    return [outcome.result for outcome in outcomes]


def check_task(item: tuple[str, str]) -> CheckResult:
    """Load one ``(path, length_unit)`` and run every check on it."""
    path, unit = item
    return check_mesh(load_mesh(path, unit))


def check_inputs(paths, length_unit: str = "mm") -> list[tuple[str, str]]:
    """The ``(mesh path, length unit)`` pairs that ``check`` reads, each once, in order.

    An assembly manifest (``.toml``) stands for the mesh files it lists, each read in its
    body's own length unit (``length_unit`` does not apply to them).
    """
    files: list[tuple[str, str]] = []
    for path in paths:
        if str(path).lower().endswith(MANIFEST_EXTENSION):
            files.extend((body.mesh_path, body.length_unit) for body in load_manifest(path).bodies)
        else:
            files.append((os.fspath(path), length_unit))
    return list(dict.fromkeys(files))


def check_files(paths, length_unit: str = "mm") -> list[CheckResult]:
    """Check every file (or manifest's meshes); an unreadable one raises its error.

    A file used by several bodies of a manifest is checked once.
    """
    return raise_first_error(run_files(check_inputs(paths, length_unit), check_task, label=lambda item: item[0]))


def measure_files(paths, options: MeasureOptions | None = None, *, on_invalid: str = "report") -> list[BodyMeasurement]:
    """Measure several mesh files with the same options (one body each).

    An unreadable file raises its error (:class:`meshprops.errors.MeshFileError`) before
    anything is reported. ``options.about`` is in metres.
    """
    options = options or MeasureOptions()
    unit = options.length_unit
    meshes = raise_first_error(run_files([os.fspath(p) for p in paths], lambda path: load_mesh(path, unit)))
    return [measure_mesh(mesh, options, on_invalid=on_invalid) for mesh in meshes]


__all__ = [
    "FileOutcome", "MESH_EXTENSIONS", "check_files", "check_inputs", "check_task",
    "expand_inputs", "measure_files", "raise_first_error", "run_files",
]  # fmt: skip
