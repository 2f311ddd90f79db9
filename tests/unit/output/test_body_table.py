"""The table layout of a body: groups, product order, aligned tensors, display units, round-off as 0."""

from __future__ import annotations

import re

import pytest

from meshprops.output.body_table import PRODUCT_ORDER, render_measure_table
from meshprops.units import display_system


def _body(**changes):
    # A 40 x 20 x 10 mm box of 1000 kg/m^3 (8 g): I = m(b^2 + c^2)/12 per axis (handbook, from memory).
    mass = 0.008
    a, b, c = 0.04, 0.02, 0.01
    moments = [mass * (b * b + c * c) / 12, mass * (a * a + c * c) / 12, mass * (a * a + b * b) / 12]
    body = {
        "source": "box.stl", "valid": True, "findings": [],
        "mesh": {"format": "stl-binary", "faces": 12, "length_unit": "mm"},
        "density": 1000.0, "density_assumed": False, "volume": 8e-6, "mass": mass,
        "center_of_mass": [0.1, 5.5e-19, -0.02],
        "inertia_about_com": [[moments[0], 5.51454e-19, 0.0], [5.51454e-19, moments[1], 0.0], [0.0, 0.0, moments[2]]],
        "products_of_inertia": {"xy": -5.51454e-19, "xz": 0.0, "yz": 0.0},
        "radii_of_gyration": [((moments[k] / mass) ** 0.5) for k in range(3)],
        "principal_moments": moments,
        "principal_axes": [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]],
        "principal_symmetry": "asymmetric",
    }
    body.update(changes)
    return body


def _doc(*bodies, **extra):
    return dict({"bodies": list(bodies), "cautions": ["Confirm by weighing."]}, **extra)


def test_groups_come_in_our_order():
    text = render_measure_table(_doc(_body()))
    about = text.index("about the centre of mass")
    assert text.index("mass ") < about < text.index("inertia tensor") < text.index("products Pxy Pxz Pyz")
    assert text.index("products Pxy Pxz Pyz") < text.index("principal frame")
    assert PRODUCT_ORDER == ("xy", "xz", "yz")
    assert text.rstrip().endswith("CAUTION: Confirm by weighing.")


def test_round_off_prints_as_zero_in_the_quantitys_own_scale():
    text = render_measure_table(_doc(_body()))
    assert "5.51454e-19" not in text and "5.5e-19" not in text
    assert re.search(r"position x y z\s+0\.1\s+0\s+-0\.02\s+m", text)


def test_tensor_columns_are_aligned():
    text = render_measure_table(_doc(_body()))
    lines = text.splitlines()
    start = next(k for k, line in enumerate(lines) if "inertia tensor" in line)
    rows = lines[start + 1 : start + 4]
    ends = {len(row) for row in rows}
    assert len(ends) == 1, rows  # right-aligned columns end at the same place
    header = lines[start]
    # the z header sits over the right end of the z column
    assert header.index(" z ") + 1 == len(rows[0]) - 1


def test_display_units_follow_the_exact_definitions():
    body = _body()
    text = render_measure_table(_doc(body), system=display_system("mm-g"))
    # 8 g; 40 mm box side; Izz = 8 g x (40^2 + 20^2) mm^2 / 12 = 1333.33 g*mm^2.
    assert re.search(r"mass\s+8\s+g", text)
    assert "1333.33" in text and "g*mm^2" in text and "g/cm^3" in text
    text = render_measure_table(_doc(body), system=display_system("in-lb"), digits=4)
    # 8 g / 453.59237 g/lb = 0.01764 lb (1 lb = 0.45359237 kg exactly; 1959 agreement).
    assert re.search(r"mass\s+0\.01764\s+lb", text)
    # Izz = 1.33333e-6 kg*m^2 / (0.45359237 x 0.0254^2) = 0.004556 lb*in^2.
    assert "0.004556" in text and "lb*in^2" in text
    assert "Units in-lb" in text


@pytest.mark.parametrize("digits, shown", [(3, "1.33"), (8, "1.3333333")])
def test_digits(digits, shown):
    # Izz = 0.008 kg x (40^2 + 20^2) mm^2 / 12 = 1.3333... kg*mm^2
    text = render_measure_table(_doc(_body()), system=display_system("mm-kg"), digits=digits)
    assert re.search(rf"\s{re.escape(shown)}\s", text)
    assert not re.search(rf"\s{re.escape(shown)}3", text)


def test_implied_and_assumed_densities_are_marked():
    assert "(implied from measured_mass)" in render_measure_table(_doc(_body(implied_density=1000.0)))
    assert "(ASSUMED" in render_measure_table(_doc(_body(density_assumed=True)))


def test_assembly_bodies_say_assembly_axes():
    text = render_measure_table(_doc(_body(), assembly={"name": "rover"}))
    assert "assembly axes" in text and "input axes" not in text and "mesh axes" not in text


def test_invalid_body_shows_no_numbers():
    text = render_measure_table(_doc(_body(valid=False, mass=None)))
    assert "INVALID" in text and "no numbers" in text and "inertia tensor" not in text
