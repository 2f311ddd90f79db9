"""Clean numbers for people and simulators: round-off shown as 0, a chosen number of significant digits.

Floating-point sums leave round-off where the exact value is 0 (a product of
inertia of ``5.5e-19 kg*m^2`` beside moments of ``1e-3``). A value whose
magnitude is below :data:`ROUND_OFF_RELATIVE` of its quantity's own scale (the
largest magnitude among the entries of that vector or tensor, or a scale the
caller names, such as the part's size for a centre of mass) is shown as 0.
Tables and simulator blocks use these functions; JSON keeps the exact floats.
"""

from __future__ import annotations

import math

import numpy as np

#: Below this fraction of the quantity's scale a value is round-off and shown as 0.
ROUND_OFF_RELATIVE = 1e-12
#: Significant digits of the table unless ``--digits`` says otherwise.
DEFAULT_DIGITS = 6
#: ``--digits`` accepts 1 to 17 (17 significant digits round-trip any float64).
DIGITS_RANGE = (1, 17)


def quantity_scale(values) -> float:
    """The largest finite magnitude among ``values`` (a float or an array of any shape); 0 if none."""
    array = np.abs(np.asarray(values, dtype=np.float64))
    finite = array[np.isfinite(array)]
    return float(finite.max()) if finite.size else 0.0


def clean(values, scale: float | None = None):
    """Return ``values`` with round-off set to exactly 0 (and -0.0 turned into 0.0).

    Parameters
    ----------
    values : float or array_like of any shape, in any unit
    scale : float, same unit; defaults to :func:`quantity_scale` of ``values``.
        Entries with ``|value| < ROUND_OFF_RELATIVE * scale`` become 0.

    Returns
    -------
    A float when ``values`` is a scalar, else a float64 array of the same shape.
    """
    array = np.array(values, dtype=np.float64)
    reference = quantity_scale(array) if scale is None else abs(float(scale))
    array[np.abs(array) < ROUND_OFF_RELATIVE * reference] = 0.0
    array = array + 0.0  # -0.0 + 0.0 is +0.0
    return float(array) if array.ndim == 0 else array


def check_digits(digits: int) -> int:
    """Return ``digits`` if it is in :data:`DIGITS_RANGE`; raise ``ValueError`` otherwise."""
    low, high = DIGITS_RANGE
    if isinstance(digits, bool) or not isinstance(digits, (int, np.integer)) or not low <= digits <= high:
        raise ValueError(f"digits: expected an integer from {low} to {high}, got {digits!r}")
    return int(digits)


def format_number(value: float, digits: int = DEFAULT_DIGITS) -> str:
    """``value`` with ``digits`` significant digits (``%g`` style, no trailing zeros); -0 prints as 0.

    A non-finite value raises ``ValueError``: callers refuse such bodies before formatting.
    """
    number = float(value)
    if not math.isfinite(number):
        raise ValueError(f"refusing to format a non-finite number ({number!r})")
    return f"{number + 0.0:.{check_digits(digits)}g}"


def format_clean(values, scale: float | None = None, digits: int = DEFAULT_DIGITS):
    """:func:`clean` then :func:`format_number`: a string for a scalar, nested lists of strings otherwise."""
    cleaned = clean(values, scale)
    if isinstance(cleaned, float):
        return format_number(cleaned, digits)
    return np.vectorize(lambda x: format_number(x, digits), otypes=[object])(cleaned).tolist()


def clean_float(value: float, scale: float, digits: int = 17) -> float:
    """A float for machine-read output (simulator files): round-off set to 0, then rounded to ``digits``
    significant digits (17 keeps the exact value)."""
    return float(format_number(clean(value, scale), digits))
