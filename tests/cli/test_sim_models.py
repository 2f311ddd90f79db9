"""``measure MANIFEST --format urdf|sdf|mjcf``: the complete model's structure and totals.

The real clients' reading of the URDF and MJCF models is checked in
tests/reference/test_sim_clients.py; here the SDFormat model, for which no client ships on the
package registry, is summed link by link from its own poses (SDFormat: a link's ``<pose>`` is
relative to the frame named by ``relative_to``, its ``inertial/pose`` relative to the link;
rpy about fixed axes x, y, z), and compared with the assembly total of ``--json``.
"""

from __future__ import annotations

import json
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
from typer.testing import CliRunner

from meshprops.cli import app
from meshprops.physics.mass import MassProperties, combine
from meshprops.physics.rotations import rotation_from_rpy

ROVER = Path(__file__).resolve().parents[2] / "sample_meshes" / "rover.toml"


def floats(text):
    return np.array([float(v) for v in text.split()])


def run(*arguments):
    return CliRunner().invoke(app, [str(a) for a in arguments])


def test_sdf_model_sums_to_the_assembly_total(tmp_path):
    total = json.loads(run("measure", ROVER, "--json", "--overlap-samples", 0).stdout)["total"]
    out = tmp_path / "rover.sdf"
    result = run("measure", ROVER, "--format", "sdf", "-o", out, "--overlap-samples", 0)
    assert result.exit_code == 0, result.output
    model = ET.parse(out).getroot().find("model")
    parts = []
    for link in model.findall("link"):
        inertial = link.find("inertial")
        mass = float(inertial.find("mass").text)
        if mass == 0.0:
            assert link.get("name") == "assembly_root" and link.find("pose") is None
            continue
        pose = link.find("pose")
        assert pose.get("relative_to") == "assembly_root"
        link_pose = floats(pose.text)
        com_pose = floats(inertial.find("pose").text)
        tensor = np.array([[float(inertial.find(f"inertia/i{a}{b}" if a <= b else f"inertia/i{b}{a}").text)
                            for b in "xyz"] for a in "xyz"])  # fmt: skip
        local = MassProperties(mass, 0.0, com_pose[:3], rotation_from_rpy(*com_pose[3:]) @ tensor @ rotation_from_rpy(*com_pose[3:]).T)
        parts.append(local.moved(rotation_from_rpy(*link_pose[3:]), link_pose[:3]))
    assert len(parts) == 15  # 13 mesh bodies and 2 point masses
    summed = combine(parts)
    assert abs(summed.mass - total["mass"]) <= 1e-12 * total["mass"]
    np.testing.assert_allclose(summed.center_of_mass, total["center_of_mass"], rtol=0, atol=1e-12)
    inertia = np.array(total["inertia_about_com"])
    np.testing.assert_allclose(summed.inertia_about_com, inertia, rtol=0, atol=1e-10 * np.abs(inertia).max())
    joints = model.findall("joint")
    assert len(joints) == 15 and all(j.get("type") == "fixed" and j.find("parent").text == "assembly_root" for j in joints)
    # visual and collision point at the mesh relative to the model's folder, in the mesh's unit
    chassis = model.find("link[@name='chassis']")
    uri = chassis.find("collision/geometry/mesh/uri").text
    assert (out.parent / uri).resolve() == (ROVER.parent / "chassis_plate.stl").resolve()
    assert chassis.find("visual/geometry/mesh/scale").text == "0.001 0.001 0.001"
    tyre = model.find("link[@name='tyre_rear_left']")
    assert tyre.find("visual/geometry/mesh/uri").text == "rover.tyre.stl"  # PLY copied as binary STL
    assert (tmp_path / "rover.tyre.stl").is_file()


def test_blocks_only_keeps_the_old_output_and_needs_a_simulator_format(tmp_path):
    result = run("measure", ROVER, "--format", "urdf", "--blocks-only", "--overlap-samples", 0)
    assert result.exit_code == 0
    root = ET.fromstring(result.stdout)
    assert root.find("joint") is None and [link.get("name") for link in root.findall("link")][-1] == "total"
    result = run("measure", ROVER, "--format", "csv", "--blocks-only")
    assert result.exit_code == 2 and "--blocks-only" in result.stderr


def test_a_model_on_stdout_points_at_the_sources_and_says_so():
    result = run("measure", ROVER, "--format", "mjcf", "--overlap-samples", 0)
    assert result.exit_code == 0
    assert "give -o OUT to get binary STL copies" in result.stderr
    assert 'file="' in result.stdout and "tyre.ply" in result.stdout
