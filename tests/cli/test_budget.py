"""``meshprops budget`` through the CLI: the roll-up as a table and as JSON, margins, exit codes."""

from __future__ import annotations

import json

import jsonschema
import pytest
from paths import ROOT
from typer.testing import CliRunner

from meshprops.cli import app

runner = CliRunner()
SCHEMAS = ROOT / "meshprops" / "schema"
BUDGET_SCHEMA = json.loads((SCHEMAS / "budget.schema.json").read_text())


BUDGET = """
[[files]]
glob = "exports/**/*.stl"
material = "aluminium_6061"
subsystem = "structure"

[budget]
name = "desk_top_rover"
allocation = 0.5

[[budget.subsystem]]
name = "structure"
allocation = 0.2

[[budget.subsystem]]
name = "electronics"
allocation = 0.1

[[budget.item]]
name = "controller board"
subsystem = "electronics"
maturity = "measured"
mass = 0.085
"""


def test_budget_table_and_json(folder):
    (folder / "meshprops.toml").write_text(BUDGET)
    table = runner.invoke(app, ["budget"])
    assert table.exit_code == 0, table.output
    assert "structure" in table.stdout and "controller board" in table.stdout and "S-120" in table.stdout
    result = runner.invoke(app, ["budget", "--json"])
    doc = json.loads(result.stdout)
    jsonschema.validate(doc, BUDGET_SCHEMA)
    structure, electronics = doc["budget"]["subsystems"]
    # plate 0.162 kg + bracket 0.0108 kg, calculated (5 %): predicted 0.18144 kg of 0.2 kg
    assert structure["basic_mass"] == pytest.approx(0.1728) and structure["predicted_mass"] == pytest.approx(0.18144)
    assert structure["margin"] == pytest.approx(0.01856) and structure["verdict"] == "pass"
    assert electronics["predicted_mass"] == pytest.approx(0.085)  # measured: no growth
    assert doc["budget"]["margin"] == pytest.approx(0.5 - 0.18144 - 0.085)


def test_budget_without_configuration_and_a_bad_configuration(folder):
    result = runner.invoke(app, ["budget"])
    assert result.exit_code == 2 and "no [budget]" in result.stderr
    (folder / "meshprops.toml").write_text("[[rule]]\nglob = '*.stl'\nexpected_mass = 'heavy'\n")
    result = runner.invoke(app, ["check", "exports/plate.stl"])
    assert result.exit_code == 2 and "Traceback" not in result.output
    (line,) = [line for line in result.stderr.splitlines() if line]
    assert line.endswith("meshprops.toml: line 3: rule[0].expected_mass: expected a mass in kg, got a string 'heavy'")

def test_a_negative_margin_fails_check_and_budget_naming_the_subsystem(folder):
    (folder / "meshprops.toml").write_text(BUDGET.replace("allocation = 0.2", "allocation = 0.18"))
    result = runner.invoke(app, ["budget"])
    assert result.exit_code == 1 and "subsystem 'structure'" in result.stderr
    check = runner.invoke(app, ["check", "exports/plate.stl"])
    assert check.exit_code == 1 and "budget: subsystem 'structure': predicted 0.18144 kg" in check.stderr

