"""The one loop over many files: outcomes per item in input order, the first error raised again,
folders expanded to their mesh files, manifests to their meshes (each once)."""

from __future__ import annotations

import os

import pytest

from meshprops.batch.runner import (
    FileOutcome,
    check_files,
    check_inputs,
    expand_inputs,
    measure_files,
    raise_first_error,
    run_files,
)
from meshprops.errors import InputValueError, MeshFileError
from meshprops.geometry import shapes
from meshprops.io.writers import write_binary_stl, write_obj


def _fail_on_odd(number: int) -> int:
    if number % 2:
        raise InputValueError("number", "an even number", number)
    return number * 10


def test_run_files_keeps_every_outcome_in_input_order():
    outcomes = run_files([4, 1, 2, 3], _fail_on_odd, label=lambda n: f"item-{n}")
    assert [o.path for o in outcomes] == ["item-4", "item-1", "item-2", "item-3"]
    assert [o.ok for o in outcomes] == [True, False, True, False]
    assert [o.result for o in outcomes] == [40, None, 20, None]
    assert isinstance(outcomes[1].error, InputValueError) and outcomes[1].error.found == 1
    assert outcomes[3].error.found == 3


def test_run_files_labels_with_str_by_default():
    assert [o.path for o in run_files([2, 6], _fail_on_odd)] == ["2", "6"]


def test_an_error_that_is_not_a_meshprops_error_is_not_swallowed():
    # Only meshprops' own errors are outcomes; a bug in a task must surface as itself.
    with pytest.raises(ZeroDivisionError):
        run_files([1], lambda n: n / 0)


def test_raise_first_error_raises_the_first_in_input_order():
    first = InputValueError("a", "x", 1)
    second = InputValueError("b", "y", 2)
    outcomes = [FileOutcome("ok", result=1), FileOutcome("bad-1", error=first), FileOutcome("bad-2", error=second)]
    with pytest.raises(InputValueError) as raised:
        raise_first_error(outcomes)
    assert raised.value is first


def test_raise_first_error_returns_the_results_in_order_when_all_succeeded():
    assert raise_first_error([FileOutcome("a", result="x"), FileOutcome("b", result=None), FileOutcome("c", result=3)]) == ["x", None, 3]


def _touch(path):
    os.makedirs(os.path.dirname(path), exist_ok=True)
    with open(path, "wb"):
        pass


def test_expand_inputs_walks_folders_recursively_sorted_and_by_extension(tmp_path):
    tree = tmp_path / "parts"
    for name in ("b.stl", "a.OBJ", "notes.txt", "sub/z.ply", "sub/deeper/c.Stl", "sub/readme.md", "aa/y.stl"):
        _touch(tree / name)
    loose = tmp_path / "loose.txt"  # a file given by name is kept whatever its extension
    _touch(loose)
    missing = tmp_path / "missing.stl"  # kept, so that reading it reports the problem
    found = expand_inputs([loose, tree, missing])
    relative = [os.path.relpath(p, tmp_path).replace(os.sep, "/") for p in found]
    assert relative == [
        "loose.txt",
        "parts/a.OBJ",
        "parts/aa/y.stl",
        "parts/b.stl",
        "parts/sub/deeper/c.Stl",
        "parts/sub/z.ply",
        "missing.stl",
    ]


def test_expand_inputs_of_an_empty_folder_is_empty(tmp_path):
    assert expand_inputs([tmp_path]) == []


@pytest.fixture
def cube_files(tmp_path):
    vertices, faces = shapes.box((10.0, 10.0, 10.0))
    write_binary_stl(tmp_path / "cube.stl", shapes.triangles_of(vertices, faces))
    write_obj(tmp_path / "cube.obj", vertices, faces)
    return tmp_path


def test_check_inputs_lists_each_manifest_mesh_once_in_its_body_unit(cube_files):
    manifest = cube_files / "pair.toml"
    manifest.write_text(
        '[assembly]\nlength_unit = "cm"\nmanifest_version = 1\n'
        '[[body]]\nname = "first"\nmesh = "cube.stl"\ndensity = 1000\n'
        '[[body]]\nname = "second"\nmesh = "cube.stl"\ndensity = 1000\ntranslation = [5, 0, 0]\n'
        '[[body]]\nname = "third"\nmesh = "cube.obj"\ndensity = 1000\nlength_unit = "mm"\n',
        encoding="utf-8",
    )
    stl = os.path.normpath(str(cube_files / "cube.stl"))
    obj = os.path.normpath(str(cube_files / "cube.obj"))
    pairs = check_inputs([str(manifest), str(cube_files / "cube.stl")], length_unit="in")
    assert pairs == [(stl, "cm"), (obj, "mm"), (str(cube_files / "cube.stl"), "in")]


def test_check_inputs_drops_repeats_of_the_same_file_and_unit(cube_files):
    path = str(cube_files / "cube.stl")
    assert check_inputs([path, path, path]) == [(path, "mm")]
    assert check_inputs([path, path], length_unit="m") == [(path, "m")]


def test_check_files_raises_the_unreadable_file(cube_files):
    with pytest.raises(MeshFileError, match="missing.stl"):
        check_files([str(cube_files / "cube.stl"), str(cube_files / "missing.stl")])


def test_check_files_returns_one_result_per_file_in_order(cube_files):
    results = check_files([str(cube_files / "cube.obj"), str(cube_files / "cube.stl")])
    assert [r.source for r in results] == [str(cube_files / "cube.obj"), str(cube_files / "cube.stl")]
    assert all(r.report.valid for r in results)


def test_measure_files_gives_one_body_per_file(cube_files):
    from meshprops.measure.options import MeasureOptions

    bodies = measure_files([cube_files / "cube.stl", cube_files / "cube.obj"], MeasureOptions(density=2000.0))
    # Cube of side 10 mm = 0.01 m at 2000 kg/m^3: m = rho a^3 = 2e-3 kg (definition of density).
    assert [b.properties.mass for b in bodies] == pytest.approx([2e-3, 2e-3], rel=1e-12)
    assert [b.source for b in bodies] == [str(cube_files / "cube.stl"), str(cube_files / "cube.obj")]


# ---------------------------------------------------------------------------- backends, shipped bytes, cache


def test_run_files_on_every_backend_gives_the_serial_outcomes(batch_backend):
    items = list(range(23))
    serial = run_files(items, _fail_on_odd)
    found = run_files(items, _fail_on_odd, backend=batch_backend)
    assert [(o.path, o.result, str(o.error) if o.error else None) for o in found] == [
        (o.path, o.result, str(o.error) if o.error else None) for o in serial
    ]


def test_with_content_ships_the_bytes_and_leaves_unreadable_files_by_path(tmp_path):
    from meshprops.batch.runner import FileJob, with_content

    path = tmp_path / "cube.stl"
    write_binary_stl(path, shapes.triangles_of(*shapes.box()))
    assert with_content(FileJob(str(path), "mm")).content == path.read_bytes()
    missing = FileJob(str(tmp_path / "gone.stl"), "mm")
    assert with_content(missing).content is None
    with pytest.raises(MeshFileError, match="no such file"):
        missing.load()


def _record_of(job):
    if job.path.endswith("bad.stl"):
        raise MeshFileError(job.path, "broken on purpose")
    return {"source": job.path, "bytes": len(job.content) if job.content is not None else os.path.getsize(job.path)}


def test_run_cached_files_serves_hits_and_computes_only_misses(tmp_path):
    from meshprops.batch.cache import ResultCache
    from meshprops.batch.runner import FileJob, run_cached_files

    paths = []
    for index in range(4):
        path = tmp_path / f"part{index}.stl"
        path.write_bytes(b"x" * (index + 1))
        paths.append(path)
    (tmp_path / "bad.stl").write_bytes(b"bad")
    jobs = [FileJob(str(p), "mm") for p in paths] + [FileJob(str(tmp_path / "bad.stl"), "mm"), FileJob(str(tmp_path / "gone.stl"), "mm")]
    calls = []

    def counting(job):
        calls.append(job.path)
        return _record_of(job)

    with ResultCache(tmp_path / "c.sqlite", tool_version="test") as cache:
        cold = run_cached_files(jobs, counting, settings_key=lambda job: "k", cache=cache)
        assert len(calls) == 5  # the missing file fails while hashing, in this process
        calls.clear()
        seen = []
        warm = run_cached_files(jobs, counting, settings_key=lambda job: "k", cache=cache, on_outcome=seen.append)
        assert calls == [str(tmp_path / "bad.stl")]  # errors are never cached
        assert [o.result for o in warm] == [o.result for o in cold] and [o.path for o in seen] == [j.path for j in jobs]
        assert [str(o.error) for o in warm if not o.ok] == [f"{tmp_path}/bad.stl: broken on purpose", f"{tmp_path}/gone.stl: no such file"]
        # a copy under another name is served under its own name
        copy = tmp_path / "copy.stl"
        copy.write_bytes(paths[2].read_bytes())
        calls.clear()
        (served,) = run_cached_files([FileJob(str(copy), "mm")], counting, settings_key=lambda job: "k", cache=cache)
        assert calls == [] and served.result == {"source": str(copy), "bytes": 3}


def test_content_hashes_reads_only_files_whose_stamp_moved(tmp_path, monkeypatch):
    import hashlib

    from meshprops.batch import runner
    from meshprops.batch.cache import ResultCache
    from meshprops.io import hashing

    monkeypatch.setattr(hashing, "SETTLED_NANOSECONDS", 0)  # the files count as long written
    read = []

    def spying(path):
        read.append(os.path.basename(path))
        return hashing.hash_and_stamp(path)

    monkeypatch.setattr(runner, "hash_and_stamp", spying)
    paths = []
    for name in ("a.stl", "b.stl"):
        (tmp_path / name).write_bytes(name.encode())
        paths.append(str(tmp_path / name))
    expected = ["sha256:" + hashlib.sha256(name.encode()).hexdigest() for name in ("a.stl", "b.stl")]
    with ResultCache(tmp_path / "c.sqlite", tool_version="test") as cache:
        assert runner.content_hashes(paths, cache) == expected and read == ["a.stl", "b.stl"]
        read.clear()
        assert runner.content_hashes(paths, cache) == expected and read == []  # both remembered
        (tmp_path / "b.stl").write_bytes(b"B.stl")  # same size, new bytes: its stamp moves
        hashes = runner.content_hashes(paths + [str(tmp_path / "gone.stl")], cache)
        assert read == ["b.stl", "gone.stl"]
        assert hashes[:2] == [expected[0], "sha256:" + hashlib.sha256(b"B.stl").hexdigest()]
        assert isinstance(hashes[2], MeshFileError) and str(hashes[2]).endswith("gone.stl: no such file")


def test_check_settings_key_of_no_options_is_that_of_the_default_options():
    from meshprops.batch.runner import (
        DEFAULT_CHECK_SETTINGS,
        FileJob,
        check_settings_key,
    )
    from meshprops.validation.solid import SolidOptions

    defaults = SolidOptions()
    assert DEFAULT_CHECK_SETTINGS == (defaults.strict, defaults.weld_tolerance, defaults.volume_tolerance)
    assert check_settings_key(FileJob("a.stl", "mm")) == check_settings_key(FileJob("a.stl", "mm", check_options=defaults))
    assert check_settings_key(FileJob("a.stl", "mm")) != check_settings_key(FileJob("a.stl", "m"))
    # -0.0 == 0.0 but is another setting written down: the memo of keys must not merge them
    zero, negative_zero = (check_settings_key(FileJob("a.stl", "mm", check_options=SolidOptions(weld_tolerance=w))) for w in (0.0, -0.0))
    assert zero != negative_zero
    assert check_settings_key(FileJob("a.stl", "mm", check_options=SolidOptions(strict=True))) != check_settings_key(FileJob("a.stl", "mm"))


def test_iter_cached_files_hands_out_each_outcome_before_computing_the_next(tmp_path):
    # Streaming (--json-lines): a record leaves as soon as it is done, so none need be held.
    from meshprops.batch.cache import ResultCache
    from meshprops.batch.runner import FileJob, iter_cached_files

    jobs = []
    for index in range(3):
        (tmp_path / f"p{index}.stl").write_bytes(b"x" * (index + 1))
        jobs.append(FileJob(str(tmp_path / f"p{index}.stl"), "mm"))
    calls = []

    def counting(job):
        calls.append(job.path)
        return _record_of(job)

    for cache in (None, ResultCache(tmp_path / "c.sqlite", tool_version="test")):
        calls.clear()
        outcomes = iter_cached_files(jobs, counting, settings_key=lambda job: "k", cache=cache)
        first = next(outcomes)
        assert first.result == {"source": jobs[0].path, "bytes": 1} and calls == [jobs[0].path]
        assert [outcome.result["bytes"] for outcome in outcomes] == [2, 3] and len(calls) == 3
    # what the cached run computed was stored, even though it was read one by one
    assert [o.result["bytes"] for o in iter_cached_files(jobs, counting, settings_key=lambda job: "k", cache=cache)] == [1, 2, 3]
    assert len(calls) == 3
    cache.close()
