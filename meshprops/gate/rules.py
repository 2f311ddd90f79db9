"""The gate's verdicts, and the rules of ``[[rule]]`` entries applied to a part's mass properties.

Every limit is a closed interval ``(low, high)`` in SI units, either side
``None`` when open; every value is one number, so a JSON consumer reads each
verdict the same way: ``{rule, quantity, limit: [low, high], value, unit, verdict}``.
A baseline comparison also carries ``old``, ``new`` and ``change``; a budget
verdict names its ``subject`` (the subsystem or the product).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

PASS = "pass"
FAIL = "fail"

#: ``rule`` values of a verdict: the kind of check that produced it.
RULE_EXPECTED_MASS = "expected_mass"
RULE_CENTER_OF_MASS_BOX = "center_of_mass_box"
RULE_CENTER_OF_MASS_DISTANCE = "center_of_mass_distance"
RULE_PRINCIPAL_MOMENTS = "principal_moments"
RULE_BASELINE = "baseline"
RULE_BUDGET = "budget"

_AXES = ("x", "y", "z")


@dataclass(frozen=True, slots=True, eq=False)
class Verdict:
    """One checked quantity.

    Attributes
    ----------
    rule : the kind of check (``expected_mass``, ``center_of_mass_box``,
        ``center_of_mass_distance``, ``principal_moments``, ``baseline``, ``budget``)
    quantity : what was compared, e.g. ``mass``, ``center_of_mass_x``,
        ``principal_moment_1``, ``center_of_mass_shift``, ``margin``
    limit : ``(low, high)``, SI in ``unit``; ``None`` for an open side
    value : the value compared with the limit, SI in ``unit``
    unit : unit of ``limit`` and ``value`` (``kg``, ``m``, ``kg*m^2`` or ``1`` for a ratio)
    verdict : ``"pass"`` or ``"fail"``
    source : the file the verdict is about (``None`` for a budget verdict)
    subject : a budget verdict's subsystem or product name
    old, new, change : a baseline verdict's recorded value, new value (numbers or
        (3,) vectors, SI) and their change (``new - old``; for a vector, the distance)
    key : the configuration key the limit comes from (``rule[0].expected_mass``), if any
    message : one line saying it in words
    """

    rule: str
    quantity: str
    limit: tuple
    value: float
    unit: str
    verdict: str
    source: str | None = None
    subject: str | None = None
    old: object = None
    new: object = None
    change: float | None = None
    key: str | None = None
    message: str = ""

    @property
    def failed(self) -> bool:
        return self.verdict == FAIL


def within(value: float, low: float | None, high: float | None) -> bool:
    """Whether ``low <= value <= high`` (an open side always holds)."""
    return (low is None or value >= low) and (high is None or value <= high)


def _interval_text(low, high, unit: str) -> str:
    if low is not None and high is not None:
        return f"[{low:.6g}, {high:.6g}] {unit}"
    if low is not None:
        return f">= {low:.6g} {unit}"
    return f"<= {high:.6g} {unit}"


def interval_verdict(rule: str, quantity: str, value: float, low, high, unit: str, *, source=None, key=None) -> Verdict:
    """A verdict on ``value`` against the closed interval ``[low, high]``."""
    value = float(value)
    passed = within(value, low, high)
    words = "within" if passed else "outside"
    message = f"{quantity} {value:.6g} {unit} is {words} the limit {_interval_text(low, high, unit)}"
    return Verdict(
        rule, quantity, (low, high), value, unit, PASS if passed else FAIL, source=source, key=key, message=message
    )


def apply_rule(rule, *, mass: float, center_of_mass, principal_moments, source: str | None = None) -> list[Verdict]:
    """The verdicts of one ``[[rule]]`` (a :class:`meshprops.gate.config.RuleSpec`) on a part.

    Parameters
    ----------
    rule : RuleSpec
        Limits in SI (kg, m, kg·m²).
    mass : float
        kg.
    center_of_mass : (3,) array_like
        m, in the mesh's axes.
    principal_moments : (3,) array_like
        kg·m², ascending.
    source : str, optional
        The file, carried into each verdict.

    Returns
    -------
    list of Verdict
        In the order: mass, centre-of-mass box (x, y, z), centre-of-mass
        distance, principal moments (1, 2, 3), each only when the rule sets it.
    """
    verdicts: list[Verdict] = []
    if rule.mass_limits is not None:
        low, high = rule.mass_limits
        verdicts.append(
            interval_verdict(RULE_EXPECTED_MASS, "mass", mass, low, high, "kg", source=source, key=f"{rule.key}.expected_mass")
        )
    center = np.asarray(center_of_mass, dtype=float)
    if rule.center_of_mass_min is not None or rule.center_of_mass_max is not None:
        for axis, name in enumerate(_AXES):
            low = None if rule.center_of_mass_min is None else float(rule.center_of_mass_min[axis])
            high = None if rule.center_of_mass_max is None else float(rule.center_of_mass_max[axis])
            verdicts.append(
                interval_verdict(
                    RULE_CENTER_OF_MASS_BOX, f"center_of_mass_{name}", center[axis], low, high, "m",
                    source=source, key=f"{rule.key}.center_of_mass_{'min' if low is not None else 'max'}",
                )
            )  # fmt: skip
    if rule.center_of_mass_near is not None:
        distance = float(np.linalg.norm(center - rule.center_of_mass_near))
        verdicts.append(
            interval_verdict(
                RULE_CENTER_OF_MASS_DISTANCE, "center_of_mass_distance", distance, None, rule.center_of_mass_within, "m",
                source=source, key=f"{rule.key}.center_of_mass_within",
            )
        )  # fmt: skip
    if rule.principal_moments_min is not None or rule.principal_moments_max is not None:
        moments = np.asarray(principal_moments, dtype=float)
        for index in range(3):
            low = None if rule.principal_moments_min is None else float(rule.principal_moments_min[index])
            high = None if rule.principal_moments_max is None else float(rule.principal_moments_max[index])
            verdicts.append(
                interval_verdict(
                    RULE_PRINCIPAL_MOMENTS, f"principal_moment_{index + 1}", moments[index], low, high, "kg*m^2",
                    source=source, key=f"{rule.key}.principal_moments_{'min' if low is not None else 'max'}",
                )
            )  # fmt: skip
    return verdicts
