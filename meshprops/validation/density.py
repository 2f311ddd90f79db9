"""Is a density plausible for a solid engineering material, and if not, which unit slip explains it?

The range: the lightest solids parts are made of are rigid foams (expanded
polystyrene insulation board from about 10 kg/m^3, EN 13163 grades; from
memory), the densest is osmium at about 22,590 kg/m^3 (CRC Handbook of
Chemistry and Physics, table of the densities of the elements; from memory),
with iridium close behind. So a density outside 10-23,000 kg/m^3 is almost
certainly a unit slip. The usual slips (common practice) are a density typed
in g/cm^3 (7.85 for steel), lb/in^3 (0.284) or lb/ft^3 (490) where kg/m^3 is
expected.

This module is pure: it returns an assessment (data); the validation report
turns it into an ``implausible_density`` warning (:func:`density_findings`).
Densities that are zero, negative or not finite are refused outright
(:func:`meshprops.physics.mass.check_density`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..materials import MATERIALS
from ..physics.mass import check_density
from ..units import KILOGRAMS_PER_POUND, LENGTH_UNITS
from .findings import WARNING, Finding

#: (lowest, highest) density of solid engineering materials, kg/m^3 (see the module docstring).
PLAUSIBLE_DENSITY = (10.0, 23_000.0)

#: kg/m^3 per unit of each usual slip (exact from 1 lb = 0.45359237 kg, 1 in = 25.4 mm, 1 ft = 12 in).
SLIP_UNITS: dict[str, float] = {
    "g/cm^3": 1000.0,
    "lb/in^3": KILOGRAMS_PER_POUND / LENGTH_UNITS["in"] ** 3,
    "lb/ft^3": KILOGRAMS_PER_POUND / LENGTH_UNITS["ft"] ** 3,
}


@dataclass(frozen=True, slots=True, eq=False)
class SlipCandidate:
    """One reading of a density typed in another unit.

    Attributes
    ----------
    unit : the unit it may have been typed in (``"g/cm^3"``, ...)
    density : float, kg/m^3, the value read in that unit
    nearest_material : name of the table material nearest to ``density``
    relative_distance : float, |density / nearest density - 1|
    """

    unit: str
    density: float
    nearest_material: str
    relative_distance: float


@dataclass(frozen=True, slots=True, eq=False)
class DensityAssessment:
    """The verdict on one density (kg/m^3).

    Attributes
    ----------
    density : float, kg/m^3, as given
    plausible : inside :data:`PLAUSIBLE_DENSITY`
    candidates : slips that would bring it inside the range, most likely first
        (nearest to a material of the table)
    message : one sentence for a person, empty when plausible
    """

    density: float
    plausible: bool
    candidates: tuple[SlipCandidate, ...]
    message: str


def _nearest_material(density: float) -> tuple[str, float]:
    best = min(MATERIALS.values(), key=lambda material: abs(math.log(density / material.density)))
    return best.name, abs(density / best.density - 1.0)


#: A slip reading names a table material only when it is this close to it (relative).
NEAR_MATERIAL_RELATIVE = 0.05


def _reading(candidate: SlipCandidate) -> str:
    text = f"as {candidate.unit} it is {candidate.density:.4g} kg/m^3"
    if candidate.relative_distance <= NEAR_MATERIAL_RELATIVE:
        text += f" (like {candidate.nearest_material})"
    return text


def assess_density(density: float) -> DensityAssessment:
    """Say whether ``density`` (kg/m^3, finite, > 0) is plausible and, if not, which slips explain it."""
    density = check_density(density)
    low, high = PLAUSIBLE_DENSITY
    if low <= density <= high:
        return DensityAssessment(density, True, (), "")
    candidates = []
    for unit, factor in SLIP_UNITS.items():
        reading = density * factor
        if low <= reading <= high:
            material, distance = _nearest_material(reading)
            candidates.append(SlipCandidate(unit, reading, material, distance))
    candidates.sort(key=lambda candidate: candidate.relative_distance)
    side = "below" if density < low else "above"
    message = (
        f"density {density:.6g} kg/m^3 is {side} the range of solid engineering materials "
        f"({low:g}-{high:,.0f} kg/m^3, rigid foams to osmium)"
    )
    if candidates:
        readings = "; ".join(_reading(candidate) for candidate in candidates)
        message += f"; typed in another unit? {readings}"
    else:
        message += "; check the value and its unit (kg/m^3 expected)"
    return DensityAssessment(density, False, tuple(candidates), message)


def density_findings(density: float) -> tuple[Finding, ...]:
    """``(implausible_density warning,)`` when ``density`` (kg/m^3) is outside the range, else ``()``."""
    verdict = assess_density(density)
    return () if verdict.plausible else (Finding("implausible_density", WARNING, 1, verdict.message),)
