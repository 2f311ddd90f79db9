"""Option text -> values, the only place "X,Y,Z", rpm and point names are read. One rev/min is
2 pi / 60 rad/s (definition of the revolution and the minute, common practice)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from meshprops.cli.options import angular_velocity, manifest_point, parse_vector
from meshprops.errors import InputValueError
from meshprops.geometry import shapes
from meshprops.io.writers import write_binary_stl
from meshprops.measure.manifest import load_manifest


@pytest.mark.parametrize(
    ("text", "expected"),
    [("1,2,3", [1.0, 2.0, 3.0]), (" -0.5 , 1e3,7 ", [-0.5, 1000.0, 7.0]), ("0,0,-25.4", [0.0, 0.0, -25.4])],
)
def test_parse_vector_reads_three_numbers(text, expected):
    vector = parse_vector(text, "--about")
    assert vector.dtype == np.float64 and vector.shape == (3,)
    np.testing.assert_array_equal(vector, expected)


def test_parse_vector_passes_none_through():
    assert parse_vector(None, "--about") is None


@pytest.mark.parametrize("text", ["1,2", "1,2,3,4", "1;2;3", "a,b,c", "1,nan,3", "inf,0,0", "", "1 2 3"])
def test_parse_vector_refuses_anything_but_three_finite_numbers(text):
    with pytest.raises(InputValueError) as caught:
        parse_vector(text, "--velocity")
    assert caught.value.name == "--velocity" and caught.value.found == text
    assert "X,Y,Z" in str(caught.value)


def test_spin_is_taken_as_rad_per_s():
    np.testing.assert_array_equal(angular_velocity("0,0,12.5", None, None), [0.0, 0.0, 12.5])


def test_rpm_about_an_axis_is_converted_and_the_axis_normalized():
    omega = angular_velocity(None, 60.0, "0,3,4")
    # 60 rev/min = 1 rev/s = 2 pi rad/s, along (0, 3, 4)/5.
    np.testing.assert_allclose(omega, 2.0 * math.pi * np.array([0.0, 0.6, 0.8]), rtol=1e-15)
    np.testing.assert_allclose(angular_velocity(None, -30.0, "1,0,0"), [-math.pi, 0.0, 0.0], rtol=1e-15)


def test_no_spin_at_all_is_none():
    assert angular_velocity(None, None, None) is None


@pytest.mark.parametrize(
    ("spin", "rpm", "axis", "match"),
    [
        ("0,0,1", 100.0, "0,0,1", "not both"),
        (None, 100.0, None, "an --axis"),
        (None, None, "0,0,1", "to be used with --rpm"),
        (None, 100.0, "0,0,0", "non-zero direction"),
        (None, float("inf"), "0,0,1", "finite speed"),
        (None, float("nan"), "0,0,1", "finite speed"),
    ],
    ids=["spin-and-rpm", "rpm-without-axis", "axis-without-rpm", "zero-axis", "infinite-rpm", "nan-rpm"],
)
def test_spin_option_combinations_that_make_no_sense_are_refused(spin, rpm, axis, match):
    with pytest.raises(InputValueError, match=match):
        angular_velocity(spin, rpm, axis)


@pytest.fixture
def manifest(tmp_path):
    write_binary_stl(tmp_path / "cube.stl", shapes.triangles_of(*shapes.box((10.0, 10.0, 10.0))))
    (tmp_path / "one.toml").write_text(
        '[assembly]\nlength_unit = "cm"\nmanifest_version = 1\n[[body]]\nname = "cube"\nmesh = "cube.stl"\ndensity = 1000\n'
        "[points]\nmast_base = [1, 2, 3]\n",
        encoding="utf-8",
    )
    return load_manifest(tmp_path / "one.toml")


def test_manifest_point_keeps_a_name_or_reads_numbers_in_the_manifest_unit(manifest):
    assert manifest_point(manifest, None) is None
    assert manifest_point(manifest, " mast_base ") == "mast_base"
    np.testing.assert_array_equal(manifest_point(manifest, "10,0,-5"), [10.0, 0.0, -5.0])  # stays in cm


def test_manifest_point_names_the_known_points_when_neither(manifest):
    with pytest.raises(InputValueError) as caught:
        manifest_point(manifest, "mast_top")
    message = str(caught.value)
    assert "X,Y,Z in cm or a named point (mast_base)" in message and caught.value.source == manifest.path
