"""Balance of spinning parts (meshprops.physics.balance) against closed forms.

Each check names its method. Meshes come from trimesh (a general-purpose reference
library, tensor convention about the centre of mass), so these tests do not depend
on meshprops' own integrator; the rotor tests measure meshes with meshprops itself.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import trimesh

from meshprops.errors import InputValueError, MeshpropsError
from meshprops.physics import balance as bal

STEEL = 7850.0  # kg/m^3, a plausible density; any value would do here


def rpm(n: float) -> float:
    return n * 2.0 * math.pi / 60.0


def trimesh_body(mesh: trimesh.Trimesh, density: float = STEEL):
    mesh.density = density
    properties = mesh.mass_properties
    return properties["mass"], np.asarray(properties["center_mass"]), np.asarray(properties["inertia"])


def disk(radius=0.1, height=0.02, sections=256):
    return trimesh.creation.cylinder(radius=radius, height=height, sections=sections)


def rotation_about_x(angle: float) -> np.ndarray:
    c, s = math.cos(angle), math.sin(angle)
    return np.array([[1.0, 0.0, 0.0], [0.0, c, -s], [0.0, s, c]])


def random_rotation(rng) -> np.ndarray:
    q, r = np.linalg.qr(rng.normal(size=(3, 3)))
    q = q * np.sign(np.diag(r))
    return q if np.linalg.det(q) > 0 else -q


def run(mass, center, inertia, **options):
    options.setdefault("axis_point", (0.0, 0.0, 0.0))
    options.setdefault("axis_direction", (0.0, 0.0, 1.0))
    options.setdefault("angular_speed", rpm(3000.0))
    options.setdefault("grade", 6.3)
    return bal.balance(mass, center, inertia, **options)


# --------------------------------------------------------------------------- static unbalance


def test_disk_with_offset_centre_of_mass_has_static_unbalance_m_e():
    # Method: handbook definition of static unbalance U = m e and the centrifugal force
    # of an eccentric mass F = m e Ω² (common practice).
    mesh = disk()
    offset = np.array([0.3e-3, 0.4e-3, 0.0])  # e = 0.5 mm at atan2(4, 3) from x
    mesh.apply_translation(offset)
    mass, center, inertia = trimesh_body(mesh)
    speed = rpm(3000.0)
    result = run(mass, center, inertia, angular_speed=speed, bearing_positions=(-0.1, 0.1))
    e = 0.5e-3
    assert result.static.offset_distance == pytest.approx(e, rel=1e-12)
    assert result.static.unbalance.magnitude == pytest.approx(mass * e, rel=1e-12)
    assert result.static.g_mm == pytest.approx(mass * 1e3 * 0.5, rel=1e-12)  # g × mm
    assert result.static.unbalance.angle_deg == pytest.approx(math.degrees(math.atan2(4, 3)), abs=1e-9)
    force = np.linalg.norm(result.spin.unbalance_force)
    assert force == pytest.approx(mass * e * speed**2, rel=1e-12)
    # bearings symmetric about the disk: each carries half of m e Ω², no couple part
    for bearing in result.bearings:
        assert bearing.static.magnitude == pytest.approx(mass * e * speed**2 / 2, rel=1e-9)
        assert bearing.couple.magnitude < 1e-9 * force
        assert bearing.total.angle_deg == pytest.approx(result.static.unbalance.angle_deg, abs=1e-9)
    assert result.couple.unbalance.magnitude < 1e-12 * mass * 0.1**2
    assert result.couple.unbalance.angle is None


def test_kinetic_energy_about_an_offset_shaft_uses_the_parallel_axis_theorem():
    # Method: handbook solid disk I = m r²/2 about its axis, parallel-axis theorem
    # I_shaft = I + m e², flywheel energy ½ I Ω².
    radius, e = 0.1, 2e-3
    mass = 3.0
    inertia = np.diag([mass * (3 * radius**2) / 12, mass * (3 * radius**2) / 12, mass * radius**2 / 2])
    speed = rpm(6000.0)
    result = run(mass, (e, 0.0, 0.0), inertia, angular_speed=speed)
    shaft = mass * radius**2 / 2 + mass * e**2
    assert result.spin.inertia_about_shaft == pytest.approx(shaft, rel=1e-14)
    assert result.flywheel.stored_energy == pytest.approx(0.5 * shaft * speed**2, rel=1e-14)
    assert result.flywheel.angular_momentum == pytest.approx(shaft * speed, rel=1e-14)
    assert result.flywheel.energy_per_mass == pytest.approx(0.5 * shaft * speed**2 / mass, rel=1e-14)
    assert result.spin.rotational_kinetic_energy == pytest.approx(0.25 * mass * radius**2 * speed**2, rel=1e-14)


def test_flywheel_energy_of_a_thin_disk_mesh_is_a_quarter_m_r2_omega2():
    # Method: handbook solid cylinder about its axis I = m r²/2; E = ½ I Ω² = ¼ m r² Ω².
    # The 512-sided polygon's inertia falls short of the circle's by O(1/n²) (< 1e-4 here).
    mass, center, inertia = trimesh_body(disk(radius=0.2, height=0.03, sections=512))
    speed = rpm(1500.0)
    result = run(mass, center, inertia, angular_speed=speed)
    assert result.flywheel.stored_energy == pytest.approx(0.25 * mass * 0.2**2 * speed**2, rel=1e-4)
    assert result.flywheel.energy_per_mass == pytest.approx(0.25 * 0.2**2 * speed**2, rel=1e-4)


# --------------------------------------------------------------------------- couple unbalance


@pytest.mark.parametrize("degrees", [0.5, 2.0, 5.0])
def test_tilted_disk_has_couple_unbalance_delta_i_sin_cos(degrees):
    # Method: rotating the inertia tensor I' = R I Rᵀ of an axisymmetric disk tilted by θ
    # gives the product of inertia (I_axial − I_transverse) sin θ cos θ in shaft axes.
    theta = math.radians(degrees)
    upright = disk(radius=0.1, height=0.02)
    _, _, untilted = trimesh_body(upright.copy())
    axial, transverse = untilted[2, 2], untilted[0, 0]
    tilted = upright.copy()
    tilted.apply_transform(trimesh.transformations.rotation_matrix(theta, [1.0, 0.0, 0.0]))
    mass, center, inertia = trimesh_body(tilted)
    result = run(mass, center, inertia)
    expected = (axial - transverse) * math.sin(theta) * math.cos(theta)
    assert result.couple.unbalance.magnitude == pytest.approx(abs(expected), rel=1e-9)
    assert result.couple.g_mm2 == pytest.approx(abs(expected) * 1e9, rel=1e-9)
    assert result.tilt.angle == pytest.approx(theta, rel=1e-9)
    assert result.tilt.unique
    assert result.tilt.moment == pytest.approx(axial, rel=1e-9)
    assert result.static.unbalance.magnitude < 1e-12 * mass * 0.1
    # Rotating about +x by θ turns the disk's plane to contain (0, cos θ, sin θ): its mass
    # on the +z side lies towards +y, so P_va = ∫ z y dm > 0 for a disk (I_a > I_t): 90°.
    assert result.couple.unbalance.angle_deg == pytest.approx(90.0, abs=1e-6)
    # at speed the bearings must turn L: |ω × L| = Ω² |C|, and L leaves the shaft
    speed = result.spin.angular_speed
    assert np.linalg.norm(result.spin.unbalance_moment) == pytest.approx(speed**2 * abs(expected), rel=1e-9)
    assert result.spin.momentum_angle_to_shaft > 0.0


def test_symmetric_rotor_with_opposed_masses_is_a_pure_couple():
    # Method: two equal point masses m0 at opposite ends (z = ±L/2) and opposite sides
    # (x = ±r) of an axisymmetric shaft: Σ m x = 0 (no static unbalance) and
    # Σ m z x = m0 r L (couple); parallel-axis theorem for the point masses.
    shaft_mass, shaft_radius, shaft_length = 2.0, 0.02, 0.4
    m0, r, length = 0.005, 0.05, 0.3
    shaft = np.diag([shaft_mass * (3 * shaft_radius**2 + shaft_length**2) / 12] * 2 + [shaft_mass * shaft_radius**2 / 2])
    points = np.array([[r, 0.0, length / 2], [-r, 0.0, -length / 2]])
    inertia = shaft + sum(m0 * (p @ p * np.eye(3) - np.outer(p, p)) for p in points)
    mass = shaft_mass + 2 * m0
    speed = rpm(3000.0)
    span = 0.5  # bearings at ±0.25 m
    result = run(
        mass,
        (0.0, 0.0, 0.0),
        inertia,
        angular_speed=speed,
        bearing_positions=(-span / 2, span / 2),
        correction_planes=(-length / 2, length / 2),
        correction_radius=0.04,
    )
    assert result.static.unbalance.magnitude == 0.0
    assert result.static.unbalance.angle is None
    assert result.couple.unbalance.magnitude == pytest.approx(m0 * r * length, rel=1e-13)
    assert result.couple.unbalance.angle_deg == pytest.approx(0.0, abs=1e-9)  # the +z side's mass is at +x
    # the two planes recover the two masses: m0 r at 180° on −z, m0 r at 0° on +z
    low, high = result.planes
    assert low.unbalance.magnitude == pytest.approx(m0 * r, rel=1e-12)
    assert high.unbalance.magnitude == pytest.approx(m0 * r, rel=1e-12)
    assert low.unbalance.angle_deg == pytest.approx(180.0, abs=1e-9)
    assert high.unbalance.angle_deg == pytest.approx(0.0, abs=1e-9)
    assert high.correction_angle == pytest.approx(math.pi, abs=1e-12)  # add mass opposite
    assert high.correction_mass == pytest.approx(m0 * r / 0.04, rel=1e-12)
    # bearings: a pure couple m0 r L Ω² reacted over the span, equal and opposite
    for bearing in result.bearings:
        assert bearing.static.magnitude == 0.0
        assert bearing.couple.magnitude == pytest.approx(m0 * r * length * speed**2 / span, rel=1e-12)
    assert result.bearings[0].couple.angle_deg == pytest.approx(180.0, abs=1e-9)
    assert result.bearings[1].couple.angle_deg == pytest.approx(0.0, abs=1e-9)


def point_cloud_body(rng, count=7):
    masses = rng.uniform(0.1, 1.0, size=count)
    positions = rng.normal(size=(count, 3)) * 0.1 + rng.normal(size=3) * 0.05
    mass = masses.sum()
    center = masses @ positions / mass
    relative = positions - center
    inertia = sum(m * (d @ d * np.eye(3) - np.outer(d, d)) for m, d in zip(masses, relative))
    return masses, positions, mass, center, inertia


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_two_plane_split_and_bearing_loads_reproduce_the_centrifugal_force_and_moment(seed):
    # Method: direct summation over point masses of the centrifugal forces f_k = m_k Ω² ρ_k
    # (ρ_k the radial offset from the shaft) and their moments about the axis point,
    # compared with the plane unbalances and bearing forces placed on the shaft.
    rng = np.random.default_rng(seed)
    masses, positions, mass, center, inertia = point_cloud_body(rng)
    point = rng.normal(size=3) * 0.02
    direction = rng.normal(size=3)
    unit = direction / np.linalg.norm(direction)
    speed = rpm(rng.uniform(500, 10000))
    planes = (-0.08, 0.13)
    bearings = (-0.2, 0.25)
    result = bal.balance(
        mass, center, inertia, axis_point=point, axis_direction=direction, angular_speed=speed, grade="G2.5",
        correction_planes=planes, bearing_positions=bearings,
    )  # fmt: skip
    relative = positions - point
    radial = relative - np.outer(relative @ unit, unit)
    forces = speed**2 * masses[:, None] * radial
    total_force = forces.sum(axis=0)
    total_moment = np.cross(relative, forces).sum(axis=0)

    def on_shaft(at, vectors):
        force = sum(vectors)
        moment = sum(np.cross(z * unit, f) for z, f in zip(at, vectors))
        return force, moment

    scale = np.linalg.norm(total_force) + np.linalg.norm(total_moment)
    plane_force, plane_moment = on_shaft(planes, [speed**2 * p.unbalance.vector for p in result.planes])
    np.testing.assert_allclose(plane_force, total_force, atol=1e-12 * scale)
    np.testing.assert_allclose(plane_moment, total_moment, atol=1e-12 * scale)
    bearing_force, bearing_moment = on_shaft(bearings, [b.total.vector for b in result.bearings])
    np.testing.assert_allclose(bearing_force, total_force, atol=1e-12 * scale)
    np.testing.assert_allclose(bearing_moment, total_moment, atol=1e-12 * scale)
    # the static parts alone carry the whole force; the couple parts none of it
    np.testing.assert_allclose(sum(b.static.vector for b in result.bearings), total_force, atol=1e-12 * scale)
    np.testing.assert_allclose(sum(b.couple.vector for b in result.bearings), 0.0, atol=1e-12 * scale)
    np.testing.assert_allclose(result.spin.unbalance_force, total_force, atol=1e-12 * scale)
    # every rotating vector is perpendicular to the shaft
    for plane in result.planes:
        assert abs(plane.unbalance.vector @ unit) < 1e-12 * np.linalg.norm(plane.unbalance.vector) + 1e-300
    # the correction masses, added opposite, cancel both: adding them as point masses at
    # the radius leaves the body with zero static and zero couple unbalance
    radius = 0.07
    corrected = bal.balance(
        mass, center, inertia, axis_point=point, axis_direction=direction, angular_speed=speed, grade="G2.5",
        correction_planes=planes, correction_radius=radius,
    )  # fmt: skip
    axes = corrected.axes
    added = []
    for plane in corrected.planes:
        angle = plane.correction_angle
        at = axes.point + plane.position * unit + radius * (math.cos(angle) * axes.reference + math.sin(angle) * axes.quadrature)
        added.append((plane.correction_mass, at))
    all_masses = np.concatenate([masses, [m for m, _ in added]])
    all_positions = np.vstack([positions, [p for _, p in added]])
    new_mass = all_masses.sum()
    new_center = all_masses @ all_positions / new_mass
    new_inertia = sum(m * ((p - new_center) @ (p - new_center) * np.eye(3) - np.outer(p - new_center, p - new_center))
                      for m, p in zip(all_masses, all_positions))  # fmt: skip
    balanced = bal.balance(
        new_mass, new_center, new_inertia, axis_point=point, axis_direction=direction, angular_speed=speed, grade=1
    )
    assert balanced.static.unbalance.magnitude < 1e-12 * result.static.unbalance.magnitude + 1e-15
    assert balanced.couple.unbalance.magnitude < 1e-9 * max(result.couple.unbalance.magnitude, 1e-6)


# --------------------------------------------------------------------------- grades


def test_grade_formula_matches_the_9549_shortcut_and_the_definition():
    # Method: ISO 21940-11 (formerly ISO 1940-1) definition G = e_per Ω (mm/s), i.e.
    # U_per = G m / Ω, and its trade shortcut U_per = 9549 G m / n g·mm (n in rpm): 9549 ≈ 60000/(2π).
    mass, n = 12.0, 3600.0
    for grade in (0.4, 1.0, 2.5, 6.3, 16.0, 40.0):
        u_per = bal.permissible_unbalance(grade, mass, rpm(n))  # kg·m
        assert u_per * 1e6 == pytest.approx(9549.0 * grade * mass / n, rel=1e-4)
        assert u_per * 1e6 == pytest.approx(60000.0 / (2 * math.pi) * grade * mass / n, rel=1e-14)
        assert (u_per / mass) * rpm(n) * 1e3 == pytest.approx(grade, rel=1e-14)  # e_per Ω in mm/s


def test_grade_worked_example_from_memory():
    # Worked example, from memory (the ISO 1940-1 chart of permissible specific unbalance
    # against speed): a G 6.3 rotor at 3000 rpm may keep about 20 g·mm per kg (µm of
    # centre-of-mass offset), G 2.5 at 3000 rpm about 8 g·mm/kg. So a 50 kg fan impeller
    # at 3000 rpm, G 6.3, may keep about 1000 g·mm: 9549 × 6.3 × 50 / 3000 = 1002.6 g·mm.
    result = run(50.0, (0.0, 0.0, 0.0), np.diag([1.0, 1.0, 1.5]), angular_speed=rpm(3000.0), grade="G 6.3")
    assert result.grade.permissible_g_mm == pytest.approx(1002.7, abs=0.1)
    assert result.grade.permissible_offset * 1e6 == pytest.approx(20.05, abs=0.01)  # µm = g·mm/kg
    assert bal.permissible_unbalance(2.5, 1.0, rpm(3000.0)) * 1e6 == pytest.approx(7.96, abs=0.01)


def test_grade_table_is_the_usual_series_and_names_its_source():
    # The usual grades run G 0.4 … G 4000, neighbours about 2.5 apart (common practice).
    values = [g.value for g in bal.BALANCE_GRADES]
    assert values == [0.4, 1.0, 2.5, 6.3, 16.0, 40.0, 100.0, 250.0, 630.0, 1600.0, 4000.0]
    ratios = np.array(values[1:]) / np.array(values[:-1])
    assert np.all((ratios > 2.3) & (ratios < 2.7))
    assert "ISO 21940-11" in bal.GRADE_TABLE_SOURCE and "from memory" in bal.GRADE_TABLE_SOURCE
    assert all(g.applications for g in bal.BALANCE_GRADES)
    assert [bal.find_grade(t).value for t in ("6.3", "G6.3", "g 6.3", 6.3, "G16")] == [6.3, 6.3, 6.3, 6.3, 16.0]
    assert bal.find_grade("G 2.5").label == "G 2.5"


@pytest.mark.parametrize("bad", ["5", "G7", "abc", "", "G", "-6.3"])
def test_unknown_grade_is_refused(bad):
    with pytest.raises(InputValueError, match="balance grade"):
        bal.find_grade(bad)


def test_pass_fail_per_plane_and_achieved_grade():
    # A disk with a static unbalance only, planes symmetric about it: each plane carries half
    # the unbalance and half of U_per, so the part passes exactly when m e <= U_per.
    mass, speed = 2.0, rpm(3000.0)
    inertia = np.diag([0.01, 0.01, 0.02])
    u_per = bal.permissible_unbalance(6.3, mass, speed)
    for factor, passes in ((0.9, True), (1.1, False)):
        e = factor * u_per / mass
        result = run(mass, (e, 0.0, 0.0), inertia, angular_speed=speed, correction_planes=(-0.05, 0.05))
        assert result.grade.basis == "two_planes"
        assert [p.share for p in result.planes] == pytest.approx([0.5, 0.5])
        assert [p.passes for p in result.planes] == [passes, passes]
        assert result.grade.passes is passes
        assert result.grade.residual_grade == pytest.approx(6.3 * factor, rel=1e-12)
        assert result.grade.achieved_grade.value == (6.3 if passes else 16.0)
    # the static check alone (no planes)
    static_only = run(mass, (0.5 * u_per / mass, 0.0, 0.0), inertia, angular_speed=speed)
    assert static_only.grade.basis == "static" and static_only.grade.passes
    assert static_only.grade.residual_grade == pytest.approx(3.15, rel=1e-12)
    assert static_only.grade.achieved_grade.value == 6.3
    # a perfect part meets the finest grade; a hopeless one none of the table
    assert run(mass, (0.0, 0.0, 0.0), inertia).grade.achieved_grade.value == 0.4
    assert run(mass, (0.2, 0.0, 0.0), inertia).grade.achieved_grade is None


def test_plane_shares_follow_the_lever_rule_within_bounds():
    # Lever rule: the plane nearer the centre of mass takes the larger share; each share kept
    # within 30–70 % of U_per (from memory, ISO 21940-11 allocation for inboard rotors).
    inertia = np.diag([0.01, 0.01, 0.02])
    near_low = run(1.0, (0.0, 0.0, -0.02), inertia, correction_planes=(-0.05, 0.05))
    assert [p.share for p in near_low.planes] == pytest.approx([0.7, 0.3])
    slight = run(1.0, (0.0, 0.0, 0.01), inertia, correction_planes=(-0.05, 0.05))
    assert [p.share for p in slight.planes] == pytest.approx([0.4, 0.6])
    permissible = near_low.grade.permissible
    assert sum(p.permissible for p in near_low.planes) == pytest.approx(permissible)


# --------------------------------------------------------------------------- spin


def box_inertia(mass, a, b, c):
    # handbook: solid box I_xx = m (b² + c²)/12, ...
    return np.diag([mass * (b * b + c * c) / 12, mass * (a * a + c * c) / 12, mass * (a * a + b * b) / 12])


@pytest.mark.parametrize("axis", [(1, 0, 0), (0, 1, 0), (0, 0, 1), (0, 0, -1)])
def test_momentum_is_parallel_to_the_shaft_about_a_principal_axis(axis):
    # Method: L = I ω is parallel to ω exactly when ω is an eigenvector of I (principal axis).
    result = run(4.0, (0.0, 0.0, 0.0), box_inertia(4.0, 0.3, 0.2, 0.1), axis_direction=axis)
    assert result.spin.momentum_angle_to_shaft == pytest.approx(0.0, abs=1e-15)
    assert np.linalg.norm(result.spin.unbalance_moment) == pytest.approx(0.0, abs=1e-12)
    assert result.couple.unbalance.magnitude == 0.0
    assert result.tilt.angle == pytest.approx(0.0, abs=1e-15)


def test_momentum_leaves_the_shaft_otherwise():
    # Method: box inertia diag(A, B, C) (handbook), ω along (1, 1, 0)/√2: L ∝ (A, B, 0), so
    # cos(angle) = (A + B) / (√2 √(A² + B²)); the bearings supply ω × L = Ω² |C|.
    inertia = box_inertia(4.0, 0.3, 0.2, 0.1)
    a, b = inertia[0, 0], inertia[1, 1]
    speed = rpm(1200.0)
    result = run(4.0, (0.0, 0.0, 0.0), inertia, axis_direction=(1, 1, 0), angular_speed=speed)
    expected = math.acos((a + b) / (math.sqrt(2) * math.hypot(a, b)))
    assert result.spin.momentum_angle_to_shaft == pytest.approx(expected, rel=1e-12)
    assert result.spin.momentum_angle_to_shaft > 0.05
    np.testing.assert_allclose(result.spin.angular_momentum_about_com, speed / math.sqrt(2) * np.array([a, b, 0.0]))
    # products of inertia in shaft axes: (B − A)/2 about the in-plane perpendicular
    assert result.couple.unbalance.magnitude == pytest.approx(abs(a - b) / 2, rel=1e-12)
    moment = np.linalg.norm(result.spin.unbalance_moment)
    assert moment == pytest.approx(speed**2 * result.couple.unbalance.magnitude, rel=1e-12)
    assert result.tilt.angle == pytest.approx(math.radians(45.0), rel=1e-12)


def euler_rates(moments, omega):
    i1, i2, i3 = moments
    w1, w2, w3 = omega
    # Euler's equations for a torque-free rigid body in principal axes (common practice)
    return np.array([(i2 - i3) / i1 * w2 * w3, (i3 - i1) / i2 * w3 * w1, (i1 - i2) / i3 * w1 * w2])


def integrate_euler(moments, omega, duration, steps):
    h = duration / steps
    omega = np.asarray(omega, dtype=np.float64)
    history = [omega]
    for _ in range(steps):  # classical fourth-order Runge–Kutta
        k1 = euler_rates(moments, omega)
        k2 = euler_rates(moments, omega + h / 2 * k1)
        k3 = euler_rates(moments, omega + h / 2 * k2)
        k4 = euler_rates(moments, omega + h * k3)
        omega = omega + h / 6 * (k1 + 2 * k2 + 2 * k3 + k4)
        history.append(omega)
    return np.array(history)


def test_free_spin_largest_and_smallest_stable_intermediate_not():
    # Method: the intermediate-axis rule from Euler's equations; the linearized rates are
    # checked against a Runge–Kutta integration of the full nonlinear equations.
    moments = (1.0, 2.0, 3.0)
    speed = 10.0
    spin = bal.free_spin(np.diag(moments), speed)
    assert [axis.stability for axis in spin.axes] == ["stable", "unstable", "stable"]
    assert [axis.moment for axis in spin.axes] == pytest.approx(list(moments))
    # unstable: a small tumble grows as exp(λ t), λ = Ω √((I2−I1)(I3−I2)/(I1 I3))
    growth = spin.axes[1].rate
    assert growth == pytest.approx(speed * math.sqrt(1.0 * 1.0 / (1.0 * 3.0)), rel=1e-14)
    duration = 8.0 / growth
    history = integrate_euler(moments, (1e-9, speed, 1e-9), duration, 8000)
    tumble = np.hypot(history[:, 0], history[:, 2])
    # after the decaying mode has died out (t > 4/λ), the tumble grows as exp(λ t)
    early, late = 4000, 8000
    measured = math.log(tumble[late] / tumble[early]) / (duration * (late - early) / 8000)
    assert measured == pytest.approx(growth, rel=1e-3)
    assert tumble[late] < 1e-4 * speed  # still small: the linearization holds
    # stable about the largest: a small wobble turns at Ω √((I3−I1)(I3−I2)/(I1 I2))
    wobble = spin.axes[2].rate
    period = 2 * math.pi / wobble
    history = integrate_euler(moments, (1e-6, 0.0, speed), period, 4000)
    assert np.abs(history[:, :2]).max() < 1e-5  # stays small
    np.testing.assert_allclose(history[-1, :2], history[0, :2], atol=1e-9)  # back after one period
    # smallest
    wobble = spin.axes[0].rate
    history = integrate_euler(moments, (speed, 1e-6, 0.0), 2 * math.pi / wobble, 4000)
    np.testing.assert_allclose(history[-1, 1:], history[0, 1:], atol=1e-9)
    assert spin.near_equal == (False, False)


def test_free_spin_axisymmetric_and_near_equal_moments():
    # Method: for an axisymmetric body the body-frame wobble rate about the symmetry axis is
    # Ω |I_a − I_t| / I_t (common practice); equal moments are marginal.
    spin = bal.free_spin(np.diag([2.0, 2.0, 3.0]), 5.0)
    assert [axis.stability for axis in spin.axes] == ["marginal", "marginal", "stable"]
    assert spin.axes[2].rate == pytest.approx(5.0 * 1.0 / 2.0, rel=1e-14)
    close = bal.free_spin(np.diag([1.0, 1.96, 2.0]), 5.0)
    assert [axis.stability for axis in close.axes] == ["stable", "unstable", "stable"]
    assert close.near_equal == (False, True)
    assert close.relative_gaps == pytest.approx([0.48, 0.02])


def test_gyroscopic_moment_of_a_precessing_disk():
    # Method: gyroscopic couple M = I_a Ω ω_p, direction b × a (common practice).
    mass, radius = 1.5, 0.08
    inertia = np.diag([mass * radius**2 / 4] * 2 + [mass * radius**2 / 2])
    speed, precession = rpm(6000.0), 0.5
    result = run(mass, (0, 0, 0), inertia, angular_speed=speed, precession_axis=(2.0, 0, 0), precession_rate=precession)
    expected = mass * radius**2 / 2 * speed * precession
    assert result.gyroscopic.magnitude == pytest.approx(expected, rel=1e-14)
    np.testing.assert_allclose(result.gyroscopic.moment, [0.0, -expected, 0.0], atol=1e-15 * expected)
    np.testing.assert_allclose(result.gyroscopic.axis, [1.0, 0.0, 0.0])
    # and it equals dL/dt of the spin momentum turned at ω_p (finite difference of a rotated L)
    step = 1e-6
    turned = np.array([[1, 0, 0], [0, math.cos(precession * step), -math.sin(precession * step)],
                       [0, math.sin(precession * step), math.cos(precession * step)]])  # fmt: skip
    momentum = inertia @ (speed * np.array([0.0, 0.0, 1.0]))
    np.testing.assert_allclose((turned @ momentum - momentum) / step, result.gyroscopic.moment, rtol=1e-5, atol=1e-5 * expected)


# --------------------------------------------------------------------------- conventions and errors


def test_angle_reference_and_direction_conventions():
    inertia = np.diag([0.01, 0.01, 0.02])
    # shaft along z: angles from x towards y
    at_y = run(1.0, (0.0, 1e-3, 0.0), inertia)
    assert at_y.static.unbalance.angle_deg == pytest.approx(90.0)
    np.testing.assert_allclose(at_y.axes.reference, [1, 0, 0])
    # shaft along x: the reference is y, and v = x × y = z
    along_x = run(1.0, (0.0, 0.0, 1e-3), inertia, axis_direction=(3.0, 0.0, 0.0))
    np.testing.assert_allclose(along_x.axes.direction, [1, 0, 0])
    np.testing.assert_allclose(along_x.axes.reference, [0, 1, 0])
    assert along_x.static.unbalance.angle_deg == pytest.approx(90.0)
    # a given reference is projected onto the plane perpendicular to the shaft
    given = run(1.0, (1e-3, 0.0, 0.0), inertia, angle_reference=(0.0, 1.0, 5.0))
    np.testing.assert_allclose(given.axes.reference, [0, 1, 0])
    assert given.static.unbalance.angle_deg == pytest.approx(270.0)
    # the axis point moves the offset; the direction's sign flips the angle sense
    moved = run(1.0, (1e-3, 0.0, 0.0), inertia, axis_point=(1e-3, 1e-3, 7.0))
    assert moved.static.offset_distance == pytest.approx(1e-3)
    assert moved.static.unbalance.angle_deg == pytest.approx(270.0)
    assert moved.static.com_axial_position == pytest.approx(-7.0)
    flipped = run(1.0, (0.0, 1e-3, 0.0), inertia, axis_direction=(0, 0, -1))
    assert flipped.static.unbalance.angle_deg == pytest.approx(270.0)


def test_results_do_not_depend_on_the_input_frame():
    # Invariance: moving the body and the shaft together by a rigid motion changes no magnitude.
    rng = np.random.default_rng(7)
    _, _, mass, center, inertia = point_cloud_body(rng)
    options = dict(angular_speed=rpm(2400.0), grade=2.5, correction_planes=(-0.1, 0.1), bearing_positions=(-0.2, 0.3))
    first = bal.balance(mass, center, inertia, axis_point=(0.01, 0.0, 0.0), axis_direction=(0, 0, 1), **options)
    rotation = random_rotation(rng)
    shift = np.array([5.0, -3.0, 2.0])
    second = bal.balance(
        mass, rotation @ center + shift, rotation @ inertia @ rotation.T,
        axis_point=rotation @ np.array([0.01, 0.0, 0.0]) + shift, axis_direction=rotation @ np.array([0.0, 0.0, 1.0]),
        angle_reference=rotation @ np.array([1.0, 0.0, 0.0]), **options,
    )  # fmt: skip
    assert second.static.unbalance.magnitude == pytest.approx(first.static.unbalance.magnitude, rel=1e-10)
    assert second.static.unbalance.angle == pytest.approx(first.static.unbalance.angle, abs=1e-10)
    assert second.couple.unbalance.magnitude == pytest.approx(first.couple.unbalance.magnitude, rel=1e-9)
    assert second.couple.unbalance.angle == pytest.approx(first.couple.unbalance.angle, abs=1e-9)
    for a, b in zip(first.planes, second.planes):
        assert b.unbalance.magnitude == pytest.approx(a.unbalance.magnitude, rel=1e-9)
    for a, b in zip(first.bearings, second.bearings):
        assert b.total.magnitude == pytest.approx(a.total.magnitude, rel=1e-9)
    assert second.tilt.angle == pytest.approx(first.tilt.angle, rel=1e-9)
    assert second.flywheel.stored_energy == pytest.approx(first.flywheel.stored_energy, rel=1e-12)


@pytest.mark.parametrize(
    ("options", "match"),
    [
        ({"axis_direction": (0.0, 0.0, 0.0)}, "axis direction"),
        ({"axis_direction": (0.0, float("nan"), 1.0)}, "axis direction"),
        ({"angular_speed": -1.0}, "angular speed"),
        ({"angular_speed": 0.0}, "angular speed"),
        ({"grade": "G5"}, "balance grade"),
        ({"correction_planes": (0.1, 0.1)}, "correction planes"),
        ({"correction_planes": (0.1,)}, "correction planes"),
        ({"bearing_positions": (0.0, float("inf"))}, "bearing positions"),
        ({"correction_radius": 0.0, "correction_planes": (0, 1)}, "correction radius"),
        ({"angle_reference": (0.0, 0.0, 2.0)}, "angle reference"),
        ({"precession_rate": 1.0}, "precession"),
    ],
)
def test_bad_input_is_refused_with_its_name(options, match):
    with pytest.raises(InputValueError, match=match) as caught:
        run(1.0, (0, 0, 0), np.diag([1.0, 1.0, 2.0]), **options)
    assert isinstance(caught.value, MeshpropsError) and isinstance(caught.value, ValueError)


def test_results_are_frozen():
    result = run(1.0, (0, 0, 0), np.diag([1.0, 1.0, 2.0]))
    with pytest.raises(AttributeError):
        result.mass = 2.0  # type: ignore[misc]


def test_angles_stay_below_a_full_turn():
    # a tiny negative v component must read as (nearly) 0 deg, never 360 deg
    result = run(1.0, (1e-3, -1e-20, 0.0), np.diag([1.0, 1.0, 2.0]), correction_planes=(-0.1, 0.1))
    assert 0.0 <= result.static.unbalance.angle < 2 * math.pi
    assert result.static.unbalance.angle_deg < 360.0
    for plane in result.planes:
        assert 0.0 <= plane.correction_angle < 2 * math.pi


def test_readme_grade_table_matches_the_code():
    # the README's table of grades (between the balance-grades markers) is the code's table
    from paths import ROOT

    text = (ROOT / "README.md").read_text(encoding="utf-8")
    block = text.split("<!-- balance-grades -->")[1].split("<!-- /balance-grades -->")[0]
    rows = [line for line in block.strip().splitlines()[2:]]
    assert rows == [f"| {g.label} | {g.applications} |" for g in bal.BALANCE_GRADES]
    assert bal.GRADE_TABLE_SOURCE in text
