"""Writing one inertial element, and replacing only the inertial text of a model file."""

from __future__ import annotations

import xml.etree.ElementTree as ET

import numpy as np

from meshprops.geometry import shapes
from meshprops.io.writers import write_binary_stl
from meshprops.measure.robot_model import load_robot_model
from meshprops.output.inertial_fill import (
    NewInertial,
    filled_model_bytes,
    inertial_element,
)

TENSOR = np.array([[2.0e-3, -1.0e-4, 0.0], [-1.0e-4, 3.0e-3, 5.0e-17], [0.0, 5.0e-17, 4.0e-3]])
INERTIAL = NewInertial(1.25, np.array([0.01, -0.02, 1e-18]), TENSOR, 0.1)


def test_urdf_element_carries_the_six_tensor_entries_and_cleans_round_off():
    element = ET.fromstring(inertial_element("urdf", INERTIAL, "", "  "))
    assert float(element.find("mass").get("value")) == 1.25
    xyz = [float(v) for v in element.find("origin").get("xyz").split()]
    assert xyz == [0.01, -0.02, 0.0]  # 1e-18 m is below 1e-12 of the 0.1 m scale: prints as 0
    inertia = element.find("inertia")
    # URDF's six entries are the tensor entries (off-diagonals = minus the products), common practice.
    assert float(inertia.get("ixy")) == -1.0e-4
    assert float(inertia.get("iyz")) == 0.0
    assert [float(inertia.get(k)) for k in ("ixx", "iyy", "izz")] == [2.0e-3, 3.0e-3, 4.0e-3]


def test_mjcf_element_uses_the_fullinertia_order():
    element = ET.fromstring(inertial_element("mjcf", INERTIAL, "", "  "))
    # MJCF fullinertia order: M(1,1) M(2,2) M(3,3) M(1,2) M(1,3) M(2,3) (the MJCF reference).
    assert [float(v) for v in element.get("fullinertia").split()] == [2.0e-3, 3.0e-3, 4.0e-3, -1.0e-4, 0.0, 0.0]
    assert float(element.get("mass")) == 1.25


URDF = """<?xml version="1.0"?>
<!-- a comment that must survive -->
<robot name="bench">
  <link name="plate">
    <inertial>
      <origin xyz="0 0 0" rpy="0 0 0"/>
      <mass value="1"/>
      <inertia ixx="1" ixy="0" ixz="0" iyy="1" iyz="0" izz="1"/>
    </inertial>
    <collision><geometry><mesh filename="plate.stl" scale="0.001 0.001 0.001"/></geometry></collision>
  </link>
</robot>
"""


def test_only_the_inertial_changes(tmp_path):
    write_binary_stl(tmp_path / "plate.stl", shapes.triangles_of(*shapes.box((100.0, 60.0, 10.0))))
    path = tmp_path / "bench.urdf"
    path.write_text(URDF)
    model = load_robot_model(path)
    new = filled_model_bytes(model, {0: INERTIAL}).decode()
    before, after = URDF.split("<inertial>")[0], URDF.split("</inertial>")[1]
    assert new.startswith(before) and new.endswith(after)
    assert 'value="1.25"' in new
    assert filled_model_bytes(model, {}).decode() == URDF
