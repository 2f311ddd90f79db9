"""A complete model of the rover: one link per item plus a root, fixed joints, masses that add up."""

from __future__ import annotations

import xml.etree.ElementTree as ET

import numpy as np
from paths import ROOT

from meshprops.measure.assembly import measure_manifest
from meshprops.output.serialize import assembly_document
from meshprops.output.sim_models import complete_model

ROVER = ROOT / "sample_meshes" / "rover.toml"


def _rover_doc():
    return assembly_document(measure_manifest(ROVER, overlap_samples=0))


def test_urdf_model_has_a_root_and_a_fixed_joint_per_item(tmp_path):
    doc = _rover_doc()
    model = complete_model(doc, "urdf", tmp_path / "rover.urdf", copy_meshes=False)
    robot = ET.fromstring(model.text)
    links = robot.findall("link")
    joints = robot.findall("joint")
    assert len(links) == len(doc["bodies"]) + 1
    assert len(joints) == len(doc["bodies"])
    assert {joint.get("type") for joint in joints} == {"fixed"}
    masses = [float(link.find("inertial/mass").get("value")) for link in links if link.find("inertial") is not None]
    assert len(masses) == len(links)  # the root too: clients assume 1 kg for a link without one
    assert np.isclose(sum(masses), doc["total"]["mass"], rtol=1e-12)


def test_mjcf_model_places_bodies_with_pos_and_quat(tmp_path):
    doc = _rover_doc()
    model = complete_model(doc, "mjcf", tmp_path / "rover.xml", copy_meshes=False)
    root = ET.fromstring(model.text)
    bodies = root.findall(".//worldbody/body/body")
    assert len(bodies) == len(doc["bodies"])
    for body in bodies:
        quat = np.array([float(v) for v in body.get("quat", "1 0 0 0").split()])
        assert np.isclose(np.linalg.norm(quat), 1.0, rtol=1e-9)  # MJCF quaternion, scalar first
