"""Every computed number finite, or the body refused.

Mass properties overflow float64 when size and density are extreme (a 1e20 m
cube of density 1e250 kg/m^3 has a mass of 1e310 kg, which is ``inf``), and an
``inf`` then turns into ``NaN`` in the principal frame. :func:`first_non_finite`
walks a result (dataclasses, dicts, sequences, numpy arrays, floats) and names
the first number that is not finite, so the caller can refuse the whole body
with one clear error instead of printing ``inf`` or raising from linear algebra.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Mapping

import numpy as np

from ..errors import NonFiniteResultError


def first_non_finite(value, name: str = "") -> str | None:
    """Return the dotted name of the first non-finite number in ``value`` (``"mass"``,
    ``"spin.angular_momentum[2]"``), or ``None`` when every number is finite.

    Booleans, integers, strings and ``None`` are skipped; only floats and float arrays are tested.
    """
    if value is None or isinstance(value, (bool, str, bytes)):
        return None
    if isinstance(value, float):
        return None if math.isfinite(value) else (name or "value")
    if isinstance(value, np.ndarray) or isinstance(value, np.floating):
        array = np.asarray(value)
        if array.dtype.kind not in "fc":
            return None
        bad = np.argwhere(~np.isfinite(array))
        if bad.size == 0:
            return None
        index = "".join(f"[{int(i)}]" for i in bad[0])
        return f"{name}{index}" or "value"
    if dataclasses.is_dataclass(value) and not isinstance(value, type):
        for field in dataclasses.fields(value):
            found = first_non_finite(getattr(value, field.name), f"{name}.{field.name}" if name else field.name)
            if found is not None:
                return found
        return None
    if isinstance(value, Mapping):
        for key, item in value.items():
            found = first_non_finite(item, f"{name}.{key}" if name else str(key))
            if found is not None:
                return found
        return None
    if isinstance(value, (list, tuple)):
        for index, item in enumerate(value):
            found = first_non_finite(item, f"{name}[{index}]")
            if found is not None:
                return found
    return None


def require_finite(value, *, what: str = "mass properties", source: str | None = None) -> None:
    """Raise :class:`NonFiniteResultError` naming the first non-finite number of ``value``, if any."""
    found = first_non_finite(value)
    if found is not None:
        raise NonFiniteResultError(
            found,
            f"{what} overflow double precision ({found} is not finite): the part is too large, the density too "
            "high or the speed too great to compute; check the units of the input",
            source=source,
        )
