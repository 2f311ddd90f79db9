"""Crack closing: merge open-edge vertices within a tolerance, never fill a hole."""

from __future__ import annotations

import numpy as np
import pytest

from meshprops.geometry import shapes
from meshprops.geometry.cracks import close_cracks, default_crack_tolerance


def _cracked_cube(gap: float):
    # A 10 mm cube whose corner 6 is written twice: once exactly, once moved by `gap` for the faces
    # of the +x side (as an export that writes each patch on its own does).
    vertices, faces = shapes.box((10, 10, 10))
    vertices = np.vstack([vertices, vertices[6] + [0, 0, gap]])
    faces = faces.copy()
    faces[8:10][faces[8:10] == 6] = 8  # the +x faces use the copy
    return vertices, faces


def _volume(vertices, faces):
    corners = vertices[faces]
    return float(np.einsum("ij,ij->i", corners[:, 0], np.cross(corners[:, 1], corners[:, 2])).sum() / 6.0)


def test_crack_of_1e7_of_the_size_is_closed():
    vertices, faces = _cracked_cube(1e-6)  # 1e-7 of the 10 mm edge
    tolerance = default_crack_tolerance(vertices)
    assert tolerance == pytest.approx(1e-6 * 10 * np.sqrt(3))  # relative 1e-6 of the diagonal
    closed = close_cracks(vertices, faces, tolerance)
    assert closed.open_edges_before == 4 and closed.open_edges_after == 0
    assert closed.merged_vertices == 1 and closed.largest_gap == pytest.approx(1e-6)
    assert closed.collapsed_faces == 0
    assert _volume(vertices, closed.faces) == pytest.approx(1000.0, rel=1e-14)  # 10^3 (handbook)


def test_gap_wider_than_the_tolerance_stays_open():
    vertices, faces = _cracked_cube(1e-3)
    closed = close_cracks(vertices, faces, default_crack_tolerance(vertices))
    assert not closed.changed and closed.open_edges_after == 4


def test_zero_tolerance_turns_it_off():
    vertices, faces = _cracked_cube(1e-9)
    assert not close_cracks(vertices, faces, 0.0).changed


def test_a_missing_face_is_never_filled():
    vertices, faces = shapes.box((10, 10, 10))
    closed = close_cracks(vertices, faces[1:], 1.0)
    assert not closed.changed and closed.open_edges_after == closed.open_edges_before == 3
    assert closed.faces.shape[0] == 11


def test_sliver_across_a_crack_collapses():
    # A face whose two corners lie 1e-7 apart across the crack: merging them drops the face.
    vertices, faces = _cracked_cube(1e-7)
    faces = np.vstack([faces, [6, 8, 5]])
    closed = close_cracks(vertices, faces, 1e-6)
    assert closed.collapsed_faces == 1 and closed.faces.shape[0] == 12
