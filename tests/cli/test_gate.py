"""``meshprops baseline``, ``meshprops budget`` and the gate inside ``meshprops check``, through the CLI."""

from __future__ import annotations

import json
import shutil

import jsonschema
import pytest
from parts import write_box as _box
from paths import ROOT, TESTS
from typer.testing import CliRunner

from meshprops.cli import app

runner = CliRunner()
SCHEMAS = ROOT / "meshprops" / "schema"
CHECK_SCHEMA = json.loads((SCHEMAS / "check.schema.json").read_text())
WARNING_PART = TESTS / "meshes" / "warnings" / "collapsed_faces__plate-with-collapsed-face.stl"
OPEN_PART = TESTS / "meshes" / "invalid" / "open_edges__chassis-plate-missing-face.stl"


def _check(*args):
    result = runner.invoke(app, ["check", *args, "--json"])
    return result, json.loads(result.stdout) if result.stdout.strip().startswith("{") else None


def test_unchanged_files_are_not_read_again(folder, monkeypatch):
    assert runner.invoke(app, ["baseline"]).exit_code == 0

    def refuse(*args):
        raise AssertionError("an unchanged file was read")

    monkeypatch.setattr("meshprops.gate.runner.measure_for_gate", refuse)
    result, doc = _check("exports/plate.stl", "exports/sub/bracket.stl")
    assert result.exit_code == 0, result.output
    jsonschema.validate(doc, CHECK_SCHEMA)
    assert [f["status"] for f in doc["files"]] == ["unchanged", "unchanged"]
    assert doc["files"][0]["mesh"] is None and doc["files"][0]["numbers"]["mass"] == pytest.approx(0.06)


def test_a_change_beyond_tolerance_fails_and_rerecording_lets_it_pass(folder):
    assert runner.invoke(app, ["baseline"]).exit_code == 0
    _box(folder / "exports" / "plate.stl", (100.0, 60.0, 10.05))  # +0.5 % mass
    result, doc = _check("exports/plate.stl")
    assert result.exit_code == 1
    assert "exports/plate.stl: baseline: mass changed from 0.06 kg to 0.0603 kg" in result.stderr
    jsonschema.validate(doc, CHECK_SCHEMA)
    (entry,) = doc["files"]
    assert entry["status"] == "changed" and entry["passed"] is False
    verdicts = {v["quantity"]: v for v in entry["rules"]}
    assert verdicts["mass"]["verdict"] == "fail" and verdicts["mass"]["limit"] == [-1e-3, 1e-3]
    assert verdicts["mass"]["old"] == pytest.approx(0.06) and verdicts["mass"]["change"] == pytest.approx(0.0003, rel=1e-4)  # float32 STL coordinates
    assert verdicts["center_of_mass_shift"]["verdict"] == "pass"  # 0.025 mm of a 117 mm part, limit 0.117 mm
    assert runner.invoke(app, ["baseline", "exports/plate.stl"]).exit_code == 0
    result, doc = _check("exports/plate.stl", "exports/sub/bracket.stl")
    assert result.exit_code == 0 and [f["status"] for f in doc["files"]] == ["unchanged", "unchanged"]


def test_a_small_change_within_tolerance_passes_as_changed(folder):
    assert runner.invoke(app, ["baseline"]).exit_code == 0
    _box(folder / "exports" / "plate.stl", (100.0, 60.0, 10.0), unit_scale=1.0 + 1e-5)  # new bytes, 3e-5 more mass
    result = runner.invoke(app, ["check", "exports/plate.stl"])
    assert result.exit_code == 0, result.output
    assert "changed" in result.stdout and "within the baseline's tolerances" in result.stdout


def test_a_new_file_is_validated_and_noted(folder):
    assert runner.invoke(app, ["baseline", "exports/plate.stl"]).exit_code == 0
    result = runner.invoke(app, ["check", "exports/plate.stl", "exports/sub/bracket.stl"])
    assert result.exit_code == 0 and "new: not in the baseline" in result.stdout
    shutil.copy(OPEN_PART, folder / "exports" / "open.stl")
    result, doc = _check("exports/open.stl")
    assert result.exit_code == 1 and doc["files"][0]["status"] == "invalid" and doc["files"][0]["numbers"] is None


def test_units_and_materials_per_glob_and_rules(folder):
    # one inch cube of PLA next to millimetre aluminium parts: 1 in^3 = 16.387064 cm^3 exactly
    _box(folder / "exports" / "inch" / "cube.stl", (1.0, 1.0, 1.0))
    (folder / "meshprops.toml").write_text(
        "[[files]]\nglob = 'exports/inch/*.stl'\nlength_unit = 'in'\nmaterial = 'pla'\n"
        "[[files]]\nglob = 'exports/**/*.stl'\nmaterial = 'aluminium_6061'\n"
        "[[rule]]\nglob = 'exports/plate.stl'\nexpected_mass = 0.160\nmass_tolerance = 0.001\n"
        "center_of_mass_min = [0, 0, 0]\ncenter_of_mass_max = [100, 60, 10]\n"
    )
    result, doc = _check("exports/plate.stl", "exports/inch/cube.stl")
    assert result.exit_code == 1  # 0.162 kg is outside 0.160 +- 0.001
    jsonschema.validate(doc, CHECK_SCHEMA)
    plate, cube = doc["files"]
    assert cube["numbers"]["mass"] == pytest.approx(16.387064e-6 * 1240)  # PLA 1240 kg/m^3 from the table
    assert cube["settings"]["length_unit"] == "in" and plate["settings"]["material"] == "aluminium_6061"
    mass = plate["rules"][0]
    assert (mass["quantity"], mass["verdict"], mass["limit"]) == ("mass", "fail", [pytest.approx(0.159), pytest.approx(0.161)])
    assert mass["value"] == pytest.approx(0.162)
    assert [r["verdict"] for r in plate["rules"][1:]] == ["pass"] * 3
    assert "rule[0].expected_mass" == mass["key"] and "exports/plate.stl: expected_mass: mass 0.162 kg" in result.stderr


def test_fail_on_warning(folder):
    shutil.copy(WARNING_PART, folder / "exports" / "spacer.stl")
    assert runner.invoke(app, ["check", "exports/spacer.stl"]).exit_code == 0
    (folder / "meshprops.toml").write_text("fail_on = 'warning'\n")
    result = runner.invoke(app, ["check", "exports/spacer.stl"])
    assert result.exit_code == 1 and "collapsed_faces" in result.stdout and 'fail_on = "warning"' in result.stderr


def test_ci_mode_checks_everything_and_notices_a_deleted_part(folder):
    assert runner.invoke(app, ["baseline"]).exit_code == 0
    assert runner.invoke(app, ["check", "--all"]).exit_code == 0
    (folder / "exports" / "sub" / "bracket.stl").unlink()
    result, doc = _check("--all")
    assert result.exit_code == 1 and "exports/sub/bracket.stl" in result.stderr
    assert [f["status"] for f in doc["files"]] == ["unchanged", "missing"]
    no_arguments = runner.invoke(app, ["check"])
    assert no_arguments.exit_code == 2 and "--all" in no_arguments.stderr


def test_the_gates_own_files_passed_by_pre_commit_are_not_read_as_meshes(folder):
    (folder / "meshprops.toml").write_text("fail_on = 'error'\n")
    assert runner.invoke(app, ["baseline"]).exit_code == 0
    result = runner.invoke(app, ["check", "meshprops.toml", "meshprops-baseline.json", "exports/plate.stl"])
    assert result.exit_code == 0, result.output


def test_a_mass_rule_needs_a_declared_density(folder):
    (folder / "meshprops.toml").write_text("[[rule]]\nglob = 'exports/*.stl'\nexpected_mass = 0.06\nmass_tolerance = 0.001\n")
    result = runner.invoke(app, ["check", "exports/plate.stl"])
    assert result.exit_code == 2 and "has no declared density" in result.stderr
    assert runner.invoke(app, ["check", "exports/plate.stl", "--density", "1000"]).exit_code == 0


def test_the_published_hook_runs_on_the_gates_own_files_too():
    import re

    import yaml

    (hook,) = yaml.safe_load((ROOT / ".pre-commit-hooks.yaml").read_text())
    pattern = re.compile(hook["files"])
    assert all(pattern.search(n) for n in ("a.stl", "meshprops.toml", "sub/pyproject.toml", "meshprops-baseline.json"))
    assert not any(pattern.search(n) for n in ("rover.toml", "old-meshprops.toml", "notes.json"))
    assert hook["verbose"] is True  # warnings are printed even when the commit goes through


def test_an_unchanged_part_keeps_its_recorded_warnings(folder, monkeypatch):
    shutil.copy(WARNING_PART, folder / "exports" / "spacer.stl")
    assert runner.invoke(app, ["baseline"]).exit_code == 0
    recorded = json.loads((folder / "meshprops-baseline.json").read_text())["files"]["exports/spacer.stl"]["warnings"]
    assert [w["code"] for w in recorded] == ["collapsed_faces"]
    monkeypatch.setattr("meshprops.gate.runner.measure_for_gate", lambda *a: pytest.fail("read again"))
    result, doc = _check("exports/spacer.stl")
    assert result.exit_code == 0 and doc["files"][0]["status"] == "unchanged"
    assert [f["code"] for f in doc["files"][0]["findings"]] == ["collapsed_faces"]
    (folder / "meshprops.toml").write_text("fail_on = 'warning'\n")
    assert runner.invoke(app, ["check", "exports/spacer.stl"]).exit_code == 1


def test_check_report_draws_a_file_the_gate_skipped(folder):
    assert runner.invoke(app, ["baseline"]).exit_code == 0
    result = runner.invoke(app, ["check", "exports/plate.stl", "--report", "page.html"])
    assert result.exit_code == 0, result.output
    page = (folder / "page.html").read_text()
    assert "exports/plate.stl" in page and "<svg" in page


def test_the_gate_measures_across_worker_processes_with_the_same_result(folder):
    _box(folder / "exports" / "third.stl", (30.0, 30.0, 30.0))
    (folder / "meshprops.toml").write_text("[[files]]\nglob = 'exports/**/*.stl'\nmaterial = 'aluminium_6061'\n")
    files = ["exports/plate.stl", "exports/sub/bracket.stl", "exports/third.stl"]
    serial, serial_doc = _check(*files, "--jobs", "1")
    pooled, pooled_doc = _check(*files, "--jobs", "2")  # a real local process pool of two workers
    assert serial.exit_code == pooled.exit_code == 0
    assert pooled_doc["files"] == serial_doc["files"]
    refused = runner.invoke(app, ["check", *files, "--cache", "results.sqlite"])
    assert refused.exit_code == 2 and "while the gate is in force" in refused.stderr
