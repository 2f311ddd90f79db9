"""Each [[rule]] limit on a part's mass properties, fed with handbook values of a solid box.

Box of sides a, b, c (m) and density rho: mass m = rho*a*b*c, centre at the box centre, principal
moments m(b^2+c^2)/12, m(a^2+c^2)/12, m(a^2+b^2)/12 (standard handbook formula for a rectangular
prism about its centroidal axes, e.g. any engineering mechanics text's table of mass moments).
"""

import numpy as np
import pytest

from meshprops.gate.config import parse_config
from meshprops.gate.rules import FAIL, PASS, apply_rule, interval_verdict

A, B, C, RHO = 0.100, 0.060, 0.010, 2700.0  # an aluminium plate 100 x 60 x 10 mm
MASS = RHO * A * B * C  # 0.162 kg
MOMENTS = np.array(sorted([MASS * (B**2 + C**2) / 12, MASS * (A**2 + C**2) / 12, MASS * (A**2 + B**2) / 12]))
CENTER = np.array([0.050, 0.030, 0.005])  # a box with a corner at the origin


def _rule(tmp_path, body: str):
    config = parse_config(
        __import__("tomllib").loads("[[rule]]\nglob = 'plate.stl'\n" + body), path=str(tmp_path / "meshprops.toml")
    )
    return config.rules[0]


def _verdicts(tmp_path, body):
    return apply_rule(_rule(tmp_path, body), mass=MASS, center_of_mass=CENTER, principal_moments=MOMENTS, source="plate.stl")


def test_expected_mass_within_tolerance_passes_and_outside_fails(tmp_path):
    (verdict,) = _verdicts(tmp_path, "expected_mass = 0.160\nmass_tolerance = 0.0025\n")
    assert (verdict.rule, verdict.quantity, verdict.verdict, verdict.unit) == ("expected_mass", "mass", PASS, "kg")
    assert verdict.limit == pytest.approx((0.1575, 0.1625)) and verdict.value == pytest.approx(0.162)
    (verdict,) = _verdicts(tmp_path, "expected_mass = 0.160\nmass_tolerance = 0.0015\n")
    assert verdict.verdict == FAIL and "outside" in verdict.message and verdict.key == "rule[0].expected_mass"
    (verdict,) = _verdicts(tmp_path, "expected_mass = 0.165\nmass_tolerance_fraction = 0.02\n")  # 0.1617 .. 0.1683
    assert verdict.verdict == PASS and verdict.limit == pytest.approx((0.1617, 0.1683))
    (verdict,) = _verdicts(tmp_path, "expected_mass = 0.170\nmass_tolerance_fraction = 0.02\n")  # 0.1666 .. 0.1734
    assert verdict.verdict == FAIL


def test_center_of_mass_box_one_verdict_per_axis_in_the_rules_unit(tmp_path):
    verdicts = _verdicts(tmp_path, "center_of_mass_min = [40, 20, 0]\ncenter_of_mass_max = [60, 40, 4]\n")  # mm
    assert [v.quantity for v in verdicts] == ["center_of_mass_x", "center_of_mass_y", "center_of_mass_z"]
    assert [v.verdict for v in verdicts] == [PASS, PASS, FAIL]  # z = 5 mm > 4 mm
    assert verdicts[2].limit == pytest.approx((0.0, 0.004)) and verdicts[2].value == pytest.approx(0.005)
    only_max = _verdicts(tmp_path, "center_of_mass_max = [2, 2, 2]\nlength_unit = 'in'\n")  # 50.8 mm
    assert [v.verdict for v in only_max] == [PASS] * 3 and only_max[0].limit[0] is None


def test_center_of_mass_distance_from_a_point(tmp_path):
    # 3-4-5 triangle: the centre is 5 mm from (47, 26, 5) mm
    (verdict,) = _verdicts(tmp_path, "center_of_mass_near = [47, 26, 5]\ncenter_of_mass_within = 5.0\n")
    assert verdict.quantity == "center_of_mass_distance" and verdict.value == pytest.approx(0.005) and verdict.verdict == PASS
    (verdict,) = _verdicts(tmp_path, "center_of_mass_near = [47, 26, 5]\ncenter_of_mass_within = 4.9\n")
    assert verdict.verdict == FAIL and verdict.limit == (None, pytest.approx(0.0049))


def test_principal_moment_limits_each_moment_ascending(tmp_path):
    low = [float(m) for m in MOMENTS * 0.9]
    high = [float(m) for m in MOMENTS * 1.1]
    body = f"principal_moments_min = {low}\nprincipal_moments_max = {high}\n"
    verdicts = _verdicts(tmp_path, body)
    assert [v.quantity for v in verdicts] == ["principal_moment_1", "principal_moment_2", "principal_moment_3"]
    assert all(v.verdict == PASS and v.unit == "kg*m^2" for v in verdicts)
    # the plate's largest moment, m(a^2+b^2)/12 = 1.8360e-4 kg*m^2, against a 1.8e-4 cap
    verdicts = _verdicts(tmp_path, "principal_moments_max = [1, 1, 1.8e-4]\n")
    assert [v.verdict for v in verdicts] == [PASS, PASS, FAIL]
    assert verdicts[2].value == pytest.approx(0.162 * (0.01 + 0.0036) / 12)


def test_one_rule_with_every_limit_in_a_fixed_order(tmp_path):
    body = (
        "expected_mass = 0.162\nmass_tolerance = 0.001\ncenter_of_mass_min=[0,0,0]\ncenter_of_mass_max=[100,60,10]\n"
        "center_of_mass_near=[50,30,5]\ncenter_of_mass_within=0.001\nprincipal_moments_max=[1,1,1]\n"
    )
    verdicts = _verdicts(tmp_path, body)
    assert [v.rule for v in verdicts] == ["expected_mass"] + ["center_of_mass_box"] * 3 + ["center_of_mass_distance"] + ["principal_moments"] * 3
    assert all(v.verdict == PASS and v.source == "plate.stl" for v in verdicts)


def test_boundaries_are_inclusive():
    assert interval_verdict("expected_mass", "mass", 1.0, 1.0, 1.0, "kg").verdict == PASS
    assert interval_verdict("expected_mass", "mass", np.nextafter(1.0, 2.0), 1.0, 1.0, "kg").verdict == FAIL
    assert interval_verdict("expected_mass", "mass", 0.5, None, 1.0, "kg").verdict == PASS
