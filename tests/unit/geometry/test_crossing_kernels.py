"""The compiled kernels one by one: the per-pair narrow phase against the vectorized rtree-path
test, and the exact side-winding rays against the winding numbers of a closed box."""

from __future__ import annotations

import numpy as np

from meshprops.geometry import crossing_kernels as kernels
from meshprops.geometry import shapes
from meshprops.geometry.intersections import triangles_cross


def test_pair_relation_agrees_with_the_vectorized_interval_test():
    # Möller's interval test written twice (Möller 1997, from memory): per pair on the stack and
    # vectorized over pairs; random pairs in general position must get the same answer.
    rng = np.random.default_rng(7)
    first = rng.normal(size=(3000, 3, 3))
    second = first + rng.normal(scale=0.7, size=(3000, 3, 3))
    vertices = np.concatenate([first, second]).reshape(-1, 3)
    faces = np.arange(vertices.shape[0]).reshape(-1, 3)
    compiled = np.array([kernels.pair_relation(vertices, faces, k, 3000 + k, 1e-10) for k in range(3000)])
    reference = triangles_cross(first, second)
    assert reference.sum() > 100  # the comparison means something
    np.testing.assert_array_equal(compiled == kernels.CROSSING, reference)


def test_faces_of_a_closed_box_have_winding_zero_outside():
    # A closed, outward surface: just outside every face the winding number is 0, just inside 1.
    vertices, faces = shapes.box((2.0, 3.0, 5.0), (0.3, -0.2, 0.1))
    corners = np.ascontiguousarray(vertices[faces])
    normals = np.cross(corners[:, 1] - corners[:, 0], corners[:, 2] - corners[:, 0])
    axes = np.abs(normals).argmax(axis=1).astype(np.int64)
    outside = kernels.face_sides_winding(corners, np.arange(len(faces), dtype=np.int64), axes)
    np.testing.assert_array_equal(outside, 0)
    # Inside-out, every face sees the surface's winding -1 on its outer side.
    flipped = np.ascontiguousarray(corners[:, ::-1])
    assert (kernels.face_sides_winding(flipped, np.arange(len(faces), dtype=np.int64), axes) == -1).all()
