"""Length units: exact factors, one conversion at load, and how mass properties scale with them."""

from __future__ import annotations

import math

import numpy as np
import pytest

from meshprops import (
    MeshpropsError,
    UnitError,
    load_mesh,
    measure_mesh,
    mesh_from_arrays,
)
from meshprops.geometry import shapes
from meshprops.units import (
    DEFAULT_LENGTH_UNIT,
    LENGTH_UNITS,
    SI_UNITS,
    metres_per,
    rpm_to_rad_per_s,
)


def test_factors_are_the_exact_definitions():
    # 1 in = 25.4 mm and 1 ft = 12 in = 0.3048 m exactly (international inch of 1959; common practice).
    assert metres_per("in") == 0.0254
    assert metres_per("ft") == 0.3048
    assert metres_per("ft") == pytest.approx(12 * metres_per("in"), rel=1e-15)
    assert metres_per("mm") == 0.001
    assert metres_per("cm") == 0.01
    assert metres_per("m") == 1.0
    assert set(LENGTH_UNITS) == {"m", "cm", "mm", "in", "ft"}


def test_default_unit_is_millimetres():
    # CAD exports are most often in millimetres (common practice).
    assert DEFAULT_LENGTH_UNIT == "mm"


@pytest.mark.parametrize("unit", ["furlong", "MM", "", "metre", "inch"])
def test_unknown_units_are_refused_naming_the_known_ones(unit):
    with pytest.raises(UnitError) as caught:
        metres_per(unit)
    error = caught.value
    assert isinstance(error, ValueError) and isinstance(error, MeshpropsError)
    assert error.unit == unit
    assert "m, cm, mm, in, ft" in str(error)


def test_rpm_to_rad_per_s():
    # One revolution is 2π rad, one minute 60 s.
    assert rpm_to_rad_per_s(60.0) == pytest.approx(2.0 * math.pi, rel=1e-15)
    assert rpm_to_rad_per_s(3000.0) == pytest.approx(100.0 * math.pi, rel=1e-15)
    assert rpm_to_rad_per_s(-30.0) == pytest.approx(-math.pi, rel=1e-15)


@pytest.mark.parametrize("unit", sorted(LENGTH_UNITS))
def test_mass_properties_scale_with_the_declared_unit(tmp_path, write_mesh, part, unit, close):
    vertices, faces = part
    path = write_mesh(tmp_path, "bracket", vertices, faces, "obj")
    in_metres = measure_mesh(load_mesh(path, "m"), density=1000.0).properties
    declared = measure_mesh(load_mesh(path, unit), density=1000.0).properties
    s = metres_per(unit)
    # Lengths scale by s: volume and mass by s³, centre of mass by s, inertia by s⁵.
    assert declared.volume == pytest.approx(in_metres.volume * s**3, rel=1e-13)
    assert declared.mass == pytest.approx(in_metres.mass * s**3, rel=1e-13)
    close(declared.center_of_mass, in_metres.center_of_mass * s, 1e-13)
    close(declared.inertia_about_com, in_metres.inertia_about_com * s**5, 1e-12)


def test_si_unit_table_names_every_output_quantity():
    assert SI_UNITS["length"] == "m"
    assert SI_UNITS["mass"] == "kg"
    assert SI_UNITS["inertia"] == "kg*m^2"
    assert SI_UNITS["angular_momentum"] == "kg*m^2/s"
    assert SI_UNITS["energy"] == "J"
    assert SI_UNITS["angular_velocity"] == "rad/s"


def test_a_one_inch_cube_of_water():
    # 1 in³ = 16.387064 cm³ exactly (from 25.4 mm); at 1000 kg/m³ that is 16.387064 g.
    vertices, faces = shapes.box((1.0, 1.0, 1.0))
    properties = measure_mesh(mesh_from_arrays(vertices, faces, length_unit="in"), density=1000.0).properties
    assert properties.mass == pytest.approx(0.016387064, rel=1e-13)
    # Cube about its centre: I = m a²/6 (handbook, from memory), a = 0.0254 m.
    np.testing.assert_allclose(np.diag(properties.inertia_about_com), 0.016387064 * 0.0254**2 / 6.0, rtol=1e-12)
