"""The backends: ordered outcomes, per-item errors and batching, identical in every backend.

The tasks are real library functions pickled by reference: ``meshprops.units.metres_per``
(raises :class:`~meshprops.errors.UnitError` for an unknown unit) and the built-in ``float``
(raises a plain ``ValueError``, which is a bug-class error and must propagate).
"""

from __future__ import annotations

import os
import pickle
import threading

import pytest

from meshprops.batch import backends
from meshprops.batch.backends import (
    DaskBackend,
    ProcessPoolBackend,
    SerialBackend,
    choose_backend,
    choose_batch_size,
    run_batch,
)
from meshprops.errors import (
    BatchRunError,
    MeshpropsError,
    MissingExtraError,
    UnitError,
    UnsentError,
)
from meshprops.units import LENGTH_UNITS, metres_per


def _units(count):
    names = sorted(LENGTH_UNITS)
    return [names[index % len(names)] for index in range(count)]


def test_results_come_back_in_input_order(batch_backend):
    items = _units(203)  # not a multiple of any batch size
    outcomes = list(batch_backend.run(metres_per, items, batch_size=7) if batch_backend.name != "serial"
                    else batch_backend.run(metres_per, items))
    assert [outcome.index for outcome in outcomes] == list(range(len(items)))
    # The exact definitions of the units (1 in = 25.4 mm, 1 ft = 0.3048 m; common practice).
    assert [outcome.value for outcome in outcomes] == [LENGTH_UNITS[name] for name in items]
    assert all(outcome.ok for outcome in outcomes)


def test_a_meshprops_error_is_that_item_s_outcome(batch_backend):
    items = ["mm", "furlong", "in", "cubit", "m"]
    outcomes = list(batch_backend.run(metres_per, items))
    assert [outcome.ok for outcome in outcomes] == [True, False, True, False, True]
    assert [outcome.value for outcome in outcomes if outcome.ok] == [0.001, 0.0254, 1.0]
    for outcome, unit in zip([o for o in outcomes if not o.ok], ["furlong", "cubit"]):
        assert isinstance(outcome.error, UnitError)
        assert outcome.error.unit == unit
        assert str(outcome.error) == str(_raised(unit))  # the same one line as in this process


def _raised(unit):
    try:
        metres_per(unit)
    except UnitError as error:
        return error
    raise AssertionError("metres_per accepted an unknown unit")


def test_other_exceptions_propagate_in_every_backend(batch_backend):
    with pytest.raises(ValueError, match="could not convert"):
        list(batch_backend.run(float, ["1.5", "not a number", "2"]))


def test_prepare_runs_in_this_process_before_sending(batch_backend):
    # prepare is where --ship-content reads a file's bytes; here it upper-cases a unit name,
    # which lower-case-only metres_per then rejects: proves prepare ran on every item.
    parent = os.getpid()
    seen = []

    def prepare(item):
        seen.append(os.getpid())
        return item.upper()

    outcomes = list(batch_backend.run(metres_per, ["mm", "m"], prepare=prepare))
    assert seen == [parent, parent]
    assert all(isinstance(outcome.error, UnitError) for outcome in outcomes)


def test_empty_input(batch_backend):
    assert list(batch_backend.run(metres_per, [])) == []


def test_run_batch_keeps_order_and_errors():
    outcomes = run_batch(metres_per, ["ft", "parsec", "cm"])
    assert [value for value, _ in outcomes] == [0.3048, None, 0.01]
    assert [type(error) for _, error in outcomes] == [type(None), UnitError, type(None)]


def test_batch_size_keeps_tasks_few_and_bounded():
    assert choose_batch_size(0, 2) == 1
    assert choose_batch_size(5, 2) == 1
    assert choose_batch_size(2000, 2) == backends.MAX_BATCH_SIZE
    assert choose_batch_size(400, 2) == 50  # 400 / (2 workers x 4 batches each)
    assert choose_batch_size(100_000, 400) == 63


def test_the_last_batches_shrink_so_that_the_workers_finish_together():
    sizes, remaining = [], 2000
    while remaining:
        size = min(backends.tail_batch_size(remaining, 2, backends.MAX_BATCH_SIZE), remaining)
        sizes.append(size)
        remaining -= size
    assert sizes[0] == backends.MAX_BATCH_SIZE and sizes == sorted(sizes, reverse=True)
    assert sizes[-2] == backends.SMALLEST_TAIL_BATCH  # a worker waits at most on a small batch at the end
    assert len(sizes) <= 2000 // backends.MAX_BATCH_SIZE + 15  # a few more tasks, not many
    assert backends.tail_batch_size(3, 2, 64) == backends.SMALLEST_TAIL_BATCH  # (only 3 are sent)
    assert backends.tail_batch_size(500, 2, 5) == 5  # never above the batch size asked for


def test_choose_backend():
    assert isinstance(choose_backend(jobs=1), SerialBackend)
    assert isinstance(choose_backend(jobs=4, item_count=1), SerialBackend)
    pool = choose_backend(jobs=4, item_count=3)
    assert isinstance(pool, ProcessPoolBackend) and pool.worker_count == 3
    assert isinstance(choose_backend(), (SerialBackend, ProcessPoolBackend))
    with pytest.raises(ValueError):
        choose_backend(jobs=0)


def test_stopping_early_leaves_no_work_behind():
    with ProcessPoolBackend(2) as pool:
        outcomes = pool.run(metres_per, _units(500), batch_size=5)
        first = next(outcomes)
        outcomes.close()  # the caller stops reading: pending batches are cancelled
        assert first.value == LENGTH_UNITS[_units(1)[0]]
        assert list(pool.run(metres_per, ["mm"])) [0].value == 0.001  # the pool still works


def test_missing_dask_extra_is_one_clear_error(monkeypatch):
    import builtins

    real_import = builtins.__import__

    def without_distributed(name, *args, **kwargs):
        if name == "distributed" or name.startswith("distributed."):
            raise ImportError(f"No module named {name!r}")
        return real_import(name, *args, **kwargs)

    monkeypatch.setattr(builtins, "__import__", without_distributed)
    with pytest.raises(MissingExtraError, match=r'pip install "meshprops\[dask\]"') as caught:
        DaskBackend("tcp://127.0.0.1:1")
    assert caught.value.exit_code == 2
    assert pickle.loads(pickle.dumps(caught.value)).args == caught.value.args


def test_unreachable_scheduler_is_one_clear_error():
    pytest.importorskip("distributed")
    # Port 1 on the loopback interface: nothing listens there, the connection is refused.
    with pytest.raises(BatchRunError, match="cannot reach the Dask scheduler"):
        DaskBackend("tcp://127.0.0.1:1", timeout=2)


class _UnpicklableError(MeshpropsError, ValueError):
    """An error holding a lock: no pickler can send it (whatever copyreg hooks are installed)."""

    exit_code = 1

    def __init__(self, source, reason):
        super().__init__(reason, source=source)
        self.lock = threading.Lock()


def _raise_unpicklable(item):
    raise _UnpicklableError(item, "broken on purpose")


def test_an_error_that_cannot_pickle_comes_back_as_the_same_line_and_code():
    with pytest.raises(TypeError):
        pickle.loads(pickle.dumps(_UnpicklableError("a.stl", "x")))
    ((value, error),) = run_batch(_raise_unpicklable, ["part.stl"])
    assert value is None
    assert isinstance(error, UnsentError)
    assert str(error) == "part.stl: broken on purpose" and error.exit_code == 1
    copy = pickle.loads(pickle.dumps(error))
    assert str(copy) == str(error) and copy.exit_code == 1
