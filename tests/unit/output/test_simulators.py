"""Simulator inertial blocks (URDF, SDF, MJCF): parsed as XML and checked field by field against
the JSON document, in each format's own order, frame and sign convention; refusals; plausibility.

Format facts checked here (each format's specification, recalled from memory):
* URDF (ROS urdf/XML/link): <inertial><origin xyz rpy/><mass value/><inertia ixx ixy ixz iyy iyz
  izz/>; the six values are entries of the inertia matrix (ixy = -integral of x y dm), in the axes
  of the origin frame; rpy = fixed-axis roll (x), pitch (y), yaw (z): R = Rz Ry Rx.
* SDF (sdformat.org link/inertial): <pose>x y z roll pitch yaw</pose>, <mass>, <inertia> with
  <ixx>..<izz> children; same meanings as URDF.
* MJCF (MuJoCo XML reference, body/inertial): pos, mass, fullinertia = "M11 M22 M33 M12 M13 M23";
  principal form diaginertia + quat = "w x y z" (scalar first) of the inertial frame.
"""

import json
import math
import xml.etree.ElementTree as ET

import numpy as np
import pytest
from paths import ROOT
from typer.testing import CliRunner

from meshprops.cli import app
from meshprops.errors import SimulatorExportError
from meshprops.geometry import shapes
from meshprops.io.writers import write_obj
from meshprops.measure.assembly import measure_manifest
from meshprops.output.serialize import assembly_document
from meshprops.output.simulators import inertial_blocks
from meshprops.physics.plausibility import check_plausibility, equivalent_box
from meshprops.physics.rotations import (
    nearest_rotation,
    quaternion_from_rotation,
    rotation_from_axis_angle,
    rotation_from_quaternion,
    rotation_from_rpy,
    rpy_from_rotation,
)

ROOT = ROOT
ROVER = ROOT / "sample_meshes" / "rover.toml"


def rpy_matrix(roll, pitch, yaw):
    """Written out here from elementary rotations, independent of meshprops.physics.rotations."""
    cr, sr, cp, sp, cy, sy = math.cos(roll), math.sin(roll), math.cos(pitch), math.sin(pitch), math.cos(yaw), math.sin(yaw)
    rx = np.array([[1, 0, 0], [0, cr, -sr], [0, sr, cr]])
    ry = np.array([[cp, 0, sp], [0, 1, 0], [-sp, 0, cp]])
    rz = np.array([[cy, -sy, 0], [sy, cy, 0], [0, 0, 1]])
    return rz @ ry @ rx


def quaternion_matrix(w, x, y, z):
    """Rotation of a unit quaternion (Hamilton convention, scalar first), written out here."""
    return np.array(
        [
            [w * w + x * x - y * y - z * z, 2 * (x * y - w * z), 2 * (x * z + w * y)],
            [2 * (x * y + w * z), w * w - x * x + y * y - z * z, 2 * (y * z - w * x)],
            [2 * (x * z - w * y), 2 * (y * z + w * x), w * w - x * x - y * y + z * z],
        ]
    )


def floats(text):
    return [float(v) for v in text.split()]


@pytest.fixture(scope="module")
def rover_doc():
    out = CliRunner().invoke(app, ["measure", str(ROVER), "--json"])
    assert out.exit_code == 0, out.output
    return json.loads(out.stdout)


def without_round_off(values):
    """The blocks print a value below 1e-12 of its group's largest (a position, a tensor) as exactly 0."""
    values = np.array(values, dtype=np.float64)
    return np.where(np.abs(values) <= 1e-12 * np.abs(values).max(), 0.0, values)


def block_values(body):
    frame = body.get("body_frame") or body
    return body["mass"], without_round_off(frame["center_of_mass"]), without_round_off(frame["inertia_about_com"])


def expected_items(doc):
    return [(body["name"], body) for body in doc["bodies"]] + [("total", doc["total"])]


@pytest.mark.parametrize("form", ["full", "principal"])
def test_urdf_blocks_match_the_json(rover_doc, form):
    out = CliRunner().invoke(app, ["measure", str(ROVER), "--format", "urdf", "--inertial-form", form, "--overlap-samples", "0", "--blocks-only"])
    assert out.exit_code == 0, out.output
    root = ET.fromstring(out.stdout)
    assert root.tag == "robot" and root.get("name") == "desk_top_rover"
    links = root.findall("link")
    assert [link.get("name") for link in links] == [name for name, _ in expected_items(rover_doc)]
    for link, (name, body) in zip(links, expected_items(rover_doc)):
        mass, com, tensor = block_values(body)
        inertial = link.find("inertial")
        assert [child.tag for child in inertial] == ["origin", "mass", "inertia"]
        origin = inertial.find("origin")
        assert floats(origin.get("xyz")) == pytest.approx(com.tolist(), abs=0, rel=0)
        assert float(inertial.find("mass").get("value")) == mass
        values = {k: float(v) for k, v in inertial.find("inertia").attrib.items()}
        assert set(values) == {"ixx", "ixy", "ixz", "iyy", "iyz", "izz"}
        matrix = np.array(
            [[values["ixx"], values["ixy"], values["ixz"]],
             [values["ixy"], values["iyy"], values["iyz"]],
             [values["ixz"], values["iyz"], values["izz"]]]
        )  # fmt: skip
        rotation = rpy_matrix(*floats(origin.get("rpy")))
        if form == "full":
            assert floats(origin.get("rpy")) == [0.0, 0.0, 0.0]
            assert matrix.tolist() == tensor.tolist()  # exact: the tensor entries themselves, xx xy xz yy yz zz
        else:
            assert values["ixy"] == values["ixz"] == values["iyz"] == 0.0
            moments = (body.get("body_frame") or body)["principal_moments"]
            assert [values["ixx"], values["iyy"], values["izz"]] == moments
            # the inertial frame's axes (columns of R) carry the diagonal back to the frame's tensor
            scale = max(abs(tensor).max(), 1e-300)
            assert np.abs(rotation @ matrix @ rotation.T - tensor).max() <= 1e-12 * scale, name


@pytest.mark.parametrize("form", ["full", "principal"])
def test_sdf_blocks_match_the_json(rover_doc, form):
    out = CliRunner().invoke(app, ["measure", str(ROVER), "--format", "sdf", "--inertial-form", form, "--overlap-samples", "0", "--blocks-only"])
    assert out.exit_code == 0, out.output
    root = ET.fromstring(out.stdout)
    assert root.tag == "sdf" and root.get("version")
    model = root.find("model")
    links = model.findall("link")
    assert [link.get("name") for link in links] == [name for name, _ in expected_items(rover_doc)]
    for link, (name, body) in zip(links, expected_items(rover_doc)):
        mass, com, tensor = block_values(body)
        inertial = link.find("inertial")
        pose = floats(inertial.find("pose").text)
        assert len(pose) == 6 and pose[:3] == com.tolist()
        assert float(inertial.find("mass").text) == mass
        entries = inertial.find("inertia")
        assert [child.tag for child in entries] == ["ixx", "ixy", "ixz", "iyy", "iyz", "izz"]
        v = {child.tag: float(child.text) for child in entries}
        matrix = np.array([[v["ixx"], v["ixy"], v["ixz"]], [v["ixy"], v["iyy"], v["iyz"]], [v["ixz"], v["iyz"], v["izz"]]])
        rotation = rpy_matrix(*pose[3:])
        if form == "full":
            assert pose[3:] == [0.0, 0.0, 0.0] and matrix.tolist() == tensor.tolist()
        else:
            scale = max(abs(tensor).max(), 1e-300)
            assert np.abs(rotation @ matrix @ rotation.T - tensor).max() <= 1e-12 * scale, name


@pytest.mark.parametrize("form", ["full", "principal"])
def test_mjcf_blocks_match_the_json(rover_doc, form):
    out = CliRunner().invoke(app, ["measure", str(ROVER), "--format", "mjcf", "--inertial-form", form, "--overlap-samples", "0", "--blocks-only"])
    assert out.exit_code == 0, out.output
    root = ET.fromstring(out.stdout)
    assert root.tag == "mujoco" and root.get("model") == "desk_top_rover"
    bodies = root.find("worldbody").findall("body")
    assert [b.get("name") for b in bodies] == [name for name, _ in expected_items(rover_doc)]
    for element, (name, body) in zip(bodies, expected_items(rover_doc)):
        mass, com, tensor = block_values(body)
        inertial = element.find("inertial")
        assert floats(inertial.get("pos")) == com.tolist()
        assert float(inertial.get("mass")) == mass
        if form == "full":
            assert inertial.get("quat") is None and inertial.get("diaginertia") is None
            full = floats(inertial.get("fullinertia"))
            # MJCF order: M11 M22 M33 M12 M13 M23
            assert full == [tensor[0, 0], tensor[1, 1], tensor[2, 2], tensor[0, 1], tensor[0, 2], tensor[1, 2]]
        else:
            assert inertial.get("fullinertia") is None
            quaternion = floats(inertial.get("quat"))
            assert quaternion[0] >= 0 and math.isclose(np.linalg.norm(quaternion), 1.0, rel_tol=1e-12)
            rotation = quaternion_matrix(*quaternion)
            diagonal = np.diag(floats(inertial.get("diaginertia")))
            scale = max(abs(tensor).max(), 1e-300)
            assert np.abs(rotation @ diagonal @ rotation.T - tensor).max() <= 1e-12 * scale, name


def test_sign_of_the_off_diagonal_is_minus_the_product_of_inertia(tmp_path):
    """A box a × b × c turned θ about z: P_xy = ∫ x y dm = m (a² − b²)/12 sin θ cos θ (worked by hand
    from x = x0 cos θ − y0 sin θ, y = x0 sin θ + y0 cos θ); every format must write −P_xy."""
    a, b, c, theta, rho = 0.04, 0.02, 0.01, math.radians(30), 2700.0
    write_obj(tmp_path / "box.obj", *shapes.box((40.0, 20.0, 10.0)))
    m = rho * a * b * c
    product = m * (a * a - b * b) / 12.0 * math.sin(theta) * math.cos(theta)
    (tmp_path / "m.toml").write_text(
        "[assembly]\nmanifest_version = 1\n"
        '[[body]]\nname = "box"\nmesh = "box.obj"\ndensity = 2700\n'
        "rotation_axis = [0, 0, 1]\nrotation_angle_deg = 30\n"
    )
    doc = assembly_document(measure_manifest(tmp_path / "m.toml"))
    total = doc["total"]  # the total is in the assembly frame, where the box is turned
    urdf = ET.fromstring(inertial_blocks(doc, "urdf").text)
    link = [link for link in urdf.findall("link") if link.get("name") == "total"][0]
    assert float(link.find("inertial/inertia").get("ixy")) == pytest.approx(-product, rel=1e-12)
    assert total["products_of_inertia"]["xy"] == pytest.approx(product, rel=1e-12)
    sdf = ET.fromstring(inertial_blocks(doc, "sdf").text)
    assert float(sdf.find("model/link[@name='total']/inertial/inertia/ixy").text) == pytest.approx(-product, rel=1e-12)
    mjcf = ET.fromstring(inertial_blocks(doc, "mjcf").text)
    full = floats(mjcf.find("worldbody/body[@name='total']/inertial").get("fullinertia"))
    assert full[3] == pytest.approx(-product, rel=1e-12)
    # the body's own block is in its mesh frame, where the box is not turned: no product
    box = [link for link in urdf.findall("link") if link.get("name") == "box"][0]
    assert abs(float(box.find("inertial/inertia").get("ixy"))) < 1e-12 * product


def test_single_mesh_blocks_without_a_manifest(tmp_path):
    write_obj(tmp_path / "arm.obj", *shapes.box((40.0, 20.0, 10.0), center=(5.0, 0.0, 0.0)))
    runner = CliRunner()
    out_json = runner.invoke(app, ["measure", str(tmp_path / "arm.obj"), "--json", "--density", "2700"])
    out = runner.invoke(app, ["measure", str(tmp_path / "arm.obj"), "--format", "urdf", "--density", "2700"])
    assert out.exit_code == 0, out.output
    body = json.loads(out_json.stdout)["bodies"][0]
    link = ET.fromstring(out.stdout).find("link")
    assert link.get("name") == "arm"
    assert float(link.find("inertial/mass").get("value")) == body["mass"]
    xyz = floats(link.find("inertial/origin").get("xyz"))
    com = body["center_of_mass"]
    # Round-off below 1e-12 of the group's scale prints as exactly 0; the rest is the JSON's value.
    assert xyz == [value if abs(value) > 1e-12 * max(map(abs, com)) else 0.0 for value in com]
    assert 0 < abs(com[2]) < 1e-12 * abs(com[0]) and xyz[2] == 0.0  # the case is really tested
    out = runner.invoke(app, ["measure", str(tmp_path / "arm.obj"), "--format", "csv"])
    assert out.exit_code == 2 and "csv" in out.output


# --------------------------------------------------------------------------- refusals


def _doc(tensor, mass=1.0, extra=None):
    body = {"name": "part", "mass": mass, "center_of_mass": [0.0, 0.0, 0.0], "inertia_about_com": tensor,
            "principal_moments": sorted(np.linalg.eigvalsh(np.array(tensor)).tolist()),
            "principal_axes": np.eye(3).tolist()}  # fmt: skip
    body.update(extra or {})
    return {"bodies": [body]}


@pytest.mark.parametrize("file_format", ["urdf", "sdf", "mjcf"])
def test_refuses_a_tensor_violating_the_triangle_inequality(file_format):
    with pytest.raises(SimulatorExportError, match="triangle inequality"):
        inertial_blocks(_doc(np.diag([1.0, 1.0, 2.5]).tolist()), file_format)


@pytest.mark.parametrize("file_format", ["urdf", "sdf", "mjcf"])
def test_refuses_a_tensor_that_is_not_positive_definite(file_format):
    with pytest.raises(SimulatorExportError, match="not positive definite"):
        inertial_blocks(_doc(np.diag([0.0, 1.0, 1.0]).tolist()), file_format)
    with pytest.raises(SimulatorExportError, match="not positive definite"):
        inertial_blocks(_doc([[1.0, 2.0, 0.0], [2.0, 1.0, 0.0], [0.0, 0.0, 1.0]]), file_format)


def test_triangle_inequality_tolerates_round_off_at_equality():
    """A thin plate has I1 + I2 = I3 (handbook); round-off of a few ulps above must pass."""
    inertial_blocks(_doc(np.diag([1.0, 2.0, 3.0 * (1 + 1e-13)]).tolist()), "urdf")
    with pytest.raises(SimulatorExportError):
        inertial_blocks(_doc(np.diag([1.0, 2.0, 3.0 * (1 + 1e-6)]).tolist()), "urdf")


def test_refuses_a_body_without_numbers_and_a_point_mass_without_inertia(tmp_path):
    with pytest.raises(SimulatorExportError, match="no numbers"):
        inertial_blocks({"bodies": [{"name": "broken", "mass": None, "inertia_about_com": None}]}, "urdf")
    write_obj(tmp_path / "box.obj", *shapes.box((10.0, 10.0, 10.0)))
    (tmp_path / "m.toml").write_text(
        "[assembly]\nmanifest_version = 1\n"
        '[[body]]\nname = "box"\nmesh = "box.obj"\ndensity = 1000\n'
        '[[point_mass]]\nname = "screw"\nmass = 0.002\nposition = [0, 0, 10]\n'
    )
    out = CliRunner().invoke(app, ["measure", str(tmp_path / "m.toml"), "--format", "mjcf"])
    assert out.exit_code == 1 and out.stdout == ""
    assert "screw" in out.stderr and "not positive definite" in out.stderr and "Traceback" not in out.output


# --------------------------------------------------------------------------- plausibility


def test_equivalent_box_of_a_box_is_the_box():
    """Inverting the handbook box formula I = m (b² + c²)/12 gives back a, b, c."""
    m, a, b, c = 2.0, 0.3, 0.2, 0.1
    moments = sorted([m * (b * b + c * c) / 12, m * (a * a + c * c) / 12, m * (a * a + b * b) / 12])
    assert equivalent_box(m, moments) == pytest.approx([a, b, c], rel=1e-12)
    assert check_plausibility(m, moments, [a, b, c]).status == "ok"


def test_point_mass_with_placeholder_inertia_is_refused(tmp_path):
    write_obj(tmp_path / "box.obj", *shapes.box((10.0, 10.0, 10.0)))
    (tmp_path / "m.toml").write_text(
        "[assembly]\nmanifest_version = 1\n"
        '[[body]]\nname = "box"\nmesh = "box.obj"\ndensity = 1000\n'
        '[[point_mass]]\nname = "camera"\nmass = 0.05\nposition = [0, 0, 20]\nbox_size = [30, 30, 20]\n'
        "inertia = [[1, 0, 0], [0, 1, 0], [0, 0, 1]]\n"  # placeholder 1 kg*m^2 for a 50 g camera
    )
    doc = assembly_document(measure_manifest(tmp_path / "m.toml"))
    camera = doc["bodies"][1]
    assert camera["plausibility"]["status"] == "impossible"
    assert doc["total"]["plausibility"]["status"] == "impossible"
    with pytest.raises(SimulatorExportError, match="camera: implausible inertia"):
        inertial_blocks(doc, "urdf")


def test_inertia_typed_in_the_wrong_unit_gets_a_warning(tmp_path):
    """A 50 g camera 30 mm across has I ≈ 7.5e-6 kg*m^2; typed as g*mm^2 numbers in kg*m^2 it is 1e-9
    of that: the equivalent box shrinks far below the envelope."""
    write_obj(tmp_path / "box.obj", *shapes.box((10.0, 10.0, 10.0)))
    (tmp_path / "m.toml").write_text(
        "[assembly]\nmanifest_version = 1\n"
        '[[body]]\nname = "box"\nmesh = "box.obj"\ndensity = 1000\n'
        '[[point_mass]]\nname = "camera"\nmass = 0.05\nposition = [0, 0, 20]\nbox_size = [30, 30, 30]\n'
        "inertia = [[7.5e-15, 0, 0], [0, 7.5e-15, 0], [0, 0, 7.5e-15]]\n"
    )
    doc = assembly_document(measure_manifest(tmp_path / "m.toml"))
    assert doc["bodies"][1]["plausibility"]["status"] == "unusual"
    export = inertial_blocks(doc, "sdf")
    assert export.warnings and export.warnings[0].startswith("camera:")
    ET.fromstring(export.text)


# --------------------------------------------------------------------------- rotation conversions


def test_rpy_and_quaternion_round_trips_against_the_written_out_matrices():
    generator = np.random.default_rng(2)
    for _ in range(200):
        axis = generator.normal(size=3)
        rotation = rotation_from_axis_angle(axis, generator.uniform(-math.pi, math.pi))
        roll, pitch, yaw = rpy_from_rotation(rotation)
        assert np.allclose(rpy_matrix(roll, pitch, yaw), rotation, atol=1e-12)
        assert np.allclose(rotation_from_rpy(roll, pitch, yaw), rotation, atol=1e-12)
        q = quaternion_from_rotation(rotation)
        assert q[0] >= 0 and np.allclose(quaternion_matrix(*q), rotation, atol=1e-12)
        assert np.allclose(rotation_from_quaternion(q), rotation, atol=1e-12)
    for pitch in (math.pi / 2, -math.pi / 2):  # gimbal lock
        rotation = rpy_matrix(0.3, pitch, -1.1)
        assert np.allclose(rpy_matrix(*rpy_from_rotation(rotation)), rotation, atol=1e-12)
    # Rodrigues against a quarter turn about z by the right-hand rule: x -> y
    assert np.allclose(rotation_from_axis_angle([0, 0, 1], math.pi / 2) @ [1, 0, 0], [0, 1, 0], atol=1e-15)


def test_nearest_rotation_rejects_reflections_and_shears():
    with pytest.raises(ValueError, match="reflection"):
        nearest_rotation(np.diag([1.0, 1.0, -1.0]))
    with pytest.raises(ValueError, match="not orthonormal"):
        nearest_rotation([[1.0, 0.1, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]])
