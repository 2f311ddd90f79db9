"""Length-unit spellings and the display unit systems, against the exact definitions."""

from __future__ import annotations

from fractions import Fraction

import pytest

from meshprops.errors import MeshpropsError, UnitError
from meshprops.units import (
    DISPLAY_QUANTITIES,
    DISPLAY_SYSTEMS,
    KILOGRAMS_PER_POUND,
    LENGTH_UNITS,
    canonical_length_unit,
    display_system,
)

# International Yard and Pound Agreement (1959), also NIST SP 811 appendix B (from memory):
# 1 in = 25.4 mm and 1 lb = 0.45359237 kg exactly; 1 ft = 12 in. Standard gravity 9.80665 m/s^2
# exactly (3rd CGPM, 1901; from memory), so 1 lbf = 0.45359237 kg x 9.80665 m/s^2.
INCH = Fraction(254, 10000)
POUND = Fraction(45359237, 100000000)
FOOT = 12 * INCH
LBF = POUND * Fraction(980665, 100000)


@pytest.mark.parametrize(
    "text, unit",
    [
        ("mm", "mm"), ("MM", "mm"), ("Mm", "mm"), ("millimetre", "mm"), ("millimeter", "mm"),
        ("Millimetres", "mm"), (" mm ", "mm"), ("m", "m"), ("METRE", "m"), ("meters", "m"),
        ("cm", "cm"), ("centimeter", "cm"), ("in", "in"), ("IN", "in"), ("inch", "in"),
        ("Inches", "in"), ("ft", "ft"), ("foot", "ft"), ("FEET", "ft"),
    ],
)
def test_usual_spellings_are_accepted_case_insensitively(text, unit):
    assert canonical_length_unit(text) == unit


@pytest.mark.parametrize("text", ["", "   ", "furlong", "mmm", "inchs", "kg"])
def test_empty_and_unknown_units_are_refused_naming_the_known_ones(text):
    with pytest.raises(UnitError) as caught:
        canonical_length_unit(text)
    assert isinstance(caught.value, ValueError) and isinstance(caught.value, MeshpropsError)
    assert "m, cm, mm, in, ft" in str(caught.value)


def test_length_factors_are_the_exact_definitions():
    assert Fraction(LENGTH_UNITS["in"]) == Fraction(0.0254)  # the float nearest 25.4 mm
    assert LENGTH_UNITS["in"] == float(INCH)
    assert LENGTH_UNITS["ft"] == float(FOOT)
    assert KILOGRAMS_PER_POUND == float(POUND)


def test_every_system_defines_every_quantity():
    for system in DISPLAY_SYSTEMS.values():
        assert set(system.units) == set(DISPLAY_QUANTITIES)
        for quantity in DISPLAY_QUANTITIES:
            assert system.unit(quantity).si_per_unit > 0.0


@pytest.mark.parametrize("name", ["SI", "si", "mm-g", "MM-G", "mm-kg", "in-lb", "IN-LB"])
def test_systems_are_named_case_insensitively(name):
    assert display_system(name).name.lower() == name.lower()


@pytest.mark.parametrize("name", ["", "imperial", "cgs"])
def test_unknown_systems_are_refused_naming_the_known_ones(name):
    with pytest.raises(UnitError) as caught:
        display_system(name)
    assert "SI, mm-g, mm-kg, in-lb" in str(caught.value)


# (system, quantity, symbol, SI per display unit from the exact definitions above)
EXPECTED = [
    ("SI", "length", "m", Fraction(1)),
    ("SI", "inertia", "kg*m^2", Fraction(1)),
    ("mm-g", "length", "mm", Fraction(1, 1000)),
    ("mm-g", "mass", "g", Fraction(1, 1000)),
    ("mm-g", "volume", "mm^3", Fraction(1, 10**9)),
    ("mm-g", "density", "g/cm^3", Fraction(1000)),
    ("mm-g", "inertia", "g*mm^2", Fraction(1, 10**9)),
    ("mm-g", "angular_momentum", "g*mm^2/s", Fraction(1, 10**9)),
    ("mm-g", "velocity", "mm/s", Fraction(1, 1000)),
    ("mm-kg", "inertia", "kg*mm^2", Fraction(1, 10**6)),
    ("mm-kg", "mass", "kg", Fraction(1)),
    ("in-lb", "length", "in", INCH),
    ("in-lb", "mass", "lb", POUND),
    ("in-lb", "volume", "in^3", INCH**3),
    ("in-lb", "density", "lb/in^3", POUND / INCH**3),
    ("in-lb", "inertia", "lb*in^2", POUND * INCH**2),
    ("in-lb", "angular_momentum", "lb*in^2/s", POUND * INCH**2),
    ("in-lb", "velocity", "in/s", INCH),
    ("in-lb", "energy", "in*lbf", INCH * LBF),
]


@pytest.mark.parametrize("system, quantity, symbol, exact", EXPECTED)
def test_display_factors_follow_the_exact_definitions(system, quantity, symbol, exact):
    unit = display_system(system).unit(quantity)
    assert unit.symbol == symbol
    assert unit.si_per_unit == pytest.approx(float(exact), rel=4e-16)


def test_one_pound_inch_squared_in_si():
    # 1 lb*in^2 = 0.45359237 kg x 0.00064516 m^2 = 2.9263965e-4 kg*m^2 (exact product of the definitions).
    in_lb = display_system("in-lb")
    assert in_lb.from_si("inertia", float(POUND * INCH**2)) == pytest.approx(1.0, rel=1e-15)
    assert float(POUND * INCH**2) == pytest.approx(2.92639653e-4, rel=1e-8)
    # Steel at 7850 kg/m^3 is 0.2836 lb/in^3 (handbook value 0.284 lb/in^3, from memory).
    assert in_lb.from_si("density", 7850.0) == pytest.approx(0.28360, rel=1e-4)
    assert display_system("mm-g").from_si("density", 7850.0) == pytest.approx(7.85, rel=1e-15)
    assert display_system("mm-g").from_si("mass", None) is None
