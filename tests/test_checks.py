"""Validation (meshprops.checks): every finding of issue 4 on a fixture set of broken meshes,
at the exact faces; the building blocks (exact welding, edge test, union-find, winding
numbers, triangle crossing) against independent references; the example folders and the
``meshprops check`` command with its exit codes (0 clean, 3 warnings only, 1 errors, 2 unreadable)."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from meshes import (
    catalogue,  # tests/meshes/catalogue.py (tests/ is on sys.path; see conftest.py)
)
from typer.testing import CliRunner

from meshprops import mesh_from_arrays, mesh_from_triangles
from meshprops.cli import app
from meshprops.geometry import shapes, welding
from meshprops.geometry.faces import near_pairs
from meshprops.geometry.inside import winding_numbers
from meshprops.geometry.intersections import triangles_cross
from meshprops.geometry.topology import connected_components, is_closed_and_oriented
from meshprops.geometry.welding import weld_exact, weld_positions
from meshprops.io import writers
from meshprops.physics.moments import integrate_chunks
from meshprops.validation import checks as validation_checks
from meshprops.validation.checks import check_mesh, validate
from meshprops.validation.findings import ERROR, WARNING

HERE = Path(__file__).resolve().parent


CASES = catalogue.cases()
runner = CliRunner()

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
    "self_intersection_not_checked": WARNING,
    "nesting_not_checked": WARNING,
}


def _mesh(case):
    return mesh_from_arrays(case.vertices, case.faces, length_unit=case.length_unit, source=case.name)


def _report(mesh, thorough=False):
    return validate(mesh, integrate_chunks(mesh.triangle_chunks()), thorough=thorough)


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


def test_measure_skips_self_intersections_above_the_limit_and_says_so(monkeypatch):
    monkeypatch.setattr(validation_checks, "SELF_INTERSECTION_FACE_LIMIT", 11)
    mesh = mesh_from_arrays(*catalogue._bow_tie())
    fast = _report(mesh)
    assert "self_intersection" not in {f.code for f in fast.findings}
    skipped = [f for f in fast.findings if f.code == "self_intersection_not_checked"]
    assert skipped and skipped[0].severity == WARNING and "meshprops check" in skipped[0].message
    assert fast.extra["self_intersections_checked"] is False
    assert "self_intersection" in {f.code for f in check_mesh(mesh).report.findings}


def test_report_counts_shells_voids_and_holes():
    hollow = _report(mesh_from_arrays(*shapes.hollow_box()))
    assert (hollow.extra["shells"], hollow.extra["voids"], hollow.extra["holes"]) == (2, 1, 0)
    vertices, faces = shapes.box()
    two_holes = _report(mesh_from_arrays(vertices, np.delete(faces, [0, 1, 2, 3], axis=0)))  # bottom and top gone
    assert two_holes.extra["holes"] == 2
    assert two_holes.vertex_count == 8 and two_holes.edge_count == 16


def test_touching_solids_are_two_shells_in_check_and_an_inverted_one_is_found():
    """Two cubes sharing one corner vertex, one inside-out: the fast path sees one vertex-connected
    shell whose volumes cancel (no_volume); check separates edge-connected shells (inverted_shell)."""
    vertices, faces = shapes.merge(shapes.box((1, 1, 1), (0.5, 0.5, 0.5)), shapes.box((1, 1, 1), (1.5, 1.5, 1.5), inward=True))
    mesh = mesh_from_arrays(vertices, faces, length_unit="m")
    assert {f.code for f in _report(mesh).findings} == {"no_volume"}
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


# ---------------------------------------------------------------------------- building blocks


def _reference_weld(rows: np.ndarray) -> np.ndarray:
    """Dense ids in order of first appearance, by a Python dictionary of exact coordinate tuples."""
    seen: dict = {}
    ids = []
    for row in rows.tolist():
        key = tuple(0.0 if x == 0 else x for x in row)  # -0.0 == +0.0
        ids.append(seen.setdefault(key, len(seen)))
    return np.array(ids)


@settings(max_examples=60, deadline=None)
@given(
    st.lists(st.tuples(*[st.sampled_from([0.0, -0.0, 1.0, -1.0, 0.5, 1e-300, 3.0e38, 7.25])] * 3), min_size=1, max_size=60),
    st.sampled_from([np.float32, np.float64]),
)
def test_welding_is_exact(rows, dtype):
    positions = np.array(rows, dtype=dtype)
    ids, count = weld_positions(positions)
    expected = _reference_weld(positions)
    assert count == expected.max() + 1
    np.testing.assert_array_equal(ids, expected)


def test_welding_stays_exact_when_every_hash_collides(monkeypatch):
    """Force the worst case: every row gets the same hash; rows must still be told apart by their bits."""
    monkeypatch.setattr(welding, "_hash_rows", lambda data: np.zeros(data.shape[0], dtype=np.uint64))
    rng = np.random.default_rng(4)
    positions = rng.integers(0, 4, size=(300, 3)).astype(np.float64)
    ids, count = weld_positions(positions)
    expected = _reference_weld(positions)
    # Same partition as the reference (rows split off by a collision are numbered last, so
    # compare the pairing of ids, not the numbers), and dense ids.
    pairs = set(zip(ids.tolist(), expected.tolist()))
    assert len(pairs) == len(set(ids.tolist())) == len(set(expected.tolist()))
    assert count == len(np.unique(positions, axis=0)) and set(ids.tolist()) == set(range(count))


def test_welding_a_memory_mapped_stl_stays_exact_when_every_hash_collides(tmp_path, monkeypatch):
    """The block-wise path detects the merged positions and splits them off exactly."""
    from meshprops import load_mesh

    vertices, faces = shapes.torus(2.0, 0.5, 12, 6)
    path = tmp_path / "torus.stl"
    writers.write_binary_stl(path, shapes.triangles_of(vertices, faces))
    mesh = load_mesh(path, "m")
    honest = weld_exact(mesh)
    monkeypatch.setattr(welding, "_hash_rows", lambda data: np.zeros(data.shape[0], dtype=np.uint64))
    forced = weld_exact(mesh)
    pairs = set(zip(forced.face_vertices.reshape(-1).tolist(), honest.face_vertices.reshape(-1).tolist()))
    assert len(pairs) == len(vertices)  # the same partition of corners into vertices
    np.testing.assert_array_equal(honest.face_vertices.reshape(-1), _reference_weld(np.asarray(mesh.soup).reshape(-1, 3)))
    assert forced.vertex_count == len(vertices)


def test_welding_a_binary_stl_memory_map_matches_its_indexed_twin(tmp_path):
    from meshprops import load_mesh

    vertices, faces = shapes.torus(2.0, 0.5, 40, 20)
    path = tmp_path / "torus.stl"
    writers.write_binary_stl(path, shapes.triangles_of(vertices, faces))
    soup = weld_exact(load_mesh(path, "m"))
    indexed = weld_exact(mesh_from_arrays(vertices.astype(np.float32).astype(np.float64), faces))
    assert soup.vertex_count == indexed.vertex_count == len(vertices)
    assert is_closed_and_oriented(soup) and is_closed_and_oriented(indexed)


def _reference_components(count, edges):
    """Breadth-first search (plain Python): smallest node of each component."""
    neighbours = [[] for _ in range(count)]
    for a, b in edges:
        neighbours[a].append(b)
        neighbours[b].append(a)
    label = [-1] * count
    for start in range(count):
        if label[start] >= 0:
            continue
        label[start] = start
        queue = [start]
        while queue:
            node = queue.pop()
            for other in neighbours[node]:
                if label[other] < 0:
                    label[other] = start
                    queue.append(other)
    return np.array(label)


@settings(max_examples=80, deadline=None)
@given(st.integers(1, 40).flatmap(lambda n: st.tuples(st.just(n), st.lists(st.tuples(st.integers(0, n - 1), st.integers(0, n - 1)), max_size=60))))
def test_union_find_matches_breadth_first_search(graph):
    count, edges = graph
    a = np.array([e[0] for e in edges], dtype=np.int64)
    b = np.array([e[1] for e in edges], dtype=np.int64)
    labels = connected_components(count, [(a, b)])
    np.testing.assert_array_equal(labels, _reference_components(count, edges))


@pytest.mark.parametrize(
    "build", [lambda: shapes.box((1, 2, 3)), lambda: shapes.cylinder(1, 2, 12), lambda: shapes.torus(2, 0.5, 12, 8)]
)
def test_the_edge_test_accepts_closed_meshes_and_rejects_any_missing_or_flipped_face(build):
    vertices, faces = build()
    topology = weld_exact(mesh_from_arrays(vertices, faces))
    assert is_closed_and_oriented(topology)
    for face in range(0, len(faces), max(1, len(faces) // 7)):
        missing = weld_exact(mesh_from_arrays(vertices, np.delete(faces, face, axis=0)))
        assert not is_closed_and_oriented(missing)
        flipped = faces.copy()
        flipped[face] = flipped[face][::-1]
        assert not is_closed_and_oriented(weld_exact(mesh_from_arrays(vertices, flipped)))


def _convex_inside(points, vertices, faces):
    """Independent reference for a convex, outward mesh: inside when behind every face plane."""
    tri = vertices[faces]
    normals = np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0])
    offsets = np.einsum("ij,ij->i", normals, tri[:, 0])
    return np.all(points @ normals.T < offsets, axis=1)


def test_winding_numbers_count_rays_through_edges_and_vertices_once():
    """Probe points on the box's axes and diagonals send their ray exactly through edges and corners."""
    vertices, faces = shapes.box((2.0, 2.0, 2.0))
    triangles = vertices[faces]
    inside = np.array([[0, 0, 0], [0.5, 0, 0], [0, 0.5, 0.5], [-0.9, 0.9, -0.9], [0, -0.5, 0.5], [0.99, 0, 0]])
    outside = np.array([[3, 0, 0], [-3, 0, 0], [-3, 1, 1], [-3, -1, 1], [-3, 1, 0], [0, 1.5, 0], [-3, 0.5, 0.5]])
    np.testing.assert_array_equal(winding_numbers(inside, triangles), 1)
    np.testing.assert_array_equal(winding_numbers(outside, triangles), 0)
    np.testing.assert_array_equal(winding_numbers(inside, triangles[:, ::-1]), -1)


@settings(max_examples=40, deadline=None)
@given(st.lists(st.tuples(*[st.sampled_from([-1.2, -1.0, -0.5, -0.25, 0.0, 0.25, 0.5, 0.7071067811865476, 1.0, 1.3])] * 3), min_size=1, max_size=30))
def test_winding_numbers_match_a_half_space_test_on_a_convex_solid(points):
    """Grid points that share coordinates with the sphere's vertices stress the tie rules."""
    vertices, faces = shapes.uv_sphere(1.0, 8, 8)
    points = np.array(points, dtype=float)
    tri = vertices[faces]
    normals = np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0])
    distance = np.abs(points @ normals.T - np.einsum("ij,ij->i", normals, tri[:, 0])) / np.linalg.norm(normals, axis=1)
    points = points[distance.min(axis=1) > 1e-9]  # on the surface the answer is a matter of convention
    expected = _convex_inside(points, vertices, faces).astype(int)
    np.testing.assert_array_equal(winding_numbers(points, tri), expected)


def test_triangle_crossing_test():
    base = np.array([[0.0, 0.0, 0.0], [2.0, 0.0, 0.0], [0.0, 2.0, 0.0]])
    piercing = np.array([[0.5, 0.5, -1.0], [0.5, 0.5, 1.0], [3.0, 3.0, 0.5]])
    touching_at_a_point = np.array([[0.5, 0.5, 0.0], [0.5, 1.5, 1.0], [1.5, 0.5, 1.0]])
    resting_on_an_edge = np.array([[0.5, 0.2, 0.0], [1.2, 0.2, 0.0], [0.8, 0.2, 1.0]])
    coplanar_overlap = np.array([[0.2, 0.2, 0.0], [3.0, 0.2, 0.0], [0.2, 3.0, 0.0]])
    far_away = piercing + [10.0, 0.0, 0.0]
    others = np.stack([piercing, touching_at_a_point, resting_on_an_edge, coplanar_overlap, far_away])
    first = np.repeat(base[None], len(others), axis=0)
    expected = [True, False, False, False, False]
    assert triangles_cross(first, others).tolist() == expected
    assert triangles_cross(others, first).tolist() == expected
    shift = np.array([2000.0, -1500.0, 300.0])  # far from the origin: same answers
    assert triangles_cross(first + shift, others + shift).tolist() == expected


def test_near_pairs_finds_exactly_the_close_points():
    rng = np.random.default_rng(7)
    points = rng.uniform(0, 1, size=(400, 3))
    points[10] = points[3] + [4e-7, 0, 0]
    points[20] = points[5] + [0, 2e-6, 0]
    first, second = near_pairs(points, 1e-6)
    distance = np.linalg.norm(points[:, None] - points[None], axis=2)
    expected = {(i, j) for i, j in zip(*np.nonzero(np.triu(distance <= 1e-6, 1)))}
    assert set(zip(first.tolist(), second.tolist())) == expected == {(3, 10)}


def test_validation_of_tiny_and_flat_meshes_never_crashes():
    one = mesh_from_triangles(np.array([[[0, 0, 0], [1, 0, 0], [0, 1, 0]]], dtype=float))
    report = _report(one)
    assert not report.valid and "open_edges" in {f.code for f in report.findings}
    flat = mesh_from_triangles(np.array([[[0, 0, 0], [1, 0, 0], [0, 1, 0]], [[0, 0, 0], [0, 1, 0], [1, 0, 0]]], dtype=float))
    assert {f.code for f in _report(flat).findings} == {"no_volume"}
    assert {f.code for f in check_mesh(flat).report.findings} == {"no_volume", "duplicate_faces"}
    point = mesh_from_triangles(np.zeros((2, 3, 3)))
    assert not check_mesh(point).report.valid


# ---------------------------------------------------------------------------- example folders and the check command

EXPECTED_EXIT = {"valid": 0, "warnings": 3, "invalid": 1}
EXAMPLES = sorted(p for folder in EXPECTED_EXIT for p in (HERE / "meshes" / folder).glob("*") if p.suffix in (".stl", ".obj", ".ply"))


def test_the_example_folders_are_up_to_date(tmp_path):
    """The committed files are exactly what ``python tests/meshes/catalogue.py`` writes."""
    written = catalogue.write_example_folders(tmp_path)
    assert sorted(p.relative_to(tmp_path) for p in written) == sorted(p.relative_to(HERE / "meshes") for p in EXAMPLES)
    for path in written:
        assert path.read_bytes() == (HERE / "meshes" / path.relative_to(tmp_path)).read_bytes(), path.name


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: f"{p.parent.name}/{p.name}")
def test_example_folder(path):
    """``valid/``: no finding (exit 0); ``warnings/``: valid, the named warning (exit 3);
    ``invalid/``: the named error (exit 1). The expected code is the file name up to ``__``."""
    folder = path.parent.name
    result = runner.invoke(app, ["check", str(path), "--json"])
    assert result.exit_code == EXPECTED_EXIT[folder], result.output
    doc = json.loads(result.stdout)
    (entry,) = doc["files"]
    codes = {f["code"]: f["severity"] for f in entry["findings"]}
    if folder == "valid":
        assert codes == {} and entry["valid"]
    else:
        expected = path.stem.split("__")[0]
        assert expected in codes
        assert codes[expected] == (ERROR if folder == "invalid" else WARNING)
        assert entry["valid"] == (folder == "warnings")
    measured = runner.invoke(app, ["measure", str(path), "--json", "--density", "2700"])
    assert measured.exit_code == (1 if folder == "invalid" else 0)
    body = json.loads(measured.stdout)["bodies"][0]
    assert body["valid"] == (folder != "invalid")
    assert (body["mass"] is None) == (folder == "invalid")


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
    assert warned.exit_code == 3
    doc = json.loads(warned.stdout)
    assert doc["schema"] == "meshprops.check" and doc["summary"] == {"files": 1, "valid": 1, "errors": 0, "warnings": 1}
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
