"""One body: mesh -> validated mass properties. A cube of side a and density rho has mass
rho a^3 and, about its centre, I = m a^2 / 6 = rho a^5 / 6 on every axis with no products
(engineering handbook table of mass moments of inertia, solid cube / rectangular prism
m (b^2 + c^2) / 12; from memory)."""

from __future__ import annotations

import numpy as np
import pytest

from meshprops.errors import InputValueError, InvalidMeshError, UnitError
from meshprops.geometry import shapes
from meshprops.io import mesh_from_arrays
from meshprops.io.writers import write_obj
from meshprops.measure.body import BodyMeasurement, measure_file, measure_mesh
from meshprops.measure.options import DEFAULT_DENSITY, MeasureOptions

SIDE_MM = 40.0
SIDE = SIDE_MM / 1000.0  # m
DENSITY = 2700.0  # kg/m^3
CENTER_MM = (10.0, -20.0, 5.0)


@pytest.fixture
def cube():
    vertices, faces = shapes.box((SIDE_MM,) * 3, CENTER_MM)
    return mesh_from_arrays(vertices, faces, length_unit="mm", source="cube")


def test_cube_mass_centre_and_inertia_against_the_handbook(cube):
    body = measure_mesh(cube, density=DENSITY)
    assert isinstance(body, BodyMeasurement) and body.valid
    properties = body.properties
    assert properties.volume == pytest.approx(SIDE**3, rel=1e-13)
    assert properties.mass == pytest.approx(DENSITY * SIDE**3, rel=1e-13)  # m = rho a^3
    np.testing.assert_allclose(properties.center_of_mass, np.array(CENTER_MM) / 1000.0, rtol=0, atol=1e-16)
    expected = DENSITY * SIDE**5 / 6.0  # I = rho a^5 / 6 (handbook, see module docstring)
    np.testing.assert_allclose(properties.inertia_about_com, expected * np.eye(3), rtol=0, atol=1e-12 * expected)
    np.testing.assert_allclose(body.principal.moments, [expected] * 3, rtol=1e-12)
    assert body.density == DENSITY and body.density_assumed is False
    assert body.file_format == "array" and body.length_unit == "mm" and body.face_count == 12
    assert body.point is None and body.inertia_about_point is None and body.spin is None


def test_options_and_keyword_settings_give_the_same_numbers(cube):
    omega, about = [0.0, 3.0, 40.0], [0.1, 0.0, -0.02]
    with_options = measure_mesh(cube, MeasureOptions(density=DENSITY, about=about, angular_velocity=omega))
    with_settings = measure_mesh(cube, density=DENSITY, about=about, angular_velocity=omega)
    mixed = measure_mesh(cube, MeasureOptions(density=1.0, about=about), density=DENSITY, angular_velocity=omega)
    for other in (with_settings, mixed):
        assert other.properties.mass == with_options.properties.mass
        np.testing.assert_array_equal(other.properties.inertia_about_com, with_options.properties.inertia_about_com)
        np.testing.assert_array_equal(other.inertia_about_point, with_options.inertia_about_point)
        np.testing.assert_array_equal(other.spin.angular_momentum_about_com, with_options.spin.angular_momentum_about_com)


def test_inertia_about_a_point_follows_the_parallel_axis_theorem(cube):
    point = np.array([0.1, 0.05, -0.02])
    body = measure_mesh(cube, density=DENSITY, about=point)
    mass = body.properties.mass
    d = body.properties.center_of_mass - point
    # Parallel-axis (Huygens-Steiner) theorem: I_p = I_c + m (|d|^2 E - d d^T) (handbook).
    expected = body.properties.inertia_about_com + mass * (d @ d * np.eye(3) - np.outer(d, d))
    np.testing.assert_allclose(body.inertia_about_point, expected, rtol=1e-12)
    np.testing.assert_array_equal(body.point, point)


def test_spin_of_the_cube_is_i_omega(cube):
    omega = np.array([1.0, -2.0, 30.0])
    body = measure_mesh(cube, density=DENSITY, angular_velocity=omega)
    moment = DENSITY * SIDE**5 / 6.0
    # A cube's inertia is isotropic: L = I omega is parallel to omega, energy 1/2 I |omega|^2 (rigid-body dynamics, handbook).
    np.testing.assert_allclose(body.spin.angular_momentum_about_com, moment * omega, rtol=1e-12)
    assert body.spin.rotational_kinetic_energy == pytest.approx(0.5 * moment * omega @ omega, rel=1e-12)


def test_no_density_assumes_water_and_says_so(cube):
    body = measure_mesh(cube)
    assert body.density == DEFAULT_DENSITY and body.density_assumed is True
    assert body.properties.mass == pytest.approx(DEFAULT_DENSITY * SIDE**3, rel=1e-13)


@pytest.mark.parametrize("density", [0.0, -2700.0, float("nan"), float("inf"), "dense"])
def test_a_bad_density_is_refused(cube, density):
    with pytest.raises(InputValueError, match="density"):
        measure_mesh(cube, density=density)


def test_a_bad_on_invalid_is_refused(cube):
    with pytest.raises(InputValueError, match="on_invalid"):
        measure_mesh(cube, on_invalid="ignore")


def test_an_unknown_setting_is_refused(cube):
    with pytest.raises(TypeError, match="densty"):
        measure_mesh(cube, densty=DENSITY)


@pytest.fixture
def open_box():
    vertices, faces = shapes.box((SIDE_MM,) * 3)
    return mesh_from_arrays(vertices, faces[:-1], length_unit="mm", source="open-box")  # one face missing


def test_an_invalid_mesh_raises_with_its_findings(open_box):
    with pytest.raises(InvalidMeshError) as caught:
        measure_mesh(open_box, density=DENSITY)
    error = caught.value
    assert error.source == "open-box" and "invalid mesh" in str(error)
    assert error.findings and any(f.severity == "error" for f in error.findings)


def test_an_invalid_mesh_reported_carries_no_numbers(open_box):
    body = measure_mesh(open_box, density=DENSITY, on_invalid="report", about=[0, 0, 0], angular_velocity=[0, 0, 1])
    assert not body.valid
    assert body.properties is None and body.principal is None
    assert body.inertia_about_point is None and body.spin is None
    assert body.findings and body.findings == body.validation.findings


def test_repair_turns_an_inside_out_cube_around_and_reports_it():
    vertices, faces = shapes.box((SIDE_MM,) * 3, inward=True)
    mesh = mesh_from_arrays(vertices, faces, length_unit="mm", source="inside-out")
    assert not measure_mesh(mesh, density=DENSITY, on_invalid="report").valid
    body = measure_mesh(mesh, density=DENSITY, repair=True)
    assert body.valid
    assert body.properties.mass == pytest.approx(DENSITY * SIDE**3, rel=1e-13)
    assert any(f.code.startswith("repaired_") and f.severity == "warning" for f in body.findings)


def test_measure_file_reads_in_the_length_unit(tmp_path):
    vertices, faces = shapes.box((4.0, 4.0, 4.0))
    write_obj(tmp_path / "cube.obj", vertices, faces)
    in_cm = measure_file(tmp_path / "cube.obj", density=DENSITY, length_unit="cm")
    in_mm = measure_file(tmp_path / "cube.obj", MeasureOptions(length_unit="mm", density=DENSITY))
    assert in_cm.properties.volume == pytest.approx(0.04**3, rel=1e-13)  # 4 cm cube
    assert in_mm.properties.volume == pytest.approx(0.004**3, rel=1e-13)  # 4 mm cube
    assert in_cm.source == str(tmp_path / "cube.obj") and in_cm.length_unit == "cm"
    with pytest.raises(UnitError):
        measure_file(tmp_path / "cube.obj", length_unit="furlong")
