import re

"""Assemblies: composite bodies against hand-computed closed forms, placements, calibration,
point masses, named points and frames, breakdown, spin, invalid bodies, and the demo manifest.

Closed forms used (handbook formulas, from memory; the method is the parallel-axis theorem,
also called Steiner's theorem, common practice):

* box a × b × c, mass m, about its centre: I_xx = m (b² + c²) / 12 (and cyclic).
* regular n-gon prism of circumradius R and height h (what ``shapes.cylinder`` builds): the
  polygon is n triangles (O, P_k, P_k+1); the polar second moment of area of a triangle with
  a corner at O is A/6 (p·p + p·q + q·q) (from memory), so for the polygon
  J = A R² (2 + cos θ) / 6 with θ = 2π/n and A = n/2 R² sin θ; mass properties
  I_zz = m R² (2 + cos θ) / 6, I_xx = I_yy = m R² (2 + cos θ) / 12 + m h² / 12. As n → ∞
  these become the handbook cylinder m R²/2 and m (3R² + h²)/12.
* parallel-axis theorem: I_about_p = I_cm + m (|d|² E − d dᵀ), d = c − p.
"""

import json
import math
from pathlib import Path

import numpy as np
import pytest
from paths import ROOT
from typer.testing import CliRunner

from meshprops.cli import app
from meshprops.geometry import shapes
from meshprops.io import mesh_from_arrays
from meshprops.io.writers import write_binary_stl, write_obj
from meshprops.measure.assembly import measure_assembly, measure_manifest
from meshprops.measure.body import measure_mesh
from meshprops.measure.manifest import load_manifest, parse_manifest
from meshprops.output.csv_table import breakdown_csv
from meshprops.output.serialize import assembly_document

ROOT = ROOT
ROVER = ROOT / "sample_meshes" / "rover.toml"
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



def write_manifest(directory: Path, text: str, name: str = "assembly.toml") -> Path:
    path = directory / name
    path.write_text(versioned(text), encoding="utf-8")
    return path


def write_stl(directory: Path, name: str, mesh) -> str:
    write_binary_stl(directory / name, shapes.triangles_of(*mesh))
    return name


def box_inertia(m, a, b, c):
    """Handbook box about its centre (from memory): m (b² + c²)/12 etc."""
    return m / 12.0 * np.diag([b * b + c * c, a * a + c * c, a * a + b * b])


def prism_inertia(m, radius, height, sections):
    """Regular n-gon prism about its centre (derived in the module docstring)."""
    theta = 2.0 * math.pi / sections
    axial = m * radius**2 * (2.0 + math.cos(theta)) / 6.0
    transverse = axial / 2.0 + m * height**2 / 12.0
    return np.diag([transverse, transverse, axial])


def prism_volume(radius, height, sections):
    return sections / 2.0 * radius**2 * math.sin(2.0 * math.pi / sections) * height


def steiner(mass, offset):
    """Parallel-axis term m (|d|² E − d dᵀ), written out here independently of the library."""
    d = np.asarray(offset, dtype=float)
    return mass * (d @ d * np.eye(3) - np.outer(d, d))


def relative(a, b):
    return float(np.max(np.abs(np.asarray(a) - np.asarray(b))) / np.max(np.abs(b)))


# --------------------------------------------------------------------------- composite bodies


def test_box_with_cylinder_on_top_matches_parallel_axis_hand_calculation(tmp_path):
    a, b, c = 60.0, 40.0, 10.0  # mm
    radius, height, sections = 8.0, 30.0, 48
    write_stl(tmp_path, "base.stl", shapes.box((a, b, c)))
    write_obj(tmp_path / "post.obj", *shapes.cylinder(radius, height, sections=sections))
    rho_box, rho_post = 2700.0, 7850.0
    path = write_manifest(tmp_path, f"""
[assembly]
name = "post_on_base"
length_unit = "mm"
[[body]]
name = "base"
mesh = "base.stl"
density = {rho_box}
[[body]]
name = "post"
mesh = "post.obj"
density = {rho_post}
translation = [12, -5, {c / 2 + height / 2}]
""")
    result = measure_manifest(path, overlap_samples=0)
    total = result.total.properties

    m_box = rho_box * a * b * c * MM**3
    m_post = rho_post * prism_volume(radius, height, sections) * MM**3
    c_box = np.zeros(3)
    c_post = np.array([12.0, -5.0, c / 2 + height / 2]) * MM
    mass = m_box + m_post
    center = (m_box * c_box + m_post * c_post) / mass
    inertia = (
        box_inertia(m_box, a * MM, b * MM, c * MM) + steiner(m_box, c_box - center)
        + prism_inertia(m_post, radius * MM, height * MM, sections) + steiner(m_post, c_post - center)
    )  # fmt: skip
    assert total.mass == pytest.approx(mass, rel=1e-12)
    assert np.allclose(total.center_of_mass, center, rtol=0, atol=1e-15)
    assert relative(total.inertia_about_com, inertia) < 1e-11
    # and the smooth handbook cylinder is within the polygon's known discretization error
    smooth_axial = m_post * (radius * MM) ** 2 / 2.0
    assert prism_inertia(m_post, radius * MM, height * MM, sections)[2, 2] == pytest.approx(smooth_axial, rel=3e-3)


def test_plate_with_bored_cavity_as_void_shell(tmp_path):
    """A plate with a sealed cylindrical bore (inward shell) = plate minus bore, off centre."""
    a, b, c = 100.0, 60.0, 20.0
    radius, depth, sections = 6.0, 12.0, 64
    bore_center = np.array([25.0, 10.0, 0.0])
    plate = shapes.merge(shapes.box((a, b, c)), shapes.cylinder(radius, depth, sections, center=bore_center, inward=True))
    write_obj(tmp_path / "plate.obj", *plate)  # OBJ keeps the exact coordinates (binary STL is float32)
    path = write_manifest(tmp_path, """
[[body]]
name = "plate"
mesh = "plate.obj"
material = "steel_structural"
""")
    result = measure_manifest(path)
    rho = 7850.0  # EN 1993-1-1 steel, as in the materials table
    m_plate = rho * a * b * c * MM**3
    m_bore = rho * prism_volume(radius, depth, sections) * MM**3
    mass = m_plate - m_bore
    center = (-m_bore * bore_center * MM) / mass
    inertia = (
        box_inertia(m_plate, a * MM, b * MM, c * MM) + steiner(m_plate, -center)
        - prism_inertia(m_bore, radius * MM, depth * MM, sections) - steiner(m_bore, bore_center * MM - center)
    )  # fmt: skip
    total = result.total.properties
    assert total.mass == pytest.approx(mass, rel=1e-12)
    assert np.allclose(total.center_of_mass, center, rtol=0, atol=1e-15)
    assert relative(total.inertia_about_com, inertia) < 1e-11


def test_tube_hub_is_outer_prism_minus_bore(tmp_path):
    """shapes.tube (a through-bored hub) against the difference of two n-gon prisms."""
    outer, inner, width, sections = 23.0, 4.0, 16.0, 72
    write_obj(tmp_path / "hub.obj", *shapes.tube(outer, inner, width, sections=sections))
    path = write_manifest(tmp_path, '[[body]]\nname = "hub"\nmesh = "hub.obj"\nmaterial = "pla"\n')
    total = measure_manifest(path).total.properties
    rho = 1240.0
    m_out = rho * prism_volume(outer, width, sections) * MM**3
    m_in = rho * prism_volume(inner, width, sections) * MM**3
    expected = prism_inertia(m_out, outer * MM, width * MM, sections) - prism_inertia(m_in, inner * MM, width * MM, sections)
    assert total.mass == pytest.approx(m_out - m_in, rel=1e-12)
    assert relative(total.inertia_about_com, expected) < 1e-11


def test_composite_agrees_with_trimesh_on_the_same_placed_meshes(tmp_path):
    """Independent reference: trimesh's own mass properties of the placed, merged meshes (same density)."""
    trimesh = pytest.importorskip("trimesh")
    box = shapes.box((30.0, 20.0, 10.0))
    post = shapes.cylinder(5.0, 20.0, sections=32)
    write_obj(tmp_path / "box.obj", *box)  # OBJ: exact coordinates, as trimesh gets them
    write_obj(tmp_path / "post.obj", *post)
    path = write_manifest(tmp_path, """
[[body]]
name = "box"
mesh = "box.obj"
density = 1000
[[body]]
name = "post"
mesh = "post.obj"
density = 1000
translation = [5, 3, 15]
rotation_axis = [1, 1, 0]
rotation_angle_deg = 20
""")
    result = measure_manifest(path, overlap_samples=0)
    rotation = result.items[1].placement.rotation
    moved_post = (post[0] @ rotation.T + np.array([5.0, 3.0, 15.0]), post[1])
    merged = shapes.merge(box, moved_post)
    reference = trimesh.Trimesh(vertices=merged[0] * MM, faces=merged[1], process=False)
    reference.density = 1000.0
    total = result.total.properties
    assert total.mass == pytest.approx(reference.mass, rel=1e-9)
    assert np.allclose(total.center_of_mass, reference.center_mass, rtol=0, atol=1e-12)
    assert relative(total.inertia_about_com, reference.moment_inertia) < 1e-9


# --------------------------------------------------------------------------- placement


def _single_box_manifest(tmp_path, placement: str, size=(40.0, 20.0, 10.0)) -> Path:
    write_stl(tmp_path, "box.stl", shapes.box(size, center=(3.0, 2.0, 1.0)))
    return write_manifest(tmp_path, f'[[body]]\nname = "box"\nmesh = "box.stl"\ndensity = 2000\n{placement}\n')


def test_placement_moves_com_and_rotates_tensor_as_R_I_RT(tmp_path):
    angle = math.radians(30.0)
    rotation = np.array([[math.cos(angle), -math.sin(angle), 0], [math.sin(angle), math.cos(angle), 0], [0, 0, 1]])
    path = _single_box_manifest(tmp_path, "translation = [100, -50, 7]\nrotation_axis = [0, 0, 1]\nrotation_angle_deg = 30")
    placed = measure_manifest(path).items[0].properties
    m = 2000.0 * 40 * 20 * 10 * MM**3
    local = box_inertia(m, 40 * MM, 20 * MM, 10 * MM)
    assert np.allclose(placed.center_of_mass, rotation @ np.array([3.0, 2.0, 1.0]) * MM + np.array([100, -50, 7]) * MM,
                       rtol=0, atol=1e-15)  # fmt: skip
    assert relative(placed.inertia_about_com, rotation @ local @ rotation.T) < 1e-12
    # the product of inertia of a box turned by θ about z: P_xy = ∫xy dm = m (a² − b²)/12 sinθ cosθ
    product = m * ((40 * MM) ** 2 - (20 * MM) ** 2) / 12.0 * math.sin(angle) * math.cos(angle)
    assert placed.inertia_about_com[0, 1] == pytest.approx(-product, rel=1e-12)


def test_placement_equals_measuring_the_moved_vertices(tmp_path):
    """Moving the properties (R c + t, R I Rᵀ) = measuring the mesh whose vertices were moved."""
    path = _single_box_manifest(tmp_path, "translation = [10, 20, 30]\nrotation_rpy_deg = [10, -35, 120]")
    item = measure_manifest(path).items[0]
    vertices, faces = shapes.box((40.0, 20.0, 10.0), center=(3.0, 2.0, 1.0))
    moved = vertices @ item.placement.rotation.T + np.array([10.0, 20.0, 30.0])
    direct = measure_mesh(mesh_from_arrays(moved, faces, length_unit="mm"), density=2000.0).properties
    assert np.allclose(item.properties.center_of_mass, direct.center_of_mass, rtol=0, atol=1e-15)
    assert relative(item.properties.inertia_about_com, direct.inertia_about_com) < 1e-10


def _elementary(axis, degrees):
    c, s = math.cos(math.radians(degrees)), math.sin(math.radians(degrees))
    return {
        "x": np.array([[1, 0, 0], [0, c, -s], [0, s, c]]),
        "y": np.array([[c, 0, s], [0, 1, 0], [-s, 0, c]]),
        "z": np.array([[c, -s, 0], [s, c, 0], [0, 0, 1]]),
    }[axis]


def test_rotation_forms_are_the_documented_matrices(tmp_path):
    roll, pitch, yaw = 10.0, -35.0, 120.0
    expected_rpy = _elementary("z", yaw) @ _elementary("y", pitch) @ _elementary("x", roll)  # URDF convention
    data = {
        "assembly": {"manifest_version": 1},
        "body": [
            {"name": "a", "mesh": "box.stl", "density": 1.0, "rotation_rpy_deg": [roll, pitch, yaw]},
            {"name": "b", "mesh": "box.stl", "density": 1.0, "rotation_axis": [0, 0, 2], "rotation_angle_deg": 90},
            {"name": "c", "mesh": "box.stl", "density": 1.0, "rotation_matrix": [[0.0, -1.0, 0.0], [1.0, 0.0, 0.0], [0.0, 0.0, 1.0]]},
            {"name": "d", "mesh": "box.stl", "density": 1.0,
             "rotation_matrix": [[0.7071, -0.7071, 0.0], [0.7071, 0.7071, 0.0], [0.0, 0.0, 1.0]]},
        ]
    }  # fmt: skip
    write_stl(tmp_path, "box.stl", shapes.box())
    manifest = parse_manifest(data, path=str(tmp_path / "m.toml"))
    rotations = [body.placement.rotation for body in manifest.bodies]
    assert np.allclose(rotations[0], expected_rpy, atol=1e-15)
    assert np.allclose(rotations[1], _elementary("z", 90), atol=1e-15)
    assert np.allclose(rotations[2], _elementary("z", 90), atol=1e-15)
    # a matrix typed with 4 digits is accepted and replaced by the nearest exact rotation
    assert np.allclose(rotations[3], _elementary("z", 45), atol=1e-12)
    assert np.allclose(rotations[3].T @ rotations[3], np.eye(3), atol=1e-15)


def test_body_length_unit_and_assembly_length_unit_are_separate(tmp_path):
    write_stl(tmp_path, "box_in_inches.stl", shapes.box((1.0, 2.0, 3.0)))
    path = write_manifest(tmp_path, """
[assembly]
length_unit = "cm"
[[body]]
name = "box"
mesh = "box_in_inches.stl"
length_unit = "in"
density = 1000
translation = [10, 0, 0]
""")
    item = measure_manifest(path).items[0]
    inch = 0.0254  # exact by definition (common practice)
    assert item.properties.volume == pytest.approx(6.0 * inch**3, rel=1e-12)
    assert item.properties.center_of_mass[0] == pytest.approx(0.10, rel=1e-12)  # 10 cm


# --------------------------------------------------------------------------- calibration, point masses


def test_measured_mass_sets_the_density_and_is_reported(tmp_path):
    write_stl(tmp_path, "part.stl", shapes.box((20.0, 10.0, 5.0)))
    path = write_manifest(tmp_path, """
[[body]]
name = "printed"
mesh = "part.stl"
material = "pla"
measured_mass = 0.0006
""")
    result = measure_manifest(path)
    volume = 20 * 10 * 5 * MM**3
    item = result.items[0]
    assert item.properties.mass == pytest.approx(0.0006, rel=1e-12)
    assert item.measurement.density == pytest.approx(0.0006 / volume, rel=1e-12)  # 600 kg/m^3
    assert relative(item.properties.inertia_about_com, box_inertia(0.0006, 20 * MM, 10 * MM, 5 * MM)) < 1e-12
    body = assembly_document(result)["bodies"][0]
    assert body["density_basis"] == "measured_mass"
    assert body["implied_density"] == pytest.approx(600.0, rel=1e-12)
    assert body["implied_density_ratio_to_material"] == pytest.approx(600.0 / 1240.0, rel=1e-12)
    assert not [f for f in body["findings"] if f["code"] == "implied_density_unusual"]


def test_measured_mass_heavier_than_solid_material_warns(tmp_path):
    write_stl(tmp_path, "part.stl", shapes.box((20.0, 10.0, 5.0)))
    path = write_manifest(tmp_path, '[[body]]\nname = "p"\nmesh = "part.stl"\nmaterial = "pla"\nmeasured_mass = 0.01\n')
    result = measure_manifest(path)
    codes = [f.code for f in result.items[0].measurement.findings]
    assert codes == ["implied_density_unusual"]
    assert result.valid and any("implied_density_unusual" in w for w in result.warnings)


def test_point_masses_with_box_and_with_given_inertia(tmp_path):
    write_stl(tmp_path, "plate.stl", shapes.box((100.0, 100.0, 2.0)))
    path = write_manifest(tmp_path, """
[[body]]
name = "plate"
mesh = "plate.stl"
density = 2700
[[point_mass]]
name = "battery"
mass = 0.2
position = [30, 0, 10]
box_size = [60, 30, 10]
[[point_mass]]
name = "sensor"
mass = 0.05
position = [-40, 20, 5]
inertia = [[1e-6, 0, 0], [0, 2e-6, 0], [0, 0, 2.5e-6]]
""")
    result = measure_manifest(path)
    m_plate = 2700 * 100 * 100 * 2 * MM**3
    parts = [
        (m_plate, np.zeros(3), box_inertia(m_plate, 0.1, 0.1, 0.002)),
        (0.2, np.array([0.03, 0, 0.01]), box_inertia(0.2, 0.06, 0.03, 0.01)),
        (0.05, np.array([-0.04, 0.02, 0.005]), np.diag([1e-6, 2e-6, 2.5e-6])),
    ]
    mass = sum(p[0] for p in parts)
    center = sum(p[0] * p[1] for p in parts) / mass
    inertia = sum(p[2] + steiner(p[0], p[1] - center) for p in parts)
    total = result.total.properties
    assert total.mass == pytest.approx(mass, rel=1e-12)
    assert np.allclose(total.center_of_mass, center, rtol=0, atol=1e-15)
    assert relative(total.inertia_about_com, inertia) < 1e-12
    doc = assembly_document(result)
    names = [body["name"] for body in doc["bodies"]]
    assert names == ["plate", "battery", "sensor"]
    battery = doc["bodies"][1]
    assert battery["kind"] == "point_mass" and battery["volume"] == 0.0 and battery["source"] is None
    # the sensor's own inertia has no size: the total's plausibility cannot be bounded
    assert doc["total"]["plausibility"]["status"] == "not_checked"
    assert doc["bodies"][1]["plausibility"]["status"] == "ok"


# --------------------------------------------------------------------------- views of the total


@pytest.fixture
def three_parts(tmp_path):
    write_stl(tmp_path, "a.stl", shapes.box((40.0, 20.0, 10.0)))
    write_stl(tmp_path, "b.stl", shapes.cylinder(6.0, 30.0, sections=24))
    return write_manifest(tmp_path, """
[assembly]
name = "three"
[[body]]
name = "block"
mesh = "a.stl"
material = "aluminium_6061"
[[body]]
name = "shaft"
mesh = "b.stl"
material = "stainless_316"
translation = [30, 0, 20]
rotation_axis = [0, 1, 0]
rotation_angle_deg = 90
[[point_mass]]
name = "nut"
mass = 0.01
position = [0, 15, 0]
box_size = [5, 5, 4]
[points]
corner = [20, 10, 5]
far = [-100, 0, 0]
[frames]
turned = { origin = [5, 5, 0], rotation_axis = [0, 0, 1], rotation_angle_deg = 90 }
""")


def test_named_points_frames_and_about_point(three_parts):
    manifest = load_manifest(three_parts)
    result = measure_assembly(manifest, about=manifest.points["far"], overlap_samples=0)
    total = result.total.properties
    doc = assembly_document(result)
    for name, point_mm in (("corner", [20, 10, 5]), ("far", [-100, 0, 0])):
        point = np.array(point_mm) * MM
        expected = total.inertia_about_com + steiner(total.mass, total.center_of_mass - point)
        assert relative(doc["total"]["inertia_about_named_points"][name]["tensor"], expected) < 1e-12
        assert doc["total"]["inertia_about_named_points"][name]["point"] == pytest.approx(point.tolist())
    assert doc["total"]["inertia_about_point"]["tensor"] == doc["total"]["inertia_about_named_points"]["far"]["tensor"]
    # inertia about a point adds over items
    summed = sum(np.array(body["inertia_about_point"]["tensor"]) for body in doc["bodies"])
    assert relative(summed, doc["total"]["inertia_about_point"]["tensor"]) < 1e-12
    # frame "turned": axes = assembly axes turned 90° about z; coordinates Rᵀ (x − o), tensors Rᵀ I R
    rz = _elementary("z", 90)
    view = doc["total"]["in_frames"]["turned"]
    origin = np.array([5, 5, 0]) * MM
    assert np.allclose(view["center_of_mass"], rz.T @ (total.center_of_mass - origin), atol=1e-15)
    assert relative(view["inertia_about_com"], rz.T @ total.inertia_about_com @ rz) < 1e-12
    i = total.inertia_about_com
    assert view["inertia_about_com"][0][0] == pytest.approx(i[1, 1], rel=1e-12)  # new x is old y
    about_origin = rz.T @ (i + steiner(total.mass, total.center_of_mass - origin)) @ rz
    assert relative(view["inertia_about_origin"], about_origin) < 1e-12
    assert view["principal_moments"] == pytest.approx(doc["total"]["principal_moments"], rel=1e-10)


def test_breakdown_sums_to_total_and_csv_has_units(three_parts):
    result = measure_manifest(three_parts)
    doc = assembly_document(result)
    shares = [entry["mass_share"] for entry in doc["breakdown"]]
    assert sum(shares) == pytest.approx(1.0, rel=1e-14)
    summed = sum(np.array(entry["inertia_contribution_about_com"]) for entry in doc["breakdown"])
    assert relative(summed, doc["total"]["inertia_about_com"]) < 1e-12
    assert sum(entry["inertia_trace_share"] for entry in doc["breakdown"]) == pytest.approx(1.0, rel=1e-12)
    # each contribution is that item's inertia about the assembly centre of mass (parallel-axis theorem)
    center = np.array(doc["total"]["center_of_mass"])
    for entry, body in zip(doc["breakdown"], doc["bodies"]):
        expected = np.array(body["inertia_about_com"]) + steiner(body["mass"], np.array(body["center_of_mass"]) - center)
        assert relative(entry["inertia_contribution_about_com"], expected) < 1e-12

    import csv
    import io

    rows = list(csv.reader(io.StringIO(breakdown_csv(doc))))
    assert rows[0][:7] == ["name", "kind", "material", "density [kg/m^3]", "volume [m^3]", "mass [kg]", "mass share [1]"]
    assert all("[" in header for header in rows[0][3:])
    assert [row[0] for row in rows[1:]] == ["block", "shaft", "nut", "total"]
    assert float(rows[1][5]) == doc["bodies"][0]["mass"]
    assert float(rows[-1][5]) == doc["total"]["mass"]
    assert float(rows[2][10]) == doc["breakdown"][1]["inertia_contribution_about_com"][0][0]


def test_total_has_the_keys_of_a_body(three_parts):
    doc = assembly_document(measure_manifest(three_parts, about="corner", angular_velocity=[0, 0, 5]))
    mesh_body = doc["bodies"][0]
    numeric = {k for k in mesh_body if k not in ("source", "mesh", "material", "density_basis", "measured_mass",
               "implied_density", "implied_density_ratio_to_material", "placement", "body_frame")}  # fmt: skip
    assert numeric <= set(doc["total"])
    assert {"volume", "mass", "center_of_mass", "inertia_about_com", "principal_moments", "principal_axes",
            "inertia_about_point", "spin"} <= set(doc["total"])  # fmt: skip


def test_spin_of_items_adds_up_to_the_total(three_parts):
    manifest = load_manifest(three_parts)
    omega = np.array([1.0, -2.0, 30.0])
    velocity = np.array([0.5, 0.0, 0.0])
    point = manifest.points["far"]
    result = measure_assembly(manifest, about=point, angular_velocity=omega, com_velocity=velocity, overlap_samples=0)
    total = result.total
    assert np.allclose(total.spin.angular_momentum_about_com, total.properties.inertia_about_com @ omega, rtol=1e-14)
    summed = sum(item.measurement.spin.angular_momentum_about_point for item in result.items)
    assert np.allclose(summed, total.spin.angular_momentum_about_point, rtol=1e-12, atol=1e-18)
    energy = sum(item.measurement.spin.kinetic_energy for item in result.items)
    assert energy == pytest.approx(total.spin.kinetic_energy, rel=1e-12)  # König: rigid motion energies add


# --------------------------------------------------------------------------- invalid bodies


def test_a_body_with_an_open_mesh_makes_the_total_invalid(tmp_path):
    vertices, faces = shapes.box((10.0, 10.0, 10.0))
    write_binary_stl(tmp_path / "open.stl", shapes.triangles_of(vertices, faces[:-1]))  # one face missing
    write_stl(tmp_path, "good.stl", shapes.box((10.0, 10.0, 10.0)))
    path = write_manifest(tmp_path, """
[[body]]
name = "good"
mesh = "good.stl"
density = 1000
[[body]]
name = "broken"
mesh = "open.stl"
density = 1000
translation = [50, 0, 0]
[points]
p = [0, 0, 0]
""")
    result = measure_manifest(path)
    assert not result.valid
    doc = assembly_document(result)
    total = doc["total"]
    assert total["valid"] is False and total["mass"] is None and total["inertia_about_com"] is None
    assert total["findings"][0]["code"] == "invalid_body" and "broken" in total["findings"][0]["message"]
    assert doc["breakdown"] is None and total["inertia_about_named_points"] == {}
    assert doc["bodies"][1]["valid"] is False and doc["bodies"][1]["mass"] is None

    runner = CliRunner()
    out = runner.invoke(app, ["measure", str(path), "--json"])
    assert out.exit_code == 1
    assert json.loads(out.stdout)["total"]["mass"] is None
    for output_format in ("urdf", "sdf", "mjcf", "csv"):
        out = runner.invoke(app, ["measure", str(path), "--format", output_format])
        assert out.exit_code == 1 and out.stdout == "", output_format


# --------------------------------------------------------------------------- the demo and the CLI


def test_demo_manifest_json(tmp_path):
    import jsonschema

    schema = json.loads((ROOT / "meshprops" / "schema" / "measure.schema.json").read_text())
    out = CliRunner().invoke(app, ["measure", str(ROVER), "--json", "--about", "mast_base", "--rpm", "60", "--axis", "0,0,1"])
    assert out.exit_code == 0, out.output
    doc = json.loads(out.stdout)
    jsonschema.validate(doc, schema)
    names = [body["name"] for body in doc["bodies"]]
    assert len(names) == len(set(names)) == 15 and {"battery_pack", "camera_module", "chassis"} <= set(names)
    assert set(doc["total"]["inertia_about_named_points"]) == {"mast_base", "rear_axle", "ground_centre"}
    assert doc["total"]["inertia_about_point"]["point"] == pytest.approx([0.034, 0.0, 0.034])
    assert doc["total"]["mass"] == pytest.approx(sum(body["mass"] for body in doc["bodies"]), rel=1e-14)
    assert doc["overlaps"] == [] and doc["warnings"] == []  # parts touch (arm on plate) but do not overlap
    motor = next(body for body in doc["bodies"] if body["name"] == "motor_left")
    assert motor["mass"] == pytest.approx(0.098, rel=1e-12) and motor["density_basis"] == "measured_mass"
    # the four hub+tyre placements written in three rotation forms give mirror-identical wheels
    hubs = [body for body in doc["bodies"] if body["name"].startswith("hub_")]
    for hub in hubs[1:]:
        assert np.allclose(np.abs(hub["inertia_about_com"]), np.abs(hubs[0]["inertia_about_com"]), rtol=1e-12, atol=1e-20)


def test_demo_manifest_validates_against_manifest_schema():
    import tomllib

    import jsonschema

    schema = json.loads((ROOT / "meshprops" / "schema" / "manifest.schema.json").read_text())
    jsonschema.Draft202012Validator.check_schema(schema)
    jsonschema.validate(tomllib.loads(ROVER.read_text()), schema)


def test_manifest_schema_lists_exactly_the_keys_the_parser_accepts():
    from meshprops.measure import manifest as assembly

    schema = json.loads((ROOT / "meshprops" / "schema" / "manifest.schema.json").read_text())
    props = schema["properties"]
    assert set(props) == assembly.TOP_KEYS
    assert set(props["assembly"]["properties"]) == assembly.ASSEMBLY_KEYS
    assert set(props["body"]["items"]["properties"]) == assembly.BODY_KEYS
    assert set(props["point_mass"]["items"]["properties"]) == assembly.POINT_MASS_KEYS
    assert set(props["frames"]["additionalProperties"]["properties"]) == assembly.FRAME_KEYS
    material_object = props["materials"]["additionalProperties"]["oneOf"][1]
    assert set(material_object["properties"]) == assembly.MATERIAL_KEYS


def test_cli_table_and_csv_outputs(three_parts, tmp_path):
    runner = CliRunner()
    out = runner.invoke(app, ["measure", str(three_parts)])
    assert out.exit_code == 0, out.output
    assert "breakdown of three" in out.stdout and "total" in out.stdout
    target = tmp_path / "breakdown.csv"
    out = runner.invoke(app, ["measure", str(three_parts), "--format", "csv", "--output", str(target)])
    assert out.exit_code == 0 and out.stdout == ""
    assert target.read_text().splitlines()[0].startswith("name,kind,material,density [kg/m^3]")


def test_a_placeholder_point_mass_inertia_is_flagged_even_without_a_size(tmp_path):
    """Issue 3 item 5: the equivalent-box check must catch placeholder values. An identity
    inertia (1 kg*m^2) on a 0.2 kg item means a uniform box about 5.5 m across (a_k =
    sqrt(6 (I_i + I_j - I_k) / m), box formula, common practice), in an assembly 0.16 m long."""
    write_stl(tmp_path, "plate.stl", shapes.box((160.0, 100.0, 4.0)))
    path = write_manifest(tmp_path, """
[assembly]
name = "placeholder"
length_unit = "mm"

[[body]]
name = "plate"
mesh = "plate.stl"
density = 2700

[[point_mass]]
name = "motor"
mass = 0.2
position = [10, 0, 20]
inertia = [[1, 0, 0], [0, 1, 0], [0, 0, 1]]

[[point_mass]]
name = "sensor"
mass = 0.02
position = [-10, 0, 20]
inertia = [[2e-6, 0, 0], [0, 2e-6, 0], [0, 0, 2e-6]]
""")
    result = CliRunner().invoke(app, ["measure", str(path), "--json"])
    assert result.exit_code == 0, result.output
    doc = json.loads(result.stdout)
    status = {body["name"]: body["plausibility"]["status"] for body in doc["bodies"]}
    assert status == {"plate": "ok", "motor": "suspicious", "sensor": "not_checked"}
    assert doc["total"]["plausibility"]["status"] == "suspicious"
    flagged = [f["message"] for f in doc["total"]["findings"] if f["code"] == "implausible_inertia"]
    assert any(message.startswith("motor:") for message in flagged)
    assert not any(message.startswith("sensor:") for message in flagged)
    side = math.sqrt(6.0 * (1.0 + 1.0 - 1.0) / 0.2)
    motor = next(body for body in doc["bodies"] if body["name"] == "motor")
    assert motor["plausibility"]["equivalent_box"] == pytest.approx([side] * 3, rel=1e-12)
