"""Where batch work runs: in this process, in a local process pool, or on a Dask cluster.

Every backend runs one picklable *task* (a module-level function of one item) over
an ordered sequence of items and yields one :class:`TaskOutcome` per item, **in
input order**, as soon as the item and all items before it are done. A
:class:`~meshprops.errors.MeshpropsError` raised by the task for an item comes
back as that item's ``error`` (it is pickle-safe), never as a crash of the run;
any other exception is a bug and propagates, in every backend alike.

Per-task overhead is kept small by sending items in batches: one pool or cluster
task runs :func:`run_batch` over up to ``batch_size`` consecutive items (see
:func:`choose_batch_size`), and at most a few batches per worker are in flight at
once, so memory stays bounded on both sides however many files there are.
``prepare`` (run in this process, just before a batch is sent) is where a file's
bytes are read when they are shipped by content.

Importing this module is cheap (no numpy, no process pool machinery): a run whose files all
come from the cache starts no worker and loads none of the measuring code.
"""

from __future__ import annotations

import math
import os
import pickle
import threading
from collections import deque
from collections.abc import Callable, Iterator, Sequence
from dataclasses import dataclass

from ..errors import (
    BatchRunError,
    InputValueError,
    MeshpropsError,
    MissingExtraError,
    UnsentError,
)
from ..geometry.compiled import use_compiled_at_every_size, use_one_thread

#: Largest number of items in one batch (tasks of ~64 small parts take ~0.3 s, so the
#: ~1 ms (pool) to ~10 ms (cluster) cost of a task stays a few percent).
MAX_BATCH_SIZE = 64

#: Batches aimed at per worker, so that a slow batch at the end does not leave the others idle.
BATCHES_PER_WORKER = 4

#: Batches in flight per worker (submitted, not yet collected).
IN_FLIGHT_PER_WORKER = 2

#: Smallest batch of the shrinking tail: the last batches of a run get smaller (down to this),
#: so that the workers finish together instead of one waiting on another's full batch.
SMALLEST_TAIL_BATCH = 8

#: Seconds to wait for a Dask scheduler to answer before the run fails.
CONNECT_TIMEOUT_SECONDS = 20.0


@dataclass(frozen=True, slots=True, eq=False)
class TaskOutcome:
    """One item's outcome.

    Attributes
    ----------
    index : position of the item in the input sequence (0-based)
    value : what the task returned, or ``None`` when it raised
    error : the :class:`MeshpropsError` the task raised for this item, or ``None``
    """

    index: int
    value: object
    error: MeshpropsError | None

    @property
    def ok(self) -> bool:
        return self.error is None


def _portable(error: MeshpropsError) -> MeshpropsError:
    try:
        pickle.loads(pickle.dumps(error))
    except Exception:  # noqa: BLE001 - any failure to round-trip means: send a stand-in
        return UnsentError(str(error), error.exit_code)
    return error


#: From this many files in one task, small parts' self-intersections go to the compiled finder too:
#: its one-time load (~0.6 s) is then less than the ~15 ms a part it saves.
COMPILED_CROSSINGS_FROM_ITEMS = 16


def run_batch(task: Callable, items: Sequence) -> list[tuple[object, MeshpropsError | None]]:
    """Run ``task`` over ``items`` in a worker; each item's ``(value, error)`` in order.

    Module-level so that pools and cluster workers can unpickle it by reference. Runs in
    the serial backend too, so that every backend hands back the same error objects.
    """
    if len(items) >= COMPILED_CROSSINGS_FROM_ITEMS:
        use_compiled_at_every_size()  # numba's import is paid once per worker, not per small part
    outcomes = []
    for item in items:
        try:
            outcomes.append((task(item), None))
        except MeshpropsError as error:
            outcomes.append((None, _portable(error)))
    return outcomes


def choose_batch_size(item_count: int, worker_count: int, *, largest: int = MAX_BATCH_SIZE) -> int:
    """Items per task: about :data:`BATCHES_PER_WORKER` tasks per worker, at most ``largest``."""
    if item_count <= 0:
        return 1
    return max(1, min(largest, math.ceil(item_count / (max(1, worker_count) * BATCHES_PER_WORKER))))


def _identity(item):
    return item


class SerialBackend:
    """Everything in this process, item by item (``--jobs 1``)."""

    name = "serial"
    worker_count = 1

    def run(self, task: Callable, items: Sequence, *, prepare: Callable = _identity) -> Iterator[TaskOutcome]:
        if len(items) >= COMPILED_CROSSINGS_FROM_ITEMS:
            use_compiled_at_every_size()  # as a worker does for a long batch (see run_batch)
        for index, item in enumerate(items):
            ((value, error),) = run_batch(task, [prepare(item)])
            yield TaskOutcome(index, value, error)

    def close(self) -> None:
        pass

    def __enter__(self):
        return self

    def __exit__(self, *exception) -> None:
        self.close()


def tail_batch_size(remaining: int, worker_count: int, batch_size: int) -> int:
    """The size of the next batch when ``remaining`` items are left: ``batch_size`` while there
    is plenty, then about a share of what is left per worker and batch in flight, never below
    :data:`SMALLEST_TAIL_BATCH` (nor above ``batch_size``)."""
    share = math.ceil(remaining / (max(1, worker_count) * (IN_FLIGHT_PER_WORKER + 1)))
    return max(1, min(batch_size, max(SMALLEST_TAIL_BATCH, share)))


def _ordered_windowed(
    submit, collect, cancel, task, items, prepare, batch_size, in_flight, worker_count=1
) -> Iterator[TaskOutcome]:
    """Submit batches lazily (at most ``in_flight`` outstanding) and yield outcomes in order."""
    pending: deque = deque()
    next_start = 0
    try:
        while next_start < len(items) or pending:
            while next_start < len(items) and len(pending) < in_flight:
                size = tail_batch_size(len(items) - next_start, worker_count, batch_size)
                batch = [prepare(item) for item in items[next_start : next_start + size]]
                pending.append((next_start, submit(run_batch, task, batch)))
                next_start += len(batch)
            start, future = pending.popleft()
            for offset, (value, error) in enumerate(collect(future)):
                yield TaskOutcome(start + offset, value, error)
    finally:
        for _, future in pending:  # stopped early (an error, or the caller stopped reading)
            cancel(future)


def available_cores() -> int:
    """Cores this process may run on (its CPU affinity where the system tells it)."""
    if hasattr(os, "sched_getaffinity"):
        return max(1, len(os.sched_getaffinity(0)))
    return os.cpu_count() or 1


def _fork_is_safe() -> bool:
    # fork starts workers in milliseconds and they inherit the imported modules; it is only
    # safe while this process runs no other thread (a forked lock held by another thread
    # would stay locked forever in the child).
    import multiprocessing

    return "fork" in multiprocessing.get_all_start_methods() and threading.active_count() == 1


class ProcessPoolBackend:
    """A local pool of ``jobs`` worker processes (``--jobs N``; the default is all cores).

    Workers start with the first batch, so a run that needs none starts none.
    """

    name = "processes"

    def __init__(self, jobs: int | None = None) -> None:
        self.worker_count = int(jobs) if jobs else available_cores()
        if self.worker_count < 1:
            raise InputValueError("--jobs", "a whole number of workers, at least 1", jobs)
        self._executor = None  # a concurrent.futures.ProcessPoolExecutor, once the first batch is sent

    def _pool(self):
        if self._executor is None:
            import multiprocessing
            from concurrent.futures import ProcessPoolExecutor

            context = multiprocessing.get_context("fork" if _fork_is_safe() else "spawn")
            self._executor = ProcessPoolExecutor(
                max_workers=self.worker_count, mp_context=context, initializer=use_one_thread
            )
        return self._executor

    def run(
        self,
        task: Callable,
        items: Sequence,
        *,
        prepare: Callable = _identity,
        batch_size: int | None = None,
    ) -> Iterator[TaskOutcome]:
        from concurrent.futures.process import BrokenProcessPool

        size = batch_size or choose_batch_size(len(items), self.worker_count)
        pool = self._pool()

        def collect(future):
            try:
                return future.result()
            except BrokenProcessPool as error:
                raise BatchRunError(f"a worker process died ({error or 'killed'}); the run was stopped") from None

        return _ordered_windowed(
            pool.submit, collect, lambda future: future.cancel(), task, items, prepare, size,
            self.worker_count * IN_FLIGHT_PER_WORKER, self.worker_count,
        )

    def close(self) -> None:
        if self._executor is not None:
            self._executor.shutdown(wait=True, cancel_futures=True)
            self._executor = None

    def __enter__(self):
        return self

    def __exit__(self, *exception) -> None:
        self.close()


def import_distributed():
    """The ``distributed`` module, or :class:`MissingExtraError` naming the extra to install."""
    try:
        import distributed
    except ImportError:
        raise MissingExtraError("--scheduler (Dask's distributed scheduler is not installed)", "dask") from None
    return distributed


class DaskBackend:
    """An existing ``dask.distributed`` cluster, reached at its scheduler's address
    (``--scheduler tcp://HOST:8786``).

    Workers must have meshprops installed. By default items are paths, so the
    workers must see the same file system; ship the bytes instead with
    ``--ship-content``. The connection is closed by :meth:`close`; the cluster is
    left running.
    """

    name = "dask"

    def __init__(self, address: str, *, timeout: float | None = None) -> None:
        distributed = import_distributed()
        timeout = CONNECT_TIMEOUT_SECONDS if timeout is None else timeout
        self.address = address
        try:
            self._client = distributed.Client(address, timeout=timeout, set_as_default=False)
        except (OSError, TimeoutError, ValueError) as error:
            raise BatchRunError(f"cannot reach the Dask scheduler: {error}", source=address) from None
        threads = sum(worker.get("nthreads", 1) for worker in self._client.scheduler_info()["workers"].values())
        self.worker_count = max(1, threads)

    def run(
        self,
        task: Callable,
        items: Sequence,
        *,
        prepare: Callable = _identity,
        batch_size: int | None = None,
    ) -> Iterator[TaskOutcome]:
        import distributed

        size = batch_size or choose_batch_size(len(items), self.worker_count)
        client = self._client

        def submit(function, task, batch):
            # pure=False: every batch is its own task, even with the same items as another run's
            return client.submit(function, task, batch, pure=False)

        def collect(future):
            try:
                return future.result()
            except distributed.client.FutureCancelledError as error:
                raise BatchRunError(f"the cluster cancelled a batch ({error})", source=self.address) from None
            except (distributed.KilledWorker, OSError, TimeoutError) as error:
                raise BatchRunError(f"a cluster worker failed: {error}", source=self.address) from None
            finally:
                future.release()

        return _ordered_windowed(
            submit, collect, lambda future: future.cancel(), task, items, prepare, size,
            self.worker_count * IN_FLIGHT_PER_WORKER, self.worker_count,
        )

    def close(self) -> None:
        self._client.close()

    def __enter__(self):
        return self

    def __exit__(self, *exception) -> None:
        self.close()


def choose_backend(*, jobs: int | None = None, scheduler: str | None = None, item_count: int | None = None):
    """The backend for ``--jobs`` / ``--scheduler``.

    ``scheduler`` wins over ``jobs``; ``jobs=1`` (or a run of one item) is serial;
    otherwise a process pool of ``jobs`` workers (all cores when ``None``).
    """
    if scheduler:
        return DaskBackend(scheduler)
    if jobs is not None and jobs < 1:
        raise InputValueError("--jobs", "a whole number of workers, at least 1", jobs)
    workers = jobs or available_cores()
    if workers == 1 or (item_count is not None and item_count <= 1):
        return SerialBackend()
    return ProcessPoolBackend(min(workers, item_count) if item_count else workers)
