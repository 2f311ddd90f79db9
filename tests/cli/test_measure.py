"""The ``meshprops measure`` command: the JSON contract of issue 2 (item 7), exit codes,
one-line errors without a traceback, atomic ``--output``, rpm input, ``python -m meshprops``."""

from __future__ import annotations

import json
import math
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from paths import ROOT
from typer.testing import CliRunner

from meshprops import measure_file
from meshprops.cli import app, main
from meshprops.geometry import shapes
from meshprops.io import writers

runner = CliRunner()
SCHEMA_PATH = ROOT / "meshprops" / "schema" / "measure.schema.json"


def invoke(*args: str):
    """Run ``meshprops measure ...`` in-process through typer's CliRunner."""
    return runner.invoke(app, ["measure", *map(str, args)])


def run_main(capsys, *args: str):
    """Run the console entry point (the one place errors become a line and an exit code)."""
    with pytest.raises(SystemExit) as done:
        main(["measure", *map(str, args)])
    captured = capsys.readouterr()
    return done.value.code, captured.out, captured.err


def assert_one_clean_error_line(err: str, *needles: str) -> None:
    lines = [line for line in err.splitlines() if line.strip()]
    assert len(lines) == 1, err
    assert lines[0].startswith("meshprops: ")
    assert "Traceback" not in err
    for needle in needles:
        assert needle in lines[0]


@pytest.fixture
def bracket_stl(tmp_path, part):
    """The asymmetric test part as a binary STL in millimetres (coordinates 0..5.5 mm)."""
    path = tmp_path / "gimbal_bracket.stl"
    writers.write_binary_stl(path, shapes.triangles_of(*part))
    return path


@pytest.fixture
def open_box(tmp_path):
    vertices, faces = shapes.box((10.0, 10.0, 10.0))
    path = tmp_path / "open_box.obj"
    writers.write_obj(path, vertices, faces[2:])  # bottom removed: a hole
    return path


# ---------------------------------------------------------------------------- the JSON contract


def test_json_document_has_the_contract_keys_and_the_library_numbers(bracket_stl):
    result = invoke(bracket_stl, "--json", "--units", "mm", "--density", "2700", "--about", "10,0,-5", "--spin", "0,0,100")
    assert result.exit_code == 0, result.stderr
    document = json.loads(result.stdout)
    assert document["schema_version"] == 2
    assert document["units"]["length"] == "m"
    assert document["units"]["mass"] == "kg"
    assert document["units"]["inertia"] == "kg*m^2"
    assert document["units"]["input_length_unit"] == "mm"
    assert "off-diagonal" in document["conventions"]["inertia_tensor"]
    (body,) = document["bodies"]
    for key in ("source", "volume", "mass", "center_of_mass", "inertia_about_com", "principal_moments",
                "principal_axes", "inertia_about_point", "spin"):  # fmt: skip
        assert key in body, key
    assert body["source"] == str(bracket_stl)
    assert body["valid"] is True
    assert set(body["inertia_about_point"]) >= {"point", "tensor"}
    assert set(body["spin"]) >= {"angular_momentum_about_com", "kinetic_energy"}

    # The same numbers as the library (JSON floats round-trip exactly).
    expected = measure_file(
        bracket_stl, density=2700.0, length_unit="mm", about=np.array([10.0, 0.0, -5.0]) * 0.001, angular_velocity=[0, 0, 100]
    )
    properties = expected.properties
    assert body["volume"] == properties.volume
    assert body["mass"] == properties.mass
    assert body["center_of_mass"] == properties.center_of_mass.tolist()
    assert body["inertia_about_com"] == properties.inertia_about_com.tolist()
    assert body["principal_moments"] == expected.principal.moments.tolist()
    assert body["principal_axes"] == expected.principal.axes.tolist()
    # --about is given in the --units unit (mm here) and reported in metres.
    assert body["inertia_about_point"]["point"] == [0.01, 0.0, -0.005]
    assert body["inertia_about_point"]["tensor"] == expected.inertia_about_point.tolist()
    assert body["spin"]["angular_momentum_about_com"] == expected.spin.angular_momentum_about_com.tolist()
    assert body["spin"]["kinetic_energy"] == pytest.approx(0.5 * 100.0**2 * properties.inertia_about_com[2, 2], rel=1e-14)
    # Volume of the part: 6 mm² x 2 mm + 1 x 0.75 x 1.25 mm³ = 12.9375 mm³.
    assert body["volume"] == pytest.approx(12.9375e-9, rel=1e-12)
    assert body["products_of_inertia"]["xy"] == pytest.approx(-body["inertia_about_com"][0][1], rel=1e-15)


def test_optional_blocks_are_absent_without_their_options(bracket_stl):
    result = invoke(bracket_stl, "--json", "--density", "1000")
    assert result.exit_code == 0
    body = json.loads(result.stdout)["bodies"][0]
    assert "inertia_about_point" not in body
    assert "spin" not in body


def test_principal_axes_are_a_proper_rotation_with_the_sign_rule(bracket_stl):
    body = json.loads(invoke(bracket_stl, "--json", "--density", "1000").stdout)["bodies"][0]
    axes = np.array(body["principal_axes"])
    moments = np.array(body["principal_moments"])
    tensor = np.array(body["inertia_about_com"])
    np.testing.assert_allclose(axes @ axes.T, np.eye(3), atol=1e-14)
    assert np.linalg.det(axes) == pytest.approx(1.0, abs=1e-14)
    assert np.all(np.diff(moments) >= 0.0)
    np.testing.assert_allclose(axes @ tensor @ axes.T, np.diag(moments), atol=1e-13 * moments.max())
    for row in axes[:2]:  # documented rule: e1 and e2 have their largest-magnitude component positive
        assert row[np.argmax(np.abs(row))] > 0
    np.testing.assert_allclose(axes[2], np.cross(axes[0], axes[1]), atol=1e-15)


def test_several_files_give_several_bodies_with_one_density(tmp_path, bracket_stl):
    cube = tmp_path / "cube.ply"
    writers.write_ply(cube, *shapes.box((20.0, 20.0, 20.0)))
    result = invoke(bracket_stl, cube, "--json", "--density", "7850")
    assert result.exit_code == 0
    bodies = json.loads(result.stdout)["bodies"]
    assert [body["source"] for body in bodies] == [str(bracket_stl), str(cube)]
    assert all(body["density"] == 7850.0 for body in bodies)
    assert bodies[1]["mass"] == pytest.approx(7850.0 * 0.02**3, rel=1e-13)
    # A 20 mm steel cube: I = m a²/6 about its centre (handbook, from memory).
    np.testing.assert_allclose(np.diag(bodies[1]["inertia_about_com"]), 7850.0 * 0.02**3 * 0.02**2 / 6.0, rtol=1e-12)


def test_rpm_about_an_axis(bracket_stl):
    result = invoke(bracket_stl, "--json", "--density", "1000", "--rpm", "600", "--axis", "0,0,2")
    assert result.exit_code == 0, result.stderr
    state = json.loads(result.stdout)["bodies"][0]["spin"]
    # 600 rpm = 600 · 2π / 60 rad/s = 20π rad/s, along the normalized axis.
    np.testing.assert_allclose(state["angular_velocity"], [0.0, 0.0, 20.0 * math.pi], rtol=1e-15)


def test_moving_body_reports_orbital_plus_spin_about_the_point(bracket_stl):
    result = invoke(
        bracket_stl, "--json", "--density", "1000", "--spin", "1,2,3", "--velocity", "0.5,0,0", "--about", "0,100,0"
    )
    assert result.exit_code == 0, result.stderr
    body = json.loads(result.stdout)["bodies"][0]
    about = body["spin"]["about_point"]
    center, mass = np.array(body["center_of_mass"]), body["mass"]
    orbital = np.cross(center - [0.0, 0.1, 0.0], mass * np.array([0.5, 0.0, 0.0]))  # (c − p) × m v
    np.testing.assert_allclose(about["orbital_angular_momentum"], orbital, rtol=1e-13)
    np.testing.assert_allclose(
        about["angular_momentum"], orbital + np.array(body["spin"]["angular_momentum_about_com"]), rtol=1e-13
    )


def test_table_output_states_units_cautions_and_an_assumed_density(bracket_stl):
    result = invoke(bracket_stl)
    assert result.exit_code == 0
    assert "mass" in result.stdout and "kg" in result.stdout
    assert "principal frame" in result.stdout and "about the centre of mass" in result.stdout
    assert "ASSUMED" in result.stdout
    assert "CAUTION" in result.stdout
    assert "assumed 1000 kg/m^3" in result.stderr


@pytest.mark.skipif(not SCHEMA_PATH.exists(), reason="no meshprops/schema/measure.schema.json in this tree yet")
def test_json_validates_against_the_published_schema(bracket_stl, open_box):
    # tests/test_schema.py covers the samples; these are the option combinations it does not.
    jsonschema = pytest.importorskip("jsonschema")
    schema = json.loads(SCHEMA_PATH.read_text())
    for args in (
        [bracket_stl, "--about", "1,2,3", "--spin", "0,0,1", "--velocity", "0.1,0,0"],
        [bracket_stl, "--rpm", "1200", "--axis", "1,1,0"],
        [bracket_stl, open_box],
    ):
        document = json.loads(invoke(*args, "--json", "--density", "1000").stdout)
        jsonschema.validate(document, schema)


# ---------------------------------------------------------------------------- invalid meshes: exit 1


def test_open_mesh_is_marked_invalid_without_numbers(open_box):
    result = invoke(open_box, "--json", "--density", "1000")
    assert result.exit_code == 1
    body = json.loads(result.stdout)["bodies"][0]
    assert body["valid"] is False
    assert body["mass"] is None and body["inertia_about_com"] is None and body["principal_axes"] is None
    assert [f["code"] for f in body["findings"] if f["severity"] == "error"] == ["open_edges"]
    assert_one_clean_error_line(result.stderr, str(open_box), "open_edges")


def test_inconsistent_winding_is_invalid(tmp_path):
    vertices, faces = shapes.box((10.0, 10.0, 10.0))
    faces = faces.copy()
    faces[3] = faces[3][::-1]
    path = tmp_path / "flipped_face.obj"
    writers.write_obj(path, vertices, faces)
    result = invoke(path, "--json", "--density", "1000")
    assert result.exit_code == 1
    body = json.loads(result.stdout)["bodies"][0]
    assert body["mass"] is None
    assert "inconsistent_winding" in [f["code"] for f in body["findings"]]


def test_inside_out_mesh_never_gives_a_negative_mass(tmp_path):
    path = tmp_path / "inside_out.stl"
    writers.write_binary_stl(path, shapes.triangles_of(*shapes.box((10.0, 20.0, 30.0), inward=True)))
    result = invoke(path, "--json", "--density", "1000")
    assert result.exit_code == 1
    body = json.loads(result.stdout)["bodies"][0]
    assert body["mass"] is None and body["volume"] is None
    assert "inside_out" in [f["code"] for f in body["findings"]]
    assert_one_clean_error_line(result.stderr, "inside_out")


def test_flat_mesh_has_no_volume(tmp_path):
    # Two triangles back to back: closed and consistently oriented, but enclosing nothing.
    path = tmp_path / "flat.obj"
    path.write_text("v 0 0 0\nv 10 0 0\nv 0 10 0\nf 1 2 3\nf 1 3 2\n")
    result = invoke(path, "--json", "--density", "1000")
    assert result.exit_code == 1
    body = json.loads(result.stdout)["bodies"][0]
    assert body["mass"] is None
    assert "no_volume" in [f["code"] for f in body["findings"]]


def test_one_invalid_body_fails_the_run_but_the_valid_one_is_reported(bracket_stl, open_box):
    result = invoke(bracket_stl, open_box, "--json", "--density", "1000")
    assert result.exit_code == 1
    first, second = json.loads(result.stdout)["bodies"]
    assert first["valid"] and first["mass"] > 0
    assert not second["valid"] and second["mass"] is None


# ---------------------------------------------------------------------------- bad input: exit 2, one line


def assert_reported_unreadable(out: str, *needles: str) -> None:
    """The document still lists the file: one body, invalid, one ``unreadable`` finding (issue 9)."""
    (body,) = json.loads(out)["bodies"] if out.lstrip().startswith("{") else [None]
    if body is None:  # the table
        assert "[INVALID]" in out and "unreadable" in out and "no numbers" in out
        return
    assert body["valid"] is False and body["mass"] is None
    assert [f["code"] for f in body["findings"]] == ["unreadable"]
    for needle in needles:
        assert needle in body["findings"][0]["message"]


def test_missing_file(capsys, tmp_path):
    code, out, err = run_main(capsys, tmp_path / "missing.stl", "--json")
    assert code == 2
    assert_reported_unreadable(out, "no such file")
    assert_one_clean_error_line(err, "missing.stl", "no such file")


def test_empty_file(capsys, tmp_path):
    path = tmp_path / "empty.stl"
    path.write_bytes(b"")
    code, out, err = run_main(capsys, path, "--density", "1000")
    assert code == 2
    assert_reported_unreadable(out)
    assert_one_clean_error_line(err, "empty.stl", "empty")


def test_truncated_binary_stl(capsys, bracket_stl):
    bracket_stl.write_bytes(bracket_stl.read_bytes()[:-20])
    code, out, err = run_main(capsys, bracket_stl, "--density", "1000", "--json")
    assert code == 2
    assert_reported_unreadable(out, "truncated")
    assert_one_clean_error_line(err, str(bracket_stl), "truncated")


def test_nan_coordinate(capsys, tmp_path):
    path = tmp_path / "nan.obj"
    path.write_text("v 0 0 0\nv 1 0 0\nv 0 nan 0\nv 0 0 1\nf 1 3 2\nf 1 2 4\nf 1 4 3\nf 2 3 4\n")
    code, out, err = run_main(capsys, path, "--density", "1000")
    assert code == 2
    assert_reported_unreadable(out)
    assert_one_clean_error_line(err, "nan.obj", "NaN or infinite")


@pytest.mark.parametrize(
    ("options", "needles"),
    [
        (["--units", "furlong"], ["unknown unit 'furlong'"]),
        (["--density", "-5"], ["density", "> 0"]),
        (["--density", "0"], ["density", "> 0"]),
        (["--density", "nan"], ["density"]),
        (["--density", "heavy"], ["--density"]),
        (["--about", "1,2"], ["--about"]),
        (["--about", "1,2,nan"], ["--about"]),
        (["--spin", "0,0,1", "--rpm", "60", "--axis", "0,0,1"], ["--spin", "--rpm"]),
        (["--rpm", "60"], ["--axis"]),
        (["--rpm", "60", "--axis", "0,0,0"], ["--axis", "non-zero"]),
        (["--axis", "0,0,1"], ["--axis"]),
        (["--velocity", "1,0,0"], ["--velocity"]),
        (["--no-such-option"], ["--no-such-option"]),
    ],
)
def test_bad_options(capsys, bracket_stl, options, needles):
    code, out, err = run_main(capsys, bracket_stl, "--json", *options)
    assert code == 2
    assert out == ""
    assert_one_clean_error_line(err, *needles)


def test_no_files_is_a_usage_error(capsys):
    code, out, err = run_main(capsys)
    assert code == 2
    assert "Traceback" not in err


# ---------------------------------------------------------------------------- --output


def test_output_file_holds_the_same_document(tmp_path, bracket_stl):
    target = tmp_path / "report.json"
    result = invoke(bracket_stl, "--json", "--density", "1000", "--output", target)
    assert result.exit_code == 0
    assert result.stdout == ""
    written = json.loads(target.read_text())
    printed = json.loads(invoke(bracket_stl, "--json", "--density", "1000").stdout)
    assert written == printed


def test_output_holds_every_file_when_a_later_file_cannot_be_read(capsys, tmp_path, bracket_stl):
    target = tmp_path / "report.json"
    target.write_text("previous report\n")
    code, _, err = run_main(capsys, bracket_stl, tmp_path / "missing.stl", "--json", "--density", "1000", "-o", target)
    assert code == 2
    first, second = json.loads(target.read_text())["bodies"]  # the whole document (issue 9)
    assert first["valid"] is True and second["valid"] is False and second["findings"][0]["code"] == "unreadable"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["gimbal_bracket.stl", "report.json"]  # no temp files
    assert_one_clean_error_line(err, "missing.stl")


def test_output_into_a_missing_directory_is_one_clean_error(capsys, tmp_path, bracket_stl):
    target = tmp_path / "no" / "such" / "dir" / "report.json"
    code, out, err = run_main(capsys, bracket_stl, "--json", "--density", "1000", "--output", target)
    assert code == 2
    assert not target.exists()
    assert_one_clean_error_line(err, "report.json", "cannot write output")


# ---------------------------------------------------------------------------- python -m meshprops


def _python_m(*args: str, cwd: Path):
    environment = dict(os.environ, PYTHONPATH=str(ROOT))
    return subprocess.run(
        [sys.executable, "-m", "meshprops", *map(str, args)],
        capture_output=True,
        text=True,
        cwd=cwd,
        env=environment,
        timeout=120,
    )


def test_python_dash_m_measures_and_fails_cleanly(tmp_path, bracket_stl):
    done = _python_m("measure", bracket_stl, "--json", "--density", "1000", cwd=tmp_path)
    assert done.returncode == 0, done.stderr
    assert json.loads(done.stdout)["bodies"][0]["valid"] is True
    failed = _python_m("measure", tmp_path / "absent.ply", "--json", cwd=tmp_path)
    assert failed.returncode == 2
    assert_reported_unreadable(failed.stdout, "no such file")
    assert_one_clean_error_line(failed.stderr, "absent.ply")
