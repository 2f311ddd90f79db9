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
        '[assembly]\nlength_unit = "cm"\n'
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
