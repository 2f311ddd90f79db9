"""The plausible density range of solid engineering materials and the unit-slip hint."""

from __future__ import annotations

import math

import pytest

from meshprops.errors import InputValueError, MeshpropsError
from meshprops.materials import MATERIALS
from meshprops.physics.mass import check_density
from meshprops.validation.density import (
    PLAUSIBLE_DENSITY,
    SLIP_UNITS,
    assess_density,
    density_findings,
)


def test_every_table_material_is_plausible():
    # The built-in table (each value with its published source) must sit inside the range.
    for material in MATERIALS.values():
        assert assess_density(material.density).plausible, material.name


@pytest.mark.parametrize("density", [10.0, 25.0, 1000.0, 7850.0, 19300.0, 22590.0, 23000.0])
def test_plausible_densities_give_no_message(density):
    # 22590 kg/m^3: osmium, the densest element (CRC Handbook, from memory); 19300: tungsten (from memory).
    verdict = assess_density(density)
    assert verdict.plausible and verdict.message == "" and verdict.candidates == ()


def test_slip_factors_are_the_exact_definitions():
    # 1 lb = 0.45359237 kg, 1 in = 0.0254 m, 1 ft = 0.3048 m exactly (1959 agreement; common practice).
    assert SLIP_UNITS["g/cm^3"] == 1000.0
    assert SLIP_UNITS["lb/in^3"] == pytest.approx(0.45359237 / 0.0254**3, rel=1e-15)
    assert SLIP_UNITS["lb/in^3"] == pytest.approx(27679.9047, rel=1e-9)  # handbook conversion (from memory)
    assert SLIP_UNITS["lb/ft^3"] == pytest.approx(16.0184634, rel=1e-8)  # handbook conversion (from memory)


def test_steel_in_grams_per_cubic_centimetre_is_named():
    # Steel is 7.85 g/cm^3 (EN 1993-1-1: 7850 kg/m^3, from memory).
    verdict = assess_density(7.85)
    assert not verdict.plausible
    assert verdict.candidates[0].unit == "g/cm^3"
    assert verdict.candidates[0].density == pytest.approx(7850.0)
    assert "g/cm^3" in verdict.message and "7850" in verdict.message and "steel" in verdict.message


def test_steel_in_pounds_per_cubic_inch_is_named():
    # Steel is about 0.284 lb/in^3 (handbook value, from memory).
    verdict = assess_density(0.284)
    assert not verdict.plausible
    assert verdict.candidates[0].unit == "lb/in^3"
    assert "lb/in^3" in verdict.message


def test_a_foam_in_pounds_per_cubic_foot_is_offered():
    # 0.7 lb/ft^3 = 11.2 kg/m^3 (1 lb/ft^3 = 16.018 kg/m^3): a light foam, inside the range.
    verdict = assess_density(0.7)
    readings = {candidate.unit: candidate.density for candidate in verdict.candidates}
    assert readings["lb/ft^3"] == pytest.approx(11.21, rel=1e-3)


def test_far_above_the_range_has_no_slip_to_offer():
    verdict = assess_density(1e30)
    assert not verdict.plausible and verdict.candidates == ()
    assert "above" in verdict.message and "10-23,000 kg/m^3" in verdict.message


@pytest.mark.parametrize("bad", [0.0, -7850.0, math.inf, -math.inf, math.nan, "steel", None])
def test_non_positive_and_non_finite_densities_are_refused(bad):
    with pytest.raises(InputValueError) as caught:
        check_density(bad, name="--density")
    with pytest.raises(InputValueError):
        assess_density(bad)
    assert isinstance(caught.value, MeshpropsError) and isinstance(caught.value, ValueError)
    assert str(caught.value).startswith("--density: expected")


def test_the_range_is_the_documented_one():
    assert PLAUSIBLE_DENSITY == (10.0, 23_000.0)


def test_the_finding_is_a_warning_only_outside_the_range():
    assert density_findings(7850.0) == ()
    (finding,) = density_findings(7.85)
    assert finding.code == "implausible_density" and finding.severity == "warning" and "g/cm^3" in finding.message
