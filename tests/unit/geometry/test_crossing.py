"""The grid + compiled self-intersection finder against the rtree-based reference check,
and its volume bound against inclusion–exclusion."""

from __future__ import annotations

import numpy as np
import pytest
from paths import TESTS

from meshprops.geometry import crossing, shapes
from meshprops.geometry.crossing import crossing_volume_bound, find_crossings
from meshprops.geometry.intersections import self_intersection_pairs
from meshprops.geometry.welding import weld_exact
from meshprops.io import load_mesh, mesh_from_triangles

MESHES = TESTS / "meshes"


def _reference_pairs(corners: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    mesh = mesh_from_triangles(corners)
    topology = weld_exact(mesh)
    pairs = np.sort(self_intersection_pairs(mesh, topology), axis=1)
    if pairs.size:
        pairs = pairs[np.lexsort((pairs[:, 1], pairs[:, 0]))]
    return pairs.reshape(-1, 2), topology.face_vertices


def _welded(corners: np.ndarray, face_vertices: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(V, 3) positions of the welded ids (each id's first corner) and the (F, 3) ids."""
    vertices = np.zeros((int(face_vertices.max()) + 1, 3))
    vertices[face_vertices.ravel()[::-1]] = corners.reshape(-1, 3)[::-1]
    return vertices, face_vertices


@pytest.mark.parametrize("path", sorted(MESHES.glob("*/*.stl")), ids=lambda p: p.name)
def test_agrees_with_the_rtree_check_on_the_example_meshes(path):
    corners = load_mesh(path).triangles()
    reference, face_vertices = _reference_pairs(corners)
    found = find_crossings(*_welded(corners, face_vertices), force_compiled=True)
    np.testing.assert_array_equal(found.pairs, reference)


@pytest.mark.parametrize("scattered", [False, True], ids=["cell-order buckets", "scattered buckets"])
@pytest.mark.parametrize("seed", range(6))
def test_agrees_with_the_rtree_check_on_random_triangles(seed, scattered, monkeypatch):
    # Random soups: many crossing pairs in general position, some corners shared (snapped to a lattice).
    # Scattered: every bucket counts as piled up, so the entries are placed again with scattered keys.
    if scattered:
        monkeypatch.setattr(crossing, "PILED_BUCKET_ENTRIES", 0)
    rng = np.random.default_rng(seed)
    centres = rng.uniform(0, 10, size=(400, 1, 3))
    corners = centres + rng.normal(scale=0.8, size=(400, 3, 3))
    if seed % 2:
        corners = np.round(corners * 2) / 2  # lattice corners: shared vertices and coplanar pairs
    reference, face_vertices = _reference_pairs(corners)
    found = find_crossings(*_welded(corners, face_vertices), force_compiled=True)
    assert reference.shape[0] > 0  # the test means something only if there are crossings
    np.testing.assert_array_equal(found.pairs, reference)
    small = find_crossings(*_welded(corners, face_vertices), force_rtree=True)  # the rtree path
    assert not small.coplanar_checked
    np.testing.assert_array_equal(small.pairs, reference)


def test_closed_solids_do_not_cross_themselves():
    for vertices, faces in (shapes.torus(2.0, 0.5, 120, 60), shapes.uv_sphere(1.0, 40, 80), shapes.box()):
        found = find_crossings(vertices, faces, force_compiled=True)
        assert found.pairs.shape == (0, 2) and found.coplanar_pairs.shape == (0, 2)


def test_a_fan_of_thousands_of_faces_at_a_pole():
    vertices, faces = shapes.cone(1.0, 1.0, sections=4000)
    found = find_crossings(vertices, faces, force_compiled=True)
    assert found.pairs.shape == (0, 2)
    assert found.entries <= 8 * faces.shape[0]


def test_coplanar_faces_strict_overlap():
    # A flat wall split into a 30 x 30 grid of triangle pairs: neighbours lie in one plane and
    # touch along edges and corners, which is no overlap.
    grid = np.stack(np.meshgrid(np.arange(31.0), np.arange(31.0), indexing="ij"), axis=-1).reshape(-1, 2)
    vertices = np.column_stack([grid, np.zeros(len(grid))])
    index = np.arange(31 * 31).reshape(31, 31)
    a, b, c, d = index[:-1, :-1].ravel(), index[1:, :-1].ravel(), index[1:, 1:].ravel(), index[:-1, 1:].ravel()
    faces = np.concatenate([np.column_stack([a, b, c]), np.column_stack([a, c, d])])
    found = find_crossings(vertices, faces, force_compiled=True)
    assert found.pairs.shape == (0, 2) and found.coplanar_pairs.shape == (0, 2)
    # Two triangles in one plane, sharing no vertex, one over the other's interior: a coplanar overlap.
    corners = np.array([[[0, 0, 0], [2, 0, 0], [0, 2, 0]], [[0.5, 0.5, 0], [1.5, 0.2, 0], [0.2, 1.5, 0]]], float)
    found = find_crossings(corners.reshape(-1, 3), np.arange(6).reshape(2, 3), force_compiled=True)
    assert found.coplanar_pairs.tolist() == [[0, 1]] and found.pairs.shape == (0, 2)
    # Touching along an edge only (separate vertex ids): no overlap.
    corners[1] = [[2, 0, 0], [0, 2, 0], [2, 2, 0]]
    assert find_crossings(corners.reshape(-1, 3), np.arange(6).reshape(2, 3), force_compiled=True).coplanar_pairs.shape == (0, 2)


def test_faces_sharing_a_vertex_never_count():
    # Two faces crossing along a segment from their shared corner (a fold): skipped by default,
    # found when vertex neighbours are asked for.
    vertices = np.array([[0, 0, 0], [2, 0, 0], [0, 2, 0], [1, 1, -1], [1, 1, 1]], float)
    faces = np.array([[0, 1, 2], [0, 3, 4]])
    assert find_crossings(vertices, faces, force_compiled=True).pairs.shape == (0, 2)
    assert find_crossings(vertices, faces, include_vertex_neighbours=True).pairs.tolist() == [[0, 1]]


def _signed_volume(corners: np.ndarray) -> float:
    # Divergence theorem: signed tetrahedra with the origin (common practice).
    return float(np.einsum("ij,ij->i", corners[:, 0], np.cross(corners[:, 1], corners[:, 2])).sum() / 6.0)


def test_volume_bound_covers_the_overlap_of_two_boxes_in_one_surface():
    # Boxes [-1,1]^3 and [0.5,2.5]^3 listed as one surface: the divergence sum counts their
    # intersection twice. Inclusion–exclusion: |A ∪ B| = |A| + |B| − |A ∩ B| with
    # |A ∩ B| = (1 − 0.5)^3 = 0.125, so the sum is off by exactly 0.125.
    va, fa = shapes.box((2, 2, 2))
    vb, fb = shapes.box((2, 2, 2), (1.5, 1.5, 1.5))
    vertices = np.vstack([va, vb])
    faces = np.vstack([fa, fb + 8])
    found = find_crossings(vertices, faces, force_compiled=True)
    bound = crossing_volume_bound(vertices, faces, found.pairs)
    error = _signed_volume(vertices[faces]) - (8 + 8 - 0.125)
    assert error == pytest.approx(0.125)
    assert bound.bounded and bound.volume_bound >= error


def test_volume_bound_of_a_small_fold_is_small():
    # A fine torus with one vertex pushed along the major circle past two neighbours: a fold
    # of tessellation size, whose bound is a tiny fraction of the volume 2 π² R r² (handbook).
    vertices, faces = shapes.torus(2.0, 0.5, 400, 200)
    vertices = vertices.copy()
    apex = int(np.argmax(vertices[:, 0]))
    vertices[apex, 1] += 2.5 * (2 * np.pi * 2.5 / 400)
    found = find_crossings(vertices, faces, force_compiled=True)
    assert found.pairs.shape[0] >= 1
    bound = crossing_volume_bound(vertices, faces, found.pairs)
    assert bound.bounded
    assert 0 < bound.volume_bound < 1e-6 * 2 * np.pi**2 * 2.0 * 0.5**2


def test_one_thread_and_all_cores_find_the_same_pairs():
    # Random soup as above (reference: the rtree check); the serial kernel answers below PARALLEL_FROM_FACES.
    rng = np.random.default_rng(11)
    corners = np.round((rng.uniform(0, 10, size=(400, 1, 3)) + rng.normal(scale=0.8, size=(400, 3, 3))) * 2) / 2
    reference, face_vertices = _reference_pairs(corners)
    vertices, faces = _welded(corners, face_vertices)
    serial = find_crossings(vertices, faces, force_compiled=True, _parallel=False)
    parallel = find_crossings(vertices, faces, force_compiled=True, _parallel=True)
    assert reference.shape[0] > 0
    np.testing.assert_array_equal(serial.pairs, reference)
    np.testing.assert_array_equal(parallel.pairs, reference)
    np.testing.assert_array_equal(serial.coplanar_pairs, parallel.coplanar_pairs)


