"""Batch runs through the command line, once per backend (``batch_options`` in conftest.py:
``--jobs 1``, ``--jobs 2``, ``--scheduler`` of a real LocalCluster): the same JSON per file,
in the same order, with the same exit code and stderr lines, bad files included; folder
totals to the last bit; the result cache served, invalidated and rebuilt."""

from __future__ import annotations

import hashlib
import json
import shutil
import sqlite3

import jsonschema
import numpy as np
import pytest
from paths import TESTS
from typer.testing import CliRunner

from meshprops.cli import app
from meshprops.geometry import shapes
from meshprops.io import writers

runner = CliRunner()


def _run(*arguments):
    result = runner.invoke(app, [str(argument) for argument in arguments])
    return result.exit_code, result.stdout, result.stderr


def _fleet(folder, *, broken: bool):
    """A product folder: sound, warned and invalid parts in sub-folders, and optionally one
    truncated file (unreadable). Returns the folder."""
    (folder / "frame").mkdir(parents=True)
    (folder / "drive" / "wheels").mkdir(parents=True)
    for source, target in (
        ("valid/rover-chassis-plate.stl", "frame/chassis.stl"),
        ("valid/two-spacers.obj", "frame/spacers.obj"),
        ("valid/gimbal-block-with-cavity.stl", "drive/gimbal.stl"),
        ("invalid/open_edges__chassis-plate-missing-face.stl", "drive/cracked.stl"),
        ("warnings/collapsed_faces__plate-with-collapsed-face.stl", "drive/wheels/plate.stl"),
        ("valid/camera-mount-standing-on-plate.obj", "drive/wheels/mount.obj"),
    ):
        shutil.copy(TESTS / "meshes" / source, folder / target)
    if broken:
        data = (TESTS / "meshes" / "valid" / "two-spacers.stl").read_bytes()
        (folder / "frame" / "torn.stl").write_bytes(data[: len(data) // 2])
    (folder / "frame" / "notes.txt").write_text("not a mesh: skipped by extension")
    return folder


@pytest.fixture(scope="module")
def serial_reference(tmp_path_factory):
    """What ``--jobs 1`` prints for each command on the two fleets (the reference of parity)."""
    root = tmp_path_factory.mktemp("fleet")
    fleets = {broken: _fleet(root / ("broken" if broken else "sound"), broken=broken) for broken in (False, True)}
    commands = {
        "check": ["check", "--json"],
        "check-lines": ["check", "--json-lines"],
        "measure": ["measure", "--json", "--total", "--density", "2700"],
        "measure-lines": ["measure", "--json-lines", "--total"],
    }
    expected = {}
    for broken, folder in fleets.items():
        for name, command in commands.items():
            expected[(broken, name)] = _run(command[0], folder, *command[1:], "--jobs", "1")
    return fleets, commands, expected


@pytest.mark.parametrize("broken", [False, True], ids=["sound", "with-unreadable-file"])
def test_every_backend_prints_the_same(serial_reference, batch_options, broken):
    fleets, commands, expected = serial_reference
    for name, command in commands.items():
        found = _run(command[0], fleets[broken], *command[1:], *batch_options)
        assert found == expected[(broken, name)], (name, batch_options)


def test_the_serial_reference_itself(serial_reference):
    """What every backend must match: sorted recursive order, the exit codes, the lines."""
    fleets, _, expected = serial_reference
    code, stdout, stderr = expected[(False, "check")]
    sources = [entry["source"] for entry in json.loads(stdout)["files"]]
    folder = str(fleets[False])
    assert sources == [
        f"{folder}/drive/cracked.stl", f"{folder}/drive/gimbal.stl", f"{folder}/drive/wheels/mount.obj",
        f"{folder}/drive/wheels/plate.stl", f"{folder}/frame/chassis.stl", f"{folder}/frame/spacers.obj",
    ]  # fmt: skip
    assert code == 1  # an invalid mesh among them
    assert stderr.splitlines() == [f"meshprops: error: {folder}/drive/cracked.stl: invalid mesh: open_edges: " + _open_message(stdout)]

    lines_code, lines, _ = expected[(False, "check-lines")]
    assert lines_code == 1
    assert [json.loads(line) for line in lines.splitlines()] == json.loads(stdout)["files"]

    # An unreadable file: its own entry in the whole document (issue 9), its one line, exit 2 ...
    code, stdout, stderr = expected[(True, "check")]
    torn = f"{fleets[True]}/frame/torn.stl"
    assert code == 2
    entries = {entry["source"]: entry for entry in json.loads(stdout)["files"]}
    assert len(entries) == 7 and [f["code"] for f in entries[torn]["findings"]] == ["unreadable"]
    assert f"meshprops: error: {torn}: cannot be read: binary STL truncated: header says 24 triangles, " \
           f"expected 1284 bytes, found 642" in stderr.splitlines()
    # ... while --json-lines streams every other file and names the broken one at its place.
    code, stdout, stderr = expected[(True, "check-lines")]
    assert code == 2
    assert len(stdout.splitlines()) == 6 and torn not in stdout
    assert f"meshprops: error: {torn}: binary STL truncated" in stderr


def _open_message(check_json: str) -> str:
    files = json.loads(check_json)["files"]
    return next(f["message"] for entry in files for f in entry["findings"] if f["code"] == "open_edges")


def _box_file(folder, name, size_mm, center_mm):
    path = folder / name
    writers.write_binary_stl(path, shapes.triangles_of(*shapes.box(size_mm, center_mm)))
    return path


def test_folder_total_is_the_handbook_value_and_identical_in_every_mode(tmp_path, batch_options):
    folder = tmp_path / "blocks"
    folder.mkdir()
    sizes = [(40.0, 20.0, 10.0), (10.0, 30.0, 20.0), (20.0, 20.0, 20.0)]
    centers = [(0.0, 0.0, 0.0), (100.0, 0.0, 0.0), (0.0, -50.0, 30.0)]
    for index, (size, center) in enumerate(zip(sizes, centers)):
        _box_file(folder, f"block_{index}.stl", size, center)
    code, stdout, _ = _run("measure", folder, "--total", "--json", "--density", "7850", *batch_options)
    assert code == 0
    total = json.loads(stdout)["total"]
    # Handbook: a box of sides a, b, c has I_xx = m (b^2 + c^2) / 12 about its centre (common practice);
    # the parallel-axis theorem carries each to the common centre of mass.
    masses = [7850.0 * np.prod(np.array(size) / 1000) for size in sizes]
    positions = [np.array(center) / 1000 for center in centers]
    mass = sum(masses)
    com = sum(m * p for m, p in zip(masses, positions)) / mass
    inertia = np.zeros((3, 3))
    for m, size, p in zip(masses, sizes, positions):
        a, b, c = np.array(size) / 1000
        own = np.diag([m * (b * b + c * c), m * (a * a + c * c), m * (a * a + b * b)]) / 12
        d = p - com
        inertia += own + m * (d @ d * np.eye(3) - np.outer(d, d))
    assert total["mass"] == pytest.approx(mass, rel=1e-12)
    np.testing.assert_allclose(total["center_of_mass"], com, rtol=0, atol=1e-15)
    np.testing.assert_allclose(total["inertia_about_com"], inertia, rtol=1e-11, atol=1e-18)
    assert total["parts"] == 3 and total["kind"] == "total" and total["mesh"]["faces"] == 36
    schema = json.loads((TESTS.parent / "meshprops" / "schema" / "measure.schema.json").read_text())
    jsonschema.validate(json.loads(stdout), schema)
    # The same to the last bit as a serial run (floats in JSON round-trip exactly).
    assert _run("measure", folder, "--total", "--json", "--density", "7850", "--jobs", "1")[1] == stdout


def _rows(database):
    with sqlite3.connect(database) as connection:
        return connection.execute("SELECT content_hash, settings_key, result_json, result_sha256 FROM results").fetchall()


def test_cache_hit_is_served_miss_after_change_and_corrupt_file_rebuilt(tmp_path):
    folder = _fleet(tmp_path / "fleet", broken=False)
    database = tmp_path / "cache" / "results.sqlite"
    cold = _run("check", folder, "--json", "--cache", database)
    assert _run("check", folder, "--json", "--cache", database) == cold  # warm: the same report
    assert len(_rows(database)) == 6

    # A hit is served from the cache, not recomputed: doctor one stored row (checksum kept right)
    # and the report shows the doctored value.
    chassis = folder / "frame" / "chassis.stl"
    digest = "sha256:" + hashlib.sha256(chassis.read_bytes()).hexdigest()
    with sqlite3.connect(database) as connection:
        (text,) = connection.execute("SELECT result_json FROM results WHERE content_hash = ?", (digest,)).fetchone()
        doctored = json.dumps(dict(json.loads(text), mesh=dict(json.loads(text)["mesh"], faces=999)), separators=(",", ":"))
        connection.execute(
            "UPDATE results SET result_json = ?, result_sha256 = ? WHERE content_hash = ?",
            (doctored, hashlib.sha256(doctored.encode()).hexdigest(), digest),
        )
    served = json.loads(_run("check", folder, "--json", "--cache", database)[1])
    assert [entry["mesh"]["faces"] for entry in served["files"] if entry["source"] == str(chassis)] == [999]

    # A content change misses for that file only: one new row, and the true face count again.
    data = bytearray(chassis.read_bytes())
    data[:5] = b"xxxxx"  # the 80-byte header: the same triangles, other bytes
    chassis.write_bytes(bytes(data))
    changed = json.loads(_run("check", folder, "--json", "--cache", database)[1])
    assert changed == json.loads(cold[1])
    assert len(_rows(database)) == 7

    # A settings change misses for every file (another unit: other findings, other rows).
    in_metres = _run("check", folder, "--json", "--units", "m", "--cache", database)
    assert in_metres == _run("check", folder, "--json", "--units", "m")
    assert len(_rows(database)) == 13

    # A corrupt cache file: one warning line, rebuilt, the same report as without a cache.
    database.write_bytes(b"\x00garbage, not SQLite" * 64)
    code, stdout, stderr = _run("check", folder, "--json", "--cache", database)
    assert (code, stdout) == cold[:2]
    warnings = [line for line in stderr.splitlines() if "cache is corrupt" in line]
    assert len(warnings) == 1 and warnings[0].startswith(f"meshprops: warning: {database}: cache is corrupt (")
    assert len(_rows(database)) == 6


def test_measure_cache_keys_on_every_setting(tmp_path):
    folder = tmp_path / "blocks"
    folder.mkdir()
    _box_file(folder, "block.stl", (10.0, 20.0, 30.0), (0.0, 0.0, 0.0))
    database = tmp_path / "results.sqlite"
    plain = _run("measure", folder, "--json", "--density", "2700", "--cache", database)
    heavier = _run("measure", folder, "--json", "--density", "7850", "--cache", database)
    spun = _run("measure", folder, "--json", "--density", "2700", "--rpm", "600", "--axis", "0,0,1", "--cache", database)
    assert json.loads(heavier[1])["bodies"][0]["mass"] == pytest.approx(7850 * 6e-6, rel=1e-12)  # m = rho a b c
    assert "spin" in json.loads(spun[1])["bodies"][0] and "spin" not in json.loads(plain[1])["bodies"][0]
    assert len(_rows(database)) == 3
    assert _run("measure", folder, "--json", "--density", "2700", "--cache", database) == plain


def test_ship_content_on_the_cluster_gives_the_same_records(tmp_path, dask_cluster):
    folder = _fleet(tmp_path / "fleet", broken=True)
    address = dask_cluster.scheduler_address
    expected = _run("check", folder, "--json-lines", "--jobs", "1")
    assert _run("check", folder, "--json-lines", "--scheduler", address, "--ship-content") == expected
    assert _run("check", folder, "--json-lines", "--jobs", "2", "--ship-content") == expected


@pytest.mark.parametrize(
    "arguments, message",
    [
        (["--jobs", "0"], "--jobs: expected a whole number of worker processes, at least 1"),
        (["--jobs", "2", "--scheduler", "tcp://127.0.0.1:1"], "either --jobs or --scheduler, not both"),
        (["--scheduler", "tcp://127.0.0.1:1"], "cannot reach the Dask scheduler"),
    ],
)
def test_bad_batch_options_are_one_line_and_exit_2(tmp_path, monkeypatch, arguments, message):
    from meshprops.batch import backends

    monkeypatch.setattr(backends, "CONNECT_TIMEOUT_SECONDS", 2.0)  # nothing listens on port 1
    path = _box_file(tmp_path, "block.stl", (10.0, 10.0, 10.0), (0.0, 0.0, 0.0))
    code, stdout, stderr = _run("check", path, *arguments)
    assert (code, stdout) == (2, "")
    assert len(stderr.splitlines()) == 1 and message in stderr and stderr.startswith("meshprops: error: ")


def test_manifest_refuses_options_it_cannot_use():
    rover = TESTS.parent / "sample_meshes" / "rover.toml"
    code, _, stderr = _run("measure", rover, "--total")
    assert code == 2 and "--total" in stderr
    code, _, stderr = _run("measure", rover, "--cache", "somewhere.sqlite")
    assert code == 2 and "a manifest is measured in this process" in stderr



_RUN_AND_LIST_MODULES = """
import json, sys
from meshprops.cli.app import main
try:
    main(sys.argv[2:])
except SystemExit as done:
    code = done.code
heavy = ("numpy", "numba", "meshprops.geometry.crossing_kernels", "meshprops.geometry.mesh_kernels", "meshprops.validation.checks",
         "meshprops.measure.body", "meshprops.gate.runner", "multiprocessing")
with open(sys.argv[1], "w") as report:
    json.dump({"code": code, "loaded": [name for name in heavy if name in sys.modules]}, report)
sys.exit(code)
"""


def test_a_run_served_wholly_from_the_cache_loads_no_measuring_code(tmp_path):
    # In a fresh interpreter (this one has imported everything): the run that the cache serves
    # whole prints the uncached run's report byte for byte, with its exit code and stderr
    # lines, without importing numpy, numba's kernels, the validation, the gate or a pool.
    import subprocess
    import sys

    folder = _fleet(tmp_path / "fleet", broken=False)
    database = tmp_path / "results.sqlite"
    uncached = _run("check", folder, "--json", "--jobs", "2")
    assert uncached[0] == 1  # the cracked part
    assert _run("check", folder, "--json", "--jobs", "2", "--cache", database) == uncached  # cold: fills it
    listing = tmp_path / "loaded.json"
    warm = subprocess.run(
        [sys.executable, "-c", _RUN_AND_LIST_MODULES, str(listing), "check", str(folder), "--json", "--jobs", "2", "--cache", str(database)],
        capture_output=True, text=True, cwd=tmp_path,
    )  # fmt: skip
    assert (warm.returncode, warm.stdout, warm.stderr) == uncached
    assert json.loads(listing.read_text()) == {"code": 1, "loaded": []}
    # a file touched but unchanged is hashed again and still served
    (folder / "frame" / "chassis.stl").touch()
    assert _run("check", folder, "--json", "--cache", database) == uncached
    assert len(_rows(database)) == 6


@pytest.mark.parametrize("command", [["check"], ["measure", "--total", "--density", "2700"]])
def test_json_lines_into_a_file_are_the_lines_on_stdout(tmp_path, command):
    # -o FILE is written line by line into a temporary file and renamed at the end: the same
    # bytes as on stdout, the same stderr lines and exit code, bad files included.
    folder = _fleet(tmp_path / "fleet", broken=True)
    code, stdout, stderr = _run(*command, folder, "--json-lines", "--jobs", "2")
    assert code == 2 and stdout.count("\n") >= 6  # the torn file: exit 2, every other file a line
    target = tmp_path / "out" / "records.jsonl"
    target.parent.mkdir()
    assert _run(*command, folder, "--json-lines", "--jobs", "2", "-o", target) == (code, "", stderr)
    assert target.read_text(encoding="utf-8") == stdout
    assert sorted(p.name for p in target.parent.iterdir()) == ["records.jsonl"]  # no temporary file left
