"""Length units and their conversion to SI, in one place.

Meshes carry no unit; the user declares it (CAD exports are most often in
millimetres, which is the default). Lengths are converted to metres once, at
load; everything inside meshprops is SI (m, kg, s).
"""

from __future__ import annotations

from .errors import UnitError

#: metres per unit (exact by definition: 1 in = 25.4 mm, 1 ft = 12 in; common practice)
LENGTH_UNITS: dict[str, float] = {
    "m": 1.0,
    "cm": 0.01,
    "mm": 0.001,
    "in": 0.0254,
    "ft": 0.3048,
}

DEFAULT_LENGTH_UNIT = "mm"

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


def metres_per(unit: str) -> float:
    """Return how many metres one ``unit`` is; raise :class:`UnitError` if unknown."""
    try:
        return LENGTH_UNITS[unit]
    except KeyError:
        raise UnitError(unit, tuple(LENGTH_UNITS)) from None


def rpm_to_rad_per_s(rpm: float) -> float:
    """Convert revolutions per minute to rad/s (2π/60 rad/s per rpm)."""
    import math

    return rpm * 2.0 * math.pi / 60.0
