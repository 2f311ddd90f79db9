"""Handbook solids: box, solid cylinder, sphere, cone, torus and a hollow box.

Two references for every faceted solid of revolution:

1. *The exact polyhedron.* Each mesh from :mod:`meshprops.geometry.shapes` is a stack of regular
   n-gon sections with planar faces: at height z its cross-section is the region between
   two regular n-gons (circumradii ρ_in(z) ≤ ρ_out(z), both piecewise linear in z). A
   regular n-gon of circumradius ρ has area c_n ρ² with c_n = (n/2) sin(2π/n), polar second
   moment k_n ρ⁴ with k_n = n sin(2π/n)(2 + cos(2π/n))/12 (elementary: integrate over its
   n centre triangles), and an isotropic in-plane second moment (k_n ρ⁴/2 about x and y).
   The solid's moments are then one-dimensional integrals of polynomials of degree ≤ 4
   in z, done exactly by 3-point Gauss–Legendre quadrature on each slab (exact to degree 5).
   Nothing here uses the divergence theorem, so it is independent of meshprops' integrator:
   compare tightly (1e-12).
2. *The smooth solid's handbook formula* (engineering handbook tables of mass moments of
   inertia, from memory). The mesh converges to it; the tests assert the size of the
   discretization error expected at that resolution and the O(1/n²) convergence order
   (the error drops ≈ 4× when the resolution doubles).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from meshprops import measure_mesh, mesh_from_arrays
from meshprops.geometry import shapes

DENSITY = 2700.0
GAUSS_NODES, GAUSS_WEIGHTS = np.polynomial.legendre.leggauss(3)


def _measure(vertices, faces):
    body = measure_mesh(mesh_from_arrays(vertices, faces), density=DENSITY)
    assert body.valid
    return body.properties


def polygon_stack_reference(profile, sections, density=DENSITY):
    """Mass, axial centre of mass z_c, and (I_axis, I_transverse) about the centre of mass.

    ``profile``: closed polygon of (ρ, z) points (ρ >= 0) swept as regular ``sections``-gons
    about z (vertex at angle 0, which does not matter: the n-gon's second moment is isotropic).
    """
    alpha = 2.0 * math.pi / sections
    area_factor = sections / 2.0 * math.sin(alpha)
    polar_factor = sections * math.sin(alpha) * (2.0 + math.cos(alpha)) / 12.0
    points = np.asarray(profile, dtype=np.float64)
    edges = list(zip(points, np.roll(points, -1, axis=0)))
    heights = np.unique(points[:, 1])
    totals = np.zeros(4)  # ∫A, ∫A z, ∫A z², ∫J   (J = polar second moment of the section)
    for low, high in zip(heights[:-1], heights[1:]):
        for node, weight in zip(GAUSS_NODES, GAUSS_WEIGHTS):
            z = (low + high) / 2.0 + node * (high - low) / 2.0
            radii = sorted(
                p[0] + (q[0] - p[0]) * (z - p[1]) / (q[1] - p[1])
                for p, q in edges
                if min(p[1], q[1]) < z < max(p[1], q[1])
            )
            inner, outer = np.array(radii[0::2]), np.array(radii[1::2])
            area = area_factor * np.sum(outer**2 - inner**2)
            polar = polar_factor * np.sum(outer**4 - inner**4)
            totals += weight * (high - low) / 2.0 * np.array([area, area * z, area * z * z, polar])
    volume, first, second, polar = totals
    mass = density * volume
    z_center = first / volume
    axial = density * polar
    transverse = density * (polar / 2.0 + second - volume * z_center**2)
    return mass, z_center, axial, transverse


def _assert_matches_polygon_stack(properties, profile, sections, center_xy=(0.0, 0.0)):
    mass, z_center, axial, transverse = polygon_stack_reference(profile, sections)
    assert properties.mass == pytest.approx(mass, rel=1e-12)
    np.testing.assert_allclose(properties.center_of_mass, [*center_xy, z_center], rtol=0, atol=1e-12)
    expected = np.diag([transverse, transverse, axial])
    np.testing.assert_allclose(properties.inertia_about_com, expected, rtol=0, atol=1e-12 * axial)


def _relative_errors(properties, mass, axial, transverse):
    tensor = properties.inertia_about_com
    return np.array(
        [
            properties.mass / mass - 1.0,
            tensor[2, 2] / axial - 1.0,
            tensor[0, 0] / transverse - 1.0,
        ]
    )


# ---------------------------------------------------------------------------- box


def test_box_is_exact():
    # Handbook: I_x = m(b² + c²)/12, I_y = m(a² + c²)/12, I_z = m(a² + b²)/12. Twelve flat
    # triangles are the box exactly, so there is no discretization error.
    a, b, c = 0.12, 0.05, 0.3
    properties = _measure(*shapes.box((a, b, c), (0.4, -0.1, 0.25)))
    mass = DENSITY * a * b * c
    assert properties.mass == pytest.approx(mass, rel=1e-13)
    np.testing.assert_allclose(properties.center_of_mass, [0.4, -0.1, 0.25], rtol=1e-13)
    np.testing.assert_allclose(
        properties.inertia_about_com,
        np.diag([mass * (b * b + c * c), mass * (a * a + c * c), mass * (a * a + b * b)]) / 12.0,
        rtol=0,
        atol=1e-13 * mass * c * c,
    )


def test_hollow_box_is_outer_minus_inner():
    # A void shell (inward normals) subtracts: I = I_box(outer) − I_box(inner), both handbook.
    outer, inner = (0.2, 0.16, 0.1), (0.17, 0.12, 0.06)
    properties = _measure(*shapes.hollow_box(outer, inner, (1.0, 1.0, 1.0)))

    def box(size):
        a, b, c = size
        mass = DENSITY * a * b * c
        return mass, np.diag([b * b + c * c, a * a + c * c, a * a + b * b]) * mass / 12.0

    outer_mass, outer_tensor = box(outer)
    inner_mass, inner_tensor = box(inner)
    assert properties.mass == pytest.approx(outer_mass - inner_mass, rel=1e-12)
    assert properties.volume == pytest.approx(np.prod(outer) - np.prod(inner), rel=1e-12)
    np.testing.assert_allclose(properties.center_of_mass, [1.0, 1.0, 1.0], rtol=1e-13)
    np.testing.assert_allclose(
        properties.inertia_about_com, outer_tensor - inner_tensor, rtol=0, atol=1e-12 * outer_tensor.max()
    )


def test_hollow_cylinder_tube_is_the_handbook_thick_walled_tube():
    # Handbook (from memory): thick-walled tube I_z = m(r1² + r2²)/2, I_x = m(3(r1² + r2²) + h²)/12.
    r_in, r_out, height, n = 0.03, 0.05, 0.2, 128
    properties = _measure(*shapes.tube(r_out, r_in, height, n))
    _assert_matches_polygon_stack(
        properties, [(r_in, -height / 2), (r_out, -height / 2), (r_out, height / 2), (r_in, height / 2)], n
    )
    mass = DENSITY * math.pi * (r_out**2 - r_in**2) * height
    axial = mass * (r_in**2 + r_out**2) / 2.0
    transverse = mass * (3.0 * (r_in**2 + r_out**2) + height**2) / 12.0
    alpha = 2.0 * math.pi / n
    errors = _relative_errors(properties, mass, axial, transverse)
    # Inscribed polygons lose α²/6 of the area and α²/3 of the polar moment (to leading order).
    assert errors[0] == pytest.approx(-alpha**2 / 6.0, rel=0.01)
    assert errors[1] == pytest.approx(-alpha**2 / 3.0, rel=0.01)


# ---------------------------------------------------------------------------- cylinder


def _cylinder_profile(radius, height):
    return [(0.0, -height / 2), (radius, -height / 2), (radius, height / 2), (0.0, height / 2)]


def _cylinder_handbook(radius, height):
    # Handbook: solid cylinder I_z = m r²/2, I_x = I_y = m(3r² + h²)/12 about the centroid.
    mass = DENSITY * math.pi * radius**2 * height
    return mass, mass * radius**2 / 2.0, mass * (3.0 * radius**2 + height**2) / 12.0


@pytest.mark.parametrize("sections", [8, 64, 256])
def test_cylinder_is_the_exact_regular_prism(sections):
    radius, height = 0.04, 0.1
    properties = _measure(*shapes.cylinder(radius, height, sections, (0.0, 0.0, 0.5)))
    _assert_matches_polygon_stack(properties, [(r, z + 0.5) for r, z in _cylinder_profile(radius, height)], sections)
    # Prism volume (n/2) r² sin(2π/n) h (elementary geometry).
    prism = sections / 2 * radius**2 * math.sin(2 * math.pi / sections) * height
    assert properties.volume == pytest.approx(prism, rel=1e-13)


def test_cylinder_converges_to_the_handbook_formula_at_second_order():
    radius, height = 0.04, 0.1
    mass, axial, transverse = _cylinder_handbook(radius, height)
    previous = None
    for sections in (32, 64, 128, 256):
        errors = _relative_errors(_measure(*shapes.cylinder(radius, height, sections)), mass, axial, transverse)
        alpha = 2.0 * math.pi / sections
        # Expected: mass −α²/6, I_z −α²/3 (leading terms of sin α/α and (2 + cos α)/3).
        assert errors[0] == pytest.approx(-alpha**2 / 6.0, rel=0.01)
        assert errors[1] == pytest.approx(-alpha**2 / 3.0, rel=0.01)
        assert abs(errors[2]) < alpha**2 / 3.0
        if previous is not None:
            np.testing.assert_allclose(previous[:2] / errors[:2], 4.0, rtol=0.01)
        previous = errors


# ---------------------------------------------------------------------------- sphere


def _sphere_profile(radius, rings):
    polar = np.linspace(np.pi, 0.0, rings + 1)
    return [(0.0 if k in (0, rings) else radius * math.sin(p), radius * math.cos(p)) for k, p in enumerate(polar)]


def test_sphere_is_the_exact_ring_polyhedron():
    radius, rings, sections = 0.05, 24, 48
    properties = _measure(*shapes.uv_sphere(radius, rings, sections, (0.1, 0.2, 0.3)))
    _assert_matches_polygon_stack(
        properties, [(r, z + 0.3) for r, z in _sphere_profile(radius, rings)], sections, center_xy=(0.1, 0.2)
    )


def test_sphere_converges_to_the_handbook_formula_at_second_order():
    # Handbook: solid sphere m = ρ 4/3 π r³, I = 2/5 m r² about any centroidal axis.
    radius = 0.05
    mass = DENSITY * 4.0 / 3.0 * math.pi * radius**3
    moment = 0.4 * mass * radius**2
    errors = []
    for rings in (16, 32, 64):
        properties = _measure(*shapes.uv_sphere(radius, rings, 2 * rings))
        errors.append(_relative_errors(properties, mass, moment, moment))
        # Expected leading-order error of this inscribed polyhedron (our derivation): the
        # azimuthal n-gon (α = 2π/sections) loses α²/6 of each section's area and α²/3 of its
        # polar moment; the ring chords (β = π/rings) sit on average r β²/12 inside the sphere,
        # which costs 3 β²/12 of the volume and 5 β²/12 of the moments (m ∝ r³, I ∝ r⁵).
        alpha, beta = 2.0 * math.pi / (2 * rings), math.pi / rings
        if rings >= 32:
            assert errors[-1][0] == pytest.approx(-(alpha**2 / 6 + beta**2 / 4), rel=0.01)
            assert errors[-1][1] == pytest.approx(-(alpha**2 / 3 + 5 * beta**2 / 12), rel=0.01)
            # I_x = ∫ (J/2 + A z²) dz: half polar (loses α²/3), half area-weighted (loses α²/6).
            assert errors[-1][2] == pytest.approx(-(alpha**2 / 4 + 5 * beta**2 / 12), rel=0.01)
    errors = np.array(errors)
    assert np.all(errors < 0)  # inscribed: smaller than the sphere
    np.testing.assert_allclose(errors[:-1] / errors[1:], 4.0, rtol=0.02)


# ---------------------------------------------------------------------------- cone


def test_cone_is_the_exact_pyramid_and_its_centroid_is_a_quarter_up():
    radius, height, sections = 0.03, 0.08, 96
    properties = _measure(*shapes.cone(radius, height, sections))
    _assert_matches_polygon_stack(properties, [(0.0, 0.0), (radius, 0.0), (0.0, height)], sections)
    # Any pyramid's centroid is h/4 above its base (handbook; exact for the polygonal base too).
    assert properties.center_of_mass[2] == pytest.approx(height / 4.0, rel=1e-13)


def test_cone_converges_to_the_handbook_formula_at_second_order():
    # Handbook: solid right cone m = ρ π r² h / 3, I_axis = 3/10 m r², about the centroid
    # transverse I = 3/80 m (4r² + h²).
    radius, height = 0.03, 0.08
    mass = DENSITY * math.pi * radius**2 * height / 3.0
    axial = 0.3 * mass * radius**2
    transverse = 3.0 / 80.0 * mass * (4.0 * radius**2 + height**2)
    previous = None
    for sections in (32, 64, 128):
        errors = _relative_errors(_measure(*shapes.cone(radius, height, sections)), mass, axial, transverse)
        alpha = 2.0 * math.pi / sections
        assert errors[0] == pytest.approx(-alpha**2 / 6.0, rel=0.01)  # base polygon area
        assert errors[1] == pytest.approx(-alpha**2 / 3.0, rel=0.01)  # polar moment
        if previous is not None:
            np.testing.assert_allclose(previous / errors, 4.0, rtol=0.02)
        previous = errors


# ---------------------------------------------------------------------------- torus


def _torus_profile(major, minor, minor_sections):
    v = np.linspace(0.0, 2.0 * np.pi, minor_sections, endpoint=False)
    return list(zip(major + minor * np.cos(v), minor * np.sin(v)))


def test_torus_is_the_exact_ring_polyhedron():
    major, minor, n_major, n_minor = 0.1, 0.025, 64, 24
    properties = _measure(*shapes.torus(major, minor, n_major, n_minor))
    _assert_matches_polygon_stack(properties, _torus_profile(major, minor, n_minor), n_major)


def test_torus_converges_to_the_handbook_formula_at_second_order():
    # Handbook: solid ring torus (tube radius a at distance R): m = ρ 2π² R a²,
    # I_axis = m(R² + 3/4 a²), diametral I = m(R²/2 + 5/8 a²).
    major, minor = 0.1, 0.025
    mass = DENSITY * 2.0 * math.pi**2 * major * minor**2
    axial = mass * (major**2 + 0.75 * minor**2)
    transverse = mass * (major**2 / 2.0 + 0.625 * minor**2)
    errors = []
    for scale in (1, 2, 4):
        properties = _measure(*shapes.torus(major, minor, 32 * scale, 16 * scale))
        errors.append(_relative_errors(properties, mass, axial, transverse))
    errors = np.array(errors)
    # Both polygons inscribed: mass short by ≈ α_R²/6 + α_a²/6 (α = 2π/sections).
    for row, scale in zip(errors, (1, 2, 4)):
        expected = -((2 * math.pi / (32 * scale)) ** 2 + (2 * math.pi / (16 * scale)) ** 2) / 6.0
        assert row[0] == pytest.approx(expected, rel=0.02)
    np.testing.assert_allclose(errors[:-1] / errors[1:], 4.0, rtol=0.02)
