"""``meshprops check`` through the command line: table, exit codes, units; shell statistics in measure JSON.
"""

from __future__ import annotations

import json

from meshes import (
    catalogue,  # tests/meshes/catalogue.py (tests/ is on sys.path; see conftest.py)
)
from typer.testing import CliRunner

from meshprops.cli import app
from meshprops.geometry import shapes
from meshprops.io import writers

runner = CliRunner()


def test_check_command_table_lists_each_finding_with_its_faces(tmp_path):
    vertices, faces = shapes.box(catalogue.PLATE)
    flipped = faces.copy()
    flipped[3] = flipped[3][::-1]
    path = tmp_path / "plate.obj"
    writers.write_obj(path, vertices, flipped)
    result = runner.invoke(app, ["check", str(path)])
    assert result.exit_code == 1
    row = next(line for line in result.stdout.splitlines() if "inconsistent_winding" in line)
    assert row.split()[:4] == ["error", "inconsistent_winding", "1", "3"]
    assert "INVALID" in result.stdout
    errors = [line for line in result.stderr.splitlines() if line.strip()]
    assert len(errors) == 1 and errors[0].startswith("meshprops: ") and "inconsistent_winding" in errors[0]


def test_check_command_exit_codes_and_units(tmp_path):
    path = tmp_path / "plate.stl"
    writers.write_binary_stl(path, shapes.triangles_of(*shapes.box(catalogue.PLATE)))
    clean = runner.invoke(app, ["check", str(path)])
    assert clean.exit_code == 0 and "no findings" in clean.stdout
    warned = runner.invoke(app, ["check", str(path), "--units", "m", "--json"])
    assert warned.exit_code == 0  # warnings are printed and allowed (issue 10; was 3)
    doc = json.loads(warned.stdout)
    summary = doc["summary"]
    assert doc["schema"] == "meshprops.check"
    assert {k: summary[k] for k in ("files", "valid", "errors", "warnings")} == {"files": 1, "valid": 1, "errors": 0, "warnings": 1}
    assert doc["gate"]["passed"] is True and doc["budget"] is None
    assert summary["unreadable"] == 0
    assert doc["files"][0]["mesh"]["length_unit"] == "m"
    missing = runner.invoke(app, ["check", str(tmp_path / "absent.stl")])
    assert missing.exit_code == 2 and "no such file" in missing.stderr and "Traceback" not in missing.stderr
    bad_unit = runner.invoke(app, ["check", str(path), "--units", "furlong"])
    assert bad_unit.exit_code == 2 and "furlong" in bad_unit.stderr


def test_measure_json_reports_shell_statistics(tmp_path):
    path = tmp_path / "block.obj"
    writers.write_obj(path, *shapes.hollow_box(*catalogue.RING))
    result = runner.invoke(app, ["measure", str(path), "--json", "--density", "1000"])
    assert result.exit_code == 0
    mesh = json.loads(result.stdout)["bodies"][0]["mesh"]
    assert (mesh["shells"], mesh["voids"], mesh["holes"]) == (2, 1, 0)


def test_the_default_volume_tolerance_is_the_validation_s():
    # check builds no SolidOptions when every recovery option is at its default (so that a run
    # the cache serves loads no validation code); the two defaults must stay one number.
    from meshprops.cli.check import DEFAULT_VOLUME_TOLERANCE
    from meshprops.validation.solid import SolidOptions

    assert DEFAULT_VOLUME_TOLERANCE == SolidOptions().volume_tolerance
