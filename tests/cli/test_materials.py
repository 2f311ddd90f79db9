"""``meshprops materials``: the built-in table as text and as JSON, every density with its source."""

from __future__ import annotations

import json

from typer.testing import CliRunner

from meshprops.cli import app
from meshprops.materials import MATERIALS

runner = CliRunner()


def test_json_lists_every_material_with_density_and_source():
    result = runner.invoke(app, ["materials", "--json"])
    assert result.exit_code == 0 and result.stderr == ""
    doc = json.loads(result.stdout)
    assert doc["schema"] == "meshprops.materials" and doc["units"] == {"density": "kg/m^3"}
    assert [m["name"] for m in doc["materials"]] == list(MATERIALS)
    for entry in doc["materials"]:
        material = MATERIALS[entry["name"]]
        assert entry["density"] == material.density and entry["source"] and isinstance(entry["from_memory"], bool)


def test_table_shows_every_material_and_the_note():
    result = runner.invoke(app, ["materials"])
    assert result.exit_code == 0
    lines = result.stdout.splitlines()
    assert lines[0].split() == ["name", "density", "kg/m^3", "source"]
    for name, material in MATERIALS.items():
        row = next(line for line in lines if line.startswith(name + " "))
        assert row.split()[1] == f"{material.density:g}"
    assert "verify before relying on it" in result.stdout


def test_an_unknown_option_is_a_usage_error():
    result = runner.invoke(app, ["materials", "--yaml"])
    assert result.exit_code == 2
