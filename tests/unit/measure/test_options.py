"""MeasureOptions: one frozen value holding every measuring setting, checked when built;
``build`` replaces named fields and refuses names that are not fields."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from meshprops.errors import InputValueError, UnitError
from meshprops.measure.options import DEFAULT_DENSITY, MeasureOptions


def test_defaults():
    options = MeasureOptions()
    assert options.length_unit == "mm"  # CAD exports are most often in mm (common practice)
    assert options.density is None and options.about is None and options.angular_velocity is None
    assert options.com_velocity is None and options.repair is False
    assert DEFAULT_DENSITY == 1000.0  # water, kg/m^3 (common practice)


def test_is_frozen():
    options = MeasureOptions()
    with pytest.raises(dataclasses.FrozenInstanceError):
        options.density = 2700.0


def test_vectors_become_float64_arrays():
    options = MeasureOptions(about=[1, 2, 3], angular_velocity=(0, 0, 10), com_velocity=np.array([1.5, 0, 0]))
    for vector in (options.about, options.angular_velocity, options.com_velocity):
        assert isinstance(vector, np.ndarray) and vector.dtype == np.float64 and vector.shape == (3,)
    np.testing.assert_array_equal(options.about, [1.0, 2.0, 3.0])


@pytest.mark.parametrize("field", ["about", "angular_velocity", "com_velocity"])
@pytest.mark.parametrize("value", [[1, 2], [1, 2, 3, 4], [0, np.nan, 0], [np.inf, 0, 0], "1,2,3", [[1, 2, 3]], ["a", 0, 0]])
def test_a_vector_that_is_not_three_finite_numbers_is_refused(field, value):
    with pytest.raises(InputValueError, match="three finite numbers"):
        MeasureOptions(**{field: value})


def test_an_unknown_unit_fails_before_any_file_is_read():
    with pytest.raises(UnitError, match="furlong"):
        MeasureOptions(length_unit="furlong")


@pytest.mark.parametrize("samples", [-1, 2.5, True, "100"])
def test_overlap_samples_must_be_a_whole_number_at_least_zero(samples):
    with pytest.raises(InputValueError, match="overlap samples"):
        MeasureOptions(overlap_samples=samples)


def test_zero_overlap_samples_is_allowed():
    assert MeasureOptions(overlap_samples=0).overlap_samples == 0
    assert MeasureOptions(overlap_samples=np.int64(7)).overlap_samples == 7


def test_build_without_options_uses_the_defaults_with_the_settings():
    built = MeasureOptions.build(density=2700.0, repair=True)
    assert built.density == 2700.0 and built.repair is True and built.length_unit == "mm"


def test_build_replaces_only_the_named_fields_and_leaves_the_original_alone():
    original = MeasureOptions(length_unit="in", density=7850.0, about=[0, 0, 1])
    built = MeasureOptions.build(original, density=1240.0, angular_velocity=[0, 0, 3])
    assert built is not original
    assert built.density == 1240.0 and built.length_unit == "in"
    np.testing.assert_array_equal(built.about, [0, 0, 1])
    np.testing.assert_array_equal(built.angular_velocity, [0, 0, 3])
    assert original.density == 7850.0 and original.angular_velocity is None


def test_build_without_settings_returns_the_options_themselves():
    original = MeasureOptions(density=2.0)
    assert MeasureOptions.build(original) is original


def test_build_validates_the_replaced_fields():
    with pytest.raises(InputValueError):
        MeasureOptions.build(MeasureOptions(), about=[1, 2])


def test_build_refuses_unknown_names_and_lists_the_known_ones():
    with pytest.raises(TypeError) as caught:
        MeasureOptions.build(MeasureOptions(), densty=2700.0, units="mm")
    message = str(caught.value)
    assert "unknown measure option(s) densty, units" in message
    for field in dataclasses.fields(MeasureOptions):
        assert field.name in message
