"""Point in solid: winding numbers through edges and vertices, and against a half-space test.
"""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from meshprops.geometry import shapes
from meshprops.geometry.inside import winding_numbers


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


def _convex_inside(points, vertices, faces):
    """Independent reference for a convex, outward mesh: inside when behind every face plane."""
    tri = vertices[faces]
    normals = np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0])
    offsets = np.einsum("ij,ij->i", normals, tri[:, 0])
    return np.all(points @ normals.T < offsets, axis=1)
