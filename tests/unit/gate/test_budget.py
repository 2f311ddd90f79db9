"""Mass budget roll-up: predicted = basic x (1 + allowance), margins, verdicts, the default table."""

import pytest

from meshprops.gate.budget import (
    CALCULATED,
    DEFAULT_GROWTH_ALLOWANCE,
    ESTIMATED,
    MATURITIES,
    MEASURED,
    REMEMBERED_ALLOWANCE_RANGES,
    BudgetItem,
    growth_allowance_for,
    roll_up,
)
from meshprops.gate.rules import FAIL, PASS


def _item(name, subsystem, maturity, mass, override=None):
    return BudgetItem(name, subsystem, maturity, mass, growth_allowance_for(maturity, DEFAULT_GROWTH_ALLOWANCE, override), "test")


def test_predicted_mass_is_basic_times_one_plus_allowance():
    # hand arithmetic: 0.500 kg calculated at 5 % -> 0.525 kg; 0.100 kg estimated at 20 % -> 0.120 kg
    assert _item("a", "s", CALCULATED, 0.5).predicted_mass == pytest.approx(0.525)
    assert _item("b", "s", ESTIMATED, 0.1).predicted_mass == pytest.approx(0.120)
    assert _item("c", "s", MEASURED, 0.3).predicted_mass == pytest.approx(0.3)
    assert _item("d", "s", ESTIMATED, 0.1, override=0.5).predicted_mass == pytest.approx(0.15)


def test_margins_per_subsystem_and_product_by_hand():
    items = [
        _item("chassis", "structure", CALCULATED, 0.400),  # 0.420
        _item("harness", "structure", ESTIMATED, 0.050),  # 0.060
        _item("camera", "payload", MEASURED, 0.120),  # 0.120
        _item("gimbal", "payload", CALCULATED, 0.200),  # 0.210
    ]
    rollup = roll_up("rover", 1.0, [("structure", 0.50), ("payload", 0.30)], items)
    structure, payload = rollup.subsystems
    assert structure.predicted_mass == pytest.approx(0.480) and structure.margin == pytest.approx(0.020)
    assert structure.basic_mass == pytest.approx(0.450) and structure.growth == pytest.approx(0.030)
    assert payload.predicted_mass == pytest.approx(0.330) and payload.margin == pytest.approx(-0.030)
    assert structure.verdict.verdict == PASS and payload.verdict.verdict == FAIL
    assert payload.verdict.subject == "payload" and "payload" in payload.verdict.message
    assert payload.verdict.limit == (0.0, None) and payload.verdict.value == pytest.approx(-0.030)
    assert rollup.predicted_mass == pytest.approx(0.810) and rollup.margin == pytest.approx(0.190)
    assert rollup.margin_fraction == pytest.approx(0.19)
    assert [v.subject for v in rollup.verdicts] == ["structure", "payload", "rover"]
    assert rollup.failed and rollup.unallocated == pytest.approx(0.20) and rollup.notes == ()


def test_product_margin_fails_on_its_own_and_over_allocation_is_noted():
    items = [_item("a", "s1", CALCULATED, 0.5), _item("b", "s2", CALCULATED, 0.5)]
    rollup = roll_up("kit", 1.0, [("s1", 0.6), ("s2", 0.6)], items)  # each subsystem fine, product 1.05 > 1.0
    assert [v.verdict for v in rollup.verdicts] == [PASS, PASS, FAIL]
    assert rollup.verdicts[-1].subject == "kit" and rollup.unallocated == pytest.approx(-0.2)
    assert "more than the product" in rollup.notes[0]


def test_an_empty_subsystem_keeps_its_whole_allocation_and_zero_margin_passes():
    rollup = roll_up("p", 1.0, [("empty", 0.3), ("full", 0.525)], [_item("a", "full", CALCULATED, 0.5)])
    assert rollup.subsystems[0].margin == 0.3 and rollup.subsystems[1].margin == pytest.approx(0.0, abs=1e-15)
    exact = roll_up("p", 1.0, [("s", 0.5)], [BudgetItem("a", "s", MEASURED, 0.5, 0.0, "t")])
    assert exact.subsystems[0].margin == 0.0 and exact.subsystems[0].verdict.verdict == PASS


def test_unknown_subsystem_and_bad_allocation_are_refused():
    with pytest.raises(ValueError, match="unknown subsystem"):
        roll_up("p", 1.0, [("s", 1.0)], [_item("a", "t", CALCULATED, 0.1)])
    with pytest.raises(ValueError, match="> 0"):
        roll_up("p", 0.0, [("s", 1.0)], [])


def test_default_allowances_lie_in_the_cited_table_and_fall_with_maturity():
    # REMEMBERED_ALLOWANCE_RANGES: ANSI/AIAA S-120 mass growth allowance by design maturity, from memory
    # (see meshprops/gate/budget.py); the trade's rule that allowances shrink as a number matures is common practice.
    assert set(DEFAULT_GROWTH_ALLOWANCE) == set(MATURITIES) == set(REMEMBERED_ALLOWANCE_RANGES)
    for maturity in MATURITIES:
        low, high = REMEMBERED_ALLOWANCE_RANGES[maturity]
        assert low <= DEFAULT_GROWTH_ALLOWANCE[maturity] <= high, maturity
    values = [DEFAULT_GROWTH_ALLOWANCE[m] for m in MATURITIES]
    assert values == sorted(values, reverse=True) and values[0] > values[1] > values[2] == 0.0
    with pytest.raises(ValueError, match="maturity"):
        growth_allowance_for("guessed")
