"""Edge topology: union-find shells against breadth-first search; the closed-and-oriented edge test.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from meshprops import mesh_from_arrays
from meshprops.geometry import compiled, shapes
from meshprops.geometry.topology import connected_components, is_closed_and_oriented
from meshprops.geometry.welding import weld_exact


def _reference_components(count, edges):
    """Breadth-first search (plain Python): smallest node of each component."""
    neighbours = [[] for _ in range(count)]
    for a, b in edges:
        neighbours[a].append(b)
        neighbours[b].append(a)
    label = [-1] * count
    for start in range(count):
        if label[start] >= 0:
            continue
        label[start] = start
        queue = [start]
        while queue:
            node = queue.pop()
            for other in neighbours[node]:
                if label[other] < 0:
                    label[other] = start
                    queue.append(other)
    return np.array(label)


@settings(max_examples=80, deadline=None)
@given(st.integers(1, 40).flatmap(lambda n: st.tuples(st.just(n), st.lists(st.tuples(st.integers(0, n - 1), st.integers(0, n - 1)), max_size=60))))
def test_union_find_matches_breadth_first_search(graph):
    count, edges = graph
    a = np.array([e[0] for e in edges], dtype=np.int64)
    b = np.array([e[1] for e in edges], dtype=np.int64)
    labels = connected_components(count, [(a, b)])
    np.testing.assert_array_equal(labels, _reference_components(count, edges))


@pytest.mark.parametrize(
    "build", [lambda: shapes.box((1, 2, 3)), lambda: shapes.cylinder(1, 2, 12), lambda: shapes.torus(2, 0.5, 12, 8)]
)
@pytest.mark.parametrize("numpy_only", [False, True], ids=["compiled", "numpy"])
def test_the_edge_test_accepts_closed_meshes_and_rejects_any_missing_or_flipped_face(build, numpy_only, monkeypatch):
    monkeypatch.setitem(compiled._policy, "numpy_only", numpy_only)
    vertices, faces = build()
    topology = weld_exact(mesh_from_arrays(vertices, faces))
    assert is_closed_and_oriented(topology)
    for face in range(0, len(faces), max(1, len(faces) // 7)):
        missing = weld_exact(mesh_from_arrays(vertices, np.delete(faces, face, axis=0)))
        assert not is_closed_and_oriented(missing)
        flipped = faces.copy()
        flipped[face] = flipped[face][::-1]
        assert not is_closed_and_oriented(weld_exact(mesh_from_arrays(vertices, flipped)))
