"""The batch options that ``check`` and ``measure`` share, and the run they drive.

``--jobs N`` (a local process pool; all cores by default, 1 runs serially), ``--scheduler
ADDRESS`` (an existing Dask cluster), ``--ship-content`` (send file bytes, not paths),
``--cache PATH`` (the SQLite result cache) and ``--json-lines`` (one record per line as files
finish, in input order). Whatever the mode, the records, their order and the exit code are
the same.
"""

from __future__ import annotations

import contextlib
import json
import sys
from collections.abc import Callable, Iterator, Sequence
from pathlib import Path
from typing import Annotated, Optional

import typer

from ..errors import InputValueError
from .app import say

Jobs = Annotated[Optional[int], typer.Option("--jobs", "-j", help="Worker processes on this machine (default: all cores; 1 runs serially).", show_default=False)]
Scheduler = Annotated[Optional[str], typer.Option("--scheduler", help="Run on an existing Dask cluster at this scheduler address (tcp://HOST:PORT); needs meshprops[dask].", show_default=False)]
ShipContent = Annotated[bool, typer.Option("--ship-content", help="Send each file's bytes to the workers instead of its path (workers without the same file system).")]
CachePath = Annotated[Optional[Path], typer.Option("--cache", help="SQLite result cache: files whose content and settings are unchanged are not read again.", show_default=False)]
JsonLines = Annotated[bool, typer.Option("--json-lines", help="Print one JSON record per file, one per line, as files finish (in input order).")]


class BatchSettings:
    """The parsed batch options of one command."""

    def __init__(self, jobs, scheduler, ship_content, cache, json_lines) -> None:
        if jobs is not None and jobs < 1:
            raise InputValueError("--jobs", "a whole number of worker processes, at least 1", jobs)
        if scheduler is not None and jobs is not None:
            raise InputValueError("--jobs/--scheduler", "either --jobs or --scheduler, not both", f"--jobs {jobs} and --scheduler {scheduler}")
        self.jobs = jobs
        self.scheduler = scheduler
        self.ship_content = ship_content
        self.cache = cache
        self.json_lines = json_lines

    @property
    def only_local_defaults(self) -> bool:
        """No option beyond ``--jobs`` given (what a manifest, measured in this process, allows)."""
        return not (self.scheduler or self.ship_content or self.cache or self.json_lines)


def run_records(
    jobs: Sequence,
    task: Callable,
    settings_key: Callable,
    batch: BatchSettings,
    *,
    description: str,
    before_computing: Callable[[], None] | None = None,
) -> list:
    """Run ``task`` over ``jobs`` as ``batch`` says; the :class:`FileOutcome` of each, in order
    (:func:`record_stream`, collected)."""
    with record_stream(jobs, task, settings_key, batch, description=description, before_computing=before_computing) as outcomes:
        return list(outcomes)


@contextlib.contextmanager
def record_stream(
    jobs: Sequence,
    task: Callable,
    settings_key: Callable,
    batch: BatchSettings,
    *,
    description: str,
    before_computing: Callable[[], None] | None = None,
) -> Iterator[Iterator]:
    """Run ``task`` over ``jobs`` as ``batch`` says: within the block, an iterator of each
    job's :class:`FileOutcome` in input order, as soon as it and every job before it are done
    (the progress bar advances with it). Nothing but the work in flight is held, so a
    ``--json-lines`` run of any size keeps no records.

    ``before_computing`` runs once before the first file is computed (not when the cache
    serves every file).
    """
    from ..batch.backends import choose_backend
    from ..batch.cache import ResultCache
    from ..batch.runner import iter_cached_files
    from ..output.progress import BatchProgress
    from ..version import __version__

    if batch.scheduler is not None:
        _quiet_cluster_client()
    cache = None
    if batch.cache is not None:
        cache = ResultCache(batch.cache, tool_version=__version__, on_warning=lambda text: say(f"warning: {text}"))
    try:
        with choose_backend(jobs=batch.jobs, scheduler=batch.scheduler, item_count=len(jobs)) as backend, BatchProgress(
            len(jobs), description=description
        ) as bar:
            outcomes = iter_cached_files(
                jobs,
                task,
                settings_key=settings_key,
                cache=cache,
                backend=backend,
                ship_content=batch.ship_content,
                before_computing=before_computing,
            )

            def advancing():
                for outcome in outcomes:
                    bar.advance()
                    yield outcome

            try:
                yield advancing()
            finally:
                outcomes.close()  # stopped early: pending work cancelled, what was computed cached
    finally:
        if cache is not None:
            cache.close()


@contextlib.contextmanager
def line_writer(output) -> Iterator[Callable[[dict], None]]:
    """Within the block, ``emit(record)`` writes one record as one line of JSON: to stdout at
    once (flushed), or into ``output``, which is replaced when the block ends (atomically:
    never half-written; no line is held in memory)."""
    if output is None:
        yield emit_line
        return
    from ..io.atomic import atomic_stream

    with atomic_stream(str(output)) as write:
        yield lambda record: write(json_line(record))


def json_line(record: dict) -> str:
    """One record as one line of JSON text (compact; NaN refused)."""
    return json.dumps(record, separators=(",", ":"), allow_nan=False) + "\n"


def emit_line(record: dict) -> None:
    """One record as one line of JSON on stdout, at once."""
    sys.stdout.write(json_line(record))
    sys.stdout.flush()


def _quiet_cluster_client() -> None:
    """The Dask client logs connection chatter, and asyncio reports futures it dropped while
    closing; neither is about a file. Errors that are go through meshprops' own lines."""
    import logging

    logging.getLogger("distributed").setLevel(logging.ERROR)
    logging.getLogger("asyncio").setLevel(logging.CRITICAL)
