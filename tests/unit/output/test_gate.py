"""The gate's serializers and text: verdicts, the budget table, a gate run's text."""

import json

import numpy as np
import pytest

from meshprops.gate.budget import BudgetItem, roll_up
from meshprops.gate.rules import FAIL, Verdict
from meshprops.output.gate import (
    budget_to_dict,
    render_budget_table,
    render_gate_text,
    verdict_to_dict,
)


def test_a_verdict_has_the_contract_keys_in_plain_json():
    verdict = Verdict("baseline", "center_of_mass_shift", (None, 1e-4), 2e-4, "m", FAIL, source="a.stl",
                      old=np.zeros(3), new=np.array([2e-4, 0, 0]), change=2e-4, message="moved")  # fmt: skip
    doc = verdict_to_dict(verdict)
    assert list(doc)[:4] == ["rule", "quantity", "limit", "value"] and doc["verdict"] == "fail"
    assert doc["limit"] == [None, 1e-4] and doc["old"] == [0.0, 0.0, 0.0] and doc["new"][0] == 2e-4
    json.dumps(doc, allow_nan=False)  # plain data only


def _rollup():
    items = [
        BudgetItem("exports/chassis.stl", "structure", "calculated", 0.40, 0.05, "exports/chassis.stl"),
        BudgetItem("harness", "wiring", "estimated", 0.10, 0.20, "configuration"),
    ]
    return roll_up("rover", 0.60, [("structure", 0.40), ("wiring", 0.15)], items, growth_allowance_source="test table")


def test_budget_dict_and_table_agree():
    doc = budget_to_dict(_rollup())
    structure, wiring = doc["subsystems"]
    assert structure["predicted_mass"] == pytest.approx(0.42)  # 0.40 x 1.05
    assert structure["verdict"] == "fail" and wiring["verdict"] == "pass" and doc["passed"] is False
    table = render_budget_table(doc)
    row = next(line for line in table.splitlines() if line.startswith("structure"))
    assert row.split()[-4:] == ["0.4000", "-0.0200", "-5.0%", "FAIL"]
    assert "  harness" in table and "20.0%" in table and "source: test table" in table
    assert "FAIL budget: subsystem 'structure'" in table and "weighing" in table
    product = next(line for line in table.splitlines() if line.startswith("product rover"))
    assert product.split()[-1] == "PASS"  # 0.42 + 0.12 = 0.54 <= 0.60


def test_gate_text_says_what_happened_to_each_file():
    doc = {
        "files": [
            {"source": "a.stl", "mesh": None, "status": "unchanged", "valid": True, "findings": [], "rules": []},
            {"source": "b.stl", "mesh": {"faces": 12, "vertices": 8, "shells": 1, "length_unit": "mm"}, "status": "new",
             "valid": True, "findings": [], "rules": [
                 {"rule": "expected_mass", "verdict": "fail", "message": "mass 0.2 kg is outside the limit [0.1, 0.15] kg"}]},
        ],
        "summary": {"files": 2, "valid": 2, "errors": 0, "warnings": 0, "failed_rules": 1, "unchanged": 1, "changed": 0, "new": 1},
        "gate": {"passed": False},
        "budget": None,
    }  # fmt: skip
    text = render_gate_text(doc)
    assert "a.stl  [unchanged: bytes and settings as recorded in the baseline, not read again]" in text
    assert "new: not in the baseline" in text
    assert "FAIL      expected_mass" in text and "b.stl: mass 0.2 kg is outside" in text
    assert text.rstrip().endswith("gate FAILED")
