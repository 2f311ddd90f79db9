"""Simple solids: each is closed and wound outward, and its volume equals the exact volume of the
inscribed polyhedron it approximates (not of the smooth solid: the formulas below count the
polygon sides). Volumes are summed here from signed tetrahedra (origin, a, b, c): det/6 each
(divergence theorem, common practice), independently of meshprops' integrator."""

from __future__ import annotations

import math
from collections import Counter

import numpy as np
import pytest

from meshprops.geometry import shapes


def signed_volume(vertices, faces) -> float:
    triangles = np.asarray(vertices)[np.asarray(faces)]
    return float(np.linalg.det(triangles).sum() / 6.0)


def assert_closed_and_consistently_wound(faces) -> None:
    """Every directed edge once, and its reverse once: a closed surface wound one way."""
    directed = Counter((int(f[k]), int(f[(k + 1) % 3])) for f in faces for k in range(3))
    assert max(directed.values()) == 1, "an edge is used twice in the same direction"
    assert all((b, a) in directed for a, b in directed), "an edge has no reverse: the surface is open"
    assert all(len(set(map(int, f))) == 3 for f in faces), "a face repeats a vertex"


def regular_polygon_area(radius: float, sides: int) -> float:
    """Area of the regular ``sides``-gon inscribed in a circle of ``radius``: (n/2) r^2 sin(2 pi/n) (handbook)."""
    return 0.5 * sides * radius**2 * math.sin(2.0 * math.pi / sides)


def frustum_volume(area_bottom: float, area_top: float, height: float) -> float:
    """Frustum of a pyramid between similar parallel faces: h/3 (A1 + A2 + sqrt(A1 A2)) (handbook)."""
    return height / 3.0 * (area_bottom + area_top + math.sqrt(area_bottom * area_top))


def test_box_volume_and_center():
    vertices, faces = shapes.box((2.0, 3.0, 5.0), center=(1.0, -2.0, 4.0))
    assert_closed_and_consistently_wound(faces)
    assert signed_volume(vertices, faces) == pytest.approx(30.0, rel=1e-14)  # a b c
    np.testing.assert_allclose(vertices.min(axis=0), [0.0, -3.5, 1.5])
    np.testing.assert_allclose(vertices.max(axis=0), [2.0, -0.5, 6.5])
    assert faces.dtype == np.int64 and vertices.dtype == np.float64


@pytest.mark.parametrize("sections", [3, 7, 64])
def test_cylinder_is_a_regular_prism(sections):
    vertices, faces = shapes.cylinder(radius=2.0, height=3.0, sections=sections, center=(0.0, 0.0, 10.0))
    assert_closed_and_consistently_wound(faces)
    # Prism: base area times height.
    expected = regular_polygon_area(2.0, sections) * 3.0
    assert signed_volume(vertices, faces) == pytest.approx(expected, rel=1e-13)


@pytest.mark.parametrize("sections", [4, 64])
def test_cone_is_a_regular_pyramid(sections):
    vertices, faces = shapes.cone(radius=1.5, height=4.0, sections=sections)
    assert_closed_and_consistently_wound(faces)
    # Pyramid: base area times height over 3 (handbook).
    assert signed_volume(vertices, faces) == pytest.approx(regular_polygon_area(1.5, sections) * 4.0 / 3.0, rel=1e-13)
    assert vertices[:, 2].min() == 0.0 and vertices[:, 2].max() == 4.0


def test_uv_sphere_is_a_stack_of_frustums():
    radius, rings, sections = 2.0, 9, 12
    vertices, faces = shapes.uv_sphere(radius, rings=rings, sections=sections)
    assert_closed_and_consistently_wound(faces)
    polar = np.linspace(math.pi, 0.0, rings + 1)
    expected = sum(
        frustum_volume(
            regular_polygon_area(radius * math.sin(lower), sections),
            regular_polygon_area(radius * math.sin(upper), sections),
            radius * (math.cos(upper) - math.cos(lower)),
        )
        for lower, upper in zip(polar[:-1], polar[1:])
    )
    assert signed_volume(vertices, faces) == pytest.approx(expected, rel=1e-12)
    # And the inscribed polyhedron is inside the ball: below (4/3) pi r^3, within a few percent of it.
    assert 0.9 * 4.0 / 3.0 * math.pi * radius**3 < expected < 4.0 / 3.0 * math.pi * radius**3


def test_torus_volume_by_sectors():
    major, minor, m, n = 2.0, 0.5, 24, 10
    vertices, faces = shapes.torus(major, minor, major_sections=m, minor_sections=n)
    assert_closed_and_consistently_wound(faces)
    # Each of the m sectors is swept by the minor n-gon (area A, centroid at radius R) along chords:
    # V = m sin(2 pi/m) R A (Pappus's centroid theorem with chords for arcs; derived here, tends to
    # 2 pi R * pi r^2 as m, n grow: Pappus, handbook).
    expected = m * math.sin(2.0 * math.pi / m) * major * regular_polygon_area(minor, n)
    assert signed_volume(vertices, faces) == pytest.approx(expected, rel=1e-12)
    fine = shapes.torus(major, minor, major_sections=200, minor_sections=100)
    assert signed_volume(*fine) == pytest.approx(2.0 * math.pi**2 * major * minor**2, rel=1e-3)


def test_tube_is_a_prism_with_a_prismatic_bore():
    vertices, faces = shapes.tube(outer_radius=3.0, inner_radius=1.0, height=2.0, sections=16)
    assert_closed_and_consistently_wound(faces)
    expected = (regular_polygon_area(3.0, 16) - regular_polygon_area(1.0, 16)) * 2.0
    assert signed_volume(vertices, faces) == pytest.approx(expected, rel=1e-13)
    with pytest.raises(ValueError, match="inner_radius < outer_radius"):
        shapes.tube(outer_radius=1.0, inner_radius=1.0)


def test_extrusion_of_an_l_shape():
    # L shape starting at its inner corner (star-shaped about it), counter-clockwise.
    polygon = [(1.0, 1.0), (1.0, 4.0), (0.0, 4.0), (0.0, 0.0), (3.0, 0.0), (3.0, 1.0)]
    vertices, faces = shapes.extrusion(polygon, height=2.0, z0=-1.0)
    assert_closed_and_consistently_wound(faces)
    x, y = np.array(polygon).T
    shoelace = 0.5 * abs(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1)))  # shoelace formula (handbook)
    assert shoelace == 6.0  # 3 x 1 + 1 x 3 by hand
    assert signed_volume(vertices, faces) == pytest.approx(shoelace * 2.0, rel=1e-14)


def test_inward_reverses_every_face_and_the_sign_of_the_volume():
    vertices, faces = shapes.cylinder(sections=9)
    inside_out = shapes.cylinder(sections=9, inward=True)
    np.testing.assert_array_equal(inside_out[0], vertices)
    np.testing.assert_array_equal(inside_out[1], faces[:, ::-1])
    assert signed_volume(*inside_out) == pytest.approx(-signed_volume(vertices, faces), rel=1e-15)


def test_hollow_box_and_merge_keep_shells_separate():
    vertices, faces = shapes.hollow_box((4.0, 4.0, 4.0), (2.0, 2.0, 2.0))
    assert_closed_and_consistently_wound(faces)
    assert signed_volume(vertices, faces) == pytest.approx(64.0 - 8.0, rel=1e-14)
    assert len(vertices) == 16 and len(faces) == 24
    assert set(faces[:12].reshape(-1)) == set(range(8)) and set(faces[12:].reshape(-1)) == set(range(8, 16))


def test_triangles_of_indexes_the_corners():
    vertices, faces = shapes.box()
    triangles = shapes.triangles_of(vertices, faces)
    assert triangles.shape == (12, 3, 3)
    np.testing.assert_array_equal(triangles[3, 1], vertices[faces[3, 1]])
