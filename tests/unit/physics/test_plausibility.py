"""The equivalent box: a uniform box of sides (a, b, c) and mass m has principal moments
m (b^2 + c^2)/12, m (a^2 + c^2)/12, m (a^2 + b^2)/12 (handbook, rectangular prism), so its
equivalent box is itself; a mass inside an extent e has coordinate variance at most e^2/4
(two equal point masses at the ends reach it: elementary statistics), so the box side is at
most sqrt(3) e."""

from __future__ import annotations

import math

import numpy as np
import pytest

from meshprops.physics.plausibility import (
    HIGH_SLACK,
    LOW_RATIO,
    check_against_known_extent,
    check_plausibility,
    equivalent_box,
)


def box_moments(mass, sides):
    a, b, c = sides
    return mass / 12.0 * np.array([b * b + c * c, a * a + c * c, a * a + b * b])  # handbook


@pytest.mark.parametrize("sides", [(1.0, 2.0, 3.0), (0.02, 0.5, 0.5), (0.3, 0.3, 0.3)])
def test_the_equivalent_box_of_a_uniform_box_is_its_sides(sides):
    mass = 2.5
    # A thin side comes out of I_j + I_k - I_i, a difference of moments ~(0.5/0.02)^2 larger: 1e-12.
    np.testing.assert_allclose(equivalent_box(mass, box_moments(mass, sides)), sides, rtol=1e-12)


def test_a_uniform_box_within_its_own_extent_is_ok():
    sides = np.array([0.3, 0.2, 0.1])
    check = check_plausibility(4.0, box_moments(4.0, sides), sides)
    assert check.status == "ok"
    np.testing.assert_allclose(check.ratio, [1.0, 1.0, 1.0], rtol=1e-14)
    np.testing.assert_allclose(check.equivalent_box, sides, rtol=1e-14)


def test_a_dumbbell_reaches_the_sqrt3_bound_and_passes():
    # Two point masses m/2 at +-e/2 along x: I = m e^2/4 about y and z, 0 about x.
    mass, e = 1.0, 0.4
    moments = [0.0, mass * e * e / 4.0, mass * e * e / 4.0]
    check = check_plausibility(mass, moments, [e, e, e])
    assert check.equivalent_box[0] == pytest.approx(math.sqrt(3.0) * e, rel=1e-14)
    assert check.status == "ok"


def test_more_than_sqrt3_times_the_extent_is_impossible():
    sides = np.array([0.3, 0.2, 0.1])
    moments = box_moments(1.0, sides)
    extent = sides / (math.sqrt(3.0) * (1.0 + 10 * HIGH_SLACK))  # just past the bound on every axis
    check = check_plausibility(1.0, moments, extent)
    assert check.status == "impossible"
    assert "sqrt(3)" in check.message and "principal axis" in check.message
    just_inside = check_plausibility(1.0, moments, sides / math.sqrt(3.0))
    assert just_inside.status == "ok"


def test_mass_concentrated_at_the_centre_is_unusual():
    sides = np.array([0.1, 0.1, 0.1])
    check = check_plausibility(1.0, box_moments(1.0, sides), sides / (0.5 * LOW_RATIO))
    assert check.status == "unusual"


@pytest.mark.parametrize(
    ("moments", "extent"),
    [([1.0, 1.0, 1.0], None), ([0.0, 0.0, 0.0], [1.0, 1.0, 1.0]), ([1.0, 1.0, 1.0], [1.0, 0.0, 1.0])],
    ids=["no-extent", "no-inertia", "flat-extent"],
)
def test_nothing_to_compare_is_not_checked(moments, extent):
    check = check_plausibility(1.0, moments, extent)
    assert check.status == "not_checked" and check.ratio is None


def test_a_placeholder_identity_inertia_is_suspicious_against_the_known_geometry():
    # A 0.2 kg part "inertia = identity" (1 kg m^2) inside a 0.3 m assembly: its box would be ~5.5 m.
    check = check_against_known_extent(0.2, [1.0, 1.0, 1.0], [0.3, 0.3, 0.3])
    assert check.status == "suspicious" and check.extent is None
    np.testing.assert_allclose(check.equivalent_box, [math.sqrt(30.0)] * 3, rtol=1e-14)  # 6 (1 + 1 - 1) / 0.2 = 30
    fits = check_against_known_extent(1.0, box_moments(1.0, [0.2, 0.2, 0.2]), [0.3, 0.3, 0.3])
    assert fits.status == "not_checked"
