"""``meshprops baseline`` through the CLI: what it records, and what it refuses."""

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
BASELINE_SCHEMA = json.loads((SCHEMAS / "baseline.schema.json").read_text())
OPEN_PART = TESTS / "meshes" / "invalid" / "open_edges__chassis-plate-missing-face.stl"


def test_baseline_records_every_mesh_below_with_stable_bytes(folder):
    _box(folder / ".venv" / "ignored.stl", (1.0, 1.0, 1.0))
    (folder / "notes.txt").write_text("not a mesh")
    first = runner.invoke(app, ["baseline"])
    assert first.exit_code == 0, first.output
    doc = json.loads((folder / "meshprops-baseline.json").read_text())
    jsonschema.validate(doc, BASELINE_SCHEMA)
    assert list(doc["files"]) == ["exports/plate.stl", "exports/sub/bracket.stl"]
    # no configuration: mm and an assumed 1000 kg/m^3, so 60 cm^3 weighs 0.06 kg
    assert doc["files"]["exports/plate.stl"]["mass"] == pytest.approx(0.06)
    before = (folder / "meshprops-baseline.json").read_bytes()
    assert runner.invoke(app, ["baseline"]).exit_code == 0
    assert (folder / "meshprops-baseline.json").read_bytes() == before


def test_baseline_refuses_an_invalid_mesh_and_writes_nothing(folder):
    shutil.copy(OPEN_PART, folder / "exports" / "open.stl")
    result = runner.invoke(app, ["baseline"])
    assert result.exit_code == 1 and "open.stl" in result.stderr and "open_edges" in result.stderr
    assert not (folder / "meshprops-baseline.json").exists()
