"""The rover's complete models, loaded by real simulator clients (the ``sim`` extra).

Each client computes the model's total mass, centre of mass and composite inertia itself,
from the links, joints and inertials it read; these must equal the assembly total of
``meshprops measure --json`` (the reference here is the meshprops document, and the clients
are outside the project: MuJoCo's MJCF and URDF compilers, Pinocchio's URDF parser and its
composite-rigid-body algorithm). Both clients are loaded with a free root joint, the way the
README tells users to load the model as a free body.

Composite inertia from a client's joint-space mass matrix (common practice): with a free
root joint whose frame is the assembly frame, the 3x3 rotational block is the inertia about
the root origin, so ``I_com = M_rot - m (|c|^2 E - c c^T)``.
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

mujoco = pytest.importorskip("mujoco", reason="the sim extra is not installed (pip install '.[sim]')")
pinocchio = pytest.importorskip("pinocchio", reason="the sim extra is not installed (pip install '.[sim]')")

ROVER = Path(__file__).resolve().parents[2] / "sample_meshes" / "rover.toml"
TOLERANCE = 1e-9


def run_meshprops(*arguments) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "meshprops", *arguments], capture_output=True, text=True, check=False)


@pytest.fixture(scope="module")
def rover_total():
    result = run_meshprops("measure", str(ROVER), "--json", "--overlap-samples", "0")
    assert result.returncode == 0, result.stderr
    total = json.loads(result.stdout)["total"]
    return total["mass"], np.array(total["center_of_mass"]), np.array(total["inertia_about_com"])


@pytest.fixture(scope="module")
def models(tmp_path_factory):
    folder = tmp_path_factory.mktemp("rover_models")
    written = {}
    for file_format in ("urdf", "sdf", "mjcf"):
        for form in ("full", "principal"):
            out = folder / f"rover_{form}.{'xml' if file_format == 'mjcf' else file_format}"
            result = run_meshprops("measure", str(ROVER), "--format", file_format, "--inertial-form", form, "-o", str(out), "--overlap-samples", "0")
            assert result.returncode == 0, result.stderr
            written[file_format, form] = out
    return written


def about_com(mass, com, about_origin):
    return about_origin - mass * (com @ com * np.eye(3) - np.outer(com, com))


def assert_same_total(client, reference):
    mass, com, inertia = client
    ref_mass, ref_com, ref_inertia = reference
    assert abs(mass - ref_mass) <= TOLERANCE * ref_mass
    np.testing.assert_allclose(com, ref_com, rtol=0, atol=TOLERANCE * np.abs(ref_com).max())
    np.testing.assert_allclose(inertia, ref_inertia, rtol=0, atol=TOLERANCE * np.abs(ref_inertia).max())


def mujoco_total(path: Path):
    """MuJoCo (MJCF or URDF): the compiled model with a free joint added to the root body."""
    spec = mujoco.MjSpec.from_file(str(path))
    root = spec.worldbody.first_body()
    root.add_freejoint()
    model = spec.compile()
    data = mujoco.MjData(model)
    mujoco.mj_forward(model, data)
    matrix = np.zeros((model.nv, model.nv))
    mujoco.mj_fullM(model, data, matrix)
    mass = float(model.body_subtreemass[1])
    com = np.array(data.subtree_com[1])
    # free joint: translational dofs (world axes) then rotational (root axes, here the assembly's), about the root origin
    assert np.allclose(data.xpos[1], 0.0) and np.allclose(data.xmat[1], np.eye(3).ravel())
    return mass, com, about_com(mass, com, matrix[3:6, 3:6])


def pinocchio_total(path: Path):
    """Pinocchio (URDF) with a free-flyer root joint: total mass, centre of mass and CRBA mass matrix."""
    model = pinocchio.buildModelFromUrdf(str(path), pinocchio.JointModelFreeFlyer())
    data = model.createData()
    q = pinocchio.neutral(model)
    mass = float(pinocchio.computeTotalMass(model))
    com = np.array(pinocchio.centerOfMass(model, data, q))
    matrix = np.triu(pinocchio.crba(model, data, q))
    matrix = matrix + np.triu(matrix, 1).T
    geometry = pinocchio.buildGeomFromUrdf(model, str(path), pinocchio.GeometryType.COLLISION, package_dirs=[str(path.parent)])
    assert geometry.ngeoms == 13  # every mesh body's collision mesh was found and read
    return mass, com, about_com(mass, com, matrix[3:6, 3:6])


@pytest.mark.parametrize("form", ["full", "principal"])
def test_mujoco_reads_the_mjcf_model_with_the_assembly_total(models, rover_total, form):
    assert_same_total(mujoco_total(models["mjcf", form]), rover_total)


@pytest.mark.parametrize("form", ["full", "principal"])
def test_mujoco_reads_the_urdf_model_with_the_assembly_total(models, rover_total, form):
    assert_same_total(mujoco_total(models["urdf", form]), rover_total)


@pytest.mark.parametrize("form", ["full", "principal"])
def test_pinocchio_reads_the_urdf_model_with_the_assembly_total(models, rover_total, form):
    assert_same_total(pinocchio_total(models["urdf", form]), rover_total)


def test_mesh_copies_are_binary_stl_beside_the_model(models):
    folder = models["urdf", "full"].parent
    copies = sorted(path.name for path in folder.glob("*.stl"))
    # tyre.ply and motor_can.ply (PLY) and gimbal_arm.stl (ASCII STL) are copied; binary STL and OBJ are not.
    assert {"rover_full.tyre.stl", "rover_full.motor_can.stl", "rover_full.gimbal_arm.stl"} <= set(copies)
    for name in copies:
        data = (folder / name).read_bytes()
        assert len(data) == 84 + 50 * int.from_bytes(data[80:84], "little")  # binary STL layout (common practice)


def test_mujoco_reads_a_filled_mjcf_model_as_the_closed_form(tmp_path):
    """Fill an MJCF body whose mesh geom is turned and offset; MuJoCo's compiled body inertia must be
    the handbook cuboid (m = ρ a b c, I = m (b² + c²)/12, ...) carried by the geom's pos and quat."""
    from meshprops.geometry import shapes
    from meshprops.io.writers import write_binary_stl
    from meshprops.physics.rotations import rotation_from_quaternion

    sides = np.array([60.0, 30.0, 10.0])  # mm
    vertices, faces = shapes.box(sides, center=(5.0, 0.0, 0.0))
    write_binary_stl(tmp_path / "plate.stl", np.asarray(vertices)[np.asarray(faces)])
    quat = np.array([0.9, 0.1, -0.3, 0.2]) / np.linalg.norm([0.9, 0.1, -0.3, 0.2])
    model = tmp_path / "plate.xml"
    model.write_text(
        '<mujoco model="plate">\n  <!-- kept -->\n  <asset><mesh name="plate" file="plate.stl" scale="0.001 0.001 0.001"/></asset>\n'
        '  <worldbody>\n    <body name="plate" pos="0 0 0.2">\n      <freejoint/>\n'
        '      <inertial pos="0 0 0" mass="1" diaginertia="1 1 1"/>\n'
        f'      <geom type="mesh" mesh="plate" pos="0.01 0.02 -0.03" quat="{" ".join(repr(float(q)) for q in quat)}"/>\n'
        "    </body>\n  </worldbody>\n</mujoco>\n"
    )
    out = tmp_path / "filled.xml"
    result = run_meshprops("fill-inertials", str(model), "-o", str(out), "--density", "7850")
    assert result.returncode == 0, result.stderr
    compiled = mujoco.MjModel.from_xml_path(str(out))
    a, b, c = sides * 0.001
    mass = 7850.0 * a * b * c
    rotation = rotation_from_quaternion(quat)
    expected_com = rotation @ np.array([0.005, 0.0, 0.0]) + [0.01, 0.02, -0.03]
    expected = rotation @ (mass / 12.0 * np.diag([b * b + c * c, a * a + c * c, a * a + b * b])) @ rotation.T
    assert abs(compiled.body_mass[1] - mass) <= 1e-12 * mass
    np.testing.assert_allclose(compiled.body_ipos[1], expected_com, rtol=0, atol=1e-12)
    # MuJoCo stores the inertia as principal moments (body_inertia) in the frame body_iquat.
    frame = rotation_from_quaternion(compiled.body_iquat[1])
    got = frame @ np.diag(compiled.body_inertia[1]) @ frame.T
    np.testing.assert_allclose(got, expected, rtol=0, atol=1e-9 * np.abs(expected).max())


def test_pinocchio_reads_a_filled_urdf_inertial_as_written(tmp_path):
    """The URDF the fill test writes, read back by Pinocchio: its link inertia equals the file's."""
    from meshprops.geometry import shapes
    from meshprops.io.writers import write_binary_stl
    from meshprops.measure.robot_model import load_robot_model

    vertices, faces = shapes.box((40.0, 20.0, 10.0), center=(3.0, 2.0, 1.0))
    write_binary_stl(tmp_path / "part.stl", np.asarray(vertices)[np.asarray(faces)])
    model = tmp_path / "part.urdf"
    model.write_text(
        '<robot name="r">\n  <link name="part">\n    <collision>\n      <origin xyz="0.1 0 0" rpy="0.2 0.4 -0.6"/>\n'
        '      <geometry><mesh filename="part.stl" scale="0.001 0.001 0.001"/></geometry>\n    </collision>\n'
        "  </link>\n</robot>\n"
    )
    out = tmp_path / "filled.urdf"
    result = run_meshprops("fill-inertials", str(model), "-o", str(out), "--density", "2700")
    assert result.returncode == 0, result.stderr
    written = load_robot_model(out).links[0].inertial
    read = pinocchio.buildModelFromUrdf(str(out), pinocchio.JointModelFreeFlyer()).inertias[1]
    assert abs(read.mass - written.mass) <= 1e-12 * written.mass
    np.testing.assert_allclose(read.lever, written.center_of_mass, rtol=0, atol=1e-15)
    np.testing.assert_allclose(read.inertia, written.inertia_about_com, rtol=0, atol=1e-12 * np.abs(written.inertia_about_com).max())


def test_the_reader_agrees_with_the_clients_on_rotated_inertials(tmp_path):
    """An old inertial given in a rotated frame (URDF origin rpy; MJCF diaginertia + quat, euler) is read into
    link axes as Pinocchio and MuJoCo read it (placeholder detection and the report depend on it)."""
    from meshprops.measure.robot_model import load_robot_model
    from meshprops.physics.rotations import rotation_from_quaternion

    urdf = tmp_path / "r.urdf"
    urdf.write_text(
        '<robot name="r"><link name="a"><inertial><origin xyz="0.1 -0.2 0.3" rpy="0.3 -0.7 1.9"/><mass value="2"/>'
        '<inertia ixx="0.02" ixy="0.001" ixz="-0.002" iyy="0.03" iyz="0.0015" izz="0.04"/></inertial></link></robot>'
    )
    mine = load_robot_model(urdf).links[0].inertial
    theirs = pinocchio.buildModelFromUrdf(str(urdf), pinocchio.JointModelFreeFlyer()).inertias[1]
    np.testing.assert_allclose(theirs.lever, mine.center_of_mass, atol=1e-15)
    np.testing.assert_allclose(theirs.inertia, mine.inertia_about_com, atol=1e-15)

    for orientation in ('quat="0.8 0.2 -0.4 0.1"', 'euler="20 -35 70"', 'axisangle="1 2 -1 50"'):
        mjcf = tmp_path / "m.xml"
        mjcf.write_text(
            '<mujoco><worldbody><body name="a"><freejoint/>'
            f'<inertial pos="0.1 0.2 0.3" mass="2" diaginertia="0.02 0.03 0.04" {orientation}/>'
            "</body></worldbody></mujoco>"
        )
        mine = load_robot_model(mjcf).links[0].inertial
        compiled = mujoco.MjModel.from_xml_path(str(mjcf))
        frame = rotation_from_quaternion(compiled.body_iquat[1])
        np.testing.assert_allclose(frame @ np.diag(compiled.body_inertia[1]) @ frame.T, mine.inertia_about_com, atol=1e-12)
        np.testing.assert_allclose(compiled.body_ipos[1], mine.center_of_mass, atol=1e-15)


def test_fill_of_an_mjcf_with_default_classes_matches_mujocos_own_mesh_inertia(tmp_path):
    """MuJoCo computes a body's inertia from its mesh geoms (``inertiafromgeom="true"``, mesh
    ``inertia="exact"``: the polyhedron's exact volume integrals); meshprops' fill of the same model,
    default classes applied (childclass, a visual class left out by contype/conaffinity 0 and by
    ``inertiagrouprange``), must give the same mass, centre of mass and inertia."""
    from meshprops.geometry import shapes
    from meshprops.io.writers import write_binary_stl, write_obj
    from meshprops.measure.robot_model import load_robot_model
    from meshprops.physics.rotations import rotation_from_quaternion

    vertices, faces = shapes.box((80.0, 50.0, 20.0), center=(10.0, 5.0, 2.0))
    write_binary_stl(tmp_path / "base.stl", np.asarray(vertices)[np.asarray(faces)])
    write_obj(tmp_path / "arm.obj", *shapes.hollow_box((120.0, 30.0, 30.0), (100.0, 20.0, 20.0), (60.0, 0.0, 0.0)))
    model = tmp_path / "arm.xml"
    model.write_text("""<mujoco model="arm">
  <compiler angle="degree" inertiafromgeom="true" inertiagrouprange="0 1"/>
  <default>
    <mesh scale="0.001 0.001 0.001" inertia="exact"/>
    <default class="part">
      <geom type="mesh" density="2700" group="0" quat="0.9 0.1 -0.3 0.2"/>
      <default class="visual"><geom contype="0" conaffinity="0" group="2"/></default>
    </default>
  </default>
  <asset><mesh file="base.stl"/><mesh file="arm.obj"/></asset>
  <worldbody>
    <body name="base" childclass="part" pos="0 0 0.1">
      <geom mesh="base" pos="0.01 -0.02 0.03"/>
      <geom mesh="arm" class="visual"/>
      <body name="arm" pos="0 0 0.04">
        <joint type="hinge" axis="0 0 1"/>
        <geom mesh="arm" pos="0 0 0.05" euler="0 90 0"/>
      </body>
    </body>
  </worldbody>
</mujoco>
""")
    out = tmp_path / "filled.xml"
    result = run_meshprops("fill-inertials", str(model), "-o", str(out), "--density", "2700")
    assert result.returncode == 0, result.stderr
    compiled = mujoco.MjModel.from_xml_path(str(model))
    for index, link in enumerate(load_robot_model(out).links, start=1):
        assert link.meshes and all(mesh.element == "collision" for mesh in link.meshes)
        mine = link.inertial
        assert abs(compiled.body_mass[index] - mine.mass) <= 1e-9 * mine.mass
        np.testing.assert_allclose(compiled.body_ipos[index], mine.center_of_mass, rtol=0, atol=1e-12)
        frame = rotation_from_quaternion(compiled.body_iquat[index])
        theirs = frame @ np.diag(compiled.body_inertia[index]) @ frame.T
        np.testing.assert_allclose(theirs, mine.inertia_about_com, rtol=0, atol=1e-9 * np.abs(theirs).max())
