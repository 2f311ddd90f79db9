"""Validation (meshprops.validation.checks): every finding of issue 4 on a fixture set of broken meshes,
at the exact faces; the building blocks (exact welding, edge test, union-find, winding
numbers, triangle crossing) against independent references; the example folders and the
``meshprops check`` command with its exit codes (0 clean, 3 warnings only, 1 errors, 2 unreadable).
"""

from __future__ import annotations

import numpy as np
import pytest
from meshes import (
    catalogue,  # tests/meshes/catalogue.py (tests/ is on sys.path; see conftest.py)
)

from meshprops import mesh_from_arrays, mesh_from_triangles
from meshprops.geometry import shapes
from meshprops.io import writers
from meshprops.physics.moments import integrate_chunks
from meshprops.validation.checks import validate
from meshprops.validation.findings import ERROR, WARNING
from meshprops.validation.solid import SolidOptions, check_mesh, resolve_solid

CASES = catalogue.cases()




#: The severity every finding code must have (issue 4: "error" when the numbers would be wrong).
SEVERITY = {
    "open_edges": ERROR,
    "nonmanifold_edges": ERROR,
    "inconsistent_winding": ERROR,
    "non_orientable": ERROR,
    "inside_out": ERROR,
    "inverted_shell": ERROR,
    "nested_shell": ERROR,
    "self_intersection": ERROR,
    "no_volume": ERROR,
    "collapsed_faces": WARNING,
    "zero_area_faces": WARNING,
    "near_coincident_vertices": WARNING,
    "flat_shell": WARNING,
    "implausible_size": WARNING,
    "nesting_not_checked": WARNING,
    "cracks_closed": WARNING,
    "shells_overlap": WARNING,
    "crossing_bounded": WARNING,
    "void_crosses_skin": ERROR,
}


def _mesh(case):
    return mesh_from_arrays(case.vertices, case.faces, length_unit=case.length_unit, source=case.name)


def _report(mesh):
    return resolve_solid(mesh).report


def _assert_findings(report, codes, where, folder):
    found = {f.code: f for f in report.findings}
    assert set(found) == set(codes), [(f.code, f.message) for f in report.findings]
    for code, finding in found.items():
        if code in SEVERITY:
            assert finding.severity == SEVERITY[code], code
        assert finding.count >= 1 and finding.message
        for place in finding.where:
            assert set(place) == {"face", "point"} and len(place["point"]) == 3
    for code, faces in where.items():
        if code in found:
            assert {place["face"] for place in found[code].where} == faces, code
    assert report.valid == (folder != "invalid")


@pytest.mark.parametrize("case", CASES, ids=lambda c: c.name)
def test_measure_checks_find_exactly_the_expected_findings_at_the_expected_faces(case):
    _assert_findings(_report(_mesh(case)), case.measure_codes, case.where, case.folder)


@pytest.mark.parametrize("case", CASES, ids=lambda c: c.name)
def test_thorough_checks_find_exactly_the_expected_findings_at_the_expected_faces(case):
    _assert_findings(check_mesh(_mesh(case)).report, case.check_codes, case.where, case.folder)


@pytest.mark.parametrize("case", CASES, ids=lambda c: c.name)
def test_a_float32_triangle_soup_gives_the_same_findings(case, tmp_path):
    """Binary STL: corners welded from float32 bits (every fixture coordinate survives float32)."""
    path = tmp_path / "case.stl"
    writers.write_binary_stl(path, shapes.triangles_of(case.vertices, case.faces))
    from meshprops import load_mesh

    mesh = load_mesh(path, case.length_unit)
    assert mesh.soup is not None and mesh.soup.dtype == np.float32
    _assert_findings(_report(mesh), case.measure_codes, case.where, case.folder)


def test_a_millimetre_part_declared_in_metres_gets_a_unit_warning_that_names_mm():
    vertices, faces = shapes.box(catalogue.PLATE)  # 120 x 80 x 40, meant as mm
    report = _report(mesh_from_arrays(vertices, faces, length_unit="m"))
    assert report.valid
    (finding,) = report.findings
    assert finding.code == "implausible_size" and finding.severity == WARNING
    assert "--units mm" in finding.message and "0.12 m" in finding.message


def test_a_metre_part_declared_in_millimetres_gets_a_unit_warning_that_names_m():
    vertices, faces = shapes.box((0.12, 0.08, 0.04))
    (finding,) = _report(mesh_from_arrays(vertices, faces, length_unit="mm")).findings
    assert finding.code == "implausible_size" and "0.12 m in m (1000 times larger: --units m)" in finding.message


def test_a_part_too_small_in_mm_is_offered_both_usual_slips_metres_and_inches():
    vertices, faces = shapes.box((1.5, 1.0, 0.5))  # a 1.5 in part read as mm: 1.5 mm
    (finding,) = _report(mesh_from_arrays(vertices, faces, length_unit="mm")).findings
    assert "1.5 m in m (1000 times larger: --units m)" in finding.message
    assert "0.0381 m in in (25.4 times larger: --units in)" in finding.message


def test_an_inch_part_read_as_millimetres_is_not_flagged_but_a_huge_inch_part_is():
    # 4 in read as mm is 4 mm: plausible, nothing said. A 300 mm part read as inches is 7.62 m: plausible too.
    # A 3 m part exported in mm and declared in inches is 76 m: flagged, and mm is suggested first.
    small = _report(mesh_from_arrays(*shapes.box((4.0, 2.0, 1.0)), length_unit="mm"))
    assert small.findings == ()
    (finding,) = _report(mesh_from_arrays(*shapes.box((3000.0, 100.0, 100.0)), length_unit="in")).findings
    assert "--units mm" in finding.message and "25.4 times smaller" in finding.message


def test_strict_refuses_what_the_default_recovers():
    """--strict: the overlapping copy, the nested cube and the crack stay errors, as exported."""
    expected = {
        "chassis-plate-overlapping-copy": {"nested_shell", "self_intersection"},
        "cube-with-a-nested-cube-wound-outward": {"nested_shell"},
        "chassis-plate-cracked-corner": {"open_edges", "near_coincident_vertices"},
        "torus-with-a-crossing-sliver": {"self_intersection"},
    }
    for case in CASES:
        if case.name in expected:
            mesh = _mesh(case)
            strict = resolve_solid(mesh, SolidOptions(strict=True)).report
            assert {f.code for f in strict.findings} == expected[case.name], case.name
            assert not strict.valid
            plain = validate(mesh, integrate_chunks(mesh.triangle_chunks()))
            assert {f.code for f in plain.findings} == expected[case.name]


def test_report_counts_shells_voids_and_holes():
    hollow = _report(mesh_from_arrays(*shapes.hollow_box()))
    assert (hollow.extra["shells"], hollow.extra["voids"], hollow.extra["holes"]) == (2, 1, 0)
    vertices, faces = shapes.box()
    two_holes = _report(mesh_from_arrays(vertices, np.delete(faces, [0, 1, 2, 3], axis=0)))  # bottom and top gone
    assert two_holes.extra["holes"] == 2
    assert two_holes.vertex_count == 8 and two_holes.edge_count == 16


def test_touching_solids_are_two_shells_and_an_inverted_one_is_found():
    """Two cubes sharing one corner vertex, one inside-out: edge-connected shells are separated
    (inverted_shell), in measure and check alike."""
    vertices, faces = shapes.merge(shapes.box((1, 1, 1), (0.5, 0.5, 0.5)), shapes.box((1, 1, 1), (1.5, 1.5, 1.5), inward=True))
    mesh = mesh_from_arrays(vertices, faces, length_unit="m")
    assert {f.code for f in _report(mesh).findings} == {"inverted_shell"}
    thorough = check_mesh(mesh).report
    assert {f.code for f in thorough.findings} == {"inverted_shell"} and thorough.extra["shells"] == 2


def test_a_ball_inside_the_cavity_of_a_hollow_block_is_valid():
    """Winding numbers add: outer shell +1, cavity -1, a loose part inside the cavity +1 -> all consistent."""
    vertices, faces = shapes.merge(shapes.hollow_box((4, 4, 4), (3, 3, 3)), shapes.box((1, 1, 1)))
    report = _report(mesh_from_arrays(vertices, faces, length_unit="m"))
    assert report.valid and report.findings == () and report.extra["shells"] == 3 and report.extra["voids"] == 1


def test_a_one_sided_strip_is_reported_non_orientable():
    """A closed Moebius-like band of triangles: no winding makes its edges consistent."""
    sections = 12
    angles = np.linspace(0, 2 * np.pi, sections, endpoint=False)
    vertices = []
    for k, angle in enumerate(angles):
        twist = angle / 2
        for side in (-1, 1):
            radial = 2 + side * 0.3 * np.cos(twist)
            vertices.append([radial * np.cos(angle), radial * np.sin(angle), side * 0.3 * np.sin(twist)])
    faces = []
    for k in range(sections):
        a, b = 2 * k, 2 * k + 1
        if k + 1 < sections:
            c, d = 2 * k + 2, 2 * k + 3
        else:  # the half twist: the strip closes with its sides swapped
            c, d = 1, 0
        faces += [[a, c, b], [b, c, d]]
    report = _report(mesh_from_arrays(np.array(vertices), np.array(faces), length_unit="m"))
    # A band has one boundary loop; winding it consistently fails at one seam; and no winding works.
    assert {f.code for f in report.findings} == {"open_edges", "inconsistent_winding", "non_orientable"}
    assert report.extra["holes"] == 1
    (one_sided,) = [f for f in report.findings if f.code == "non_orientable"]
    assert one_sided.count == len(faces)




def test_validation_of_tiny_and_flat_meshes_never_crashes():
    one = mesh_from_triangles(np.array([[[0, 0, 0], [1, 0, 0], [0, 1, 0]]], dtype=float))
    report = _report(one)
    assert not report.valid and "open_edges" in {f.code for f in report.findings}
    flat = mesh_from_triangles(np.array([[[0, 0, 0], [1, 0, 0], [0, 1, 0]], [[0, 0, 0], [0, 1, 0], [1, 0, 0]]], dtype=float))
    # measure and check give the same findings (issue 8, item 6)
    assert {f.code for f in _report(flat).findings} == {"no_volume", "duplicate_faces"}
    assert {f.code for f in check_mesh(flat).report.findings} == {"no_volume", "duplicate_faces"}
    point = mesh_from_triangles(np.zeros((2, 3, 3)))
    assert not check_mesh(point).report.valid
