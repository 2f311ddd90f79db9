"""The total of many bodies measured apart (``measure DIR --total``): one rigid body made of
all of them, in the files' common frame.

The parts are joined with :func:`meshprops.physics.mass.combine` (masses and first moments
added, each inertia carried to the common centre of mass by the parallel-axis theorem) in
the order given, which the batch loop fixes as the input order. Floating-point sums depend
on their order, so a fixed order makes the total the same to the last bit whichever backend
measured the parts, and whether they came from the cache.
"""

from __future__ import annotations

from collections.abc import Sequence

from ..physics.mass import MassProperties, combine
from ..physics.principal import principal_frame
from ..physics.spin import spin
from .body import DEFAULT_DENSITY, BodyMeasurement
from .options import MeasureOptions


def measure_total(
    parts: Sequence[MassProperties | None],
    options: MeasureOptions | None = None,
    *,
    source: str,
    face_count: int,
) -> BodyMeasurement:
    """The total of ``parts`` (SI, the files' frame), with the views ``options`` asks for.

    Parameters
    ----------
    parts
        Each body's mass properties in input order; ``None`` for a body that failed
        validation, which leaves the total without numbers (it would not be sound).
    options
        The options the parts were measured with: ``about`` (m) and the spin settings
        apply to the total as to each body; the density is reported as given.
    source
        What the total is of (the folder or files named on the command line).
    face_count
        Triangles of all parts together.
    """
    options = options or MeasureOptions()
    base = BodyMeasurement(
        source=source,
        name="total",
        file_format="total",
        length_unit=options.length_unit,
        face_count=face_count,
        validation=None,
        density=DEFAULT_DENSITY if options.density is None else options.density,
        density_assumed=options.density is None,
        properties=None,
        principal=None,
    )
    if not parts or any(part is None for part in parts):
        return base
    properties = combine(parts)
    point, omega = options.about, options.angular_velocity
    return BodyMeasurement(
        source=source,
        name="total",
        file_format="total",
        length_unit=options.length_unit,
        face_count=face_count,
        validation=None,
        density=base.density,
        density_assumed=base.density_assumed,
        properties=properties,
        principal=principal_frame(properties.inertia_about_com),
        point=point,
        inertia_about_point=properties.inertia_about(point) if point is not None else None,
        spin=spin(properties, omega, com_velocity=options.com_velocity, point=point) if omega is not None else None,
    )
