"""Units and their conversion to and from SI, in one place.

Meshes carry no unit; the user declares it (CAD exports are most often in
millimetres, which is the default). Lengths are converted to metres once, at
load; everything inside meshprops is SI (m, kg, s). For display only, a named
*unit system* (:data:`DISPLAY_SYSTEMS`) converts SI values back into the units
practitioners read part data in (mm, g, g*mm^2; in, lb, lb*in^2). JSON output
stays SI.

Every factor below follows from exact definitions (International Yard and
Pound Agreement of 1959: 1 in = 25.4 mm exactly, 1 lb = 0.45359237 kg exactly;
1 ft = 12 in; standard gravity g_n = 9.80665 m/s^2 exactly (3rd CGPM, 1901),
so 1 lbf = 0.45359237 kg * 9.80665 m/s^2; common practice).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from .errors import UnitError

#: metres per unit (exact by definition: 1 in = 25.4 mm, 1 ft = 12 in; common practice)
LENGTH_UNITS: dict[str, float] = {
    "m": 1.0,
    "cm": 0.01,
    "mm": 0.001,
    "in": 0.0254,
    "ft": 0.3048,
}

#: The usual spellings of each length unit (matched case-insensitively, surrounding blanks ignored).
LENGTH_UNIT_SPELLINGS: dict[str, tuple[str, ...]] = {
    "m": ("m", "metre", "metres", "meter", "meters"),
    "cm": ("cm", "centimetre", "centimetres", "centimeter", "centimeters"),
    "mm": ("mm", "millimetre", "millimetres", "millimeter", "millimeters"),
    "in": ("in", "inch", "inches", '"'),
    "ft": ("ft", "foot", "feet", "'"),
}

_SPELLING_TO_UNIT: dict[str, str] = {
    spelling: unit for unit, spellings in LENGTH_UNIT_SPELLINGS.items() for spelling in spellings
}

DEFAULT_LENGTH_UNIT = "mm"

#: kilograms per pound (exact by definition, 1959; common practice)
KILOGRAMS_PER_POUND = 0.45359237
#: standard acceleration of gravity in m/s^2 (exact by definition; common practice)
STANDARD_GRAVITY = 9.80665

#: The SI units of every quantity in the JSON output.
SI_UNITS: dict[str, str] = {
    "length": "m",
    "mass": "kg",
    "time": "s",
    "volume": "m^3",
    "density": "kg/m^3",
    "inertia": "kg*m^2",
    "angular_velocity": "rad/s",
    "angular_momentum": "kg*m^2/s",
    "velocity": "m/s",
    "energy": "J",
    "angle": "rad (keys ending in _deg: degrees)",
}


def canonical_length_unit(text: str) -> str:
    """Return the canonical name (``m``, ``cm``, ``mm``, ``in``, ``ft``) of a length unit.

    Case-insensitive, with the usual spellings (``MM``, ``millimetre``, ``millimeter``,
    ``inch``, ``inches``, ``foot``, ``feet``, ...). An empty or unknown unit raises
    :class:`UnitError` naming the known ones.
    """
    if not isinstance(text, str):
        raise UnitError(str(text), tuple(LENGTH_UNITS))
    key = text.strip().lower()
    if key in _SPELLING_TO_UNIT:
        return _SPELLING_TO_UNIT[key]
    raise UnitError(text, tuple(LENGTH_UNITS))


def metres_per(unit: str) -> float:
    """Return how many metres one ``unit`` is; raise :class:`UnitError` if unknown.

    ``unit`` must be a canonical name (see :func:`canonical_length_unit` for user text).
    """
    try:
        return LENGTH_UNITS[unit]
    except KeyError:
        raise UnitError(unit, tuple(LENGTH_UNITS)) from None


def rpm_to_rad_per_s(rpm: float) -> float:
    """Convert revolutions per minute to rad/s (2π/60 rad/s per rpm)."""
    return rpm * 2.0 * math.pi / 60.0


# ---------------------------------------------------------------------------- display systems


@dataclass(frozen=True, slots=True, eq=False)
class DisplayUnit:
    """How one quantity is shown: its symbol and how many SI units one display unit is.

    A value shown is ``si_value / si_per_unit``.
    """

    symbol: str
    si_per_unit: float

    def from_si(self, value):
        """Convert an SI value (a float or a numpy array) to this unit."""
        return value / self.si_per_unit


#: The quantities every display system defines (the keys of :data:`SI_UNITS` that carry a unit).
DISPLAY_QUANTITIES = (
    "length",
    "mass",
    "volume",
    "density",
    "inertia",
    "angular_velocity",
    "angular_momentum",
    "velocity",
    "energy",
)


@dataclass(frozen=True, slots=True, eq=False)
class DisplaySystem:
    """A named set of display units, one per quantity of :data:`DISPLAY_QUANTITIES`."""

    name: str
    description: str
    units: dict

    def unit(self, quantity: str) -> DisplayUnit:
        """The :class:`DisplayUnit` of ``quantity`` (``"length"``, ``"inertia"``, ...)."""
        return self.units[quantity]

    def symbol(self, quantity: str) -> str:
        return self.units[quantity].symbol

    def from_si(self, quantity: str, value):
        """Convert an SI value of ``quantity`` (float or array; ``None`` passes through)."""
        if value is None:
            return None
        return self.units[quantity].from_si(value)


def _system(name: str, description: str, length: tuple[str, float], mass: tuple[str, float], *,
            density: tuple[str, float], energy: tuple[str, float]) -> DisplaySystem:
    """Build a system from its length and mass units (symbol, SI per unit); the rest is derived."""
    (l_symbol, metres), (m_symbol, kilograms) = length, mass
    units = {
        "length": DisplayUnit(l_symbol, metres),
        "mass": DisplayUnit(m_symbol, kilograms),
        "volume": DisplayUnit(f"{l_symbol}^3", metres**3),
        "density": DisplayUnit(*density),
        "inertia": DisplayUnit(f"{m_symbol}*{l_symbol}^2", kilograms * metres**2),
        "angular_velocity": DisplayUnit("rad/s", 1.0),
        "angular_momentum": DisplayUnit(f"{m_symbol}*{l_symbol}^2/s", kilograms * metres**2),
        "velocity": DisplayUnit(f"{l_symbol}/s", metres),
        "energy": DisplayUnit(*energy),
    }
    return DisplaySystem(name, description, units)


_INCH = LENGTH_UNITS["in"]
_POUND_FORCE = KILOGRAMS_PER_POUND * STANDARD_GRAVITY  # newtons per lbf (exact)

#: The display systems of ``--show-units``, by name (matched case-insensitively).
DISPLAY_SYSTEMS: dict[str, DisplaySystem] = {
    system.name: system
    for system in (
        _system("SI", "metre, kilogram, second (the JSON units)", ("m", 1.0), ("kg", 1.0),
                density=("kg/m^3", 1.0), energy=("J", 1.0)),
        _system("mm-g", "millimetre and gram (density in g/cm^3)", ("mm", 1e-3), ("g", 1e-3),
                density=("g/cm^3", 1e3), energy=("J", 1.0)),
        _system("mm-kg", "millimetre and kilogram (density in kg/m^3)", ("mm", 1e-3), ("kg", 1.0),
                density=("kg/m^3", 1.0), energy=("J", 1.0)),
        _system("in-lb", "inch and pound mass (energy in in*lbf)", ("in", _INCH), ("lb", KILOGRAMS_PER_POUND),
                density=("lb/in^3", KILOGRAMS_PER_POUND / _INCH**3), energy=("in*lbf", _INCH * _POUND_FORCE)),
    )
}

DEFAULT_DISPLAY_SYSTEM = "SI"


def display_system(name: str) -> DisplaySystem:
    """Return the display system called ``name`` (case-insensitive); raise :class:`UnitError` if unknown."""
    key = name.strip().lower() if isinstance(name, str) else ""
    for system_name, system in DISPLAY_SYSTEMS.items():
        if system_name.lower() == key:
            return system
    raise UnitError(str(name), tuple(DISPLAY_SYSTEMS))
