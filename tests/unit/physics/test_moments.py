"""The divergence-theorem integrator: exact on simplices, additive, origin- and chunk-independent."""

from __future__ import annotations

import numpy as np
import pytest

from meshprops.geometry import shapes
from meshprops.physics.moments import (
    Moments,
    integrate_chunks,
    integrate_triangles,
    sum_moments,
)

# The unit tetrahedron (0, e1, e2, e3), faces wound counter-clockwise seen from outside.
UNIT_TETRAHEDRON = np.array(
    [
        [[0, 0, 0], [0, 1, 0], [1, 0, 0]],  # z = 0, normal -z
        [[0, 0, 0], [1, 0, 0], [0, 0, 1]],  # y = 0, normal -y
        [[0, 0, 0], [0, 0, 1], [0, 1, 0]],  # x = 0, normal -x
        [[1, 0, 0], [0, 1, 0], [0, 0, 1]],  # slanted face, normal (1, 1, 1)
    ],
    dtype=np.float64,
)


def test_unit_tetrahedron_matches_the_dirichlet_integrals():
    # Source: Dirichlet's formula over the unit simplex, ∫ x^a y^b z^c dV = a! b! c! / (a+b+c+3)!
    # (standard calculus): ∫1 = 1/6, ∫x = 1/24, ∫x² = 2/120 = 1/60, ∫xy = 1/120.
    moments = integrate_triangles(UNIT_TETRAHEDRON, origin=(0.0, 0.0, 0.0))
    assert moments.volume == pytest.approx(1.0 / 6.0, rel=1e-15)
    np.testing.assert_allclose(moments.first, [1.0 / 24.0] * 3, rtol=1e-15)
    expected = np.full((3, 3), 1.0 / 120.0)
    np.fill_diagonal(expected, 1.0 / 60.0)
    np.testing.assert_allclose(moments.second, expected, rtol=1e-14)


def test_a_closed_surface_gives_the_same_solid_about_any_origin():
    triangles = shapes.triangles_of(*shapes.uv_sphere(1.0, 8, 12, center=(0.3, -0.2, 0.5)))
    near = integrate_triangles(triangles, (0.3, -0.2, 0.5))
    for origin in [(0.0, 0.0, 0.0), (5.0, -7.0, 2.0), (-30.0, 10.0, 4.0)]:
        far = integrate_triangles(triangles, origin)
        assert far.volume == pytest.approx(near.volume, rel=1e-12)
        shifted = far.shifted_to(near.origin)
        np.testing.assert_allclose(shifted.first, near.first, atol=1e-11)
        np.testing.assert_allclose(shifted.second, near.second, atol=1e-10)


def test_an_open_surface_depends_on_the_origin():
    # Why validation must come first: without closure the "solid" is not defined.
    open_box = shapes.triangles_of(*shapes.box())[2:]  # bottom removed
    a = integrate_triangles(open_box, (0.0, 0.0, 0.0))
    b = integrate_triangles(open_box, (0.0, 0.0, 3.0))
    # The missing unit face at z = -0.5 closes a pyramid to each origin: volumes 0.5/3 and 3.5/3 differ by 1.
    assert a.volume - b.volume == pytest.approx(1.0, rel=1e-14)


def test_shifted_to_is_the_exact_moment_transfer():
    triangles = shapes.triangles_of(*shapes.box((1.0, 2.0, 3.0), (0.5, 0.25, -1.0)))
    about_zero = integrate_triangles(triangles, (0.0, 0.0, 0.0))
    direct = integrate_triangles(triangles, (2.0, -1.0, 0.5))
    moved = about_zero.shifted_to((2.0, -1.0, 0.5))
    np.testing.assert_array_equal(moved.origin, [2.0, -1.0, 0.5])
    np.testing.assert_allclose(moved.first, direct.first, atol=1e-13)
    np.testing.assert_allclose(moved.second, direct.second, atol=1e-12)


def test_moments_add_over_shells_and_a_void_subtracts():
    outer = shapes.triangles_of(*shapes.box((2.0, 2.0, 2.0)))
    void = shapes.triangles_of(*shapes.box((1.0, 1.0, 1.0), inward=True))
    together = integrate_triangles(np.concatenate([outer, void]), (0.0, 0.0, 0.0))
    summed = integrate_triangles(outer, (0.0, 0.0, 0.0)) + integrate_triangles(void, (1.0, 1.0, 1.0))
    assert together.volume == pytest.approx(8.0 - 1.0, rel=1e-14)
    assert summed.volume == pytest.approx(together.volume, rel=1e-14)
    np.testing.assert_allclose(summed.second, together.second, atol=1e-13)
    total = sum_moments([integrate_triangles(outer, (0.0, 0.0, 0.0)), integrate_triangles(void, (0.0, 0.0, 0.0))])
    assert total.volume == pytest.approx(7.0, rel=1e-14)


def test_reversed_winding_negates_every_moment():
    triangles = shapes.triangles_of(*shapes.cone(1.0, 2.0, 16))
    forward = integrate_triangles(triangles, (0.1, 0.2, 0.3))
    backward = integrate_triangles(triangles[:, ::-1], (0.1, 0.2, 0.3))
    negated = forward.negated()
    assert backward.volume == pytest.approx(negated.volume, rel=1e-14)
    np.testing.assert_allclose(backward.first, negated.first, atol=1e-14)
    np.testing.assert_allclose(backward.second, negated.second, atol=1e-14)


def test_transformed_equals_integrating_the_moved_triangles(rotation):
    triangles = shapes.triangles_of(*shapes.box((1.0, 2.0, 3.0), (0.5, 0.25, -1.0)))
    matrix = rotation((0.9, 0.1, -0.3, 0.2))
    translation = np.array([3.0, -2.0, 1.0])
    moments = integrate_triangles(triangles, (0.0, 0.0, 0.0)).transformed(matrix, translation)
    moved = integrate_triangles(triangles @ matrix.T + translation, translation)
    np.testing.assert_allclose(moments.origin, translation)
    assert moments.volume == pytest.approx(moved.volume, rel=1e-13)
    np.testing.assert_allclose(moments.first, moved.first, atol=1e-12)
    np.testing.assert_allclose(moments.second, moved.second, atol=1e-12)


@pytest.mark.parametrize("chunk_faces", [1, 7, 64, 10_000])
def test_chunking_does_not_change_the_sum(chunk_faces):
    triangles = shapes.triangles_of(*shapes.torus(2.0, 0.5, 24, 12))
    whole = integrate_triangles(triangles, (0.0, 0.0, 0.0))
    chunks = [triangles[start : start + chunk_faces] for start in range(0, len(triangles), chunk_faces)]
    chunked = integrate_chunks(chunks, origin=(0.0, 0.0, 0.0))
    assert chunked.volume == pytest.approx(whole.volume, rel=1e-13)
    np.testing.assert_allclose(chunked.second, whole.second, atol=1e-12)


def test_default_origin_is_near_the_part():
    triangles = shapes.triangles_of(*shapes.box((1.0, 1.0, 1.0), (1000.0, 2000.0, -500.0)))
    moments = integrate_chunks([triangles])
    assert np.linalg.norm(moments.origin - [1000.0, 2000.0, -500.0]) < 1.0


def test_float32_corners_are_summed_in_float64():
    triangles = shapes.triangles_of(*shapes.uv_sphere(0.05, 6, 8)).astype(np.float32)
    from_float32 = integrate_triangles(triangles, (0.0, 0.0, 0.0))
    from_float64 = integrate_triangles(triangles.astype(np.float64), (0.0, 0.0, 0.0))
    assert from_float32.second.dtype == np.float64
    assert from_float32.volume == from_float64.volume
    np.testing.assert_array_equal(from_float32.second, from_float64.second)


def test_no_triangles_gives_zero_moments():
    moments = integrate_chunks([np.zeros((0, 3, 3))])
    assert moments.volume == 0.0
    np.testing.assert_array_equal(moments.second, np.zeros((3, 3)))
    assert Moments.zero((1.0, 2.0, 3.0)).origin.tolist() == [1.0, 2.0, 3.0]
