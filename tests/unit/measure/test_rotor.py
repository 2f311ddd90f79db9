"""measure_rotor: real meshes and manifests, measured by meshprops, balanced about a shaft.

Closed forms: the inscribed-polygon prism's mass (exact for the mesh), static unbalance m e,
the tilted disk's couple (I_a − I_t) sin θ cos θ from rotating the measured tensor, and the
two-body product of inertia μ Δr Δz (μ = m1 m2 / (m1 + m2), parallel-axis theorem).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from meshprops.errors import InputValueError, InvalidMeshError
from meshprops.geometry import shapes
from meshprops.io import writers
from meshprops.measure.body import measure_file
from meshprops.measure.rotor import RotorOptions, measure_rotor

DENSITY = 7850.0  # kg/m^3 (any value; steel-like)
RADIUS_MM, HEIGHT_MM, SECTIONS = 50.0, 10.0, 128


def polygon_prism_mass(radius_m, height_m, sections, density):
    # exact for the mesh: a regular n-gon inscribed in r has area (n/2) r² sin(2π/n) (handbook)
    return density * height_m * sections / 2 * radius_m**2 * math.sin(2 * math.pi / sections)


@pytest.fixture
def disk_mesh(tmp_path):
    # OBJ keeps float64 coordinates (a binary STL would round them to float32)
    path = tmp_path / "disk.obj"
    writers.write_obj(path, *shapes.cylinder(RADIUS_MM, HEIGHT_MM, SECTIONS))
    return path


def angle_apart(first_deg: float, second_deg: float) -> float:
    """Distance of two angles on the circle, in degrees (359.9999… is next to 0)."""
    return abs((first_deg - second_deg + 180.0) % 360.0 - 180.0)


def options(**changes):
    settings = dict(axis_point=(0.0, 0.0, 0.0), axis_direction=(0.0, 0.0, 1.0), rpm=3000.0, grade="G6.3")
    settings.update(changes)
    return RotorOptions(**settings)


def test_disk_off_the_shaft_static_unbalance_and_part_end_planes(disk_mesh):
    # Method: static unbalance U = m e (handbook definition); the shaft passes e = 0.2 mm from
    # the disk's centre (axis point given in mm, the mesh's unit).
    e_mm = 0.2
    rotor = measure_rotor(disk_mesh, options(axis_point=(-e_mm, 0.0, 0.0)), length_unit="mm", density=DENSITY)
    mass = polygon_prism_mass(RADIUS_MM / 1e3, HEIGHT_MM / 1e3, SECTIONS, DENSITY)
    assert rotor.properties.mass == pytest.approx(mass, rel=1e-12)
    result = rotor.balance
    assert result.static.offset_distance == pytest.approx(e_mm / 1e3, rel=1e-9)
    assert result.static.g_mm == pytest.approx(mass * 1e3 * e_mm, rel=1e-9)  # g × mm
    assert angle_apart(result.static.unbalance.angle_deg, 0.0) < 1e-6  # centre at +x of the shaft
    speed = 3000.0 * 2 * math.pi / 60
    assert np.linalg.norm(result.spin.unbalance_force) == pytest.approx(mass * e_mm / 1e3 * speed**2, rel=1e-9)
    # default correction planes: the part's two faces along the shaft
    assert rotor.planes_from == "part_ends"
    np.testing.assert_allclose(rotor.axial_extent, [-HEIGHT_MM / 2e3, HEIGHT_MM / 2e3], atol=1e-15)
    assert [p.position for p in result.planes] == pytest.approx([-0.005, 0.005])
    for plane in result.planes:  # a thin symmetric disk: each face plane takes half
        assert plane.unbalance.magnitude == pytest.approx(mass * e_mm / 1e3 / 2, rel=1e-9)
    # the farthest corner is the polygon vertex opposite the shaft's offset: r + e
    assert rotor.max_radius == pytest.approx((RADIUS_MM + e_mm) / 1e3, rel=1e-12)
    assert rotor.rim_speed == pytest.approx((RADIUS_MM + e_mm) / 1e3 * speed, rel=1e-12)
    # grade: U_per = 9549 G m / n g·mm (ISO 21940-11 shortcut); passes exactly when m e <= U_per
    permissible = 9549.3 * 6.3 * mass / 3000.0
    assert result.grade.permissible_g_mm == pytest.approx(permissible, rel=1e-4)
    assert result.grade.passes is (mass * 1e3 * e_mm <= permissible)


def test_lengths_follow_the_input_unit(tmp_path):
    # The same disk exported in inches: the axis point and planes are read in inches too.
    path = tmp_path / "disk_in.obj"
    writers.write_obj(path, *shapes.cylinder(2.0, 0.5, 64))
    rotor = measure_rotor(
        path, options(axis_point=(0.01, 0.0, 0.0), correction_planes=(-0.25, 0.25), correction_radius=1.5),
        length_unit="in", density=DENSITY,
    )  # fmt: skip
    result = rotor.balance
    assert result.static.offset_distance == pytest.approx(0.01 * 0.0254, rel=1e-9)  # 1 in = 25.4 mm exactly
    assert rotor.planes_from == "given"
    assert [p.position for p in result.planes] == pytest.approx([-0.25 * 0.0254, 0.25 * 0.0254])
    assert result.correction_radius == pytest.approx(1.5 * 0.0254)
    for plane in result.planes:
        assert plane.correction_mass == pytest.approx(plane.unbalance.magnitude / (1.5 * 0.0254), rel=1e-12)


def write_manifest(directory, text: str):
    path = directory / "rotor.toml"
    path.write_text(text)
    return path


@pytest.mark.parametrize("degrees", [1.0, 3.0])
def test_manifest_disk_tilted_on_the_shaft_has_couple_unbalance(tmp_path, disk_mesh, degrees):
    # Method: rotating the measured tensor of the upright disk, I' = R I Rᵀ, gives the product
    # of inertia (I_axial − I_transverse) sin θ cos θ in shaft axes.
    upright = measure_file(disk_mesh, length_unit="mm", density=DENSITY).properties.inertia_about_com
    axial, transverse = upright[2, 2], upright[0, 0]
    manifest = write_manifest(
        tmp_path,
        f"""
[assembly]
name = "tilted_disk"
length_unit = "mm"
manifest_version = 1

[[body]]
name = "disk"
mesh = "{disk_mesh.name}"
density = {DENSITY}
rotation_axis = [1, 0, 0]
rotation_angle_deg = {degrees}
""",
    )
    rotor = measure_rotor(manifest, options(bearing_positions=(-40.0, 40.0)))
    theta = math.radians(degrees)
    expected = (axial - transverse) * math.sin(theta) * math.cos(theta)
    result = rotor.balance
    assert rotor.kind == "manifest" and rotor.length_unit == "mm"
    assert result.couple.unbalance.magnitude == pytest.approx(abs(expected), rel=1e-9)
    assert result.tilt.angle == pytest.approx(theta, rel=1e-9)
    assert result.static.unbalance.magnitude < 1e-12 * rotor.properties.mass * 0.05
    # bearings 80 mm apart carry the couple Ω² |C| as equal and opposite forces
    speed = 3000.0 * 2 * math.pi / 60
    for bearing in result.bearings:
        assert bearing.couple.magnitude == pytest.approx(speed**2 * abs(expected) / 0.08, rel=1e-9)


def test_manifest_wheel_with_an_off_axis_point_mass(tmp_path, disk_mesh):
    # Method: a symmetric disk plus a point mass m_v at radius r_v and axial offset z_v.
    # Static: U = m_v r_v (the disk's centre is on the shaft). Couple about the common centre
    # of mass: P = μ r_v z_v with μ = m_d m_v / (m_d + m_v) (two bodies, parallel-axis theorem).
    m_v, r_v_mm, z_v_mm = 0.004, 45.0, 3.0
    manifest = write_manifest(
        tmp_path,
        f"""
[assembly]
name = "wheel_with_valve"
length_unit = "mm"
manifest_version = 1

[[body]]
name = "disk"
mesh = "{disk_mesh.name}"
density = {DENSITY}

[[point_mass]]
name = "valve"
mass = {m_v}
position = [0, {r_v_mm}, {z_v_mm}]
""",
    )
    rotor = measure_rotor(manifest, options(correction_radius=40.0))
    m_d = polygon_prism_mass(RADIUS_MM / 1e3, HEIGHT_MM / 1e3, SECTIONS, DENSITY)
    result = rotor.balance
    assert rotor.properties.mass == pytest.approx(m_d + m_v, rel=1e-12)
    assert result.static.unbalance.magnitude == pytest.approx(m_v * r_v_mm / 1e3, rel=1e-9)
    assert angle_apart(result.static.unbalance.angle_deg, 90.0) < 1e-9  # valve at +y
    mu = m_d * m_v / (m_d + m_v)
    assert result.couple.unbalance.magnitude == pytest.approx(mu * r_v_mm / 1e3 * z_v_mm / 1e3, rel=1e-9)
    assert angle_apart(result.couple.unbalance.angle_deg, 90.0) < 1e-9  # +z side heavy at +y
    # planes at the disk's faces (±5 mm): z1 U1 + z2 U2 = m_v r_v z_v, U1 + U2 = m_v r_v
    u = m_v * r_v_mm / 1e3
    low, high = result.planes
    assert high.unbalance.magnitude == pytest.approx(u * (z_v_mm + 5) / 10, rel=1e-9)
    assert low.unbalance.magnitude == pytest.approx(u * (5 - z_v_mm) / 10, rel=1e-9)
    assert high.correction_angle == pytest.approx(3 * math.pi / 2, abs=1e-9)  # add mass opposite (−y)
    assert high.correction_mass == pytest.approx(high.unbalance.magnitude / 0.04, rel=1e-12)
    assert rotor.max_radius == pytest.approx(RADIUS_MM / 1e3, rel=1e-12)  # the valve sits inside the rim


def test_invalid_mesh_is_never_balanced(tmp_path):
    path = tmp_path / "open.obj"
    path.write_text("v 0 0 0\nv 1 0 0\nv 0 1 0\nv 0 0 1\nf 1 3 2\nf 1 2 4\nf 2 3 4\n")
    with pytest.raises(InvalidMeshError, match="open"):
        measure_rotor(path, options())


@pytest.mark.parametrize(
    ("changes", "match"),
    [
        ({"axis_direction": (0.0, 0.0, 0.0)}, "axis direction"),
        ({"rpm": -100.0}, "rpm"),
        ({"rpm": 0.0}, "rpm"),
        ({"rpm": float("nan")}, "rpm"),
        ({"grade": "G3"}, "balance grade"),
        ({"correction_planes": (1.0, 1.0)}, "correction planes"),
        ({"correction_radius": -2.0}, "correction radius"),
        ({"precession_axis": (1.0, 0.0, 0.0)}, "precession"),
        ({"angle_reference": (0.0, 0.0, -2.0)}, "angle reference"),
    ],
)
def test_bad_rotor_options_are_refused_before_reading(changes, match):
    with pytest.raises(InputValueError, match=match):
        options(**changes)
