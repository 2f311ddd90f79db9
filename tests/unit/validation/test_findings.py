"""Findings as data: a report is valid exactly when no finding is an error; ``where`` gives a few
sorted face numbers with their centroids in metres."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from meshprops.geometry import shapes
from meshprops.io import mesh_from_arrays, mesh_from_triangles
from meshprops.validation.findings import (
    ERROR,
    WARNING,
    WHERE_LIMIT,
    Finding,
    ValidationReport,
    where,
)


def _report(*findings):
    return ValidationReport(findings=tuple(findings), face_count=12, vertex_count=8, edge_count=18)


def test_severities_are_the_two_documented_words():
    assert (ERROR, WARNING) == ("error", "warning")


def test_a_report_without_errors_is_valid():
    warning = Finding("implausible_size", WARNING, 1, "a warning only")
    assert _report().valid and _report(warning).valid
    assert _report(warning).warnings == (warning,) and _report(warning).errors == ()


def test_one_error_makes_a_report_invalid_and_keeps_the_order():
    first_error = Finding("open_edges", ERROR, 4, "open")
    warning = Finding("zero_area_faces", WARNING, 1, "sliver")
    second_error = Finding("nonmanifold_edges", ERROR, 2, "shared")
    report = _report(first_error, warning, second_error)
    assert not report.valid
    assert report.errors == (first_error, second_error)
    assert report.warnings == (warning,)


def test_findings_and_reports_are_frozen_and_extra_is_per_report():
    finding = Finding("open_edges", ERROR, 4, "open")
    with pytest.raises(dataclasses.FrozenInstanceError):
        finding.count = 5
    first, second = _report(), _report()
    first.extra["shells"] = 1
    assert second.extra == {}  # default_factory: no shared dict between reports


def test_where_gives_sorted_unique_faces_with_centroids_in_metres():
    vertices, faces = shapes.box((2.0, 4.0, 6.0), (10.0, 0.0, 0.0))
    mesh = mesh_from_arrays(vertices, faces, length_unit="mm")
    places = where([7, 3, 7, 0], mesh)
    assert [p["face"] for p in places] == [0, 3, 7]
    for place in places:
        corners = vertices[faces[place["face"]]]
        # The centroid of a triangle is the mean of its corners (handbook); mm -> m.
        np.testing.assert_allclose(place["point"], corners.mean(axis=0) / 1000.0, rtol=1e-15)
        assert all(isinstance(x, float) for x in place["point"]) and isinstance(place["face"], int)


def test_where_keeps_only_the_first_few_and_nothing_for_no_faces():
    triangles = shapes.triangles_of(*shapes.uv_sphere(rings=4, sections=6))
    mesh = mesh_from_triangles(triangles, length_unit="m")
    places = where(np.arange(mesh.face_count)[::-1], mesh)
    assert [p["face"] for p in places] == list(range(WHERE_LIMIT))
    assert len(where(range(10), mesh, limit=2)) == 2
    assert where([], mesh) == ()
