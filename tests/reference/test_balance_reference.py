"""Balance of a real, asymmetric part from meshprops' measurement and from trimesh's.

trimesh (a general-purpose mesh library, a test reference only) gives its own mass
properties of the very same mesh: mass, centre of mass and the inertia about it in the
tensor convention. Fed to the same balance math, they must give the same static and couple
unbalance, plane corrections and bearing forces; the rotor layer adds only the measurement
and the unit conversion of the shaft.
"""

from __future__ import annotations

import numpy as np
import pytest
import trimesh  # a declared test dependency: a missing install must fail here, not skip

from meshprops.io import writers
from meshprops.measure.rotor import RotorOptions, measure_rotor
from meshprops.physics.balance import balance

DENSITY = 1250.0


def test_asymmetric_part_on_a_tilted_shaft_agrees_with_trimesh(tmp_path, part):
    vertices, faces = part  # the L-bracket with a boss (conftest), coordinates in mm
    path = tmp_path / "bracket.obj"
    writers.write_obj(path, vertices, faces)
    shaft = RotorOptions(
        axis_point=(1.5, 2.0, 1.0), axis_direction=(0.2, -0.1, 1.0), rpm=9000.0, grade="G2.5",
        bearing_positions=(-3.0, 4.0), correction_planes=(-1.0, 2.5), correction_radius=2.0,
    )  # fmt: skip
    ours = measure_rotor(path, shaft, length_unit="mm", density=DENSITY).balance

    reference = trimesh.Trimesh(vertices=vertices / 1000.0, faces=faces, process=False)  # mm -> m
    reference.density = DENSITY
    properties = reference.mass_properties
    theirs = balance(
        properties["mass"], properties["center_mass"], properties["inertia"],
        axis_point=np.array([1.5, 2.0, 1.0]) / 1000.0, axis_direction=(0.2, -0.1, 1.0),
        angular_speed=9000.0 * 2 * np.pi / 60, grade=2.5, bearing_positions=(-0.003, 0.004),
        correction_planes=(-0.001, 0.0025), correction_radius=0.002,
    )  # fmt: skip

    assert ours.static.unbalance.magnitude > 0 and ours.couple.unbalance.magnitude > 0  # a real test case
    assert ours.static.g_mm == pytest.approx(theirs.static.g_mm, rel=1e-9)
    assert ours.static.unbalance.angle == pytest.approx(theirs.static.unbalance.angle, abs=1e-9)
    assert ours.couple.g_mm2 == pytest.approx(theirs.couple.g_mm2, rel=1e-9)
    assert ours.couple.unbalance.angle == pytest.approx(theirs.couple.unbalance.angle, abs=1e-9)
    assert ours.tilt.angle == pytest.approx(theirs.tilt.angle, rel=1e-9)
    for mine, other in zip(ours.planes, theirs.planes):
        np.testing.assert_allclose(mine.unbalance.vector, other.unbalance.vector, rtol=1e-9, atol=1e-9 * other.unbalance.magnitude)
        assert mine.correction_mass == pytest.approx(other.correction_mass, rel=1e-9)
    for mine, other in zip(ours.bearings, theirs.bearings):
        np.testing.assert_allclose(mine.total.vector, other.total.vector, rtol=1e-9, atol=1e-9 * other.total.magnitude)
    assert ours.grade.permissible == pytest.approx(theirs.grade.permissible, rel=1e-12)
    assert ours.grade.passes is theirs.grade.passes
    assert ours.flywheel.stored_energy == pytest.approx(theirs.flywheel.stored_energy, rel=1e-9)
