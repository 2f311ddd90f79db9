"""Spin: angular momentum and kinetic energy of a spinning (and moving) rigid body."""

from __future__ import annotations

import math

import numpy as np
import pytest

from meshprops import measure_mesh, mesh_from_arrays
from meshprops.geometry import shapes
from meshprops.physics.mass import MassProperties
from meshprops.physics.spin import angle_between, spin

RADIUS, THICKNESS, SECTIONS, DENSITY = 0.05, 0.001, 256, 7850.0
ALPHA = 2.0 * math.pi / SECTIONS


@pytest.fixture(scope="module")
def disk():
    """A thin steel disk: a regular 256-gon prism, 50 mm circumradius, 1 mm thick, centred at (0.3, −0.2, 0.1) m."""
    vertices, faces = shapes.cylinder(RADIUS, THICKNESS, SECTIONS, (0.3, -0.2, 0.1))
    return measure_mesh(mesh_from_arrays(vertices, faces), density=DENSITY).properties


def test_thin_disk_spinning_about_its_axis(disk):
    omega = 2.0 * math.pi * 50.0  # 3000 rpm in rad/s
    state = spin(disk, [0.0, 0.0, omega])
    handbook = 0.5 * disk.mass * RADIUS**2 * omega  # handbook: L = ½ m r² ω for a disk (from memory)
    # The inscribed 256-gon's polar moment per unit mass is r²(2 + cos α)/6 (exact, elementary
    # integration over its n triangles), so L / handbook = (2 + cos α)/3 exactly ...
    assert state.angular_momentum_about_com[2] / handbook == pytest.approx((2.0 + math.cos(ALPHA)) / 3.0, rel=1e-12)
    # ... which is within the expected O(1/n²) discretization error (1 − cos α)/3 ≈ α²/6 of the formula.
    assert abs(state.angular_momentum_about_com[2] / handbook - 1.0) <= ALPHA**2 / 6.0
    np.testing.assert_allclose(state.angular_momentum_about_com[:2], 0.0, atol=1e-12 * handbook)
    assert state.angle_between_momentum_and_angular_velocity == pytest.approx(0.0, abs=1e-12)
    # Rotational kinetic energy ½ I ω² (handbook), with the same exact polygon factor.
    polygon_factor = (2.0 + math.cos(ALPHA)) / 3.0
    assert state.rotational_kinetic_energy == pytest.approx(0.5 * handbook * omega * polygon_factor, rel=1e-12)


def test_spin_angular_momentum_is_the_same_about_any_point_while_the_centre_is_at_rest(disk):
    omega = np.array([0.0, 0.0, 100.0])
    about_com = spin(disk, omega).angular_momentum_about_com
    for point in ([0.0, 0.0, 0.0], [1.0, -2.0, 3.0], disk.center_of_mass + [0.05, 0.0, 0.0]):
        state = spin(disk, omega, point=point)
        np.testing.assert_allclose(state.orbital_angular_momentum, 0.0, atol=1e-15)
        np.testing.assert_allclose(state.angular_momentum_about_point, about_com, rtol=1e-15)


@pytest.mark.parametrize("tilt_deg", [10.0, 30.0, 60.0])
def test_angle_between_momentum_and_spin_off_the_axis(disk, tilt_deg):
    tilt = math.radians(tilt_deg)
    omega = 100.0 * np.array([math.sin(tilt), 0.0, math.cos(tilt)])
    state = spin(disk, omega)
    # Closed-form disk tensor (handbook, from memory): I_z = m r²/2, I_x = I_y = m(3r² + h²)/12.
    # L = (I_x ω_x, 0, I_z ω_z) leans from z by atan(I_x tan β / I_z), so it trails ω by
    # β − atan((I_x/I_z) tan β).
    ratio = (3.0 * RADIUS**2 + THICKNESS**2) / 12.0 / (RADIUS**2 / 2.0)
    expected = tilt - math.atan(ratio * math.tan(tilt))
    assert expected > math.radians(4.0)  # a real wobble: L is not along ω
    # Within the 256-gon's discretization error of I_x / I_z (~α²/6 relative each) ...
    assert state.angle_between_momentum_and_angular_velocity == pytest.approx(expected, rel=1e-4)
    # ... and exactly the angle of the mesh's own tensor.
    momentum = disk.inertia_about_com @ omega
    exact = math.acos(momentum @ omega / np.linalg.norm(momentum) / np.linalg.norm(omega))
    assert state.angle_between_momentum_and_angular_velocity == pytest.approx(exact, rel=1e-9)


def test_kinetic_energy_of_a_box_is_half_omega_i_omega():
    a, b, c = 0.2, 0.3, 0.5
    box = measure_mesh(mesh_from_arrays(*shapes.box((a, b, c))), density=1000.0).properties
    mass = 1000.0 * a * b * c
    omega = np.array([3.0, -4.0, 5.0])
    state = spin(box, omega)
    # Box principal moments m(b²+c²)/12 ... (handbook); T = ½ Σ I_i ω_i² in principal axes.
    moments = mass * np.array([b * b + c * c, a * a + c * c, a * a + b * b]) / 12.0
    assert state.rotational_kinetic_energy == pytest.approx(0.5 * np.sum(moments * omega**2), rel=1e-13)
    np.testing.assert_allclose(state.angular_momentum_about_com, moments * omega, rtol=1e-13)
    assert state.translational_kinetic_energy == 0.0
    assert state.kinetic_energy == state.rotational_kinetic_energy


def _point_cloud(seed: int):
    """Random point masses: an independent rigid body whose sums are done by hand below."""
    rng = np.random.default_rng(seed)
    positions = rng.normal(size=(400, 3)) * [0.3, 0.1, 0.2] + [1.0, 2.0, -0.5]
    masses = rng.uniform(0.1, 2.0, size=400)
    center = masses @ positions / masses.sum()
    offsets = positions - center
    inertia = np.einsum("i,ij,ik->jk", masses, offsets, offsets)
    inertia = np.trace(inertia) * np.eye(3) - inertia
    return positions, masses, MassProperties(float(masses.sum()), 0.0, center, inertia)


@pytest.mark.parametrize("seed", [1, 2])
def test_moving_body_spin_plus_orbital_matches_summing_every_particle(seed):
    # Definition of angular momentum (any mechanics text): L_p = Σ (r_i − p) × m_i v_i, with the
    # rigid velocity field v_i = v_c + ω × (r_i − c). The library's L_p = (c − p) × M v_c + I_c ω.
    positions, masses, body = _point_cloud(seed)
    omega = np.array([0.7, -1.3, 2.1])
    velocity = np.array([0.5, 0.2, -0.4])
    point = np.array([0.3, -1.0, 4.0])
    velocities = velocity + np.cross(omega, positions - body.center_of_mass)
    by_particles = np.sum(np.cross(positions - point, masses[:, None] * velocities), axis=0)
    state = spin(body, omega, com_velocity=velocity, point=point)
    np.testing.assert_allclose(state.angular_momentum_about_point, by_particles, rtol=1e-12)
    np.testing.assert_allclose(
        state.orbital_angular_momentum, np.cross(body.center_of_mass - point, body.mass * velocity), rtol=1e-13
    )
    # Kinetic energy Σ ½ m_i |v_i|² = ½ M |v_c|² + ½ ωᵀ I_c ω (König's theorem).
    energy = 0.5 * np.sum(masses * np.sum(velocities**2, axis=1))
    assert state.kinetic_energy == pytest.approx(energy, rel=1e-12)
    # At rest, the particle sum about any point is the spin part alone.
    at_rest = np.cross(omega, positions - body.center_of_mass)
    for other in (point, np.zeros(3), body.center_of_mass):
        summed = np.sum(np.cross(positions - other, masses[:, None] * at_rest), axis=0)
        np.testing.assert_allclose(summed, spin(body, omega).angular_momentum_about_com, rtol=1e-11)


def test_no_spin_has_no_angle():
    box = measure_mesh(mesh_from_arrays(*shapes.box()), density=1000.0).properties
    state = spin(box, [0.0, 0.0, 0.0])
    assert state.angle_between_momentum_and_angular_velocity is None
    assert state.rotational_kinetic_energy == 0.0


def test_angle_between_is_accurate_near_zero_and_pi():
    assert angle_between(np.array([1.0, 0.0, 0.0]), np.array([1.0, 1e-9, 0.0])) == pytest.approx(1e-9, rel=1e-6)
    assert angle_between(np.array([1.0, 0.0, 0.0]), np.array([-1.0, 1e-9, 0.0])) == pytest.approx(math.pi - 1e-9)
    assert angle_between(np.zeros(3), np.ones(3)) is None
