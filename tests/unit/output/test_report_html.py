"""The report page (meshprops.output.report_html) opened in real headless Chromium."""

from __future__ import annotations

import numpy as np
import trimesh
from headless_browser import external_references, open_page, pixel_statistics

from meshprops.output.drawing import (
    BodyPicture,
    Highlight,
    InertiaPicture,
    Picture,
    draw_views,
)
from meshprops.output.report_html import FindingRow, render_report, values_table


def _part_page(open_mesh: bool = False) -> str:
    mesh = trimesh.creation.annulus(r_min=0.01, r_max=0.03, height=0.02, sections=40)
    mesh.apply_translation([0.0, 0.0, 0.05])
    mesh.density = 2700.0
    moments, axes = trimesh.inertia.principal_axis(mesh.moment_inertia)
    order = np.argsort(moments)
    axes = axes[order]
    if np.linalg.det(axes) < 0:
        axes[2] = -axes[2]
    inertia = InertiaPicture(mesh.mass, mesh.center_mass, moments[order], axes)
    highlights = (Highlight("open_edges", "error", 0, np.array([0, 1, 2])),) if open_mesh else ()
    picture = Picture((BodyPicture("ring", np.asarray(mesh.triangles), mesh.center_mass),), inertia, highlights)
    body = {
        "name": "ring",
        "density": 2700.0,
        "volume": mesh.volume,
        "mass": mesh.mass,
        "center_of_mass": mesh.center_mass.tolist(),
        "inertia_about_com": mesh.moment_inertia.tolist(),
        "principal_moments": moments[order].tolist(),
        "principal_axes": axes.tolist(),
    }
    finding = {"code": "open_edges", "severity": "error", "count": 3, "message": "three open edges", "where": [{"face": 0}]}
    return render_report(
        title="ring",
        subtitle="a test part",
        valid=not open_mesh,
        reasons=["open_edges: three open edges"] if open_mesh else [],
        scenes=draw_views(picture),
        items=[("ring", "bodies.0", body)],
        findings=[FindingRow("ring", finding, True)] if open_mesh else [],
        conventions={"frame": "input axes"},
        cautions=["Confirm by measurement."],
        footer="test",
    )


def test_page_renders_in_headless_chromium_not_blank_and_asks_for_nothing(tmp_path):
    page = tmp_path / "report.html"
    page.write_text(_part_page(), encoding="utf-8")
    run = open_page(page, tmp_path / "shot.png", width=1400, height=1400)
    assert run.page_requests == ()
    statistics = pixel_statistics(run.screenshot)
    assert statistics.width == 1400
    assert statistics.background_share < 0.85, statistics
    assert statistics.colour_count > 60, statistics


def test_page_holds_no_external_reference_and_the_check_can_fail():
    assert external_references(_part_page()) == []
    assert external_references(_part_page(open_mesh=True)) == []
    assert external_references('<img src="x.png">') and external_references("a { background: url(x) }")
    assert external_references('<link rel="stylesheet" href="https://example.invalid/a.css">')


def test_page_requests_are_seen_when_a_page_makes_them(tmp_path):
    page = tmp_path / "fetching.html"
    page.write_text('<!DOCTYPE html><html><body><img src="http://example.invalid/x.png"></body></html>', encoding="utf-8")
    run = open_page(page, tmp_path / "shot.png", width=400, height=300)
    assert run.page_requests == ("http://example.invalid/x.png",)


def test_values_table_prints_the_table_digits_and_carries_exact_values():
    body = {"mass": 0.123456789, "center_of_mass": [1e-9, -0.0, 2.5], "inertia_about_com": np.eye(3).tolist(),
            "principal_moments": [1.0, 1.0, 1.0], "principal_axes": np.eye(3).tolist()}
    text = values_table(body, "total")
    assert 'data-path="total.mass" data-value="0.123456789">0.123457<' in text
    assert 'data-path="total.center_of_mass.1" data-value="-0.0">0<' in text
    assert "No numbers" in values_table({"mass": None}, "bodies.0")
