"""Issue 9 through the real console script in a subprocess: nothing lost, nothing hidden.

Every test runs the installed ``meshprops`` entry point, so argument parsing, error lines and
exit codes are what a user (or the pre-commit hook) sees.
"""

from __future__ import annotations

import json
import os
import re
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from meshprops.geometry import shapes
from meshprops.io import writers

SCRIPT = shutil.which("meshprops", path=str(Path(sys.executable).parent)) or shutil.which("meshprops")
NON_FINITE = re.compile(r"\b(inf|nan|infinity)\b", re.IGNORECASE)


def run(*args, cwd=None):
    """Run ``meshprops ARGS`` in a subprocess; return the completed process (text mode)."""
    assert SCRIPT, "the meshprops console script is not installed"
    return subprocess.run([SCRIPT, *map(str, args)], capture_output=True, text=True, cwd=cwd, timeout=120)


def one_error_line(done, *needles):
    lines = [line for line in done.stderr.splitlines() if line.strip()]
    assert "Traceback" not in done.stderr
    errors = [line for line in lines if line.startswith("meshprops: error: ")]
    assert len(errors) == 1, done.stderr
    for needle in needles:
        assert needle in errors[0], errors[0]
    return errors[0]


@pytest.fixture
def box_stl(tmp_path):
    """A 40 x 20 x 10 mm box as binary STL."""
    path = tmp_path / "box.stl"
    writers.write_binary_stl(path, shapes.triangles_of(*shapes.box((40.0, 20.0, 10.0))))
    return path


@pytest.fixture
def bad_files(tmp_path, box_stl):
    """One good file, a truncated STL, an open OBJ and an empty file."""
    truncated = tmp_path / "trunc.stl"
    truncated.write_bytes(box_stl.read_bytes()[:300])
    vertices, faces = shapes.box((10.0, 10.0, 10.0))
    opened = tmp_path / "open.obj"
    writers.write_obj(opened, vertices, faces[2:])
    empty = tmp_path / "empty.stl"
    empty.write_bytes(b"")
    return [box_stl, truncated, opened, empty]


def write_manifest(directory: Path, body_lines: str, *, version: bool = True) -> Path:
    text = "[assembly]\nname = \"bench\"\nlength_unit = \"mm\"\n"
    if version:
        text += "manifest_version = 1\n"
    path = directory / "bench.toml"
    path.write_text(text + body_lines)
    return path


# ------------------------------------------------------------------ 1. output over input


@pytest.mark.parametrize("command", ["measure", "check"])
@pytest.mark.parametrize("spelling", ["same", "relative", "absolute", "symlink"])
def test_output_over_an_input_mesh_is_refused_and_the_mesh_kept(tmp_path, box_stl, command, spelling):
    before = box_stl.read_bytes()
    (tmp_path / "sub").mkdir()
    if spelling == "symlink":
        os.symlink(box_stl.name, tmp_path / "link.stl")
    output = {"same": "box.stl", "relative": "sub/../box.stl", "absolute": str(box_stl), "symlink": "link.stl"}[spelling]
    done = run(command, "box.stl", "-o", output, cwd=tmp_path)
    assert done.returncode == 2
    one_error_line(done, "box.stl")
    assert done.stdout == ""
    assert box_stl.read_bytes() == before


def test_output_over_the_manifest_or_a_listed_mesh_is_refused(tmp_path, box_stl):
    manifest = write_manifest(tmp_path, '[[body]]\nname = "b"\nmesh = "box.stl"\ndensity = 1000\n')
    for output in (manifest, box_stl):
        before_manifest, before_mesh = manifest.read_bytes(), box_stl.read_bytes()
        done = run("measure", manifest.name, "-o", output.name, cwd=tmp_path)
        assert done.returncode == 2
        one_error_line(done, output.name)
        assert manifest.read_bytes() == before_manifest and box_stl.read_bytes() == before_mesh
    done = run("check", manifest.name, "-o", box_stl.name, cwd=tmp_path)
    assert done.returncode == 2 and box_stl.read_bytes() == before_mesh


# ------------------------------------------------------------------ 2. every file reported


def test_check_reports_every_file_and_writes_the_whole_document(tmp_path, bad_files):
    report = tmp_path / "report.json"
    done = run("check", *bad_files, "--json", "-o", report)
    assert done.returncode == 2, done.stderr
    assert "Traceback" not in done.stderr
    doc = json.loads(report.read_text())
    assert [entry["source"] for entry in doc["files"]] == [str(path) for path in bad_files]
    by_name = {Path(entry["source"]).name: entry for entry in doc["files"]}
    assert by_name["box.stl"]["valid"] is True
    for name in ("trunc.stl", "empty.stl"):
        assert by_name[name]["valid"] is False
        assert [f["code"] for f in by_name[name]["findings"]] == ["unreadable"]
    assert by_name["open.obj"]["valid"] is False and by_name["open.obj"]["findings"][0]["code"] != "unreadable"
    assert doc["summary"]["files"] == 4 and doc["summary"]["unreadable"] == 2
    table = run("check", *bad_files)
    assert table.returncode == 2
    for path in bad_files:
        assert str(path) in table.stdout


def test_measure_reports_an_unreadable_body_and_measures_the_others(tmp_path, bad_files):
    box, truncated = bad_files[0], bad_files[1]
    done = run("measure", box, truncated, "--density", "2700", "--json")
    assert done.returncode == 2
    doc = json.loads(done.stdout)
    first, second = doc["bodies"]
    assert first["valid"] is True and first["mass"] == pytest.approx(2700 * 8e-6, rel=1e-12)
    assert second["valid"] is False and second["mass"] is None
    assert second["findings"][0]["code"] == "unreadable" and "truncated" in second["findings"][0]["message"]
    assert "error:" in done.stderr and "trunc.stl" in done.stderr


# ------------------------------------------------------------------ 3. no overflow


def test_huge_spin_is_refused_without_a_traceback_or_inf(box_stl):
    for args in (["--json"], []):
        done = run("measure", box_stl, "--density", "1000", "--spin", "1e160,0,0", *args)
        assert done.returncode in (1, 2)
        one_error_line(done, "not finite")
        assert not NON_FINITE.search(done.stdout)


def test_a_huge_dense_cube_is_refused_with_one_line(tmp_path):
    path = tmp_path / "planet.stl"
    writers.write_binary_stl(path, shapes.triangles_of(*shapes.box((1e20, 1e20, 1e20))))
    done = run("measure", path, "--units", "m", "--density", "1e250", "--json")
    assert done.returncode in (1, 2)
    one_error_line(done, "not finite")
    assert "LinAlgError" not in done.stderr and not NON_FINITE.search(done.stdout)


# ------------------------------------------------------------------ 4. density


def test_a_density_typed_in_grams_per_cubic_centimetre_is_flagged(box_stl):
    done = run("measure", box_stl, "--density", "7.85", "--json")
    assert done.returncode == 0
    findings = json.loads(done.stdout)["bodies"][0]["findings"]
    flagged = [f for f in findings if f["code"] == "implausible_density"]
    assert flagged and flagged[0]["severity"] == "warning" and "g/cm^3" in flagged[0]["message"]
    assert "implausible_density" in run("measure", box_stl, "--density", "1e30").stdout


@pytest.mark.parametrize("density", ["0", "-7850", "nan", "inf", "-inf"])
def test_non_positive_or_non_finite_density_is_refused(box_stl, density):
    done = run("measure", box_stl, f"--density={density}")
    assert done.returncode == 2
    one_error_line(done, "--density")
    assert done.stdout == ""


# ------------------------------------------------------------------ 5. formats by content


def test_an_obj_named_stl_is_read_as_obj(tmp_path):
    path = tmp_path / "x.stl"
    writers.write_obj(path, *shapes.box((10.0, 10.0, 10.0)))
    done = run("measure", path, "--density", "1000", "--json")
    assert done.returncode == 0, done.stderr
    body = json.loads(done.stdout)["bodies"][0]
    assert body["mesh"]["format"] == "obj" and body["volume"] == pytest.approx(1e-6, rel=1e-12)


def test_a_ply_named_obj_is_read_as_ply(tmp_path):
    path = tmp_path / "x.obj"
    writers.write_ply(path, *shapes.box((10.0, 10.0, 10.0)))
    done = run("measure", path, "--density", "1000", "--json")
    assert done.returncode == 0, done.stderr
    assert json.loads(done.stdout)["bodies"][0]["mesh"]["format"].startswith("ply")


def test_text_named_stl_names_what_it_looks_like(tmp_path):
    path = tmp_path / "notes.stl"
    path.write_text("these are my notes about the rover, not a mesh\n" * 4)
    done = run("measure", path)
    assert done.returncode == 2
    line = one_error_line(done, "notes.stl", "text")
    assert "header says" not in line and "triangles" not in line


# ------------------------------------------------------------------ 6. units


@pytest.mark.parametrize("unit, metres", [("MM", 1e-3), ("Millimetre", 1e-3), ("inch", 0.0254), ("FT", 0.3048)])
def test_unit_spellings_are_accepted(box_stl, unit, metres):
    done = run("measure", box_stl, "--units", unit, "--density", "1000", "--json")
    assert done.returncode == 0, done.stderr
    # 40 x 20 x 10 units box: volume 8000 units^3 (exact from the definitions of the units).
    assert json.loads(done.stdout)["bodies"][0]["volume"] == pytest.approx(8000 * metres**3, rel=1e-12)


def test_an_empty_unit_is_refused(box_stl):
    done = run("measure", box_stl, "--units", "")
    assert done.returncode == 2
    one_error_line(done, "unit")
    assert run("check", box_stl, "--units", "").returncode == 2


def test_show_units_and_digits(box_stl):
    done = run("measure", box_stl, "--density", "1000", "--show-units", "mm-g", "--digits", "4")
    assert done.returncode == 0, done.stderr
    # 8 g; Izz = 8 g x (40^2 + 20^2) mm^2 / 12 = 1333 g*mm^2 (box formula, handbook, from memory).
    assert re.search(r"mass\s+8\s+g\b", done.stdout)
    assert "1333" in done.stdout and "g*mm^2" in done.stdout and "1333.33" not in done.stdout
    inch = run("measure", box_stl, "--density", "1000", "--show-units", "in-lb")
    # 8 g = 0.0176370 lb (1 lb = 0.45359237 kg exactly, 1959 agreement).
    assert "0.017637" in inch.stdout and "lb*in^2" in inch.stdout
    json_doc = json.loads(run("measure", box_stl, "--density", "1000", "--show-units", "in-lb", "--json").stdout)
    assert json_doc["bodies"][0]["mass"] == pytest.approx(0.008, rel=1e-12)  # JSON stays SI
    assert run("measure", box_stl, "--show-units", "furlong-stone").returncode == 2
    assert run("measure", box_stl, "--digits", "0").returncode == 2


def test_round_off_prints_as_zero(box_stl):
    done = run("measure", box_stl, "--density", "1000")
    assert not re.search(r"e-(1[89]|2\d)\b", done.stdout)


# ------------------------------------------------------------------ 7. manifests


def test_a_manifest_without_its_version_says_what_to_add(tmp_path, box_stl):
    manifest = write_manifest(tmp_path, '[[body]]\nname = "b"\nmesh = "box.stl"\ndensity = 1000\n', version=False)
    done = run("measure", manifest)
    assert done.returncode == 2
    one_error_line(done, "manifest_version = 1")


def test_a_directory_given_as_a_mesh_is_reported_as_a_directory(tmp_path):
    manifest = write_manifest(tmp_path, '[[body]]\nname = "b"\nmesh = "."\ndensity = 1000\n')
    done = run("measure", manifest)
    assert done.returncode == 2
    line = one_error_line(done, "directory")
    assert "not found" not in line


# ------------------------------------------------------------------ 8. command line


def test_version_and_short_help():
    from meshprops import __version__

    done = run("--version")
    assert done.returncode == 0 and __version__ in done.stdout
    for args in (["-h"], ["measure", "-h"], ["check", "-h"]):
        shown = run(*args)
        assert shown.returncode == 0 and "Usage:" in shown.stdout
    # check's FILES are optional (its --all mode checks every mesh below the current folder)
    for command, files in (("measure", "FILES..."), ("check", "[FILES...]")):
        usage = run(command, "-h").stdout.splitlines()[0]
        assert usage == f"Usage: meshprops {command} [OPTIONS] {files}", usage


def test_every_error_line_has_the_error_prefix(tmp_path, bad_files):
    done = run("measure", bad_files[2])  # an open mesh: invalid
    assert done.returncode == 1
    lines = [line for line in done.stderr.splitlines() if "invalid mesh" in line]
    assert lines and all(line.startswith("meshprops: error: ") for line in lines)
    usage = run("measure", "--no-such-option")
    assert usage.returncode == 2 and "meshprops: error: " in usage.stderr


def test_check_accepts_folders_recursively_in_sorted_order(tmp_path):
    folder = tmp_path / "parts"
    (folder / "b").mkdir(parents=True)
    (folder / "a").mkdir()
    vertices, faces = shapes.box((10.0, 10.0, 10.0))
    writers.write_obj(folder / "b" / "z.obj", vertices, faces)
    writers.write_binary_stl(folder / "a" / "y.stl", shapes.triangles_of(vertices, faces))
    writers.write_ply(folder / "m.PLY", vertices, faces)
    (folder / "notes.txt").write_text("not a mesh")
    done = run("check", folder, "--json")
    assert done.returncode == 0, done.stderr
    sources = [Path(entry["source"]).relative_to(folder).as_posix() for entry in json.loads(done.stdout)["files"]]
    assert sources == ["a/y.stl", "b/z.obj", "m.PLY"]


# ------------------------------------------------------------------ 9. PLY lists


def test_ascii_ply_with_a_float_list_on_faces_is_read(tmp_path):
    vertices, faces = shapes.box((10.0, 10.0, 10.0))
    lines = ["ply", "format ascii 1.0", f"element vertex {len(vertices)}", "property float x", "property float y",
             "property float z", f"element face {len(faces)}", "property list uchar int vertex_indices",
             "property list uchar float texcoord", "end_header"]
    lines += [" ".join(repr(float(c)) for c in vertex) for vertex in vertices]
    lines += [f"3 {a} {b} {c} 6 0.25 0.5 0.75 1.5 0.125 0.0" for a, b, c in faces]
    path = tmp_path / "textured.ply"
    path.write_text("\n".join(lines) + "\n")
    done = run("measure", path, "--density", "1000", "--json")
    assert done.returncode == 0, done.stderr
    assert json.loads(done.stdout)["bodies"][0]["volume"] == pytest.approx(1e-6, rel=1e-12)


# ------------------------------------------------------------------ 10. the table layout


def test_table_layout_and_product_order(box_stl):
    done = run("measure", box_stl, "--density", "1000")
    assert done.returncode == 0
    text = done.stdout
    assert text.index("about the centre of mass") < text.index("products Pxy Pxz Pyz") < text.index("principal frame")
    doc = json.loads(run("measure", box_stl, "--density", "1000", "--json").stdout)
    assert list(doc["bodies"][0]["products_of_inertia"]) == ["xy", "xz", "yz"]
    assert doc["schema_version"] >= 2


def test_assembly_table_says_assembly_axes_and_marks_an_implied_density(tmp_path, box_stl):
    manifest = write_manifest(
        tmp_path, '[[body]]\nname = "block"\nmesh = "box.stl"\nmaterial = "aluminium_6061"\nmeasured_mass = 0.02\n'
    )
    done = run("measure", manifest, "--overlap-samples", "0")
    assert done.returncode == 0, done.stderr
    assert "assembly axes" in done.stdout and "input axes" not in done.stdout
    assert "(implied from measured_mass)" in done.stdout


@pytest.mark.parametrize("command", [["report"], ["balance", "--axis-point", "0,0,0", "--axis-direction", "0,0,1", "--rpm", "3000", "--grade", "6.3"]])
def test_other_commands_refuse_an_output_over_their_input(tmp_path, box_stl, command):
    before = box_stl.read_bytes()
    done = run(*command[:1], box_stl, *command[1:], "-o", box_stl)
    assert done.returncode == 2
    one_error_line(done, "box.stl")
    assert box_stl.read_bytes() == before


@pytest.mark.parametrize("command", ["measure", "check"])
def test_a_folder_without_meshes_is_refused_not_reported_as_nothing(tmp_path, command):
    (tmp_path / "empty").mkdir()
    (tmp_path / "empty" / "notes.txt").write_text("no meshes here")
    done = run(command, tmp_path / "empty")
    assert done.returncode == 2 and done.stdout == ""
    one_error_line(done, "at least one mesh file")
