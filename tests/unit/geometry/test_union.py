"""The union of overlapping and nested shells against inclusion–exclusion formulas."""

from __future__ import annotations

import numpy as np
import pytest

from meshprops.geometry import shapes
from meshprops.geometry.union import union_of_shells


def _moments(corners: np.ndarray) -> tuple[float, np.ndarray]:
    # Divergence theorem (common practice): each face and the origin form a signed tetrahedron of
    # volume det/6 and centroid (a + b + c)/4.
    six = np.einsum("ij,ij->i", corners[:, 0], np.cross(corners[:, 1], corners[:, 2]))
    volume = six.sum() / 6.0
    return float(volume), (six[:, None] * corners.sum(axis=1)).sum(axis=0) / 24.0 / volume


def _shells(*parts):
    vertices, faces, labels, offset = [], [], [], 0
    for number, (v, f) in enumerate(parts):
        vertices.append(v)
        faces.append(f + offset)
        labels.append(np.full(len(f), number))
        offset += len(v)
    vertices, faces, labels = np.vstack(vertices), np.vstack(faces), np.concatenate(labels)
    volume = np.array([_moments(shapes.triangles_of(v, f))[0] for v, f in parts])
    return vertices, faces, labels, volume


def test_two_overlapping_boxes():
    # A = 4 x 2 x 2 centred at 0, B = 2 x 2 x 2 centred at (2, 0.5, 0): A ∩ B = [1,2] x [-0.5,1] x [-1,1],
    # 1 x 1.5 x 2 = 3 centred at (1.5, 0.25, 0). Inclusion–exclusion: V = 16 + 8 − 3 = 21,
    # c = (16·(0,0,0) + 8·(2,0.5,0) − 3·(1.5,0.25,0)) / 21.
    vertices, faces, labels, volume = _shells(shapes.box((4, 2, 2)), shapes.box((2, 2, 2), (2, 0.5, 0)))
    union = union_of_shells(vertices, faces, labels, volume, np.zeros(2, dtype=int))
    got_volume, got_center = _moments(union.triangles())
    assert got_volume == pytest.approx(21.0, rel=1e-12)
    assert union.volume == pytest.approx(21.0, rel=1e-12)
    np.testing.assert_allclose(got_center, (8 * np.array([2, 0.5, 0]) - 3 * np.array([1.5, 0.25, 0])) / 21, atol=1e-12)
    assert union.shell_volume_sum == pytest.approx(24.0)
    assert union.volume_change == pytest.approx(-3.0)
    np.testing.assert_allclose(union.shared_volume, [3.0, 3.0], rtol=1e-12)


def test_nested_cube_wound_outward_is_the_outer_cube():
    vertices, faces, labels, volume = _shells(shapes.box((2, 2, 2)), shapes.box((1, 1, 1), (0.2, 0, 0)))
    union = union_of_shells(vertices, faces, labels, volume, np.array([0, 1]))
    got_volume, got_center = _moments(union.triangles())
    assert got_volume == pytest.approx(8.0, rel=1e-12)  # the outer cube, 2^3
    np.testing.assert_allclose(got_center, 0.0, atol=1e-12)


def test_l_shape_of_three_overlapping_boxes():
    # Boxes P = [0,3]x[0,1]x[0,1], Q = [0,1]x[0,3]x[0,1], R = [0,1]x[0,1]x[0,1] (the corner, in both).
    # Inclusion–exclusion: |P ∪ Q ∪ R| = 3 + 3 + 1 − |P∩Q| − |P∩R| − |Q∩R| + |P∩Q∩R| = 7 − 1 − 1 − 1 + 1 = 5;
    # the union is the L of five unit cubes, centre ((0.5·3 + 1.5 + 2.5), (0.5·3 + 1.5 + 2.5), 0.5) / 5 · ...
    p = shapes.box((3, 1, 1), (1.5, 0.5, 0.5))
    q = shapes.box((1, 3, 1), (0.5, 1.5, 0.5))
    r = shapes.box((1, 1, 1), (0.5, 0.5, 0.5))
    vertices, faces, labels, volume = _shells(p, q, r)
    union = union_of_shells(vertices, faces, labels, volume, np.zeros(3, dtype=int))
    got_volume, got_center = _moments(union.triangles())
    assert got_volume == pytest.approx(5.0, rel=1e-12)
    cubes = np.array([[0.5, 0.5], [1.5, 0.5], [2.5, 0.5], [0.5, 1.5], [0.5, 2.5]])  # unit cube centres (x, y)
    np.testing.assert_allclose(got_center, [*cubes.mean(axis=0), 0.5], atol=1e-12)
    assert union.volume_change == pytest.approx(5.0 - 7.0)


def test_overlapping_coaxial_cylinders():
    # Two 64-gon prisms of circumradius r on one axis, z in [0, 2] and [1.5, 3.5]: union = polygon area
    # × 3.5, with the regular n-gon area n r² sin(2π/n) / 2 (handbook), centre on the axis at z = 1.75.
    n, r = 64, 0.7
    a = shapes.cylinder(r, 2.0, n, (0, 0, 1.0))
    b = shapes.cylinder(r, 2.0, n, (0, 0, 2.5))
    vertices, faces, labels, volume = _shells(a, b)
    union = union_of_shells(vertices, faces, labels, volume, np.zeros(2, dtype=int))
    got_volume, got_center = _moments(union.triangles())
    area = n * r**2 * np.sin(2 * np.pi / n) / 2
    assert got_volume == pytest.approx(area * 3.5, rel=1e-12)
    np.testing.assert_allclose(got_center, [0, 0, 1.75], atol=1e-12)


def test_part_in_a_cavity_survives_the_cavity():
    # Outer 2-cube, a 1-cube void, a 0.5-cube ball inside the void: 8 − 1 + 0.125 (nothing overlaps).
    vertices, faces, labels, volume = _shells(
        shapes.box((2, 2, 2)), shapes.box((1, 1, 1), inward=True), shapes.box((0.5, 0.5, 0.5))
    )
    union = union_of_shells(vertices, faces, labels, volume, np.array([0, 1, 2]))
    assert _moments(union.triangles())[0] == pytest.approx(7.125, rel=1e-12)
    assert union.volume_change == pytest.approx(0.0, abs=1e-12)


def test_reference_library_is_off_by_exactly_the_overlap():
    # trimesh's mass properties (an independent reference library) on the two overlapping boxes of
    # test_two_overlapping_boxes: it sums the shells, so its volume exceeds inclusion–exclusion's 21
    # by exactly the overlap, 3.
    trimesh = pytest.importorskip("trimesh")
    vertices, faces, labels, volume = _shells(shapes.box((4, 2, 2)), shapes.box((2, 2, 2), (2, 0.5, 0)))
    reference = trimesh.Trimesh(vertices, faces, process=False)
    union = union_of_shells(vertices, faces, labels, volume, np.zeros(2, dtype=int))
    assert reference.volume - union.volume == pytest.approx(3.0, rel=1e-12)
