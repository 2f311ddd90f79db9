"""Every JSON document meshprops prints validates against its published schema."""

import json

import jsonschema
import pytest
from paths import ROOT
from typer.testing import CliRunner

from meshprops.cli import app

ROOT = ROOT
SCHEMA = json.loads((ROOT / "meshprops" / "schema" / "measure.schema.json").read_text())
SAMPLES = sorted(p for p in (ROOT / "sample_meshes").iterdir() if p.suffix in (".stl", ".obj", ".ply"))


def test_there_are_samples_in_every_format():
    assert {p.suffix for p in SAMPLES} == {".stl", ".obj", ".ply"}


@pytest.mark.parametrize("sample", SAMPLES, ids=lambda p: p.name)
def test_sample_json_validates(sample):
    result = CliRunner().invoke(
        app, ["measure", str(sample), "--json", "--density", "2700", "--about", "0,0,10", "--spin", "0,0,100"]
    )
    assert result.exit_code == 0, result.output
    doc = json.loads(result.stdout)
    jsonschema.validate(doc, SCHEMA)
    body = doc["bodies"][0]
    assert body["valid"] is True and body["mass"] > 0
    assert set(body["spin"]) >= {"angular_momentum_about_com", "kinetic_energy"}


def test_invalid_body_validates_with_null_numbers(tmp_path):
    path = tmp_path / "open.obj"
    path.write_text("v 0 0 0\nv 1 0 0\nv 0 1 0\nv 0 0 1\nf 1 3 2\nf 1 2 4\nf 2 3 4\n")
    result = CliRunner().invoke(app, ["measure", str(path), "--json", "--density", "1000"])
    assert result.exit_code == 1
    doc = json.loads(result.stdout)
    jsonschema.validate(doc, SCHEMA)
    body = doc["bodies"][0]
    assert body["valid"] is False
    assert body["mass"] is None and body["inertia_about_com"] is None
    assert any(f["code"] == "open_edges" and f["severity"] == "error" for f in body["findings"])


CHECK_SCHEMA = json.loads((ROOT / "meshprops" / "schema" / "check.schema.json").read_text())
EXAMPLES = ROOT / "tests" / "meshes"


def test_check_json_validates_over_the_example_folders():
    files = sorted(str(p) for folder in ("valid", "warnings", "invalid") for p in (EXAMPLES / folder).glob("*.obj"))
    assert files, "the example folders are empty"
    result = CliRunner().invoke(app, ["check", *files, "--json"])
    assert result.exit_code == 1, result.output  # the invalid folder holds errors
    doc = json.loads(result.stdout)
    jsonschema.validate(doc, CHECK_SCHEMA)
    assert doc["summary"]["files"] == len(files)
    assert doc["summary"]["errors"] > 0 and doc["summary"]["valid"] < len(files)


def test_measure_json_of_a_hollow_part_reports_its_void():
    result = CliRunner().invoke(app, ["measure", str(ROOT / "sample_meshes" / "counterweight.stl"), "--json", "-d", "8500"])
    assert result.exit_code == 0, result.output
    doc = json.loads(result.stdout)
    jsonschema.validate(doc, SCHEMA)
    assert doc["bodies"][0]["mesh"]["shells"] == 2 and doc["bodies"][0]["mesh"]["voids"] == 1


def test_assembly_total_has_every_key_a_mesh_body_has_in_the_core_document(tmp_path):
    """Issue contract: `total` has the same keys as a body. Compare with a plain mesh body."""
    manifest = ROOT / "sample_meshes" / "rover.toml"
    assembly = CliRunner().invoke(app, ["measure", str(manifest), "--json", "--about", "0,0,0", "--spin", "0,0,3"])
    assert assembly.exit_code == 0, assembly.output
    doc = json.loads(assembly.stdout)
    jsonschema.validate(doc, SCHEMA)
    single = CliRunner().invoke(
        app, ["measure", str(ROOT / "sample_meshes" / "motor_can.ply"), "--json", "--about", "0,0,0", "--spin", "0,0,3"]
    )
    core_keys = set(json.loads(single.stdout)["bodies"][0])
    assert core_keys <= set(doc["total"]), core_keys - set(doc["total"])
    for body in doc["bodies"]:  # and literally the keys of every assembly item
        assert set(body) - {"own_inertia_given", "box_size"} <= set(doc["total"]), set(body) - set(doc["total"])
    assert all("name" in body for body in doc["bodies"])
    point_masses = [body for body in doc["bodies"] if body["kind"] == "point_mass"]
    assert point_masses and all(body["mass"] > 0 for body in point_masses)
    assert doc["total"]["mass"] == pytest.approx(sum(body["mass"] for body in doc["bodies"]), rel=1e-12)
