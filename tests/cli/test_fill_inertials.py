"""``meshprops fill-inertials``: a user's URDF filled from its own meshes.

The model is written here: two links on a revolute joint (and a third, mesh-less link on a
fixed joint), collision meshes in millimetres (scale 0.001) with rotated and offset origins,
and placeholder inertials. Expected values are closed-form (handbook formulas, any
engineering handbook's table of solids):

* solid rectangular cuboid, sides a, b, c: m = ρ a b c, I_xx = m (b² + c²) / 12, I_yy =
  m (a² + c²) / 12, I_zz = m (a² + b²) / 12 about its centre, box axes;
* hollow cuboid (outer a b c, centred inner a' b' c' removed): the difference of the two
  solid cuboids, m = ρ (a b c − a' b' c'), I_xx = ρ (a b c (b² + c²) − a' b' c' (b'² + c'²)) / 12;

carried into the link frame by the URDF origin (centre R c + t; tensor R I Rᵀ, with R built
here from elementary rotations, fixed axes x, y, z as the URDF link specification defines rpy).
"""

from __future__ import annotations

import math
import subprocess
import sys

import numpy as np
import pytest

from meshprops.geometry import shapes
from meshprops.io.writers import write_binary_stl, write_obj
from meshprops.materials import find_material
from meshprops.measure.robot_model import load_robot_model

BASE_SIDES = np.array([80.0, 50.0, 20.0])  # mm
BASE_CENTRE = np.array([10.0, 5.0, 2.0])  # mm, in the mesh file
ARM_OUTER = np.array([120.0, 30.0, 30.0])
ARM_INNER = np.array([100.0, 20.0, 20.0])
ARM_CENTRE = np.array([60.0, 0.0, 0.0])
BASE_ORIGIN = ((0.01, -0.02, 0.03), (0.3, -0.5, 1.1))
ARM_ORIGIN = ((0.0, 0.0, 0.05), (0.0, math.pi / 2, 0.0))

MODEL = f"""<?xml version="1.0"?>
<!-- A two-link arm written by hand: keep this comment, the joint and the spacing. -->
<robot name="test_arm">
  <link name="base">
    <inertial>
      <origin xyz="0 0 0" rpy="0 0 0"/>
      <mass value="1.0"/>
      <inertia ixx="1" ixy="0" ixz="0" iyy="1" iyz="0" izz="1"/>
    </inertial>
    <visual>
      <geometry><box size="0.08 0.05 0.02"/></geometry>
    </visual>
    <collision>
      <origin xyz="{' '.join(map(repr, BASE_ORIGIN[0]))}" rpy="{' '.join(map(repr, BASE_ORIGIN[1]))}"/>
      <geometry>
        <mesh filename="meshes/base.stl" scale="0.001 0.001 0.001"/>
      </geometry>
    </collision>
  </link>

  <joint name="shoulder" type="revolute">
    <parent link="base"/>
    <child link="arm"/>
    <origin xyz="0 0 0.04" rpy="0 0 0.25"/>
    <axis xyz="0 0 1"/>
    <limit lower="-1.57" upper="1.57" effort="5" velocity="2"/>
  </joint>

  <link name="arm">
    <inertial>  <!-- a guessed box, far too large -->
      <origin xyz="0.06 0 0" rpy="0 0 0"/>
      <mass value="0.5"/>
      <inertia ixx="2" ixy="0" ixz="0" iyy="2" iyz="0" izz="2"/>
    </inertial>
    <collision>
      <origin xyz="{' '.join(map(repr, ARM_ORIGIN[0]))}" rpy="{' '.join(map(repr, ARM_ORIGIN[1]))}"/>
      <geometry><mesh filename="meshes/arm.obj" scale="0.001 0.001 0.001"/></geometry>
    </collision>
  </link>

  <joint name="wrist" type="fixed"><parent link="arm"/><child link="tool"/></joint>
  <link name="tool"/>
</robot>
"""


def rpy_matrix(roll, pitch, yaw):
    """URDF rpy: roll about the fixed x axis, then pitch about fixed y, then yaw about fixed z."""
    c, s = math.cos, math.sin
    rx = np.array([[1, 0, 0], [0, c(roll), -s(roll)], [0, s(roll), c(roll)]])
    ry = np.array([[c(pitch), 0, s(pitch)], [0, 1, 0], [-s(pitch), 0, c(pitch)]])
    rz = np.array([[c(yaw), -s(yaw), 0], [s(yaw), c(yaw), 0], [0, 0, 1]])
    return rz @ ry @ rx


def cuboid(sides, density):
    a, b, c = sides
    mass = density * a * b * c
    return mass, mass / 12.0 * np.diag([b * b + c * c, a * a + c * c, a * a + b * b])


def expected_base(density):
    mass, inertia = cuboid(BASE_SIDES * 0.001, density)
    return placed(mass, BASE_CENTRE * 0.001, inertia, BASE_ORIGIN)


def expected_arm(density):
    outer_mass, outer = cuboid(ARM_OUTER * 0.001, density)
    inner_mass, inner = cuboid(ARM_INNER * 0.001, density)
    return placed(outer_mass - inner_mass, ARM_CENTRE * 0.001, outer - inner, ARM_ORIGIN)


def placed(mass, centre, inertia, origin):
    rotation = rpy_matrix(*origin[1])
    return mass, rotation @ centre + np.array(origin[0]), rotation @ inertia @ rotation.T


def write_meshes(folder, *, open_base=False):
    (folder / "meshes").mkdir(exist_ok=True)
    vertices, faces = shapes.box(BASE_SIDES, BASE_CENTRE)
    triangles = np.asarray(vertices)[np.asarray(faces)]
    if open_base:
        triangles = triangles[1:]  # one face missing: an open mesh
    write_binary_stl(folder / "meshes" / "base.stl", triangles)
    vertices, faces = shapes.hollow_box(ARM_OUTER, ARM_INNER, ARM_CENTRE)
    write_obj(folder / "meshes" / "arm.obj", vertices, faces)


@pytest.fixture()
def model(tmp_path):
    write_meshes(tmp_path)
    path = tmp_path / "arm.urdf"
    path.write_text(MODEL)
    return path


def fill(*arguments):
    return subprocess.run([sys.executable, "-m", "meshprops", "fill-inertials", *map(str, arguments)],
                          capture_output=True, text=True, check=False)  # fmt: skip


def without_inertials(path) -> bytes:
    """The model's bytes with every inertial element taken out (with the blank run before it on its line)."""
    model = load_robot_model(path)
    data = model.data
    pieces, position = [], 0
    for start, end in sorted(link.inertial_span for link in model.links if link.inertial_span is not None):
        line_start = data.rfind(b"\n", 0, start)
        pieces.append(data[position : line_start if data[line_start + 1 : start].strip() == b"" else start])
        position = end
    return b"".join(pieces) + data[position:]


def assert_inertial(inertial, expected):
    mass, centre, tensor = expected
    assert math.isclose(inertial.mass, mass, rel_tol=1e-12)
    np.testing.assert_allclose(inertial.center_of_mass, centre, rtol=0, atol=1e-12 * np.abs(centre).max())
    np.testing.assert_allclose(inertial.inertia_about_com, tensor, rtol=0, atol=1e-12 * np.abs(tensor).max())


def test_fill_matches_closed_forms_and_touches_nothing_else(model, tmp_path):
    out = tmp_path / "filled.urdf"
    (tmp_path / "map.toml").write_text('[link.arm]\nmaterial = "steel_structural"\n')
    result = fill(model, "-o", out, "--density", 2700, "--map", tmp_path / "map.toml")
    assert result.returncode == 0, result.stderr
    filled = load_robot_model(out)
    base, arm, tool = filled.links
    assert_inertial(base.inertial, expected_base(2700.0))
    assert_inertial(arm.inertial, expected_arm(find_material("steel_structural").density))
    assert tool.inertial is None
    # Every byte outside the two inertial elements is the original, comments and joints included.
    assert without_inertials(out) == without_inertials(model)
    assert b"<!-- A two-link arm written by hand: keep this comment, the joint and the spacing. -->" in out.read_bytes()
    # The report: old vs new, placeholders called out, the mesh-less link listed.
    assert "identity inertia matrix" in result.stdout
    assert "arm: old inertial was a placeholder (a box far larger than the mesh" in result.stdout
    assert "links without a mesh (left alone): tool" in result.stdout

    # Filling the filled model again changes nothing.
    again = tmp_path / "again.urdf"
    result = fill(out, "-o", again, "--density", 2700, "--map", tmp_path / "map.toml")
    assert result.returncode == 0, result.stderr
    assert again.read_bytes() == out.read_bytes()
    assert "placeholder" not in result.stdout


def test_output_over_the_model_is_refused(model):
    before = model.read_bytes()
    result = fill(model, "-o", model, "--density", 1000)
    assert result.returncode == 2
    assert result.stderr.startswith("meshprops: error: ") and result.stderr.count("\n") == 1
    assert model.read_bytes() == before


def test_an_invalid_mesh_leaves_its_link_alone_and_exits_1(tmp_path):
    write_meshes(tmp_path, open_base=True)
    path = tmp_path / "arm.urdf"
    path.write_text(MODEL)
    out = tmp_path / "filled.urdf"
    result = fill(path, "-o", out, "--density", 2700)
    assert result.returncode == 1
    assert "open_edges" in result.stdout + result.stderr
    filled = load_robot_model(out)
    original = load_robot_model(path)
    # base kept its placeholder byte for byte; arm was filled.
    start, end = original.links[0].inertial_span
    assert filled.data[start:end] == original.data[start:end]
    assert_inertial(filled.links[1].inertial, expected_arm(2700.0))


def test_an_unknown_link_in_the_map_is_an_error(model, tmp_path):
    (tmp_path / "map.toml").write_text("[link.elbow]\ndensity = 1000\n")
    result = fill(model, "-o", tmp_path / "out.urdf", "--map", tmp_path / "map.toml")
    assert result.returncode == 2 and "link.elbow" in result.stderr
    assert not (tmp_path / "out.urdf").exists()


SDF_MODEL = f"""<?xml version="1.0"?>
<sdf version="1.9">
  <model name="test_arm">  <!-- the same arm in SDFormat -->
    <link name="base">
      <collision name="base_collision">
        <pose>{' '.join(map(repr, BASE_ORIGIN[0]))} {' '.join(map(repr, BASE_ORIGIN[1]))}</pose>
        <geometry><mesh><uri>meshes/base.stl</uri><scale>0.001 0.001 0.001</scale></mesh></geometry>
      </collision>
    </link>
    <link name="arm">
      <pose>0 0 0.04 0 0 0.25</pose>
      <inertial><mass>1</mass></inertial>
      <collision name="arm_collision">
        <pose degrees="true">0 0 0.05 0 90 0</pose>
        <geometry><mesh><uri>meshes/arm.obj</uri><scale>0.001 0.001 0.001</scale></mesh></geometry>
      </collision>
    </link>
    <joint name="shoulder" type="revolute"><parent>base</parent><child>arm</child><axis><xyz>0 0 1</xyz></axis></joint>
  </model>
</sdf>
"""


def test_sdformat_model_filled_with_closed_forms(tmp_path):
    write_meshes(tmp_path)
    path = tmp_path / "arm.sdf"
    path.write_text(SDF_MODEL)
    out = tmp_path / "filled.sdf"
    result = fill(path, "-o", out, "--density", 2700)
    assert result.returncode == 0, result.stderr
    base, arm = load_robot_model(out).links
    assert_inertial(base.inertial, expected_base(2700.0))  # a link without an inertial gets one
    assert_inertial(arm.inertial, expected_arm(2700.0))  # the default inertial (mass 1, identity) is replaced
    assert "identity inertia matrix" in result.stdout
    assert without_inertials(out) == without_inertials(path)
    again = tmp_path / "again.sdf"
    assert fill(out, "-o", again, "--density", 2700).returncode == 0
    assert again.read_bytes() == out.read_bytes()
