"""Safe repairs (meshprops.validation.repair, ``measure --repair``): each broken fixture, once repaired,
gives the closed-form mass properties of the solid it was meant to be (box: m = rho a b c,
I_xx = m (b^2 + c^2) / 12, handbook formula, common practice; parts combined with the
parallel-axis theorem); what cannot be repaired safely stays an error."""

from __future__ import annotations

import json

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from meshes import (
    catalogue,  # tests/meshes/catalogue.py (tests/ is on sys.path; see conftest.py)
)
from paths import TESTS
from typer.testing import CliRunner

from meshprops import measure_mesh, mesh_from_arrays
from meshprops.cli import app
from meshprops.geometry import shapes
from meshprops.io import writers
from meshprops.validation.findings import ERROR, WARNING
from meshprops.validation.repair import repair_mesh

HERE = TESTS
runner = CliRunner()
DENSITY = 2700.0  # aluminium, kg/m^3 (common practice)


CASES = catalogue.cases()
REPAIRABLE = [c for c in CASES if c.solid]
UNREPAIRABLE = [c for c in CASES if not c.solid and c.folder == "invalid"]
#: Cases the default validation recovers without --repair (issue 8): valid, with warnings only.
RECOVERED = [c for c in CASES if not c.solid and c.folder == "warnings"]


def _measure(vertices, faces, unit="mm", repair=True):
    mesh = mesh_from_arrays(vertices, faces, length_unit=unit, source="fixture")
    return measure_mesh(mesh, density=DENSITY, on_invalid="report", repair=repair)


def _assert_closed_form(body, solid, metres_per_unit=1e-3):
    mass, centre, inertia = catalogue.closed_form(solid, DENSITY, metres_per_unit)
    properties = body.properties
    assert properties.mass == pytest.approx(mass, rel=1e-12)
    scale = float(np.sqrt(np.abs(inertia).max() / mass))  # a length that sets the scale of the centre
    np.testing.assert_allclose(properties.center_of_mass, centre, rtol=0, atol=1e-12 * scale)
    np.testing.assert_allclose(properties.inertia_about_com, inertia, rtol=0, atol=1e-12 * np.abs(inertia).max())


@pytest.mark.parametrize("case", REPAIRABLE, ids=lambda c: c.name)
def test_repaired_mesh_has_the_closed_form_mass_properties(case):
    body = _measure(case.vertices, case.faces, case.length_unit)
    assert body.valid, [(f.code, f.message) for f in body.findings]
    codes = {f.code for f in body.findings}
    repairs = {c for c in codes if c.startswith("repaired_")}
    assert repairs == set(case.repair_codes)
    assert codes - repairs == set(case.repaired_codes)
    for finding in body.findings:
        assert finding.severity == WARNING
    _assert_closed_form(body, case.solid)


@pytest.mark.parametrize("case", UNREPAIRABLE, ids=lambda c: c.name)
def test_what_cannot_be_repaired_stays_an_error(case):
    body = _measure(case.vertices, case.faces, case.length_unit)
    assert not body.valid and body.properties is None
    errors = {f.code for f in body.findings if f.severity == ERROR}
    assert errors == {c for c in case.repaired_codes if c != "near_coincident_vertices"}
    assert "open_edges" not in {f.code for f in body.findings if f.code.startswith("repaired_")}


@pytest.mark.parametrize("case", RECOVERED, ids=lambda c: c.name)
def test_what_validation_recovers_stays_recovered_after_repair(case):
    body = _measure(case.vertices, case.faces, case.length_unit)
    assert body.valid, [(f.code, f.message) for f in body.findings]
    assert {f.code for f in body.findings} == set(case.repaired_codes)
    assert all(f.severity == WARNING for f in body.findings)


def test_repair_findings_point_at_the_faces_of_the_file_as_read():
    vertices, faces = shapes.box(catalogue.PLATE)
    faces = faces.copy()
    faces[7] = faces[7][::-1]
    # a collapsed face first, so that every later face shifts by one in the repaired mesh
    faces = np.vstack([[[0, 0, 6]], faces])
    body = _measure(vertices, faces)
    assert body.valid
    by_code = {f.code: f for f in body.findings}
    assert [p["face"] for p in by_code["repaired_degenerate_faces"].where] == [0]
    assert [p["face"] for p in by_code["repaired_winding"].where] == [8]
    centroid = vertices[faces[8]].mean(axis=0) * 1e-3
    np.testing.assert_allclose(by_code["repaired_winding"].where[0]["point"], centroid, rtol=1e-15)


def test_repairing_a_sound_mesh_changes_nothing():
    vertices, faces = shapes.hollow_box(*catalogue.RING)
    repaired = repair_mesh(mesh_from_arrays(vertices, faces))
    assert repaired.findings == () and not repaired.changed
    np.testing.assert_array_equal(repaired.mesh.faces, faces)
    plain, fixed = _measure(vertices, faces, repair=False), _measure(vertices, faces, repair=True)
    assert plain.findings == fixed.findings == ()
    assert fixed.properties.mass == plain.properties.mass
    np.testing.assert_array_equal(fixed.properties.inertia_about_com, plain.properties.inertia_about_com)


def test_repair_is_idempotent():
    vertices, faces = shapes.merge(shapes.box(catalogue.RING[0], inward=True), shapes.box(catalogue.RING[1]))
    once = repair_mesh(mesh_from_arrays(vertices, faces))
    assert {f.code for f in once.findings} == {"repaired_inside_out", "repaired_void_orientation"}
    twice = repair_mesh(once.mesh)
    assert twice.findings == ()


def test_a_shell_wound_mostly_the_wrong_way_is_reoriented_then_flipped_outward():
    vertices, faces = shapes.box(catalogue.PLATE)
    faces = faces.copy()
    wrong = [0, 1, 2, 3, 4, 5, 6]  # 7 of 12 faces: the majority is inward
    faces[wrong] = faces[wrong][:, ::-1]
    body = _measure(vertices, faces)
    by_code = {f.code: f for f in body.findings}
    assert set(by_code) == {"repaired_winding", "repaired_inside_out"}
    assert by_code["repaired_winding"].count == 5
    _assert_closed_form(body, (catalogue.Box(catalogue.PLATE),))


@settings(max_examples=25, deadline=None)
@given(
    st.lists(st.booleans(), min_size=24, max_size=24),
    st.permutations(list(range(24))),
    st.lists(st.integers(0, 23), max_size=4),
)
def test_any_scrambling_of_winding_order_and_duplicates_is_undone(flips, order, doubled):
    """Random flipped faces, shuffled face order and doubled faces on the gimbal block with its
    cavity: the repair always returns the closed form of block minus cavity."""
    vertices, faces = shapes.hollow_box(*catalogue.RING)
    faces = faces.copy()
    flip = np.array(flips)
    faces[flip] = faces[flip][:, ::-1]
    faces = faces[np.array(order)]
    if doubled:
        faces = np.vstack([faces, faces[np.array(doubled)]])
    body = _measure(vertices, faces)
    assert body.valid, [(f.code, f.message) for f in body.findings]
    assert all(f.code.startswith("repaired_") for f in body.findings)
    _assert_closed_form(body, (catalogue.Box(catalogue.RING[0]), catalogue.Box(catalogue.RING[1], sign=-1)))


def test_measure_repair_on_the_command_line(tmp_path):
    """Issue 2: an inside-out mesh never gives a negative mass; with --repair it is corrected and says so."""
    path = tmp_path / "plate_inside_out.stl"
    writers.write_binary_stl(path, shapes.triangles_of(*shapes.box(catalogue.PLATE, inward=True)))
    refused = runner.invoke(app, ["measure", str(path), "--json", "--density", str(DENSITY)])
    assert refused.exit_code == 1
    assert json.loads(refused.stdout)["bodies"][0]["mass"] is None
    repaired = runner.invoke(app, ["measure", str(path), "--json", "--density", str(DENSITY), "--repair"])
    assert repaired.exit_code == 0, repaired.output
    body = json.loads(repaired.stdout)["bodies"][0]
    assert body["valid"] is True
    a, b, c = (s / 1000.0 for s in catalogue.PLATE)
    assert body["mass"] == pytest.approx(DENSITY * a * b * c, rel=1e-12)  # m = rho a b c
    (finding,) = body["findings"]
    assert (finding["code"], finding["severity"]) == ("repaired_inside_out", "warning")
    assert finding["where"] and "face" in finding["where"][0]


def test_measure_repair_never_fills_holes(tmp_path):
    vertices, faces = shapes.box(catalogue.PLATE)
    path = tmp_path / "plate_open.obj"
    writers.write_obj(path, vertices, faces[1:])
    result = runner.invoke(app, ["measure", str(path), "--json", "--repair"])
    assert result.exit_code == 1
    body = json.loads(result.stdout)["bodies"][0]
    assert body["mass"] is None and [f["code"] for f in body["findings"]] == ["open_edges"]
    lines = [line for line in result.stderr.splitlines() if "invalid mesh" in line]
    assert len(lines) == 1 and "open_edges" in lines[0]
