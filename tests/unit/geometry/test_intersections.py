"""The triangle-triangle crossing test on hand-built pairs.
"""

from __future__ import annotations

import numpy as np

from meshprops.geometry.intersections import triangles_cross


def test_triangle_crossing_test():
    base = np.array([[0.0, 0.0, 0.0], [2.0, 0.0, 0.0], [0.0, 2.0, 0.0]])
    piercing = np.array([[0.5, 0.5, -1.0], [0.5, 0.5, 1.0], [3.0, 3.0, 0.5]])
    touching_at_a_point = np.array([[0.5, 0.5, 0.0], [0.5, 1.5, 1.0], [1.5, 0.5, 1.0]])
    resting_on_an_edge = np.array([[0.5, 0.2, 0.0], [1.2, 0.2, 0.0], [0.8, 0.2, 1.0]])
    coplanar_overlap = np.array([[0.2, 0.2, 0.0], [3.0, 0.2, 0.0], [0.2, 3.0, 0.0]])
    far_away = piercing + [10.0, 0.0, 0.0]
    others = np.stack([piercing, touching_at_a_point, resting_on_an_edge, coplanar_overlap, far_away])
    first = np.repeat(base[None], len(others), axis=0)
    expected = [True, False, False, False, False]
    assert triangles_cross(first, others).tolist() == expected
    assert triangles_cross(others, first).tolist() == expected
    shift = np.array([2000.0, -1500.0, 300.0])  # far from the origin: same answers
    assert triangles_cross(first + shift, others + shift).tolist() == expected
