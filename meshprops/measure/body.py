"""Measure one body: mesh → validated moments → mass properties and their views.

This is the library entry point the CLI calls for each mesh file::

    >>> from meshprops import measure_file
    >>> body = measure_file("bracket.stl", density=2700.0, length_unit="mm")
    >>> body.properties.mass, body.principal.moments
"""

from __future__ import annotations

import os
from dataclasses import dataclass, replace

import numpy as np

from ..errors import InputValueError, InvalidMeshError
from ..io import Mesh, load_mesh
from ..physics.finite import require_finite
from ..physics.mass import MassProperties, check_density
from ..physics.moments import Moments
from ..physics.principal import PrincipalFrame, principal_frame
from ..physics.spin import SpinState, spin
from ..validation.density import density_findings
from ..validation.findings import (
    ERROR,
    UNREADABLE,
    Finding,
    ValidationReport,
    unreadable_report,
)
from ..validation.solid import Solid, resolve_solid
from .options import DEFAULT_DENSITY, MeasureOptions


@dataclass(frozen=True, slots=True, eq=False)
class BodyMeasurement:
    """Everything measured about one body, SI units, input frame.

    ``properties``, ``principal``, ``inertia_about_point`` and ``spin`` are
    ``None`` when the mesh failed validation: its numbers would not be sound.

    Attributes
    ----------
    source : file path (or a label for in-memory meshes)
    name : optional body name (assemblies)
    file_format, length_unit, face_count : as read
    validation : findings of :func:`meshprops.validation.checks.validate`
    density : kg/m³; ``density_assumed`` true when the default was used
    properties : mass, volume, centre of mass, inertia about the centre of mass
    principal : principal moments and axes of the inertia about the centre of mass
    point : (3,) m, the point ``inertia_about_point`` refers to, or ``None``
    inertia_about_point : (3, 3) kg·m² in the input axes, or ``None``
    spin : dynamics for the requested angular velocity, or ``None``
    shell_sum : mass properties of the plain sum of the mesh's shells (every shell added, voids
        subtracted), or ``None``; they differ from ``properties`` where the solid was recovered
        (a shell union, closed cracks)
    solid : the validated solid (the surface actually integrated, for ``--write-solid``), or ``None``
    """

    source: str
    name: str | None
    file_format: str
    length_unit: str
    face_count: int
    validation: ValidationReport | None
    density: float | None
    density_assumed: bool
    properties: MassProperties | None
    principal: PrincipalFrame | None
    point: np.ndarray | None = None
    inertia_about_point: np.ndarray | None = None
    spin: SpinState | None = None
    shell_sum: MassProperties | None = None
    solid: Solid | None = None

    @property
    def valid(self) -> bool:
        return self.properties is not None

    @property
    def findings(self) -> tuple[Finding, ...]:
        return self.validation.findings if self.validation is not None else ()

    @property
    def unreadable(self) -> bool:
        """True for the stand-in of a file that could not be read (:func:`unreadable_measurement`)."""
        return any(f.code == UNREADABLE for f in self.findings)


def unreadable_measurement(path: str, length_unit: str, error) -> BodyMeasurement:
    """The entry of a file that could not be read: ``valid`` false, no numbers, one ``unreadable`` finding."""
    return BodyMeasurement(
        source=path, name=None, file_format=None, length_unit=length_unit, face_count=None,
        validation=unreadable_report(error), density=None, density_assumed=False, properties=None, principal=None,
    )  # fmt: skip


def measure_mesh(
    mesh: Mesh,
    options: MeasureOptions | None = None,
    *,
    name: str | None = None,
    on_invalid: str = "raise",
    **settings,
) -> BodyMeasurement:
    """Validate ``mesh`` and compute its mass properties.

    Parameters
    ----------
    mesh
        A loaded mesh (its length unit is applied here, once).
    options
        How to measure (:class:`~meshprops.measure.options.MeasureOptions`: density in kg/m³,
        ``about`` point in metres, angular velocity in rad/s, centre-of-mass velocity in m/s,
        repair). ``options.length_unit`` is not used: the mesh carries its own.
    name
        Optional body name (assemblies).
    on_invalid
        ``"raise"`` (default): raise :class:`InvalidMeshError` when validation
        finds an error. ``"report"``: return a measurement with ``valid`` false
        and no numbers, the findings saying why.
    **settings
        Fields of :class:`MeasureOptions` replacing those of ``options``
        (``measure_mesh(mesh, density=2700.0)``).

    With ``repair`` the safe repairs of :func:`meshprops.validation.repair.repair_mesh` are
    applied first (reorient winding, flip inside-out shells and voids, drop degenerate and
    duplicate faces), each reported as a ``repaired_*`` warning finding; the repaired mesh is
    then validated and measured. Holes are never filled.
    """
    options = MeasureOptions.build(options, **settings)
    density = options.density
    if on_invalid not in ("raise", "report"):
        raise InputValueError("on_invalid", "'raise' or 'report'", on_invalid)
    density_assumed = density is None
    density = DEFAULT_DENSITY if density is None else check_density(density, source=mesh.source)
    repaired = None
    if options.repair:
        from ..validation.repair import repair_mesh

        repaired = repair_mesh(mesh)
    measured = repaired.mesh if repaired is not None else mesh
    solid = resolve_solid(measured, options.solid_options(), density=density)
    report = solid.report
    if repaired is not None:  # locate every finding in the file as read
        report = replace(report, findings=repaired.findings + repaired.remap(report.findings))
    if not density_assumed:
        report = replace(report, findings=report.findings + density_findings(density))
    base = BodyMeasurement(
        source=mesh.source,
        name=name,
        file_format=mesh.file_format,
        length_unit=mesh.length_unit,
        face_count=mesh.face_count,
        validation=report,
        density=density,
        density_assumed=density_assumed,
        properties=None,
        principal=None,
        solid=solid,
    )
    if not report.valid:
        return _invalid(base, on_invalid)

    with np.errstate(over="ignore", invalid="ignore"):  # an overflow is refused just below, by name
        properties = MassProperties.from_moments(solid.moments, density)
    require_finite(properties, source=mesh.source)  # before the eigen-solver sees an inf
    frame = principal_frame(properties.inertia_about_com)
    if not frame.satisfies_triangle_inequality:
        impossible = Finding(
            "impossible_inertia",
            ERROR,
            1,
            "principal moments violate the triangle inequality I1 + I2 >= I3; no physical body has them",
        )
        report = replace(report, findings=report.findings + (impossible,))
        return _invalid(replace(base, validation=report), on_invalid)

    point, omega = options.about, options.angular_velocity
    with np.errstate(over="ignore", invalid="ignore"):  # an overflow is refused just below, by name
        views = replace(
            base,
            properties=properties,
            principal=frame,
            point=point,
            inertia_about_point=properties.inertia_about(point) if point is not None else None,
            spin=spin(properties, omega, com_velocity=options.com_velocity, point=point) if omega is not None else None,
            shell_sum=_shell_sum(solid.shell_sum, density),
        )
    require_finite(
        {"principal": frame, "inertia_about_point": views.inertia_about_point, "spin": views.spin}, source=mesh.source
    )
    return views


def _shell_sum(moments: Moments, density: float) -> MassProperties | None:
    """Mass properties of the plain shell sum (``None`` when it encloses no positive volume)."""
    return MassProperties.from_moments(moments, density) if moments.volume > 0 else None


def _invalid(measurement: BodyMeasurement, on_invalid: str) -> BodyMeasurement:
    if on_invalid == "raise":
        first = measurement.validation.errors[0]
        raise InvalidMeshError(measurement.source, f"invalid mesh: {first.code}: {first.message}", measurement.findings)
    return measurement


def measure_file(
    path: str | os.PathLike,
    options: MeasureOptions | None = None,
    *,
    name: str | None = None,
    on_invalid: str = "raise",
    **settings,
) -> BodyMeasurement:
    """Load a mesh file in ``options.length_unit`` and measure it; see :func:`measure_mesh`.

    ``about`` is given in metres here (the CLI converts from the mesh unit).
    """
    options = MeasureOptions.build(options, **settings)
    return measure_mesh(load_mesh(path, options.length_unit), options, name=name, on_invalid=on_invalid)
