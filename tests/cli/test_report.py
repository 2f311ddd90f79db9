"""``meshprops report`` and ``meshprops check --report``: the page renders in real headless
Chromium and is not blank, it asks for nothing from elsewhere, its numbers are those of
``measure --json`` in the table's digits, its centre-of-mass markers sit on the projected
centre of mass within a pixel, and an open mesh's report highlights the faces at its open edges.
"""

from __future__ import annotations

import json
import re
import shutil
import xml.etree.ElementTree as ElementTree

import numpy as np
import pytest
import trimesh
from headless_browser import external_references, open_page, pixel_statistics
from paths import ROOT
from typer.testing import CliRunner

from meshprops.cli import app
from meshprops.geometry import shapes
from meshprops.io import writers
from meshprops.output.numbers import (
    format_number as table_format,  # the terminal table's digits
)

runner = CliRunner()
ROVER = ROOT / "sample_meshes" / "rover.toml"


def invoke(*args):
    return runner.invoke(app, [str(a) for a in args])


def measure_json(*args) -> dict:
    result = invoke("measure", *args, "--json")
    assert result.exit_code in (0, 1), result.output
    return json.loads(result.stdout)


@pytest.fixture
def part_stl(tmp_path, part):
    """The asymmetric test part (conftest) as a binary STL in millimetres."""
    path = tmp_path / "gimbal_bracket.stl"
    writers.write_binary_stl(path, shapes.triangles_of(*part))
    return path


@pytest.fixture
def open_box_stl(tmp_path):
    vertices, faces = shapes.box((20.0, 12.0, 8.0), center=(5.0, 0.0, 4.0))
    path = tmp_path / "open_box.stl"
    writers.write_binary_stl(path, shapes.triangles_of(vertices, np.delete(faces, 3, axis=0)))
    return path


def _svgs(page: str) -> list[ElementTree.Element]:
    return [ElementTree.fromstring(match) for match in re.findall(r"<svg\b.*?</svg>", page, flags=re.DOTALL)]


def _printed_values(page: str) -> list[tuple[str, float, str]]:
    cells = re.findall(r'data-path="([^"]+)" data-value="([^"]+)">([^<]*)<', page)
    return [(path, float(value), text) for path, value, text in cells]


def _resolve(document: dict, path: str):
    value = document
    for key in path.split("."):
        value = value[int(key)] if isinstance(value, list) else value[key]
    return value


def _stated_projection(svg: ElementTree.Element):
    def vector(name):
        return np.array([float(x) for x in svg.get(name).split()])

    right, up, origin, scale = vector("data-right"), vector("data-up"), vector("data-origin"), float(svg.get("data-scale"))
    return lambda point: origin + scale * np.array([np.dot(point, right), -np.dot(point, up)])


def _marker(svg: ElementTree.Element, element_id: str) -> np.ndarray:
    group = svg.find(f".//g[@id='{element_id}']")
    assert group is not None, element_id
    return np.array([float(group.get("data-x")), float(group.get("data-y"))])


def _assert_not_blank(run, *, width: int) -> None:
    statistics = pixel_statistics(run.screenshot)
    assert statistics.width == width
    assert statistics.background_share < 0.85, statistics  # the page is more than its background
    assert statistics.colour_count > 60, statistics  # shaded faces, markers and text, not a flat page
    assert run.page_requests == (), run.page_requests


# ----------------------------------------------------------------------------- a part


def test_part_report_renders_in_chromium_and_holds_no_external_reference(tmp_path, part_stl):
    page_path = tmp_path / "report.html"
    result = invoke("report", part_stl, "--units", "mm", "--density", "2700", "-o", page_path)
    assert result.exit_code == 0, result.output
    page = page_path.read_text(encoding="utf-8")
    assert external_references(page) == []
    assert len(_svgs(page)) == 4
    for caution in measure_json(part_stl, "--units", "mm", "--density", "2700")["cautions"]:
        assert caution in page  # uniform density, confirm by measurement
    run = open_page(page_path, tmp_path / "shot.png", width=1400, height=2000)
    _assert_not_blank(run, width=1400)


def test_part_values_equal_measure_json_in_the_table_digits(tmp_path, part_stl):
    page_path = tmp_path / "report.html"
    assert invoke("report", part_stl, "--units", "mm", "--density", "2700", "-o", page_path).exit_code == 0
    document = measure_json(part_stl, "--units", "mm", "--density", "2700")
    printed = _printed_values(page_path.read_text(encoding="utf-8"))
    paths = {path for path, _, _ in printed}
    for required in ("bodies.0.mass", "bodies.0.volume", "bodies.0.center_of_mass.2", "bodies.0.inertia_about_com.0.1",
                     "bodies.0.principal_moments.2", "bodies.0.principal_axes.2.0", "bodies.0.products_of_inertia.xz"):
        assert required in paths, required
    for path, value, text in printed:
        expected = _resolve(document, path)
        assert value == expected, path  # the exact value, as measure --json prints it
        assert text == table_format(expected).strip(), path  # in the terminal table's digits


def test_centre_of_mass_marker_is_on_the_projected_centre_within_a_pixel(tmp_path, part_stl):
    page_path = tmp_path / "report.html"
    assert invoke("report", part_stl, "--units", "mm", "--density", "2700", "-o", page_path).exit_code == 0
    document = measure_json(part_stl, "--units", "mm", "--density", "2700")
    com = np.array(document["bodies"][0]["center_of_mass"])
    # trimesh (the reference library) on the same file, in metres.
    reference = trimesh.load(part_stl, force="mesh", process=False)
    reference.apply_scale(1e-3)
    assert np.allclose(reference.center_mass, com, atol=1e-9)
    for svg in _svgs(page_path.read_text(encoding="utf-8")):
        key = svg.get("data-view")
        marker = _marker(svg, f"com-total-{key}")
        assert np.allclose(_stated_projection(svg)(com), marker, atol=1.0)
        # Independently of the stated projection: the drawn faces span the mesh's extent.
        right, up = (np.array([float(x) for x in svg.get(name).split()]) for name in ("data-right", "data-up"))
        corners = np.array(
            [[float(v) for v in pair.split(",")] for g in svg.iter("g") if g.get("class") == "faces"
             for polygon in g.iter("polygon") for pair in polygon.get("points").split()]
        )
        u, v = reference.vertices @ right, reference.vertices @ up
        x = corners[:, 0].min() + (reference.center_mass @ right - u.min()) / np.ptp(u) * np.ptp(corners[:, 0])
        y = corners[:, 1].max() - (reference.center_mass @ up - v.min()) / np.ptp(v) * np.ptp(corners[:, 1])
        assert abs(marker[0] - x) < 1.0 and abs(marker[1] - y) < 1.0, (key, marker, x, y)


def test_png_folder_holds_every_view(tmp_path, part_stl):
    pytest.importorskip("matplotlib")
    folder = tmp_path / "pictures"
    result = invoke("report", part_stl, "--density", "2700", "-o", tmp_path / "r.html", "--png", folder)
    assert result.exit_code == 0, result.output
    names = sorted(p.name for p in folder.iterdir())
    assert names == sorted(f"gimbal_bracket-{key}.png" for key in ("above", "front", "right", "oblique"))
    for name in names:
        statistics = pixel_statistics(folder / name)
        assert statistics.background_share < 0.9 and statistics.colour_count > 30, (name, statistics)


# ----------------------------------------------------------------------------- an open mesh


def test_open_mesh_report_shows_why_and_highlights_the_open_edges_faces(tmp_path, open_box_stl):
    page_path = tmp_path / "open.html"
    result = invoke("report", open_box_stl, "--units", "mm", "-o", page_path)
    assert result.exit_code == 1
    assert "open_edges" in result.stderr
    page = page_path.read_text(encoding="utf-8")
    assert "Numbers withheld" in page and "open_edges" in page
    assert _printed_values(page) == []  # no number from a mesh that failed validation
    # trimesh on the same file (no merging or reordering of faces): faces beside edges used once.
    reference = trimesh.load(open_box_stl, force="mesh", process=False)
    reference.merge_vertices()  # welds corners only; the face order stays as in the file
    single = trimesh.grouping.group_rows(reference.edges_sorted, require_count=1)
    expected = sorted(np.unique(reference.edges_face[single]).tolist())
    assert len(expected) == 3
    for svg in _svgs(page):
        group = svg.find(".//g[@class='finding'][@data-code='open_edges']")
        assert group is not None
        assert sorted(int(f) for f in group.get("data-faces").split()) == expected
        assert svg.find(".//g[@class='com-marker com-total']") is None
    run = open_page(page_path, tmp_path / "shot.png", width=1400, height=1600)
    _assert_not_blank(run, width=1400)


# ----------------------------------------------------------------------------- the rover


def test_rover_report_renders_values_equal_measure_json_and_markers_project(tmp_path):
    page_path = tmp_path / "rover.html"
    result = invoke("report", ROVER, "-o", page_path)
    assert result.exit_code == 0, result.output
    page = page_path.read_text(encoding="utf-8")
    assert external_references(page) == []
    document = measure_json(ROVER)
    printed = _printed_values(page)
    assert {"total.mass", "total.center_of_mass.0", "total.inertia_about_com.2.2", "bodies.0.mass"} <= {p for p, _, _ in printed}
    for path, value, text in printed:
        expected = _resolve(document, path)
        assert value == expected and text == table_format(expected).strip(), path
    svgs = _svgs(page)
    for svg in svgs:
        project = _stated_projection(svg)
        key = svg.get("data-view")
        assert np.allclose(project(document["total"]["center_of_mass"]), _marker(svg, f"com-total-{key}"), atol=1.0)
        for index, body in enumerate(document["bodies"]):
            assert np.allclose(project(body["center_of_mass"]), _marker(svg, f"com-body-{index}-{key}"), atol=1.0)
    run = open_page(page_path, tmp_path / "shot.png", width=1400, height=2400)
    _assert_not_blank(run, width=1400)


# ----------------------------------------------------------------------------- check --report


def test_check_report_has_a_row_a_thumbnail_and_a_verdict_per_file(tmp_path, part_stl, open_box_stl):
    folder = tmp_path / "exports"
    folder.mkdir()
    shutil.copy(part_stl, folder / "bracket.stl")
    shutil.copy(open_box_stl, folder / "lid.stl")
    page_path = tmp_path / "check.html"
    result = invoke("check", folder / "bracket.stl", folder / "lid.stl", "--report", page_path)
    assert result.exit_code == 1
    page = page_path.read_text(encoding="utf-8")
    rows = re.findall(r"<tr class='file-row' data-source='([^']+)' data-valid='(true|false)'>", page)
    assert [(name.rsplit("/", 1)[-1], valid) for name, valid in rows] == [("bracket.stl", "true"), ("lid.stl", "false")]
    assert len(_svgs(page)) == 2 and external_references(page) == []
    lid = _svgs(page)[1]
    assert lid.find(".//g[@class='finding'][@data-code='open_edges']") is not None
    run = open_page(page_path, tmp_path / "shot.png", width=1200, height=900)
    _assert_not_blank(run, width=1200)


def test_report_into_a_missing_folder_is_one_line_and_writes_nothing(tmp_path, part_stl):
    target = tmp_path / "no" / "such" / "report.html"
    result = invoke("report", part_stl, "-o", target)
    assert result.exit_code == 2
    assert result.stderr.strip().startswith("meshprops: error:") and len(result.stderr.strip().splitlines()) == 1
    assert not target.exists()


def test_assembly_report_draws_an_overlap_region_and_an_invalid_body(tmp_path, open_box_stl):
    block = tmp_path / "block.stl"
    writers.write_binary_stl(block, shapes.triangles_of(*shapes.box((20.0, 20.0, 20.0))))
    manifest = tmp_path / "pair.toml"
    manifest.write_text(
        '[assembly]\nname = "pair"\nlength_unit = "mm"\nmanifest_version = 1\n\n'
        '[[body]]\nname = "left"\nmesh = "block.stl"\ndensity = 1000\n\n'
        '[[body]]\nname = "right"\nmesh = "block.stl"\ndensity = 1000\ntranslation = [10, 0, 0]\n',
        encoding="utf-8",
    )
    page_path = tmp_path / "pair.html"
    result = invoke("report", manifest, "-o", page_path)
    assert result.exit_code == 0, result.output
    page = page_path.read_text(encoding="utf-8")
    # The shared volume is the box x in [0, 10] mm, y and z in [-10, 10] mm (by construction).
    for svg in _svgs(page):
        group = svg.find(".//g[@class='finding'][@data-code='bodies_overlap']")
        assert group is not None
        outline = np.array([[float(v) for v in pair.split(",")] for pair in group.find("polygon").get("points").split()])
        project = _stated_projection(svg)
        corners = np.array([project([x, y, z]) for x in (0.0, 0.01) for y in (-0.01, 0.01) for z in (-0.01, 0.01)])
        assert np.allclose(outline.min(axis=0), corners.min(axis=0), atol=1.0)
        assert np.allclose(outline.max(axis=0), corners.max(axis=0), atol=1.0)
    shutil.copy(open_box_stl, tmp_path / "lid.stl")
    manifest.write_text(manifest.read_text(encoding="utf-8") + '\n[[body]]\nname = "lid"\nmesh = "lid.stl"\ndensity = 1000\n', encoding="utf-8")
    result = invoke("report", manifest, "-o", page_path)
    assert result.exit_code == 1
    page = page_path.read_text(encoding="utf-8")
    assert "Numbers withheld" in page and "data-path=\"total." not in page
    assert re.search(r'class="finding" data-code="open_edges" data-severity="error" data-body="2"', page)


def test_png_without_the_extra_is_one_line_and_writes_nothing(tmp_path, part_stl, monkeypatch):
    import sys

    monkeypatch.setitem(sys.modules, "matplotlib", None)  # as if the extra were not installed
    folder, page_path = tmp_path / "pictures", tmp_path / "r.html"
    result = invoke("report", part_stl, "-o", page_path, "--png", folder)
    assert result.exit_code == 2
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and 'pip install "meshprops[report]"' in lines[0], result.stderr
    assert not folder.exists() and not page_path.exists()
