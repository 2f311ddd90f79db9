"""A mass budget as the trade keeps one: maturity, growth allowance, allocations, margins.

Each item (a covered mesh file, a body or point mass of an assembly manifest,
or a mass typed into the configuration) has a *basic mass* (kg), a *maturity*
and a subsystem. The maturity sets its *growth allowance*, the fraction by
which an item of that maturity is expected to grow before it is built (common
practice: the less mature the number, the larger the allowance)::

    predicted mass = basic mass × (1 + growth allowance)
    margin         = allocation − predicted mass      (per subsystem and for the product)

A negative margin fails the gate and names the subsystem (or the product).

Maturities (our own three names, coarser than the standard's categories):

* ``estimated`` — a number from a sketch, a similar part or a catalogue, no geometry;
* ``calculated`` — calculated from the geometry (a closed mesh × a density);
* ``measured`` — weighed hardware.

Default growth allowances and their source
------------------------------------------
The trade's usual source is the mass properties control standard for space
systems, ANSI/AIAA S-120 (S-120A-2015; its predecessor AIAA R-020A-1999), whose
mass-growth-allowance table lists percentages by design-maturity category
(estimated, layout, pre-release drawings, released drawings/calculated,
existing hardware, actual/measured) and by subsystem and mass range. The
ranges in :data:`REMEMBERED_ALLOWANCE_RANGES` are **from memory** of the shape
of that table (the spread over its subsystem rows for the category our maturity
corresponds to), not re-read from the document while writing this (no network
access); the defaults are representative values inside them. They are a
starting point only: set your programme's own table in ``[budget]
growth_allowance`` and say where it comes from in ``growth_allowance_source``.
"""

from __future__ import annotations

from dataclasses import dataclass

from .rules import FAIL, PASS, RULE_BUDGET, Verdict

ESTIMATED = "estimated"
CALCULATED = "calculated"
MEASURED = "measured"
#: From least to most mature.
MATURITIES = (ESTIMATED, CALCULATED, MEASURED)

#: (low, high) growth allowance, as fractions, for the standard's category each of our
#: maturities corresponds to. From memory of ANSI/AIAA S-120 (see the module docstring):
#: estimated ~ category "estimated" (about 18 % to 35 % over its subsystem rows);
#: calculated ~ "calculated from released drawings" (about 2 % to 10 %);
#: measured ~ "actual" (0 %: a weighed mass has no growth allowance; scale uncertainty aside).
REMEMBERED_ALLOWANCE_RANGES: dict[str, tuple[float, float]] = {
    ESTIMATED: (0.18, 0.35),
    CALCULATED: (0.02, 0.10),
    MEASURED: (0.0, 0.0),
}

#: The defaults in force when the configuration does not override them.
DEFAULT_GROWTH_ALLOWANCE: dict[str, float] = {ESTIMATED: 0.20, CALCULATED: 0.05, MEASURED: 0.0}

DEFAULT_GROWTH_ALLOWANCE_SOURCE = (
    "meshprops defaults, representative values inside the ranges of the ANSI/AIAA S-120 mass growth "
    "allowance table by design maturity (from memory, not re-checked against the standard): "
    "estimated 20 %, calculated from geometry 5 %, measured 0 %"
)


@dataclass(frozen=True, slots=True, eq=False)
class BudgetItem:
    """One item of the budget.

    Attributes
    ----------
    name : the item's name (a file path, a manifest body, or a typed-in name)
    subsystem : the subsystem it belongs to
    maturity : ``estimated``, ``calculated`` or ``measured``
    basic_mass : kg
    growth_allowance : fraction (0.05 is 5 %)
    source : where the basic mass comes from (a file, ``manifest#body``, or ``configuration``)
    """

    name: str
    subsystem: str
    maturity: str
    basic_mass: float
    growth_allowance: float
    source: str

    @property
    def growth(self) -> float:
        """kg: ``basic_mass × growth_allowance``."""
        return self.basic_mass * self.growth_allowance

    @property
    def predicted_mass(self) -> float:
        """kg: ``basic_mass × (1 + growth_allowance)``."""
        return self.basic_mass * (1.0 + self.growth_allowance)


@dataclass(frozen=True, slots=True, eq=False)
class SubsystemRollup:
    """A subsystem's sums (kg) and its margin against its allocation."""

    name: str
    allocation: float
    items: tuple[BudgetItem, ...]
    basic_mass: float
    growth: float
    predicted_mass: float
    margin: float
    margin_fraction: float
    verdict: Verdict


@dataclass(frozen=True, slots=True, eq=False)
class BudgetRollup:
    """The whole budget: subsystems, product sums (kg), margins and verdicts.

    ``unallocated`` is the product allocation minus the subsystems' allocations
    (negative: the subsystems were promised more than the product has; said in
    ``notes``). ``verdicts`` holds one margin verdict per subsystem, then the product's.
    """

    name: str
    allocation: float
    subsystems: tuple[SubsystemRollup, ...]
    basic_mass: float
    growth: float
    predicted_mass: float
    margin: float
    margin_fraction: float
    unallocated: float
    growth_allowance: dict
    growth_allowance_source: str
    verdicts: tuple[Verdict, ...]
    notes: tuple[str, ...]

    @property
    def failed(self) -> bool:
        return any(verdict.failed for verdict in self.verdicts)


def growth_allowance_for(maturity: str, table: dict | None = None, override: float | None = None) -> float:
    """The growth allowance (fraction) of an item: its own ``override``, else ``table[maturity]``."""
    if override is not None:
        return float(override)
    table = DEFAULT_GROWTH_ALLOWANCE if table is None else table
    if maturity not in table:
        raise ValueError(f"maturity: expected one of {', '.join(MATURITIES)}, got {maturity!r}")
    return float(table[maturity])


def _margin_verdict(subject: str, what: str, allocation: float, predicted: float) -> Verdict:
    margin = allocation - predicted
    passed = margin >= 0.0
    message = (
        f"{what} {subject!r}: predicted {predicted:.6g} kg against an allocation of {allocation:.6g} kg, "
        f"margin {margin:+.6g} kg ({margin / allocation * 100:+.3g} %)"
    )
    return Verdict(
        RULE_BUDGET, "margin", (0.0, None), margin, "kg", PASS if passed else FAIL, subject=subject, message=message
    )


def roll_up(
    name: str,
    allocation: float,
    subsystems,
    items,
    *,
    growth_allowance: dict | None = None,
    growth_allowance_source: str = DEFAULT_GROWTH_ALLOWANCE_SOURCE,
) -> BudgetRollup:
    """Sum a budget.

    Parameters
    ----------
    name : str
        The product's name.
    allocation : float
        kg, the product's allocated mass (> 0).
    subsystems : iterable of (name, allocation)
        Every subsystem with its allocation in kg, in report order.
    items : iterable of BudgetItem
        Every item; each names one of ``subsystems``.
    growth_allowance : dict, optional
        The table in force (reported with the roll-up; items carry their own value).
    growth_allowance_source : str

    Raises
    ------
    ValueError
        An item of an undeclared subsystem, or a non-positive allocation.
    """
    subsystems = [(str(n), float(a)) for n, a in subsystems]
    items = list(items)
    if allocation <= 0 or any(a <= 0 for _, a in subsystems):
        raise ValueError("allocations must be > 0 kg")
    declared = {n for n, _ in subsystems}
    for item in items:
        if item.subsystem not in declared:
            raise ValueError(f"item {item.name!r}: unknown subsystem {item.subsystem!r}")
    rolled = []
    for subsystem_name, subsystem_allocation in subsystems:
        members = tuple(item for item in items if item.subsystem == subsystem_name)
        basic = sum(item.basic_mass for item in members)
        growth = sum(item.growth for item in members)
        predicted = sum(item.predicted_mass for item in members)
        margin = subsystem_allocation - predicted
        rolled.append(
            SubsystemRollup(
                subsystem_name, subsystem_allocation, members, basic, growth, predicted, margin,
                margin / subsystem_allocation, _margin_verdict(subsystem_name, "subsystem", subsystem_allocation, predicted),
            )
        )  # fmt: skip
    basic = sum(s.basic_mass for s in rolled)
    growth = sum(s.growth for s in rolled)
    predicted = sum(s.predicted_mass for s in rolled)
    unallocated = allocation - sum(a for _, a in subsystems)
    notes = []
    if unallocated < 0:
        notes.append(
            f"the subsystems' allocations add up to {allocation - unallocated:.6g} kg, "
            f"more than the product's {allocation:.6g} kg"
        )
    product = _margin_verdict(name, "product", allocation, predicted)
    return BudgetRollup(
        name, float(allocation), tuple(rolled), basic, growth, predicted, allocation - predicted,
        (allocation - predicted) / allocation, unallocated,
        dict(DEFAULT_GROWTH_ALLOWANCE if growth_allowance is None else growth_allowance), growth_allowance_source,
        tuple(s.verdict for s in rolled) + (product,), tuple(notes),
    )  # fmt: skip
