"""The balance serializer and table: one dict feeds both, headline keys mirror the result."""

from __future__ import annotations

import json

import numpy as np
import pytest

from meshprops.output.balance import (
    BALANCE_CAUTIONS,
    balance_result_to_dict,
    grade_table_to_dict,
    render_balance_table,
)
from meshprops.physics.balance import BALANCE_GRADES, balance


def result(**options):
    settings = dict(axis_point=(0, 0, 0), axis_direction=(0, 0, 1), angular_speed=314.159, grade=6.3)
    settings.update(options)
    return balance(2.0, (2e-5, 0.0, 0.0), np.diag([0.01, 0.012, 0.02]), **settings)


def test_headline_keys_mirror_the_result_in_trade_units():
    value = result(correction_planes=(-0.02, 0.02))
    data = balance_result_to_dict(value)
    assert data["static_unbalance_g_mm"] == pytest.approx(value.static.unbalance.magnitude * 1e6)  # 1 kg·m = 1e6 g·mm
    assert data["couple_unbalance_g_mm2"] == pytest.approx(value.couple.unbalance.magnitude * 1e9)  # 1 kg·m² = 1e9 g·mm²
    assert data["permissible_unbalance_g_mm"] == pytest.approx(value.grade.permissible * 1e6)
    assert data["achieved_grade"] == value.grade.achieved_grade.value
    assert data["passes"] is value.grade.passes
    assert data["grade_check"]["permissible_specific_unbalance_g_mm_per_kg"] == pytest.approx(
        value.grade.permissible_offset * 1e6
    )
    json.dumps(data, allow_nan=False)  # plain JSON data, no NaN


def test_optional_sections_are_null_when_not_asked():
    data = balance_result_to_dict(result())
    assert data["correction"] is None and data["bearings"] is None and data["gyroscopic"] is None
    assert data["grade_check"]["basis"] == "static"
    text = render_balance_table(dict(data, source="part.stl"))
    assert "no correction planes" in text
    assert all(f"CAUTION: {caution}" in text for caution in BALANCE_CAUTIONS)


def test_grade_table_lists_every_grade_with_its_source():
    table = grade_table_to_dict()
    assert [g["grade"] for g in table["grades"]] == [g.value for g in BALANCE_GRADES]
    assert table["from_memory"] is True and "ISO 21940-11" in table["source"]
