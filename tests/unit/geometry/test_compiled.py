"""When the compiled kernels answer, and what a batch worker and a first compile do."""

from __future__ import annotations

import numpy as np

from meshprops.batch.backends import COMPILED_CROSSINGS_FROM_ITEMS, run_batch
from meshprops.geometry import compiled, shapes
from meshprops.geometry.crossing import find_crossings


def test_a_batch_worker_uses_the_compiled_path_for_small_parts(monkeypatch):
    monkeypatch.setitem(compiled._policy, "every_size", False)
    run_batch(len, [[0]] * (COMPILED_CROSSINGS_FROM_ITEMS - 1))  # a short batch: as a single file
    assert not compiled._policy["every_size"]
    run_batch(len, [[0]] * COMPILED_CROSSINGS_FROM_ITEMS)  # a batch this long switches the process over
    assert compiled._policy["every_size"]
    vertices, faces = shapes.box()
    assert find_crossings(vertices, faces).coplanar_checked  # the compiled path, although only 12 faces


def test_large_meshes_are_compiled_and_the_numpy_switch_turns_every_kernel_off(monkeypatch):
    assert compiled.compiled_answers(compiled.COMPILED_FROM_FACES)
    monkeypatch.setitem(compiled._policy, "numpy_only", True)
    assert not compiled.compiled_answers(10 * compiled.COMPILED_FROM_FACES)
    vertices, faces = shapes.box()
    assert not find_crossings(vertices, faces).coplanar_checked  # the rtree path


def test_the_kernels_are_cached_after_the_warm_up_and_no_compile_is_announced(monkeypatch):
    # conftest.py ran warm_up() for the session: every entry point loads from numba's disk cache.
    cache = compiled.kernel_cache()
    assert cache.warm
    told = []
    monkeypatch.setitem(compiled._notice, "given", False)
    monkeypatch.setitem(compiled._notice, "callback", told.append)
    module = compiled.kernels("mesh_kernels")
    assert told == []  # warm: nothing to announce
    assert hasattr(module, "weld_rows")


def test_a_cold_cache_is_announced_once(monkeypatch):
    told = []
    monkeypatch.setitem(compiled._notice, "given", False)
    monkeypatch.setitem(compiled._notice, "callback", told.append)
    monkeypatch.setattr(compiled, "kernel_cache", lambda: compiled.KernelCache(False, "/somewhere"))
    compiled.kernels("mesh_kernels")
    compiled.kernels("crossing_kernels")
    assert len(told) == 1 and "/somewhere" in told[0]


def test_a_pool_worker_runs_every_kernel_in_one_thread_with_the_same_pairs(monkeypatch):
    # Two tori, one shifted through the other, above the size where the pair search goes parallel;
    # the pairs must not depend on it.
    one, faces = shapes.torus(2.0, 0.5, 100, 60)
    vertices = np.concatenate([one, one + [0.3, 0.0, 0.0]])
    faces = np.concatenate([faces, faces + len(one)])
    assert len(faces) >= 20_000
    parallel = find_crossings(vertices, faces, include_vertex_neighbours=True)
    assert parallel.pairs.shape[0] > 100
    monkeypatch.setitem(compiled._policy, "one_thread", False)
    compiled.use_one_thread()
    assert compiled.one_thread()
    alone = find_crossings(vertices, faces, include_vertex_neighbours=True)
    assert alone.entries == parallel.entries
    assert (alone.pairs == parallel.pairs).all() and (alone.coplanar_pairs == parallel.coplanar_pairs).all()


def test_pool_workers_start_in_one_thread():
    from concurrent.futures import ProcessPoolExecutor

    from meshprops.batch.backends import ProcessPoolBackend

    backend = ProcessPoolBackend(1)
    try:
        pool = backend._pool()
        assert isinstance(pool, ProcessPoolExecutor)
        assert pool.submit(compiled.one_thread).result()
    finally:
        backend.close()
