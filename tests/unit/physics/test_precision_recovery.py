"""Precision (issue 8, item 8): the inertia diagonal and far-apart shells keep their digits."""

from __future__ import annotations

import pytest

from meshprops import measure_mesh, mesh_from_arrays
from meshprops.geometry import shapes


def test_thin_rod_keeps_its_smallest_moment():
    # A 1000 x 0.1 x 0.1 mm rod: I_xx = m (b² + c²) / 12 (handbook formula for a box, common practice).
    # With I_xx = trace − ∫x² the huge ∫x² cancels the digits of the small moment.
    vertices, faces = shapes.box((1000.0, 0.1, 0.1))
    body = measure_mesh(mesh_from_arrays(vertices, faces, length_unit="mm"), density=1000.0)
    a, b, c = 1.0, 1e-4, 1e-4
    mass = 1000.0 * a * b * c
    assert body.properties.inertia_about_com[0, 0] == pytest.approx(mass * (b * b + c * c) / 12, rel=1e-12)


def test_two_small_cubes_far_apart_keep_their_digits():
    # Two 10 mm cubes 5 km apart: each shell is integrated about its own nearby point, then shifted
    # exactly. Reference: parallel-axis theorem on two cubes, I_xx = 2 (m s²/6) (handbook, common practice)
    # about the common centre of mass, whose offset along x adds nothing to I_xx.
    first = shapes.box((10.0, 10.0, 10.0), (0.0, 0.0, 0.0))
    second = shapes.box((10.0, 10.0, 10.0), (5e6, 0.0, 0.0))
    vertices, faces = shapes.merge(first, second)
    body = measure_mesh(mesh_from_arrays(vertices, faces, length_unit="mm"), density=1000.0)
    side = 0.01
    mass = 1000.0 * side**3
    assert body.properties.volume == pytest.approx(2 * side**3, rel=1e-14)
    assert body.properties.inertia_about_com[0, 0] == pytest.approx(2 * mass * side**2 / 6, rel=1e-13)  # 2e-11 off about one point
