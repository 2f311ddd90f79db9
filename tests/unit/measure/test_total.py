"""measure_total: bodies joined in the given order; handbook boxes; no numbers from an invalid body."""

from __future__ import annotations

import numpy as np
import pytest

from meshprops.measure.options import MeasureOptions
from meshprops.measure.total import measure_total
from meshprops.physics.mass import MassProperties


def _box(mass, sides, center):
    """A solid box about its centre: I_xx = m (b^2 + c^2) / 12 (handbook formula, common practice)."""
    a, b, c = sides
    inertia = np.diag([b * b + c * c, a * a + c * c, a * a + b * b]) * mass / 12.0
    return MassProperties(mass, a * b * c, np.array(center, dtype=float), inertia)


def test_two_boxes_side_by_side_are_one_box():
    # Two 1 x 1 x 1 m cubes of 1 kg at x = -0.5 and x = +0.5 make one 2 x 1 x 1 m box of 2 kg.
    parts = [_box(1.0, (1.0, 1.0, 1.0), (-0.5, 0.0, 0.0)), _box(1.0, (1.0, 1.0, 1.0), (0.5, 0.0, 0.0))]
    total = measure_total(parts, MeasureOptions(density=1.0), source="blocks", face_count=24)
    expected = _box(2.0, (2.0, 1.0, 1.0), (0.0, 0.0, 0.0))
    assert total.valid and total.name == "total" and total.face_count == 24
    assert total.properties.mass == 2.0 and total.properties.volume == 2.0
    np.testing.assert_allclose(total.properties.center_of_mass, 0.0, atol=1e-15)
    np.testing.assert_allclose(total.properties.inertia_about_com, expected.inertia_about_com, rtol=1e-14)
    np.testing.assert_allclose(total.principal.moments, sorted(np.diag(expected.inertia_about_com)), rtol=1e-14)


def test_the_views_of_the_options_apply_to_the_total():
    parts = [_box(2.0, (0.1, 0.2, 0.3), (0.0, 0.0, 0.0))]
    options = MeasureOptions(about=[0.0, 0.0, 1.0], angular_velocity=[0.0, 0.0, 10.0])
    total = measure_total(parts, options, source="one", face_count=12)
    # parallel-axis theorem about a point 1 m above the centre (common practice)
    assert total.inertia_about_point[0, 0] == pytest.approx(parts[0].inertia_about_com[0, 0] + 2.0 * 1.0, rel=1e-14)
    np.testing.assert_allclose(total.spin.angular_momentum_about_com, parts[0].inertia_about_com @ [0, 0, 10.0])
    assert total.density_assumed  # no density given: flagged as assumed, like each body


def test_a_body_without_numbers_leaves_the_total_without_numbers():
    total = measure_total([_box(1.0, (1.0, 1.0, 1.0), (0.0, 0.0, 0.0)), None], source="mixed", face_count=12)
    assert not total.valid and total.properties is None and total.principal is None
    assert not measure_total([], source="nothing", face_count=0).valid


def test_the_same_order_gives_the_same_bits():
    generator = np.random.default_rng(7)
    parts = [_box(float(m), generator.uniform(0.01, 0.2, 3), generator.uniform(-5, 5, 3)) for m in generator.uniform(0.1, 9, 40)]
    first = measure_total(parts, source="a", face_count=0).properties
    again = measure_total(list(parts), source="a", face_count=0).properties
    assert first.mass == again.mass
    assert first.center_of_mass.tobytes() == again.center_of_mass.tobytes()
    assert first.inertia_about_com.tobytes() == again.inertia_about_com.tobytes()
