"""The per-link report of fill-inertials: ratios, placeholders called out, links left alone listed."""

from __future__ import annotations

import numpy as np

from meshprops.geometry import shapes
from meshprops.io.writers import write_binary_stl
from meshprops.measure.link_inertials import fill_model
from meshprops.output.fill_report import fill_table, fill_to_dict

URDF = """<?xml version="1.0"?>
<robot name="bench">
  <link name="base"/>
  <link name="plate">
    <inertial><mass value="1"/><inertia ixx="1" ixy="0" ixz="0" iyy="1" iyz="0" izz="1"/></inertial>
    <collision><geometry><mesh filename="plate.stl" scale="0.001 0.001 0.001"/></geometry></collision>
  </link>
  <joint name="j" type="fixed"><parent link="base"/><child link="plate"/></joint>
</robot>
"""


def test_report_of_a_placeholder_link_and_a_link_without_mesh(tmp_path):
    write_binary_stl(tmp_path / "plate.stl", shapes.triangles_of(*shapes.box((100.0, 60.0, 10.0))))
    (tmp_path / "bench.urdf").write_text(URDF)
    report = fill_to_dict(fill_model(tmp_path / "bench.urdf", density=2700.0))
    links = {link["name"]: link for link in report["links"]}
    assert links["base"]["status"] == "no_mesh"
    plate = links["plate"]
    assert plate["status"] == "filled"
    mass = 2700.0 * 0.1 * 0.06 * 0.01  # rho * a * b * c (box volume, handbook)
    assert np.isclose(plate["new"]["mass"], mass, rtol=1e-12)
    assert np.isclose(plate["mass_ratio"], mass / 1.0, rtol=1e-12)
    assert plate["placeholder"]  # an identity inertia on a 162 g plate
    text = fill_table(report)
    assert "plate" in text and "no mesh, left alone" in text and "placeholder" in text
