import re

"""Overlap detection: R-tree broad phase, exact point-in-solid test, Monte-Carlo shared volume.

Reference values are exact geometry worked by hand (intersections of boxes and prisms), and an
analytic point-in-polygon-prism test written here independently of the ray-parity code.
"""

import math
from pathlib import Path

import numpy as np
import pytest

from meshprops.geometry import shapes
from meshprops.io.writers import write_binary_stl
from meshprops.measure.assembly import measure_manifest
from meshprops.measure.overlap import (
    bounding_box,
    candidate_pairs,
    estimate_overlap,
    intersection_box,
    points_inside,
)
from meshprops.output.serialize import assembly_document

MM = 1e-3

def versioned(text: str) -> str:
    """The manifest ``text`` with ``manifest_version = 1`` (required) added, every other line where it was."""
    if "manifest_version" in text:
        return text
    if "[assembly]" not in text:
        return text + "\n[assembly]\nmanifest_version = 1\n"
    head, tail = text.split("[assembly]\n", 1)
    block = re.match(r"(?:[^\[\n][^\n]*\n|\n(?!\[))*", tail).end()
    return head + "[assembly]\n" + tail[:block] + "manifest_version = 1\n" + tail[block:]



def tri(mesh):
    return shapes.triangles_of(*mesh)


def test_interpenetrating_cubes_overlap_volume_is_exact():
    a = tri(shapes.box((2.0, 2.0, 2.0), center=(0.0, 0.0, 0.0)))
    b = tri(shapes.box((2.0, 2.0, 2.0), center=(1.5, 0.5, 0.0)))
    estimate = estimate_overlap(a, b, samples=4000)
    # shared region: x in [0.5, 1], y in [-0.5, 1], z in [-1, 1] → 0.5 × 1.5 × 2 = 1.5, and the
    # sampled box is exactly that region, so every sample is a hit and the error is zero
    assert estimate.overlapping and estimate.hits == estimate.samples
    assert estimate.volume == pytest.approx(1.5, rel=1e-14)
    assert estimate.standard_error == 0.0


def test_cube_and_diamond_prism_overlap_within_the_stated_error():
    """Square [0,2]² and a square turned 45° centred at (2, 1) with half-diagonal 1: the part of
    the diamond inside the square is a right triangle of area d² = 1; prisms 1 thick → volume 1."""
    square = tri(shapes.extrusion([(0, 0), (2, 0), (2, 2), (0, 2)], height=1.0))
    diamond = tri(shapes.extrusion([(1, 1), (2, 0), (3, 1), (2, 2)], height=1.0))
    estimate = estimate_overlap(square, diamond, samples=20000, seed=3)
    assert np.allclose(estimate.box, [[1, 0, 0], [2, 2, 1]])  # box of the intersection: volume 2, p = 1/2
    expected_error = 2.0 * math.sqrt(0.5 * 0.5 / 20000)  # binomial standard error |B| sqrt(p(1-p)/N)
    assert estimate.standard_error == pytest.approx(expected_error, rel=0.02)
    assert abs(estimate.volume - 1.0) < 4 * expected_error


def test_cubes_sharing_a_face_do_not_overlap():
    a = tri(shapes.box((1.0, 1.0, 1.0), center=(0.0, 0.0, 0.0)))
    b = tri(shapes.box((1.0, 1.0, 1.0), center=(1.0, 0.0, 0.0)))
    assert candidate_pairs([bounding_box(a), bounding_box(b)]) == [(0, 1)]  # the boxes touch ...
    assert estimate_overlap(a, b) is None  # ... but only touch


def test_corner_nested_shapes_sharing_faces_do_not_overlap():
    """An L bracket and a block filling its inner corner: the bounding boxes overlap by a lot, the
    solids share two faces and no volume."""
    bracket = tri(shapes.extrusion([(0, 0), (4, 0), (4, 1), (1, 1), (1, 4), (0, 4)], height=2.0))
    block = tri(shapes.box((3.0, 3.0, 2.0), center=(2.5, 2.5, 1.0)))
    estimate = estimate_overlap(bracket, block, samples=5000)
    assert estimate is not None and estimate.hits == 0 and estimate.volume == 0.0
    assert estimate.undetected_upper_bound == pytest.approx(3 * 3 * 3 * 2 / 5000)


def test_cube_inside_a_cube_and_inside_a_void():
    big = tri(shapes.box((4.0, 4.0, 4.0)))
    small = tri(shapes.box((1.0, 1.0, 1.0), center=(0.5, 0.2, -0.3)))
    inside = estimate_overlap(big, small, samples=2000)
    assert inside.volume == pytest.approx(1.0, rel=1e-14)  # the sampled box is the small cube
    hollow = tri(shapes.hollow_box(outer=(4.0, 4.0, 4.0), inner=(2.0, 2.0, 2.0)))
    in_void = estimate_overlap(hollow, small, samples=2000)
    assert in_void.hits == 0  # parity counts both shells: the void is empty


def test_points_inside_matches_an_analytic_prism_test():
    sections, radius, height = 12, 1.0, 2.0
    prism = tri(shapes.cylinder(radius, height, sections=sections))
    generator = np.random.default_rng(7)
    points = generator.uniform(-1.2, 1.2, size=(20000, 3))
    # analytic: inside the regular polygon (all edge half-planes) and |z| < h/2
    angles = 2 * np.pi * np.arange(sections) / sections
    corners = radius * np.column_stack([np.cos(angles), np.sin(angles)])
    edges = np.roll(corners, -1, axis=0) - corners
    relative = points[:, None, :2] - corners[None]
    cross = edges[None, :, 0] * relative[..., 1] - edges[None, :, 1] * relative[..., 0]
    margin = np.min(np.abs(cross), axis=1) / np.linalg.norm(edges, axis=1).min()
    expected = np.all(cross > 0, axis=1) & (np.abs(points[:, 2]) < height / 2)
    clear = (margin > 1e-9) & (np.abs(np.abs(points[:, 2]) - height / 2) > 1e-9)
    got = points_inside(points, prism)
    assert np.count_nonzero(expected) > 5000
    assert np.array_equal(got[clear], expected[clear])


def test_points_inside_torus_against_its_implicit_equation():
    major, minor = 3.0, 1.0
    torus = tri(shapes.torus(major, minor, 128, 64))
    generator = np.random.default_rng(11)
    points = generator.uniform([-4.2, -4.2, -1.2], [4.2, 4.2, 1.2], size=(20000, 3))
    distance = np.hypot(np.hypot(points[:, 0], points[:, 1]) - major, points[:, 2])
    # the mesh is inscribed: points clearly inside the smooth torus by more than the chord sag
    # (1 - cos(pi/64)) * 4 ≈ 5e-3 are inside the mesh; points outside the smooth torus are outside
    sag = 4.0 * (1 - math.cos(math.pi / 64)) + 1.0 * (1 - math.cos(math.pi / 32))
    got = points_inside(points, torus)
    assert np.all(got[distance < minor - sag])
    assert not np.any(got[distance > minor])


def test_candidate_pairs_equal_brute_force():
    generator = np.random.default_rng(5)
    low = generator.uniform(0, 10, size=(40, 3))
    boxes = [np.array([lo, lo + generator.uniform(0.2, 2.0, 3)]) for lo in low]
    brute = sorted(
        (i, j)
        for i in range(len(boxes))
        for j in range(i + 1, len(boxes))
        if np.all(boxes[i][0] <= boxes[j][1]) and np.all(boxes[j][0] <= boxes[i][1])
    )
    assert candidate_pairs(boxes) == brute
    assert intersection_box(boxes[0], boxes[0]) is not None


def _manifest(tmp_path: Path, second_translation: str, second_rotation: str = "") -> Path:
    write_binary_stl(tmp_path / "cube.stl", tri(shapes.box((10.0, 10.0, 10.0))))
    text = f"""
[[body]]
name = "aluminium_cube"
mesh = "cube.stl"
material = "aluminium_6061"
[[body]]
name = "brass_cube"
mesh = "cube.stl"
material = "brass_c36000"
translation = {second_translation}
{second_rotation}
"""
    path = tmp_path / "cubes.toml"
    path.write_text(versioned(text))
    return path


def test_assembly_reports_overlap_with_double_counted_mass(tmp_path):
    result = measure_manifest(_manifest(tmp_path, "[6, 0, 0]"), overlap_samples=3000)
    doc = assembly_document(result)
    [overlap] = doc["overlaps"]
    volume = 4 * 10 * 10 * MM**3  # 4 mm of the 10 mm cubes overlap
    assert overlap["bodies"] == ["aluminium_cube", "brass_cube"]
    assert overlap["volume"] == pytest.approx(volume, rel=1e-12)
    assert overlap["double_counted_mass"] == pytest.approx([volume * 2700, volume * 8500], rel=1e-12)
    assert overlap["share_of_smaller_volume"] == pytest.approx(0.4, rel=1e-12)
    assert any(f["code"] == "bodies_overlap" for f in doc["total"]["findings"])
    assert len(doc["warnings"]) == 1 and "counted twice" in doc["warnings"][0]
    assert result.valid  # an overlap is a warning: numbers stay


def test_assembly_touching_after_a_rotated_placement_is_not_flagged(tmp_path):
    # turned 90° about z (cos 90° is not exactly 0 in floating point) and moved to share a face
    result = measure_manifest(
        _manifest(tmp_path, "[10, 0, 0]", "rotation_axis = [0, 0, 1]\nrotation_angle_deg = 90"), overlap_samples=3000
    )
    assert result.overlaps == () and result.warnings == ()


def test_overlap_check_can_be_skipped(tmp_path):
    result = measure_manifest(_manifest(tmp_path, "[6, 0, 0]"), overlap_samples=0)
    assert result.overlaps == ()
    assert assembly_document(result)["overlap_check"] == {"samples_per_pair": 0, "performed": False}
