"""Option text -> values: the only place where "X,Y,Z", rpm and point names are parsed.

Everything returned is a plain number or a float64 array; lengths stay in the unit the
user typed them in (the command converts them with :func:`meshprops.units.metres_per`).
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from ..errors import InputValueError
from ..units import canonical_length_unit, display_system, rpm_to_rad_per_s

if TYPE_CHECKING:  # numpy loads where a vector is parsed: a command that takes none never imports it
    import numpy as np


def length_unit(text: str, name: str = "--units") -> str:
    """``--units`` text (any letter case, usual spellings) -> the canonical unit; empty or unknown refused."""
    from ..errors import UnitError

    try:
        return canonical_length_unit(text)
    except UnitError as error:
        raise UnitError(error.unit, error.known, source=name) from None


def display_settings(show_units: str, digits: int):
    """``--show-units`` and ``--digits`` -> the table's :class:`~meshprops.output.body_table.TableDisplay`."""
    from ..errors import UnitError
    from ..output.body_table import TableDisplay
    from ..output.numbers import check_digits

    try:
        system = display_system(show_units)
    except UnitError as error:
        raise UnitError(error.unit, error.known, source="--show-units") from None
    try:
        digits = check_digits(digits)
    except ValueError:
        raise InputValueError("--digits", "a whole number of significant digits from 1 to 17", digits) from None
    return TableDisplay(system, digits)


def parse_vector(text: str | None, name: str, *, source: str | None = None) -> np.ndarray | None:
    """Parse ``"X,Y,Z"`` into a finite (3,) float64 array; ``None`` passes through."""
    if text is None:
        return None
    import numpy as np

    parts = [p.strip() for p in str(text).split(",")]
    try:
        vector = np.array([float(p) for p in parts], dtype=np.float64)
    except (TypeError, ValueError):
        raise InputValueError(name, "three comma-separated numbers X,Y,Z", text, source=source) from None
    if vector.shape != (3,) or not np.all(np.isfinite(vector)):
        raise InputValueError(name, "three finite comma-separated numbers X,Y,Z", text, source=source)
    return vector


def angular_velocity(spin_text: str | None, rpm: float | None, axis_text: str | None) -> np.ndarray | None:
    """``--spin WX,WY,WZ`` (rad/s) or ``--rpm N --axis AX,AY,AZ`` -> (3,) rad/s, or ``None``."""
    import numpy as np

    if spin_text is not None and rpm is not None:
        raise InputValueError("--spin/--rpm", "one of --spin or --rpm, not both", f"{spin_text} and {rpm}")
    if spin_text is not None:
        return parse_vector(spin_text, "--spin")
    if rpm is None:
        if axis_text is not None:
            raise InputValueError("--axis", "to be used with --rpm", axis_text)
        return None
    if axis_text is None:
        raise InputValueError("--rpm", "an --axis AX,AY,AZ to spin about", "no --axis")
    axis = parse_vector(axis_text, "--axis")
    largest = float(np.max(np.abs(axis)))
    if largest == 0.0:
        raise InputValueError("--axis", "a non-zero direction", axis_text)
    axis = axis / largest  # scaled first, so that neither 1e200 nor 1e-320 over- or underflows the length
    length = float((axis @ axis) ** 0.5)
    if not (rpm == rpm and abs(rpm) != float("inf")):
        raise InputValueError("--rpm", "a finite speed in rpm", rpm)
    with np.errstate(over="ignore"):
        rate = rpm_to_rad_per_s(rpm)
    if not np.isfinite(rate):
        raise InputValueError("--rpm", "a speed whose value in rad/s is finite", rpm)
    return axis / length * rate


def manifest_point(manifest, text: str | None):
    """``--about`` with a manifest: a named point (kept as its name) or ``X,Y,Z`` in the manifest's unit.

    Returns the point's name, a (3,) array in the manifest's length unit, or ``None``; the
    library resolves either with :func:`meshprops.measure.assembly.resolve_point`.
    """
    if text is None:
        return None
    if text.strip() in manifest.points:
        return text.strip()
    try:
        return parse_vector(text, "about point", source=manifest.path)
    except InputValueError:
        raise InputValueError(
            "--about",
            f"X,Y,Z in {manifest.length_unit} or a named point ({', '.join(manifest.points) or 'none defined'})",
            text,
            source=manifest.path,
        ) from None
