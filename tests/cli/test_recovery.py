"""Real CAD exports measured, not refused (issue 8): the recovery options of ``measure`` and
``check``, ``--write-solid``, and the plain shell sum beside the union in JSON."""

from __future__ import annotations

import json

import numpy as np
import pytest
from paths import TESTS
from typer.testing import CliRunner

from meshprops.cli import app

runner = CliRunner()
WARNINGS = TESTS / "meshes" / "warnings"
INVALID = TESTS / "meshes" / "invalid"
DENSITY = 2700.0  # aluminium, kg/m^3 (common practice)


def _measure(*args):
    result = runner.invoke(app, ["measure", *map(str, args), "--json", "--density", str(DENSITY)])
    return result, (json.loads(result.stdout) if result.stdout.strip() else None)


def test_two_overlapping_cubes_union_by_inclusion_exclusion_and_the_reference_library_off_by_the_overlap():
    # Cubes of 40 mm at the origin and at (20, 10, 0) mm: overlap 20 x 30 x 40 mm = 24000 mm^3 centred at
    # (10, 5, 0). Inclusion–exclusion: V = 64000 + 64000 − 24000 = 104000 mm^3,
    # c = (64000·(20, 10, 0) − 24000·(10, 5, 0)) / 104000 (the first cube's centre is the origin).
    path = WARNINGS / "shells_overlap__two-overlapping-cubes.stl"
    result, doc = _measure(path)
    assert result.exit_code == 0, result.output
    body = doc["bodies"][0]
    assert body["volume"] == pytest.approx(104000e-9, rel=1e-12)
    expected_center = (64000 * np.array([20.0, 10.0, 0.0]) - 24000 * np.array([10.0, 5.0, 0.0])) / 104000 * 1e-3
    np.testing.assert_allclose(body["center_of_mass"], expected_center, atol=1e-15)
    (finding,) = [f for f in body["findings"] if f["code"] == "shells_overlap"]
    assert finding["severity"] == "warning" and finding["volume_change"] == pytest.approx(-24000e-9, rel=1e-12)
    assert "kg" in finding["message"]  # the mass counted twice is named too
    # The plain sum of the shells is kept in JSON, and it is what the reference library (trimesh's mass
    # properties, an independent library) reports: off by exactly the overlap volume.
    trimesh = pytest.importorskip("trimesh")
    reference = trimesh.load(path, force="mesh").mass_properties
    assert body["shell_sum"]["volume"] == pytest.approx(reference["volume"] * 1e-9, rel=1e-12)
    assert reference["volume"] - body["volume"] * 1e9 == pytest.approx(24000.0, rel=1e-9)


def test_nested_cube_wound_outward_is_the_outer_cube_and_the_l_bracket_is_its_union():
    # The outer 60 mm cube alone: V = 60^3 mm^3, centre at the origin (the inner cube adds nothing).
    _, doc = _measure(WARNINGS / "shells_overlap__cube-with-a-nested-cube-wound-outward.stl")
    body = doc["bodies"][0]
    assert body["volume"] == pytest.approx(216000e-9, rel=1e-12)
    np.testing.assert_allclose(body["center_of_mass"], 0.0, atol=1e-15)
    # L bracket: arms 60x20x20 (x 0..60, y 0..20, z 0..20) and 20x60x24 (x 0..20, y 0..60, z -2..22) and a
    # corner block 24x24x16 (x 0..24, y 0..24, z 2..18). Inclusion–exclusion with the pairwise overlaps
    # A∩B = 20·20·20, A∩C = 24·20·16, B∩C = 20·24·16 and the triple A∩B∩C = 20·20·16:
    # V = 24000 + 28800 + 9216 − 8000 − 7680 − 7680 + 6400 = 45056 mm^3.
    _, doc = _measure(WARNINGS / "shells_overlap__l-bracket-of-three-overlapping-boxes.obj")
    assert doc["bodies"][0]["volume"] == pytest.approx(45056e-9, rel=1e-12)


def test_strict_refuses_what_the_default_recovers():
    for path in sorted(WARNINGS.glob("*.stl")):
        code = path.name.split("__")[0]
        if code not in ("shells_overlap", "cracks_closed", "crossing_bounded"):
            continue
        result, doc = _measure(path, "--strict")
        assert result.exit_code == 1, path.name
        assert doc["bodies"][0]["mass"] is None
        checked = runner.invoke(app, ["check", str(path), "--strict", "--json"])
        assert checked.exit_code == 1, path.name


def test_the_crack_tolerance_can_be_turned_off_or_set():
    path = WARNINGS / "cracks_closed__cube-with-a-crack-of-1e-7-of-its-size.stl"
    result, doc = _measure(path)
    assert result.exit_code == 0
    (finding,) = doc["bodies"][0]["findings"]
    assert finding["code"] == "cracks_closed" and finding["count"] == 1
    assert doc["bodies"][0]["volume"] == pytest.approx(125000e-9, rel=1e-9)  # 50^3 mm^3 (handbook)
    result, doc = _measure(path, "--weld-tolerance", "0")
    assert result.exit_code == 1 and "open_edges" in {f["code"] for f in doc["bodies"][0]["findings"]}
    result, doc = _measure(path, "--weld-tolerance", "1e-9")  # narrower than the 5e-6 mm gap
    assert result.exit_code == 1
    result = runner.invoke(app, ["measure", str(path), "--weld-tolerance", "-1"])
    assert result.exit_code == 2 and "weld tolerance" in result.stderr


def test_a_crossing_sliver_is_bounded_and_the_volume_tolerance_decides():
    path = WARNINGS / "crossing_bounded__torus-with-a-crossing-sliver.stl"
    result, doc = _measure(path)
    assert result.exit_code == 0, result.output
    (finding,) = doc["bodies"][0]["findings"]
    assert finding["code"] == "crossing_bounded" and 0 < finding["volume_change"] < 1e-6 * doc["bodies"][0]["volume"]
    result, doc = _measure(path, "--volume-tolerance", "1e-9")
    assert result.exit_code == 1
    assert {f["code"] for f in doc["bodies"][0]["findings"]} == {"self_intersection"}


def test_measure_and_check_report_the_same_findings():
    for path in sorted(WARNINGS.glob("*.obj")) + sorted(INVALID.glob("*.obj")):
        _, doc = _measure(path)
        checked = json.loads(runner.invoke(app, ["check", str(path), "--json"]).stdout)
        measured = [(f["code"], f["count"]) for f in doc["bodies"][0]["findings"]]
        assert measured == [(f["code"], f["count"]) for f in checked["files"][0]["findings"]], path.name
