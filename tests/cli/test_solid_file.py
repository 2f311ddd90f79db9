"""``measure --write-solid PATH``: the surface actually integrated, as binary STL or PLY, never over an input."""

from __future__ import annotations

import json

import pytest
from paths import TESTS
from typer.testing import CliRunner

from meshprops.cli import app
from meshprops.io import load_mesh

runner = CliRunner()
WARNINGS = TESTS / "meshes" / "warnings"


def _measure(*args):
    result = runner.invoke(app, ["measure", *map(str, args), "--json", "--density", "2700"])
    return result, (json.loads(result.stdout) if result.stdout.strip() else None)


def test_write_solid_writes_the_surface_integrated(tmp_path):
    source = WARNINGS / "shells_overlap__two-overlapping-cubes.stl"
    target = tmp_path / "solid.stl"
    result, doc = _measure(source, "--write-solid", target)
    assert result.exit_code == 0, result.output
    solid = load_mesh(target, "mm")
    again, written = _measure(target)
    assert again.exit_code == 0 and written["bodies"][0]["findings"] == []  # one closed shell now
    assert written["bodies"][0]["volume"] == pytest.approx(doc["bodies"][0]["volume"], rel=1e-12)
    assert solid.face_count > 0
    ply = tmp_path / "solid.ply"
    assert _measure(source, "--write-solid", ply)[0].exit_code == 0
    assert load_mesh(ply, "mm").face_count == solid.face_count


def test_write_solid_refuses_the_input_and_other_extensions(tmp_path):
    source = tmp_path / "part.stl"
    source.write_bytes((WARNINGS / "shells_overlap__two-overlapping-cubes.stl").read_bytes())
    before = source.read_bytes()
    result = runner.invoke(app, ["measure", str(source), "--write-solid", str(source)])
    assert result.exit_code == 2 and "--write-solid" in result.stderr
    assert source.read_bytes() == before
    result = runner.invoke(app, ["measure", str(source), "--write-solid", str(tmp_path / "solid.obj")])
    assert result.exit_code == 2
