"""The ``meshprops balance`` command: the JSON contract of issue 11, its schema, exit codes and
one-line errors, through typer's CliRunner and through the installed console script.
"""

from __future__ import annotations

import json
import math
import subprocess
import sys
from pathlib import Path

import jsonschema
import pytest
from paths import ROOT
from typer.testing import CliRunner

from meshprops.cli import app, main
from meshprops.geometry import shapes
from meshprops.io import writers

runner = CliRunner()
SCHEMA = json.loads((ROOT / "meshprops" / "schema" / "balance.schema.json").read_text())
HEADLINE = ("static_unbalance_g_mm", "couple_unbalance_g_mm2", "permissible_unbalance_g_mm", "achieved_grade", "passes")
DENSITY = 2700.0
RADIUS_MM, HEIGHT_MM, SECTIONS = 40.0, 8.0, 96


def disk_mass() -> float:
    # exact for the mesh: inscribed regular polygon area (n/2) r² sin(2π/n) times height and density
    r, h = RADIUS_MM / 1e3, HEIGHT_MM / 1e3
    return DENSITY * h * SECTIONS / 2 * r * r * math.sin(2 * math.pi / SECTIONS)


@pytest.fixture
def disk(tmp_path) -> Path:
    path = tmp_path / "fan_disk.obj"
    writers.write_obj(path, *shapes.cylinder(RADIUS_MM, HEIGHT_MM, SECTIONS))
    return path


def invoke(*args):
    return runner.invoke(app, ["balance", *map(str, args)])


def shaft(offset_mm: float = 0.0, rpm: float = 3000.0, grade: str = "6.3"):
    return ["--axis-point", f"{-offset_mm},0,0", "--axis-direction", "0,0,2", "--rpm", str(rpm), "--grade", grade]


def test_json_headline_keys_and_values(disk):
    # Method: static unbalance m e (handbook definition) and U_per = 9549 G m / n g·mm
    # (ISO 21940-11 shortcut). The shaft passes 0.01 mm from the disk's centre.
    result = invoke(disk, *shaft(0.01), "--density", DENSITY, "--json")
    assert result.exit_code == 0, result.output
    doc = json.loads(result.stdout)
    for key in HEADLINE:
        assert key in doc
    mass = disk_mass()
    assert doc["mass"] == pytest.approx(mass, rel=1e-12)
    assert doc["static_unbalance_g_mm"] == pytest.approx(mass * 1e3 * 0.01, rel=1e-9)
    assert doc["couple_unbalance_g_mm2"] == pytest.approx(0.0, abs=1e-9)
    assert doc["permissible_unbalance_g_mm"] == pytest.approx(9549.3 * 6.3 * mass / 3000.0, rel=1e-4)
    u_per = doc["permissible_unbalance_g_mm"]
    assert doc["passes"] is (doc["static_unbalance_g_mm"] <= u_per)
    assert doc["passes"] is True
    residual = doc["grade_check"]["residual_grade_mm_per_s"]
    assert residual == pytest.approx(6.3 * doc["static_unbalance_g_mm"] / u_per, rel=1e-9)
    assert doc["achieved_grade"] == min(g["grade"] for g in doc["grade_table"]["grades"] if g["grade"] >= residual)
    assert doc["shaft"]["axis_direction"] == [0.0, 0.0, 1.0]  # normalized
    assert doc["shaft"]["axis_point"] == pytest.approx([-0.01e-3, 0.0, 0.0])  # mm -> m
    assert doc["correction_planes_from"] == "part_ends"
    assert doc["units"]["input_length_unit"] == "mm"
    assert any("balancing machine" in c for c in doc["cautions"])
    assert any("energy" in c and "injure" in c for c in doc["cautions"])
    jsonschema.validate(doc, SCHEMA)


def test_a_failing_part_prints_the_whole_report_and_exits_1(disk):
    """A failed grade is a failed check (exit 1, the project's exit-code contract); the report is whole."""
    args = [disk, *shaft(2.0, rpm=6000.0, grade="G2.5"), "--density", DENSITY, "--json"]
    result = invoke(*args)
    assert result.exit_code == 1, result.output
    doc = json.loads(result.stdout)
    assert doc["passes"] is False
    assert all(plane["passes"] is False for plane in doc["correction"]["planes"])
    assert doc["achieved_grade"] > 2.5


def test_every_option_validates_against_the_schema(disk, tmp_path):
    result = invoke(
        disk, "--axis-point", "0.1,0,0", "--axis-direction", "0,0.05,1", "--rpm", "12000", "--grade", "G 1",
        "--density", DENSITY, "--bearings", "-30,25", "--planes", "-4,4", "--correction-radius", "35",
        "--angle-reference", "0,1,0", "--precession-axis", "1,0,0", "--precession-rate", "0.8", "--json",
    )  # fmt: skip
    assert result.exit_code == (0 if json.loads(result.stdout)["passes"] else 1), result.output
    doc = json.loads(result.stdout)
    jsonschema.validate(doc, SCHEMA)
    assert doc["correction_planes_from"] == "given"
    assert [p["position"] for p in doc["correction"]["planes"]] == pytest.approx([-0.004, 0.004])
    assert doc["correction"]["radius"] == pytest.approx(0.035)
    assert [b["position"] for b in doc["bearings"]] == pytest.approx([-0.03, 0.025])
    # the tilted shaft (0, 0.05, 1) sees a couple: (I_a − I_t) sin θ cos θ, θ = atan(0.05)
    theta = math.atan(0.05)
    assert doc["principal_tilt"]["angle"] == pytest.approx(theta, rel=1e-9)
    assert doc["couple_unbalance_g_mm2"] > 0.0
    # the bearing forces add up to the rotating unbalance force
    total = [sum(b["force"]["vector"][k] for b in doc["bearings"]) for k in range(3)]
    assert total == pytest.approx(doc["at_speed"]["unbalance_force"], rel=1e-9, abs=1e-12)
    assert doc["gyroscopic"]["magnitude"] > 0.0
    assert doc["flywheel"]["rim_speed"] > 0.0
    # the schema is not a rubber stamp: a missing headline key fails it
    broken = dict(doc)
    del broken["passes"]
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate(broken, SCHEMA)


def test_manifest_body_off_centre_validates_and_reads_its_own_unit(disk, tmp_path):
    # A body placed 0.1 mm off the shaft in a manifest whose unit is mm: m e again.
    manifest = tmp_path / "rotor.toml"
    manifest.write_text(
        f'[assembly]\nname = "fan"\nlength_unit = "mm"\nmanifest_version = 1\n\n[[body]]\nname = "disk"\nmesh = "{disk.name}"\n'
        f"density = {DENSITY}\ntranslation = [0, 0.1, 0]\n"
    )
    result = invoke(manifest, *shaft(), "--json")
    assert result.exit_code == (0 if json.loads(result.stdout)["passes"] else 1), result.output
    doc = json.loads(result.stdout)
    jsonschema.validate(doc, SCHEMA)
    assert doc["input"]["kind"] == "manifest"
    assert doc["static_unbalance_g_mm"] == pytest.approx(disk_mass() * 1e3 * 0.1, rel=1e-9)
    assert doc["static_unbalance"]["angle_deg"] == pytest.approx(90.0, abs=1e-9)
    refused = invoke(manifest, *shaft(), "--units", "mm")
    assert refused.exit_code == 2


def test_table_is_readable_and_carries_the_cautions(disk):
    result = invoke(disk, *shaft(0.01), "--density", DENSITY, "--correction-radius", "30", "--bearings", "-20,20")
    assert result.exit_code == 0, result.output
    text = result.stdout
    assert "Balance grade G 6.3: the part as modelled PASSES" in text
    assert "g*mm" in text and "Rotating bearing forces" in text and "Free spin" in text
    assert text.count("CAUTION:") == 4
    assert "balancing machine" in text


def test_output_file_is_written(disk, tmp_path):
    target = tmp_path / "balance.json"
    result = invoke(disk, *shaft(), "--density", DENSITY, "--json", "--output", target)
    assert result.exit_code == 0, result.output
    assert result.stdout == ""
    jsonschema.validate(json.loads(target.read_text()), SCHEMA)


def console_script() -> Path:
    script = Path(sys.executable).with_name("meshprops")
    assert script.exists(), f"the console script is not installed beside {sys.executable}"
    return script


def test_real_console_script_prints_the_json(disk):
    done = subprocess.run(
        [str(console_script()), "balance", str(disk), *shaft(0.05), "--density", str(DENSITY), "--json"],
        capture_output=True, text=True, timeout=120,
    )  # fmt: skip
    assert done.returncode == (0 if json.loads(done.stdout)["passes"] else 1), done.stderr
    doc = json.loads(done.stdout)
    jsonschema.validate(doc, SCHEMA)
    assert doc["static_unbalance_g_mm"] == pytest.approx(disk_mass() * 1e3 * 0.05, rel=1e-9)


BAD = [
    (["--axis-direction", "0,0,0"], "axis direction"),
    (["--rpm", "-1500"], "rpm"),
    (["--rpm", "0"], "rpm"),
    (["--grade", "G5"], "balance grade"),
    (["--grade", "fast"], "balance grade"),
    (["--axis-point", "1,2"], "--axis-point"),
    (["--planes", "3,3"], "correction planes"),
    (["--bearings", "1;2"], "--bearings"),
    (["--correction-radius", "-4"], "correction radius"),
    (["--precession-rate", "1"], "precession"),
]


def with_override(override):
    args = dict(zip(shaft()[::2], shaft()[1::2]))
    extra = []
    for name, value in zip(override[::2], override[1::2]):
        if name in args:
            args[name] = value
        else:
            extra += [name, value]
    return [x for pair in args.items() for x in pair] + extra


@pytest.mark.parametrize(("override", "needle"), BAD)
def test_bad_input_is_one_line_and_exit_2(disk, capsys, override, needle):
    with pytest.raises(SystemExit) as done:
        main(["balance", str(disk), *with_override(override), "--density", str(DENSITY), "--json"])
    captured = capsys.readouterr()
    assert done.value.code == 2
    assert captured.out == ""
    lines = [line for line in captured.err.splitlines() if line.strip()]
    assert len(lines) == 1, captured.err
    assert lines[0].startswith("meshprops: error: ") and needle in lines[0]
    assert "Traceback" not in captured.err


def test_bad_input_through_the_console_script(disk):
    done = subprocess.run(
        [str(console_script()), "balance", str(disk), *with_override(["--axis-direction", "0,0,0"])],
        capture_output=True, text=True, timeout=120,
    )  # fmt: skip
    assert done.returncode == 2
    assert done.stdout == ""
    assert done.stderr.strip().count("\n") == 0 and "axis direction" in done.stderr


def test_invalid_mesh_gives_no_numbers(tmp_path, capsys):
    path = tmp_path / "open.obj"
    path.write_text("v 0 0 0\nv 1 0 0\nv 0 1 0\nv 0 0 1\nf 1 3 2\nf 1 2 4\nf 2 3 4\n")
    with pytest.raises(SystemExit) as done:
        main(["balance", str(path), *shaft(), "--json"])
    captured = capsys.readouterr()
    assert done.value.code == 1
    assert captured.out == ""
    assert len(captured.err.strip().splitlines()) == 1 and "open" in captured.err


def test_missing_file_is_exit_2(tmp_path, capsys):
    with pytest.raises(SystemExit) as done:
        main(["balance", str(tmp_path / "nowhere.stl"), *shaft()])
    assert done.value.code == 2
    assert len(capsys.readouterr().err.strip().splitlines()) == 1
