"""Reading URDF / SDFormat / MJCF models, and rewriting only their inertials.

Frame conventions checked here come from the formats' documentation (URDF link and
joint specification; SDFormat link/collision/pose; MJCF geom, asset/mesh and
compiler); the MJCF euler sequence is also checked against MuJoCo itself in
tests/reference/test_sim_clients.py when the ``sim`` extra is installed.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import trimesh

from meshprops.errors import MeshpropsError
from meshprops.measure.robot_model import load_robot_model
from meshprops.output.inertial_fill import NewInertial, filled_model_bytes
from meshprops.physics.rotations import rotation_from_quaternion, rotation_from_rpy

URDF = """<?xml version="1.0"?>
<!-- a two-link arm; the comment must survive -->
<robot name="arm">
  <link name="base">
    <inertial>
      <origin xyz="0 0 0" rpy="0 0 0"/>
      <mass value="1"/>
      <inertia ixx="1" ixy="0" ixz="0" iyy="1" iyz="0" izz="1"/>  <!-- placeholder -->
    </inertial>
    <collision>
      <origin xyz="0.01 0.02 0.03" rpy="0.1 0.2 0.3"/>
      <geometry><mesh filename="meshes/base.stl" scale="0.001 0.001 0.001"/></geometry>
    </collision>
  </link>
  <joint name="shoulder" type="revolute">
    <parent link="base"/><child link="upper"/>
    <origin xyz="0 0 0.1" rpy="0 0 0"/><axis xyz="0 0 1"/>
    <limit lower="-1" upper="1" effort="1" velocity="1"/>
  </joint>
  <link name="upper">
    <visual><geometry><mesh filename="package://arm/meshes/upper.stl"/></geometry></visual>
  </link>
  <link name="tool"/>
</robot>
"""


@pytest.fixture()
def arm(tmp_path):
    (tmp_path / "arm" / "meshes").mkdir(parents=True)
    trimesh.creation.box(extents=[10, 20, 30]).export(tmp_path / "arm" / "meshes" / "base.stl")
    trimesh.creation.box(extents=[1, 2, 3]).export(tmp_path / "arm" / "meshes" / "upper.stl")
    path = tmp_path / "arm" / "arm.urdf"
    path.write_text(URDF)
    return path


def without_inertials(path) -> bytes:
    """The model's bytes with every inertial element (and the blank run before it on its line) taken out."""
    model = load_robot_model(path)
    data = model.data
    spans = sorted(link.inertial_span for link in model.links if link.inertial_span is not None)
    pieces, position = [], 0
    for start, end in spans:
        line_start = data.rfind(b"\n", 0, start)
        cut = line_start if data[line_start + 1 : start].strip() == b"" else start
        pieces.append(data[position:cut])
        position = end
    pieces.append(data[position:])
    return b"".join(pieces)


def some_inertial(k: int) -> NewInertial:
    return NewInertial(0.5 + k, np.array([0.001 * k, -0.002, 1e-20]), np.diag([1e-4, 2e-4, 2.5e-4]) + 1e-5 * k, 0.05)


def test_urdf_links_meshes_and_placeholder(arm):
    model = load_robot_model(arm)
    assert model.format == "urdf"
    assert [link.name for link in model.links] == ["base", "upper", "tool"]
    base, upper, tool = model.links
    (mesh,) = base.meshes
    assert mesh.element == "collision" and mesh.path.name == "base.stl"
    np.testing.assert_allclose(mesh.rotation, rotation_from_rpy(0.1, 0.2, 0.3))
    np.testing.assert_allclose(mesh.translation, [0.01, 0.02, 0.03])
    np.testing.assert_allclose(mesh.scale, [0.001] * 3)
    assert base.inertial.mass == 1.0
    np.testing.assert_allclose(base.inertial.inertia_about_com, np.eye(3))
    # package://arm/... resolves to the folder named arm; a visual mesh when there is no collision.
    assert upper.meshes[0].element == "visual" and upper.meshes[0].path.name == "upper.stl"
    assert upper.inertial is None and tool.meshes == () and tool.inertial is None


def test_filling_nothing_is_the_identity(arm):
    assert filled_model_bytes(load_robot_model(arm), {}) == arm.read_bytes()


def test_fill_changes_only_the_inertials_and_twice_changes_nothing(arm, tmp_path):
    model = load_robot_model(arm)
    filled = filled_model_bytes(model, {0: some_inertial(0), 1: some_inertial(1)})
    original = arm.read_bytes()
    base_span = model.links[0].inertial_span
    # Every byte before and after the replaced element is the original.
    assert filled[: base_span[0]] == original[: base_span[0]]
    tail = original[base_span[1]:]
    inserted_at = model.links[1].insert_at
    assert filled.endswith(original[inserted_at:])
    assert b"<!-- a two-link arm; the comment must survive -->" in filled
    assert b'<joint name="shoulder" type="revolute">' in filled and tail.count(b"<joint") == 1
    assert b"placeholder" not in filled  # the comment inside the old inertial went with it

    out = tmp_path / "arm" / "filled.urdf"
    out.write_bytes(filled)
    assert without_inertials(out) == without_inertials(arm)
    again = load_robot_model(out)
    base, upper = again.links[0], again.links[1]
    assert math.isclose(base.inertial.mass, 0.5) and math.isclose(upper.inertial.mass, 1.5)
    np.testing.assert_allclose(upper.inertial.center_of_mass, [0.001, -0.002, 0.0])
    assert upper.inertial.center_of_mass[2] == 0.0  # round-off below 1e-12 of the scale prints as 0
    np.testing.assert_allclose(upper.inertial.inertia_about_com, some_inertial(1).inertia_about_com)
    assert filled_model_bytes(again, {0: some_inertial(0), 1: some_inertial(1)}) == filled


SDF = """<?xml version="1.0"?>
<sdf version="1.9">
  <model name="arm">
    <link name="base">
      <pose>0 0 0.5 0 0 0</pose>
      <collision name="c">
        <pose degrees="true">0.1 0 0 0 90 0</pose>
        <geometry><mesh><uri>model://arm/meshes/base.stl</uri><scale>0.001 0.001 0.001</scale></mesh></geometry>
      </collision>
    </link>
    <link name="upper">
      <inertial><mass>2</mass></inertial>
      <visual name="v"><geometry><mesh><uri>meshes/upper.stl</uri></mesh></geometry></visual>
    </link>
  </model>
</sdf>
"""


def test_sdf_pose_in_degrees_defaults_and_fill(arm):
    path = arm.parent / "arm.sdf"
    path.write_text(SDF)
    model = load_robot_model(path)
    base, upper = model.links
    np.testing.assert_allclose(base.meshes[0].rotation, rotation_from_rpy(0.0, math.pi / 2, 0.0), atol=1e-15)
    np.testing.assert_allclose(base.meshes[0].translation, [0.1, 0, 0])
    # SDFormat's default inertia (from memory): ixx = iyy = izz = 1.
    assert upper.inertial.mass == 2.0
    np.testing.assert_allclose(upper.inertial.inertia_about_com, np.eye(3))
    filled = filled_model_bytes(model, {0: some_inertial(2), 1: some_inertial(3)})
    before = without_inertials(path)
    path.write_bytes(filled)
    assert without_inertials(path) == before
    again = load_robot_model(path)
    np.testing.assert_allclose(again.links[0].inertial.inertia_about_com, some_inertial(2).inertia_about_com)
    assert math.isclose(again.links[1].inertial.mass, 3.5)
    assert filled_model_bytes(again, {0: some_inertial(2), 1: some_inertial(3)}) == filled


MJCF = """<mujoco model="arm">
  <compiler angle="radian" meshdir="meshes"/>
  <asset>
    <mesh name="base" file="base.stl" scale="0.001 0.001 0.001"/>
    <mesh file="upper.stl"/>
  </asset>
  <worldbody>
    <body name="base" pos="0 0 0.1">
      <inertial pos="0 0 0" mass="1" diaginertia="1 1 1"/>
      <geom type="mesh" mesh="base" pos="0 0.1 0" quat="0.5 0.5 0.5 0.5"/>
      <body name="upper" euler="0 0 1.5">
        <joint name="shoulder" type="hinge"/>
        <geom type="mesh" mesh="upper" contype="0" conaffinity="0"/>
        <geom type="box" size="0.1 0.1 0.1"/>
      </body>
    </body>
  </worldbody>
</mujoco>
"""


def test_mjcf_assets_quaternion_and_fill(arm):
    path = arm.parent / "arm.xml"
    path.write_text(MJCF)
    model = load_robot_model(path)
    base, upper = model.links
    np.testing.assert_allclose(base.meshes[0].rotation, rotation_from_quaternion([0.5, 0.5, 0.5, 0.5]))
    np.testing.assert_allclose(base.meshes[0].scale, [0.001] * 3)
    assert upper.meshes[0].element == "visual" and upper.ignored_geometry == 0
    filled = filled_model_bytes(model, {0: some_inertial(4), 1: some_inertial(5)})
    text = filled.decode()
    assert '<inertial pos="0.004 -0.002 0" mass="4.5" fullinertia=' in text
    assert text.count("<inertial") == 2
    assert b'<geom type="mesh" mesh="base" pos="0 0.1 0" quat="0.5 0.5 0.5 0.5"/>' in filled
    before = without_inertials(path)
    path.write_bytes(filled)
    assert without_inertials(path) == before
    again = load_robot_model(path)
    np.testing.assert_allclose(again.links[1].inertial.inertia_about_com, some_inertial(5).inertia_about_com)
    assert filled_model_bytes(again, {0: some_inertial(4), 1: some_inertial(5)}) == filled


@pytest.mark.parametrize(
    "text, problem",
    [
        ("<robot><link name='a'>", "not well-formed"),
        ("<model/>", "root element"),
        ("<robot><link name='a'><visual><geometry><mesh filename='gone.stl'/></geometry></visual></link></robot>", "not found"),
        ("<robot><link name='a'><inertial><mass value='x'/><inertia/></inertial></link></robot>", "mass value"),
    ],
)
def test_bad_models_are_one_error(tmp_path, text, problem):
    path = tmp_path / "bad.urdf"
    path.write_text(text)
    with pytest.raises(MeshpropsError, match=problem):
        load_robot_model(path)
