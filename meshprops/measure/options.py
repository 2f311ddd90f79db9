"""How to measure: every setting that changes a result, as one frozen value.

A new measuring option is added here (a field with its unit and meaning), and then travels
unchanged from the command line through the batch loop to :func:`meshprops.measure.body.measure_mesh`
and :func:`meshprops.measure.assembly.measure_assembly`.
"""

from __future__ import annotations

from dataclasses import dataclass, fields, replace

import numpy as np

from ..errors import InputValueError
from ..units import DEFAULT_LENGTH_UNIT, metres_per
from ..validation.solid import VOLUME_TOLERANCE_RELATIVE, SolidOptions
from .overlap import DEFAULT_SAMPLES

#: Density used when none is given (water, 1000 kg/m³; the default of common simulators
#: such as MuJoCo, common practice). Always flagged as assumed in the output.
DEFAULT_DENSITY = 1000.0


def _vector(value, name: str) -> np.ndarray | None:
    if value is None:
        return None
    try:
        vector = np.array(value, dtype=np.float64)
    except (TypeError, ValueError):
        raise InputValueError(name, "three finite numbers", value) from None
    if vector.shape != (3,) or not np.all(np.isfinite(vector)):
        raise InputValueError(name, "three finite numbers", value)
    return vector


@dataclass(frozen=True, slots=True, eq=False)
class MeasureOptions:
    """Settings of one measurement (SI, input frame).

    Attributes
    ----------
    length_unit : unit of the mesh file's coordinates (``mm`` by default, common practice for
        CAD exports); not used for a manifest, which declares its own
    density : kg/m³, or ``None`` for :data:`DEFAULT_DENSITY`, flagged as assumed
    about : (3,) m or ``None``; point for ``inertia_about_point`` (and the angular momentum
        about it), input frame, in METRES
    angular_velocity : (3,) rad/s or ``None``, input axes
    com_velocity : (3,) m/s or ``None``, velocity of the centre of mass
    repair : apply the safe repairs first, each reported
    overlap_samples : assemblies: Monte-Carlo points per candidate pair (0 skips the check)
    strict : recover nothing (no crack closing, no shell union, no bounded crossings): refuse
        every imperfection, for a file that must be certified exactly as exported
    weld_tolerance : largest crack closed, in the MESH's length unit; ``None``: 1e-6 of the
        bounding-box diagonal; 0 turns crack closing off
    volume_tolerance : largest bound on the volume effect of self-crossings within a shell,
        as a fraction of the volume, for which numbers are given (default 1e-6)
    """

    length_unit: str = DEFAULT_LENGTH_UNIT
    density: float | None = None
    about: np.ndarray | None = None
    angular_velocity: np.ndarray | None = None
    com_velocity: np.ndarray | None = None
    repair: bool = False
    overlap_samples: int = DEFAULT_SAMPLES
    strict: bool = False
    weld_tolerance: float | None = None
    volume_tolerance: float = VOLUME_TOLERANCE_RELATIVE

    def __post_init__(self) -> None:
        self.solid_options()  # bad tolerances fail here, before any file is read
        metres_per(self.length_unit)  # an unknown unit fails here, before any file is read
        object.__setattr__(self, "about", _vector(self.about, "about point"))
        object.__setattr__(self, "angular_velocity", _vector(self.angular_velocity, "angular velocity"))
        object.__setattr__(self, "com_velocity", _vector(self.com_velocity, "velocity"))
        samples = self.overlap_samples
        if isinstance(samples, bool) or not isinstance(samples, (int, np.integer)) or samples < 0:
            raise InputValueError("overlap samples", "a whole number >= 0 (0 skips the overlap check)", samples)

    def solid_options(self) -> SolidOptions:
        """The validation settings among these options."""
        return SolidOptions(self.strict, self.weld_tolerance, self.volume_tolerance)

    @classmethod
    def build(cls, options: MeasureOptions | None = None, **settings) -> MeasureOptions:
        """``options`` (or the defaults) with the named ``settings`` replaced; keywords are field names."""
        known = {f.name for f in fields(cls)}
        unknown = sorted(set(settings) - known)
        if unknown:
            raise TypeError(f"unknown measure option(s) {', '.join(unknown)}; expected {', '.join(sorted(known))}")
        if options is None:
            return cls(**settings)
        return replace(options, **settings) if settings else options
