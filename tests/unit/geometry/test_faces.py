"""Near pairs of points: exactly the close ones.
"""

from __future__ import annotations

import numpy as np

from meshprops.geometry.faces import near_pairs


def test_near_pairs_finds_exactly_the_close_points():
    rng = np.random.default_rng(7)
    points = rng.uniform(0, 1, size=(400, 3))
    points[10] = points[3] + [4e-7, 0, 0]
    points[20] = points[5] + [0, 2e-6, 0]
    first, second = near_pairs(points, 1e-6)
    distance = np.linalg.norm(points[:, None] - points[None], axis=2)
    expected = {(i, j) for i, j in zip(*np.nonzero(np.triu(distance <= 1e-6, 1)))}
    assert set(zip(first.tolist(), second.tolist())) == expected == {(3, 10)}
