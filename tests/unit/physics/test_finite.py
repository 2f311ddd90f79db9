"""The finiteness guard names the first non-finite number of a result and refuses it."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import pytest

from meshprops.errors import MeshpropsError, NonFiniteResultError
from meshprops.physics.finite import first_non_finite, require_finite


@dataclass(frozen=True, slots=True, eq=False)
class _Result:
    mass: float
    inertia: np.ndarray
    extra: dict


def test_finite_results_pass():
    result = _Result(1.0, np.eye(3), {"spin": [1.0, 2.0], "faces": 12, "name": "x", "flag": True, "none": None})
    assert first_non_finite(result) is None
    require_finite(result)


def test_the_first_non_finite_number_is_named():
    # 1e20 m cube at 1e250 kg/m^3: mass 1e310 kg overflows float64 (largest ~1.8e308; IEEE 754, common practice).
    mass = (1e20) ** 3 * 1e250
    assert math.isinf(mass)
    assert first_non_finite(_Result(mass, np.eye(3), {})) == "mass"
    inertia = np.eye(3)
    inertia[1, 2] = np.nan
    assert first_non_finite(_Result(1.0, inertia, {})) == "inertia[1][2]"
    assert first_non_finite(_Result(1.0, np.eye(3), {"spin": {"energy": [0.0, math.inf]}})) == "extra.spin.energy[1]"


def test_require_finite_raises_one_clear_error():
    with pytest.raises(NonFiniteResultError) as caught:
        require_finite({"kinetic_energy": math.inf}, what="spin", source="rover.stl")
    error = caught.value
    assert isinstance(error, MeshpropsError) and isinstance(error, OverflowError)
    assert error.quantity == "kinetic_energy" and error.exit_code == 2
    text = str(error)
    assert text.startswith("rover.stl: spin overflow double precision (kinetic_energy is not finite)")
    assert "\n" not in text
