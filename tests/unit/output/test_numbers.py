"""Round-off printed as 0 relative to the quantity's own scale; significant-digit formatting."""

from __future__ import annotations

import math

import numpy as np
import pytest

from meshprops.output.numbers import (
    ROUND_OFF_RELATIVE,
    check_digits,
    clean,
    clean_float,
    format_clean,
    format_number,
)


def test_round_off_in_a_tensor_becomes_zero():
    tensor = np.array([[1e-3, 5.51454e-19, 0.0], [5.51454e-19, 2e-3, -3e-16], [0.0, -3e-16, 3e-3]])
    cleaned = clean(tensor)
    assert cleaned[0, 1] == 0.0 and cleaned[1, 2] == 0.0
    assert cleaned[0, 0] == 1e-3 and cleaned[2, 2] == 3e-3
    assert format_clean(tensor)[0] == ["0.001", "0", "0"]


def test_the_threshold_is_relative_to_the_scale():
    assert ROUND_OFF_RELATIVE == 1e-12
    assert clean([1.0, 0.99e-12])[1] == 0.0
    assert clean([1.0, 1.01e-12])[1] == 1.01e-12
    # Small quantities keep their digits: the scale is the quantity's own, not an absolute one.
    assert list(clean([3e-20, 1e-20])) == [3e-20, 1e-20]
    # A caller-given scale (the part's size for a centre of mass near the origin).
    assert clean(1e-19, scale=0.1) == 0.0
    assert clean(1e-19) == 1e-19


def test_negative_zero_prints_as_zero():
    assert format_number(-0.0) == "0"
    assert format_clean(-1e-30, scale=1.0) == "0"
    assert math.copysign(1.0, clean(-0.0)) == 1.0


@pytest.mark.parametrize(
    "value, digits, text",
    [(math.pi, 3, "3.14"), (math.pi, 6, "3.14159"), (123456789.0, 3, "1.23e+08"), (0.000123456, 2, "0.00012"),
     (1.0, 6, "1"), (0.1 + 0.2, 17, "0.30000000000000004")],
)
def test_significant_digits(value, digits, text):
    assert format_number(value, digits) == text


@pytest.mark.parametrize("digits", [0, 18, -1, 2.5, True, "6"])
def test_digits_out_of_range_are_refused(digits):
    with pytest.raises(ValueError, match="digits"):
        check_digits(digits)


@pytest.mark.parametrize("value", [math.inf, -math.inf, math.nan])
def test_non_finite_numbers_are_never_formatted(value):
    with pytest.raises(ValueError, match="non-finite"):
        format_number(value)


def test_clean_float_for_simulator_files():
    assert clean_float(5.5e-19, scale=1e-3) == 0.0
    assert clean_float(0.1 + 0.2, scale=1.0) == 0.1 + 0.2  # 17 digits keep the exact float
    assert clean_float(0.1 + 0.2, scale=1.0, digits=6) == 0.3
