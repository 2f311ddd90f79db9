"""Property tests (hypothesis): what must hold for every rigid body, whatever the numbers.

* rigid motion x ↦ R x + t: mass unchanged, centre of mass moves to R c + t, inertia R I Rᵀ;
* face order and the starting corner of each face do not matter;
* scaling lengths by s: mass ∝ s³, centre of mass ∝ s, inertia ∝ s⁵;
* shells add: two disjoint boxes are the sum of the two; a void subtracts;
* a reflection turns the surface inside-out: refused, never a negative mass.

These invariances follow from the definition of the moments (any mechanics text); the
handbook box tensor m(b² + c²)/12 ... is from memory.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from meshprops import InvalidMeshError, measure_mesh, mesh_from_arrays
from meshprops.geometry import shapes
from meshprops.physics.mass import parallel_axis_term
from meshprops.physics.moments import integrate_chunks

SETTINGS = settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
DENSITY = 1000.0

# An asymmetric closed part (L-shaped bracket plus a boss) and a small tilted torus.
BRACKET = shapes.merge(
    shapes.extrusion([(1.0, 1.0), (1.0, 4.0), (0.0, 4.0), (0.0, 0.0), (3.0, 0.0), (3.0, 1.0)], 2.0, 0.5),
    shapes.box((1.0, 0.75, 1.25), (5.0, 2.5, 1.125)),
)
TORUS = shapes.torus(2.0, 0.6, 16, 8, (0.5, -0.3, 0.2))
PARTS = {"bracket": BRACKET, "torus": TORUS}


def _measure(vertices, faces):
    return measure_mesh(mesh_from_arrays(vertices, faces), density=DENSITY).properties


BASE = {name: _measure(*mesh) for name, mesh in PARTS.items()}


def _rotation(quaternion):
    w, x, y, z = np.asarray(quaternion) / np.linalg.norm(quaternion)
    return np.array(
        [
            [1 - 2 * (y * y + z * z), 2 * (x * y - z * w), 2 * (x * z + y * w)],
            [2 * (x * y + z * w), 1 - 2 * (x * x + z * z), 2 * (y * z - x * w)],
            [2 * (x * z - y * w), 2 * (y * z + x * w), 1 - 2 * (x * x + y * y)],
        ]
    )


def _close(actual, expected, rtol, scale=None):
    """|actual − expected| <= rtol · scale, the scale defaulting to the largest expected entry."""
    expected = np.asarray(expected, dtype=np.float64)
    scale = np.abs(expected).max() if scale is None else scale
    np.testing.assert_allclose(actual, expected, rtol=0, atol=rtol * scale)


quaternions = st.tuples(*[st.floats(-1.0, 1.0) for _ in range(4)]).filter(lambda q: np.linalg.norm(q) > 0.1)
translations = st.tuples(*[st.floats(-100.0, 100.0) for _ in range(3)])
part_names = st.sampled_from(sorted(PARTS))


@SETTINGS
@given(name=part_names, quaternion=quaternions, translation=translations)
def test_rigid_motion(name, quaternion, translation):
    vertices, faces = PARTS[name]
    base = BASE[name]
    rotation, shift = _rotation(quaternion), np.array(translation)
    moved = _measure(vertices @ rotation.T + shift, faces)
    assert moved.mass == pytest.approx(base.mass, rel=1e-12)
    np.testing.assert_allclose(moved.center_of_mass, rotation @ base.center_of_mass + shift, rtol=0, atol=1e-11 * 100)
    _close(moved.inertia_about_com, rotation @ base.inertia_about_com @ rotation.T, 1e-11)


@SETTINGS
@given(name=part_names, data=st.data())
def test_face_order_and_starting_corner(name, data):
    vertices, faces = PARTS[name]
    order = data.draw(st.permutations(range(len(faces))))
    shifts = data.draw(st.lists(st.integers(0, 2), min_size=len(faces), max_size=len(faces)))
    shuffled = faces[np.array(order)]
    rolled = np.array([np.roll(face, shift) for face, shift in zip(shuffled, shifts)])  # same winding
    again = _measure(vertices, rolled)
    base = BASE[name]
    assert again.mass == pytest.approx(base.mass, rel=1e-13)
    _close(again.center_of_mass, base.center_of_mass, 1e-13, scale=5.0)
    _close(again.inertia_about_com, base.inertia_about_com, 1e-12)


@SETTINGS
@given(name=part_names, scale=st.floats(1e-3, 1e3))
def test_scaling(name, scale):
    vertices, faces = PARTS[name]
    base = BASE[name]
    scaled = _measure(vertices * scale, faces)
    assert scaled.mass == pytest.approx(base.mass * scale**3, rel=1e-12)
    _close(scaled.center_of_mass, base.center_of_mass * scale, 1e-12, scale=5.0 * scale)
    _close(scaled.inertia_about_com, base.inertia_about_com * scale**5, 1e-11)


def _box_properties(size, center):
    # Handbook box about its centroid: I = m diag(b² + c², a² + c², a² + b²)/12 (from memory).
    a, b, c = size
    mass = DENSITY * a * b * c
    return mass, np.asarray(center, float), mass * np.diag([b * b + c * c, a * a + c * c, a * a + b * b]) / 12.0


sizes = st.tuples(*[st.floats(0.05, 3.0) for _ in range(3)])


@SETTINGS
@given(first=sizes, second=sizes, gap=st.floats(0.01, 5.0), lift=translations)
def test_two_disjoint_boxes_add_up(first, second, gap, lift):
    first_center = np.array([0.0, 0.0, 0.0]) + np.array(lift) * 0.01
    second_center = first_center + [first[0] / 2 + gap + second[0] / 2, 0.3, -0.2]
    merged = _measure(*shapes.merge(shapes.box(first, first_center), shapes.box(second, second_center)))
    m1, c1, i1 = _box_properties(first, first_center)
    m2, c2, i2 = _box_properties(second, second_center)
    center = (m1 * c1 + m2 * c2) / (m1 + m2)
    tensor = i1 + parallel_axis_term(m1, c1 - center) + i2 + parallel_axis_term(m2, c2 - center)
    assert merged.mass == pytest.approx(m1 + m2, rel=1e-12)
    _close(merged.center_of_mass, center, 1e-12, scale=10.0)
    _close(merged.inertia_about_com, tensor, 1e-11)


@SETTINGS
@given(
    outer=sizes,
    fractions=st.tuples(*[st.floats(0.1, 0.9) for _ in range(3)]),
    where=st.tuples(*[st.floats(-1, 1) for _ in range(3)]),
)
def test_a_void_subtracts(outer, fractions, where):
    inner = tuple(o * f for o, f in zip(outer, fractions))
    # Place the void anywhere strictly inside the outer box.
    slack = np.array([(o - i) / 2 * 0.9 for o, i in zip(outer, inner)])
    void_center = slack * np.array(where)
    hollow = _measure(*shapes.merge(shapes.box(outer), shapes.box(inner, void_center, inward=True)))
    m1, c1, i1 = _box_properties(outer, (0.0, 0.0, 0.0))
    m2, c2, i2 = _box_properties(inner, void_center)
    mass = m1 - m2
    center = (m1 * c1 - m2 * c2) / mass
    tensor = i1 + parallel_axis_term(m1, c1 - center) - i2 - parallel_axis_term(m2, c2 - center)
    assert hollow.mass == pytest.approx(mass, rel=1e-11)
    _close(hollow.center_of_mass, center, 1e-11, scale=max(outer))
    _close(hollow.inertia_about_com, tensor, 1e-10)


@SETTINGS
@given(name=part_names, axis=st.integers(0, 2))
def test_a_reflection_is_inside_out_and_refused_until_the_faces_are_flipped(name, axis):
    vertices, faces = PARTS[name]
    mirror = np.eye(3)
    mirror[axis, axis] = -1.0
    reflected = vertices @ mirror
    with pytest.raises(InvalidMeshError, match="inside_out"):
        measure_mesh(mesh_from_arrays(reflected, faces), density=DENSITY)
    report = measure_mesh(mesh_from_arrays(reflected, faces), density=DENSITY, on_invalid="report")
    assert report.properties is None  # no numbers at all, so certainly no negative mass
    flipped = _measure(reflected, faces[:, ::-1])
    base = BASE[name]
    assert flipped.mass == pytest.approx(base.mass, rel=1e-13)
    _close(flipped.inertia_about_com, mirror @ base.inertia_about_com @ mirror, 1e-12)


@SETTINGS
@given(name=part_names, chunk_faces=st.integers(1, 200))
def test_chunk_size_does_not_matter(name, chunk_faces):
    mesh = mesh_from_arrays(*PARTS[name])
    whole = integrate_chunks(mesh.triangle_chunks())
    chunked = integrate_chunks(mesh.triangle_chunks(chunk_faces=chunk_faces))
    assert chunked.volume == pytest.approx(whole.volume, rel=1e-13)
    _close(chunked.shifted_to(whole.origin).second, whole.second, 1e-12)
