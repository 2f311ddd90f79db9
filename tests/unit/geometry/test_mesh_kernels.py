"""The compiled weld and edge kernels against their numpy twins and against plain references
(a Python dictionary of exact coordinates; hand-made closed and broken surfaces)."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from paths import TESTS

from meshprops import mesh_from_arrays
from meshprops.geometry import compiled, shapes
from meshprops.geometry.topology import duplicate_face_groups, is_closed_and_oriented
from meshprops.geometry.welding import (
    Topology,
    weld_compiled,
    weld_exact,
    weld_positions,
)
from meshprops.io import load_mesh

MESH_FILES = sorted(p for p in (TESTS / "meshes").rglob("*") if p.suffix in (".stl", ".obj"))


def _reference_weld(rows: np.ndarray) -> np.ndarray:
    """Dense ids in order of first appearance, by a Python dictionary of exact coordinate tuples."""
    seen: dict = {}
    return np.array([seen.setdefault(tuple(0.0 if x == 0 else x for x in row), len(seen)) for row in rows.tolist()])


@pytest.mark.parametrize("dtype", [np.float32, np.float64])
def test_the_compiled_weld_is_exact_and_grows_its_table(dtype):
    # 30,000 rows on a small lattice (many repeats) plus 30,000 distinct ones: the table and the
    # vertex list both grow past their first size; -0.0 and +0.0 are one position.
    rng = np.random.default_rng(3)
    repeated = rng.integers(-3, 4, size=(30_000, 3)).astype(dtype) * dtype(0.5)
    repeated[::7] *= -1  # turns some +0.0 into -0.0
    distinct = rng.normal(size=(30_000, 3)).astype(dtype)
    rows = np.concatenate([repeated, distinct, repeated[:3000]])
    topology = weld_compiled(rows)
    expected = _reference_weld(rows)
    np.testing.assert_array_equal(topology.face_vertices.reshape(-1), expected)
    assert topology.vertex_count == expected.max() + 1
    first = np.unique(expected, return_index=True)[1]
    np.testing.assert_array_equal(topology.vertex_positions, rows[first] + dtype(0.0))
    ids, count = weld_positions(rows)  # the numpy twin gives the same ids
    np.testing.assert_array_equal(ids, expected)
    assert count == topology.vertex_count


def _variants():
    """Closed surfaces and broken copies: a face missing, flipped, collapsed, doubled; two boxes on an edge."""
    vertices, faces = shapes.torus(2.0, 0.5, 12, 8)
    yield "closed", vertices, faces
    yield "missing", vertices, faces[1:]
    flipped = faces.copy()
    flipped[5] = flipped[5][::-1]
    yield "flipped", vertices, flipped
    collapsed = faces.copy()
    collapsed[3, 1] = collapsed[3, 0]
    yield "collapsed", vertices, collapsed
    yield "doubled same winding", vertices, np.concatenate([faces, faces[:1]])
    yield "doubled opposite winding", vertices, np.concatenate([faces, faces[:1, ::-1]])
    box_vertices, box_faces = shapes.box()
    shifted = box_vertices + np.array([1.0, 1.0, 0.0])  # shares the edge x = y = 0.5 with the first box
    both = np.concatenate([box_vertices, shifted])
    yield "two boxes on an edge", both, np.concatenate([box_faces, box_faces + 8])


@pytest.mark.parametrize("name, vertices, faces", list(_variants()), ids=[v[0] for v in _variants()])
def test_the_compiled_edge_and_duplicate_tests_answer_as_numpy_does(name, vertices, faces, monkeypatch):
    topology = weld_exact(mesh_from_arrays(vertices, faces))
    compiled_closed = is_closed_and_oriented(topology, force_compiled=True)
    kernel = compiled.kernels("mesh_kernels")
    for test in (kernel.closed_and_oriented, kernel.serial("closed_and_oriented")):  # all cores, one thread
        assert test(topology.face_vertices, topology.id_bound) == compiled_closed
    compiled_groups = duplicate_face_groups(topology, force_compiled=True)
    monkeypatch.setitem(compiled._policy, "numpy_only", True)
    assert compiled_closed == is_closed_and_oriented(topology)
    assert compiled_closed == (name == "closed")  # the hand-made expectation
    for mine, theirs in zip(compiled_groups, duplicate_face_groups(topology)):
        np.testing.assert_array_equal(mine, theirs)
    assert (compiled_groups[0].size > 0) == name.startswith("doubled")


def test_the_edge_test_takes_int64_ids_too():
    vertices, faces = shapes.box()
    topology = Topology(faces.astype(np.int64), 8, 8)
    assert is_closed_and_oriented(topology, force_compiled=True)


def test_thin_face_candidates_hold_every_zero_area_face():
    # Random faces, a tenth squashed onto a line (collinear corners), some only nearly so.
    from meshprops.validation.checks import zero_area_faces

    rng = np.random.default_rng(5)
    corners = rng.normal(size=(3000, 3, 3))
    squash = rng.random(3000) < 0.1
    t = rng.random((3000, 1))
    corners[squash, 2] = corners[squash, 0] + t[squash] * (corners[squash, 1] - corners[squash, 0])
    corners[squash[:1500].nonzero()[0][:20], 2] += 1e-7  # nearly collinear: not zero-area
    mesh = mesh_from_arrays(corners.reshape(-1, 3), np.arange(9000).reshape(-1, 3))
    topology = weld_exact(mesh)
    diagonal = float(np.linalg.norm(np.ptp(corners.reshape(-1, 3), axis=0)))
    compiled_found = zero_area_faces(mesh, topology, diagonal)
    kernel = compiled.kernels("mesh_kernels")
    candidates = kernel.thin_face_candidates(corners.reshape(-1, 3), topology.face_vertices, 1e-9 * diagonal, 2.2e-16)
    assert set(compiled_found.tolist()) <= set(candidates.tolist())
    numpy_topology = Topology(topology.face_vertices, topology.vertex_count, topology.id_bound)  # no positions kept
    numpy_found = zero_area_faces(mesh, numpy_topology, diagonal)
    np.testing.assert_array_equal(compiled_found, numpy_found)
    assert 250 < compiled_found.size <= squash.sum()


@pytest.mark.parametrize("path", MESH_FILES, ids=[f"{p.parent.name}/{p.name}" for p in MESH_FILES])
def test_every_example_file_gets_the_same_findings_on_either_path(path: Path, monkeypatch):
    from meshprops.validation.checks import analyse_mesh

    def summary(analysis):
        findings = [(f.code, f.severity, f.count, f.message) for f in analysis.findings]
        return findings, analysis.topology.vertex_count, analysis.shell_count, analysis.crossings.pairs.tolist()

    mesh = load_mesh(path, "mm")
    fast = summary(analyse_mesh(mesh))
    monkeypatch.setitem(compiled._policy, "numpy_only", True)
    assert fast == summary(analyse_mesh(mesh))
