"""The one loop over many files that ``check`` and ``measure`` share.

Each input file becomes one task; each task ends in a :class:`FileOutcome` that holds its
result or the :class:`~meshprops.errors.MeshpropsError` that stopped it, in input order, so
that one unreadable file never hides the others' results. How the outcomes are reported
(stop at the first error, or report every file) is the caller's choice.

Where the tasks run is a backend (:mod:`meshprops.batch.backends`: serial, a local process
pool, a Dask cluster); what was computed before can come from the content-hash cache
(:mod:`meshprops.batch.cache`). Outcomes are the same, in the same order, in every case.

The reading, checking and measuring code (numpy, numba's kernels) is imported where a file is
first read, never at import: a run whose every file comes from the cache loads none of it.
"""

from __future__ import annotations

import functools
import json
import os
from collections.abc import Callable, Iterable, Iterator, Sequence
from dataclasses import dataclass, fields
from typing import TYPE_CHECKING

from ..errors import MeshpropsError
from ..io.hashing import hash_and_stamp, stamp_of
from .cache import CacheKey, ResultCache, settings_fingerprint

if TYPE_CHECKING:
    from ..measure.body import BodyMeasurement
    from ..measure.options import MeasureOptions
    from ..validation.solid import CheckResult, SolidOptions

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


@dataclass(frozen=True, slots=True, eq=False)
class FileJob:
    """One mesh file to read: its path, the unit of its coordinates, and (with
    ``--ship-content``) its bytes, read in this process and sent to the worker.

    Attributes
    ----------
    path : the file, as named in results and errors
    length_unit : unit of the file's coordinates
    content : the file's bytes, or ``None`` to read ``path`` where the task runs
    check_options : for ``check``: strict, weld and volume tolerances (``None``: the defaults)
    """

    path: str
    length_unit: str
    content: bytes | None = None
    check_options: SolidOptions | None = None

    def load(self):
        """The :class:`~meshprops.io.Mesh` (from ``content`` when shipped, else from ``path``)."""
        if self.content is not None:
            from ..io.loaders import load_mesh_content

            return load_mesh_content(self.content, self.path, self.length_unit)
        from ..io.loaders import load_mesh

        return load_mesh(self.path, self.length_unit)


def with_content(job: FileJob) -> FileJob:
    """``job`` with the file's bytes attached (the ``prepare`` step of ``--ship-content``).

    A file that cannot be read here is sent by path, so that the worker reports the same
    one-line error as any other run would.
    """
    try:
        with open(job.path, "rb") as handle:
            return FileJob(job.path, job.length_unit, handle.read(), job.check_options)
    except OSError:
        return job


def iter_files(
    items: Sequence,
    task: Callable,
    *,
    label: Callable = str,
    backend=None,
    prepare: Callable | None = None,
) -> Iterator[FileOutcome]:
    """Run ``task(item)`` for every item and yield each :class:`FileOutcome` in input order,
    as soon as it and every item before it are done.

    ``backend`` is one of :mod:`meshprops.batch.backends` (``None``: serially, here); with
    another backend ``task`` and the items must pickle. ``prepare`` runs here on each item
    just before it is sent (:func:`with_content` ships a file's bytes).
    """
    if backend is None:
        for item in items:
            try:
                yield FileOutcome(label(item), result=task(prepare(item) if prepare else item))
            except MeshpropsError as error:
                yield FileOutcome(label(item), error=error)
        return
    arguments = {"prepare": prepare} if prepare is not None else {}
    for outcome in backend.run(task, items, **arguments):
        yield FileOutcome(label(items[outcome.index]), result=outcome.value, error=outcome.error)


def run_files(
    items: Sequence,
    task: Callable,
    *,
    label: Callable = str,
    backend=None,
    prepare: Callable | None = None,
    on_outcome: Callable[[FileOutcome], None] | None = None,
) -> list[FileOutcome]:
    """Run ``task(item)`` for every item, in order; errors are kept per item.

    See :func:`iter_files`; ``on_outcome`` is called with each outcome as it arrives (for
    progress and streamed output).
    """
    outcomes = []
    for outcome in iter_files(items, task, label=label, backend=backend, prepare=prepare):
        if on_outcome is not None:
            on_outcome(outcome)
        outcomes.append(outcome)
    return outcomes


#: Results written to the cache per transaction (a crash loses at most this many).
CACHE_WRITE_BATCH = 256


def content_hashes(paths: Sequence[str], cache: ResultCache) -> list[str | MeshpropsError]:
    """Each file's ``"sha256:<hex>"``, or the :class:`MeshpropsError` reading it gives, in order.

    A file whose stamp (:class:`~meshprops.io.hashing.FileStamp`) is the one ``cache``
    remembers with its hash is not read; every other file is hashed, and its hash remembered
    when its stamp has settled.
    """
    absolute = [os.path.abspath(path) for path in paths]
    remembered = cache.remembered_hashes(absolute)
    hashes: list[str | MeshpropsError] = []
    learned: list[tuple[str, str, str]] = []
    for path, full in zip(paths, absolute):
        known = remembered.get(full)
        if known is not None:
            stamp = stamp_of(path)
            if stamp is not None and stamp.text() == known[0]:
                hashes.append(known[1])
                continue
        try:
            content_hash, stamp = hash_and_stamp(path)
        except MeshpropsError as error:
            hashes.append(error)
            continue
        hashes.append(content_hash)
        if stamp is not None:
            learned.append((full, stamp.text(), content_hash))
    cache.remember_hashes(learned)
    return hashes


def run_cached_files(
    jobs: Sequence[FileJob],
    task: Callable[[FileJob], dict],
    *,
    settings_key: Callable[[FileJob], str],
    cache: ResultCache | None = None,
    backend=None,
    ship_content: bool = False,
    on_outcome: Callable[[FileOutcome], None] | None = None,
    before_computing: Callable[[], None] | None = None,
) -> list[FileOutcome]:
    """Per-file records (plain JSON data, ``"source"`` first) for every job, in input order,
    served from ``cache`` where the file's content and the settings are unchanged.

    :func:`iter_cached_files`, collected in a list; ``on_outcome`` is called with each
    outcome as it arrives (for progress and streamed output).
    """
    outcomes = []
    for outcome in iter_cached_files(
        jobs, task, settings_key=settings_key, cache=cache, backend=backend, ship_content=ship_content,
        before_computing=before_computing,
    ):  # fmt: skip
        if on_outcome is not None:
            on_outcome(outcome)
        outcomes.append(outcome)
    return outcomes


def iter_cached_files(
    jobs: Sequence[FileJob],
    task: Callable[[FileJob], dict],
    *,
    settings_key: Callable[[FileJob], str],
    cache: ResultCache | None = None,
    backend=None,
    ship_content: bool = False,
    before_computing: Callable[[], None] | None = None,
) -> Iterator[FileOutcome]:
    """Yield each job's :class:`FileOutcome` (its record: plain JSON data, ``"source"``
    first) in input order, as soon as it and every job before it are done, served from
    ``cache`` where the file's content and the settings are unchanged.

    ``task`` turns one job into its record; it runs only for files the cache does not hold
    (all of them without a cache). The stored record leaves out ``"source"``, so a copy of a
    file elsewhere is served under its own path. Errors are never cached. A file that cannot
    be hashed gets the same one-line error as reading it would give.

    Memory stays bounded by the work in flight: computed records are held only while an
    earlier file is still being computed, cached ones as their stored text until their turn.

    ``before_computing`` is called once, before the first task is sent, when there is any
    file to compute (never on a run that the cache serves whole): where to set up what only
    computing needs, before pool workers start.
    """
    keys: list[CacheKey | None] = [None] * len(jobs)
    early: dict[int, FileOutcome | str] = {}  # an error, or the stored text of a hit
    if cache is not None:
        for index, (job, content_hash) in enumerate(zip(jobs, content_hashes([job.path for job in jobs], cache))):
            if isinstance(content_hash, MeshpropsError):
                early[index] = FileOutcome(job.path, error=content_hash)
            else:
                keys[index] = CacheKey(content_hash, settings_key(job))
        found = cache.get_many([key for key in keys if key is not None])
        texts = iter(found)
        for index, key in enumerate(keys):
            if key is None:
                continue
            text = next(texts)
            if text is not None:
                early[index] = text
    misses = [index for index in range(len(jobs)) if index not in early]
    computed = iter(())
    if misses:
        if before_computing is not None:
            before_computing()
        computed = iter_files(
            [jobs[index] for index in misses],
            task,
            label=lambda job: job.path,
            backend=backend,
            prepare=with_content if ship_content else None,
        )
    pending_writes: list[tuple[CacheKey, str]] = []
    try:
        for index in range(len(jobs)):
            served = early.pop(index, None)
            if isinstance(served, str):
                yield FileOutcome(jobs[index].path, result={"source": jobs[index].path, **json.loads(served)})
                continue
            if served is not None:
                yield served
                continue
            outcome = next(computed)
            if cache is not None and outcome.ok:
                stored = {name: value for name, value in outcome.result.items() if name != "source"}
                pending_writes.append((keys[index], json.dumps(stored, separators=(",", ":"))))
                if len(pending_writes) >= CACHE_WRITE_BATCH:
                    cache.put_many(pending_writes)
                    pending_writes = []
            yield outcome
    finally:
        if cache is not None and pending_writes:  # what was computed is kept, even if the run stops
            cache.put_many(pending_writes)


#: The ``check`` settings of :class:`~meshprops.validation.solid.SolidOptions` ``()`` (strict,
#: weld tolerance, volume tolerance), for jobs that carry none; written out here so that keying a
#: run does not import the validation code (a test holds the two equal).
DEFAULT_CHECK_SETTINGS = (False, None, 1e-6)


def check_settings_key(job: FileJob) -> str:
    """What a ``check`` result depends on besides the file's content: its length unit and the
    recovery options (strict, weld and volume tolerances)."""
    options = job.check_options
    values = DEFAULT_CHECK_SETTINGS if options is None else (options.strict, options.weld_tolerance, options.volume_tolerance)
    # repr beside each value: 0.0 and -0.0 are equal keys of a dict but not the same setting
    return _check_settings_key(job.length_unit, tuple((value, repr(value)) for value in values))


@functools.lru_cache(maxsize=64)
def _check_settings_key(length_unit: str, values: tuple) -> str:
    (strict, _), (weld_tolerance, _), (volume_tolerance, _) = values
    return settings_fingerprint(
        "check",
        {"length_unit": length_unit, "strict": strict, "weld_tolerance": weld_tolerance,
         "volume_tolerance": volume_tolerance},
    )  # fmt: skip


def measure_settings_key(options: MeasureOptions) -> str:
    """What a ``measure`` result of one file depends on besides its content: every option."""
    settings = {field.name: getattr(options, field.name) for field in fields(options)}
    return settings_fingerprint("measure", settings)


def raise_first_error(outcomes: Sequence[FileOutcome]) -> list:
    """The results, in order; or the first error (in input order) raised again."""
    for outcome in outcomes:
        if outcome.error is not None:
            raise outcome.error
    return [outcome.result for outcome in outcomes]


def check_task(item: tuple[str, str] | FileJob, options: SolidOptions | None = None) -> CheckResult:
    """Load one ``(path, length_unit)`` (or :class:`FileJob`) and run every check on it."""
    from ..io.loaders import load_mesh
    from ..validation.solid import check_mesh

    if isinstance(item, FileJob):
        return check_mesh(item.load(), item.check_options)
    path, unit = item
    return check_mesh(load_mesh(path, unit), options)


def check_inputs(paths, length_unit: str = "mm") -> list[tuple[str, str]]:
    """The ``(mesh path, length unit)`` pairs that ``check`` reads, each once, in order.

    An assembly manifest (``.toml``) stands for the mesh files it lists, each read in its
    body's own length unit (``length_unit`` does not apply to them).
    """
    files: list[tuple[str, str]] = []
    for path in expand_inputs(paths):
        if str(path).lower().endswith(MANIFEST_EXTENSION):
            from ..measure.manifest import load_manifest

            files.extend((body.mesh_path, body.length_unit) for body in load_manifest(path).bodies)
        else:
            files.append((os.fspath(path), length_unit))
    return list(dict.fromkeys(files))


def check_files(paths, length_unit: str = "mm", options: SolidOptions | None = None) -> list[CheckResult]:
    """Check every file (or manifest's meshes); an unreadable one raises its error.

    A file used by several bodies of a manifest is checked once. ``options``: how far the
    solid may be recovered (:class:`meshprops.validation.solid.SolidOptions`).
    """
    task = check_task if options is None else functools.partial(check_task, options=options)
    return raise_first_error(run_files(check_inputs(paths, length_unit), task, label=lambda item: item[0]))


def measure_files(paths, options: MeasureOptions | None = None, *, on_invalid: str = "report") -> list[BodyMeasurement]:
    """Measure several mesh files with the same options (one body each).

    An unreadable file raises its error (:class:`meshprops.errors.MeshFileError`) before
    anything is reported. ``options.about`` is in metres.
    """
    from ..io.loaders import load_mesh
    from ..measure.body import measure_mesh
    from ..measure.options import MeasureOptions

    options = options or MeasureOptions()
    unit = options.length_unit
    meshes = raise_first_error(run_files(expand_inputs(paths), lambda path: load_mesh(path, unit)))
    return [measure_mesh(mesh, options, on_invalid=on_invalid) for mesh in meshes]


__all__ = [
    "FileJob", "FileOutcome", "MESH_EXTENSIONS", "check_every_file", "check_files", "check_inputs", "check_items",
    "content_hashes", "iter_cached_files",
    "check_settings_key", "check_task", "expand_inputs", "iter_files", "measure_every_file", "measure_files",
    "measure_settings_key", "raise_first_error", "run_cached_files", "run_files", "with_content",
]  # fmt: skip


def check_every_file(paths, length_unit: str = "mm") -> list[CheckResult]:
    """Check every file (folders expanded, manifests standing for their meshes), in order.

    A file that cannot be read gets its own entry (:func:`~meshprops.validation.checks.unreadable_check`:
    invalid, one ``unreadable`` finding giving the reason); the others are still checked.
    """
    return check_items(check_inputs(paths, length_unit))


def check_items(items: Sequence[tuple[str, str]]) -> list[CheckResult]:
    """Check every ``(mesh path, length unit)`` of :func:`check_inputs`; an unreadable one gets its own entry."""
    from ..validation.solid import unreadable_check

    outcomes = run_files(items, check_task, label=lambda item: item[0])
    return [
        outcome.result if outcome.ok else unreadable_check(outcome.path, unit, outcome.error)
        for outcome, (_, unit) in zip(outcomes, items)
    ]


def measure_every_file(paths, options: MeasureOptions | None = None) -> list[BodyMeasurement]:
    """Measure every mesh file (one body each), in order; an invalid mesh is reported, not raised.

    A file that cannot be read gets its own body (:func:`~meshprops.measure.body.unreadable_measurement`:
    ``valid`` false, no numbers, one ``unreadable`` finding); the others are still measured.
    """
    from ..io.loaders import load_mesh
    from ..measure.body import measure_mesh, unreadable_measurement
    from ..measure.options import MeasureOptions

    options = options or MeasureOptions()
    unit = options.length_unit
    outcomes = run_files([os.fspath(p) for p in paths], lambda path: load_mesh(path, unit))
    return [
        measure_mesh(outcome.result, options, on_invalid="report")
        if outcome.ok
        else unreadable_measurement(outcome.path, unit, outcome.error)
        for outcome in outcomes
    ]
