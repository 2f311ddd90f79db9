"""Welding corners into vertices is exact: against a reference weld, under forced hash collisions, and
for a memory-mapped binary STL against its indexed twin.
"""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from meshprops import mesh_from_arrays
from meshprops.geometry import compiled, shapes, welding
from meshprops.geometry.topology import is_closed_and_oriented
from meshprops.geometry.welding import weld_exact, weld_positions
from meshprops.io import writers


def _reference_weld(rows: np.ndarray) -> np.ndarray:
    """Dense ids in order of first appearance, by a Python dictionary of exact coordinate tuples."""
    seen: dict = {}
    ids = []
    for row in rows.tolist():
        key = tuple(0.0 if x == 0 else x for x in row)  # -0.0 == +0.0
        ids.append(seen.setdefault(key, len(seen)))
    return np.array(ids)


@settings(max_examples=60, deadline=None)
@given(
    st.lists(st.tuples(*[st.sampled_from([0.0, -0.0, 1.0, -1.0, 0.5, 1e-300, 3.0e38, 7.25])] * 3), min_size=1, max_size=60),
    st.sampled_from([np.float32, np.float64]),
)
def test_welding_is_exact(rows, dtype):
    positions = np.array(rows, dtype=dtype)
    ids, count = weld_positions(positions)
    expected = _reference_weld(positions)
    assert count == expected.max() + 1
    np.testing.assert_array_equal(ids, expected)


def test_welding_stays_exact_when_every_hash_collides(monkeypatch):
    """Force the worst case: every row gets the same hash; rows must still be told apart by their bits."""
    monkeypatch.setitem(compiled._policy, "numpy_only", True)  # the numpy weld (the compiled one has no truncated hash)
    monkeypatch.setattr(welding, "_hash_rows", lambda data: np.zeros(data.shape[0], dtype=np.uint64))
    rng = np.random.default_rng(4)
    positions = rng.integers(0, 4, size=(300, 3)).astype(np.float64)
    ids, count = weld_positions(positions)
    expected = _reference_weld(positions)
    # Same partition as the reference (rows split off by a collision are numbered last, so
    # compare the pairing of ids, not the numbers), and dense ids.
    pairs = set(zip(ids.tolist(), expected.tolist()))
    assert len(pairs) == len(set(ids.tolist())) == len(set(expected.tolist()))
    assert count == len(np.unique(positions, axis=0)) and set(ids.tolist()) == set(range(count))


def test_welding_a_memory_mapped_stl_stays_exact_when_every_hash_collides(tmp_path, monkeypatch):
    """The block-wise path detects the merged positions and splits them off exactly."""
    from meshprops import load_mesh

    vertices, faces = shapes.torus(2.0, 0.5, 12, 6)
    path = tmp_path / "torus.stl"
    writers.write_binary_stl(path, shapes.triangles_of(vertices, faces))
    mesh = load_mesh(path, "m")
    honest = weld_exact(mesh)  # the compiled weld
    monkeypatch.setitem(compiled._policy, "numpy_only", True)
    monkeypatch.setattr(welding, "_hash_rows", lambda data: np.zeros(data.shape[0], dtype=np.uint64))
    forced = weld_exact(mesh)
    pairs = set(zip(forced.face_vertices.reshape(-1).tolist(), honest.face_vertices.reshape(-1).tolist()))
    assert len(pairs) == len(vertices)  # the same partition of corners into vertices
    np.testing.assert_array_equal(honest.face_vertices.reshape(-1), _reference_weld(np.asarray(mesh.soup).reshape(-1, 3)))
    assert forced.vertex_count == len(vertices)


def test_welding_a_binary_stl_memory_map_matches_its_indexed_twin(tmp_path):
    from meshprops import load_mesh

    vertices, faces = shapes.torus(2.0, 0.5, 40, 20)
    path = tmp_path / "torus.stl"
    writers.write_binary_stl(path, shapes.triangles_of(vertices, faces))
    soup = weld_exact(load_mesh(path, "m"))
    indexed = weld_exact(mesh_from_arrays(vertices.astype(np.float32).astype(np.float64), faces))
    assert soup.vertex_count == indexed.vertex_count == len(vertices)
    assert is_closed_and_oriented(soup) and is_closed_and_oriented(indexed)
