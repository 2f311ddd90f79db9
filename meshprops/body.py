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

from .checks import ERROR, Finding, ValidationReport, validate
from .errors import InputValueError, InvalidMeshError
from .io import Mesh, load_mesh
from .mass import MassProperties, check_density
from .moments import integrate_mesh
from .principal import PrincipalFrame, principal_frame
from .spin import SpinState, spin

#: Density used when none is given (water, 1000 kg/m³; the default of common simulators
#: such as MuJoCo, common practice). Always flagged as assumed in the output.
DEFAULT_DENSITY = 1000.0


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
    validation : findings of :func:`meshprops.checks.validate`
    density : kg/m³; ``density_assumed`` true when the default was used
    properties : mass, volume, centre of mass, inertia about the centre of mass
    principal : principal moments and axes of the inertia about the centre of mass
    point : (3,) m, the point ``inertia_about_point`` refers to, or ``None``
    inertia_about_point : (3, 3) kg·m² in the input axes, or ``None``
    spin : dynamics for the requested angular velocity, or ``None``
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

    @property
    def valid(self) -> bool:
        return self.properties is not None

    @property
    def findings(self) -> tuple[Finding, ...]:
        return self.validation.findings if self.validation is not None else ()


def parse_vector(text: str | None, name: str, *, source: str | None = None) -> np.ndarray | None:
    """Parse ``"X,Y,Z"`` into a finite (3,) float64 array; ``None`` passes through."""
    if text is None:
        return None
    if isinstance(text, (list, tuple, np.ndarray)):
        parts = list(text)
    else:
        parts = [p.strip() for p in str(text).split(",")]
    try:
        vector = np.array([float(p) for p in parts], dtype=np.float64)
    except (TypeError, ValueError):
        raise InputValueError(name, "three comma-separated numbers X,Y,Z", text, source=source) from None
    if vector.shape != (3,) or not np.all(np.isfinite(vector)):
        raise InputValueError(name, "three finite comma-separated numbers X,Y,Z", text, source=source)
    return vector


def measure_mesh(
    mesh: Mesh,
    density: float | None = None,
    *,
    about=None,
    angular_velocity=None,
    com_velocity=None,
    name: str | None = None,
    on_invalid: str = "raise",
    repair: bool = False,
) -> BodyMeasurement:
    """Validate ``mesh`` and compute its mass properties.

    Parameters
    ----------
    mesh
        A loaded mesh (its length unit is applied here, once).
    density
        kg/m³; ``None`` uses :data:`DEFAULT_DENSITY` and flags it as assumed.
    about : (3,) m, optional
        Point for ``inertia_about_point`` (and the total angular momentum when
        ``angular_velocity`` is given), in the input frame, in metres.
    angular_velocity : (3,) rad/s, optional
    com_velocity : (3,) m/s, optional; velocity of the centre of mass
    on_invalid
        ``"raise"`` (default): raise :class:`InvalidMeshError` when validation
        finds an error. ``"report"``: return a measurement with ``valid`` false
        and no numbers, the findings saying why.
    repair
        Apply the safe repairs of :func:`meshprops.repair.repair_mesh` first
        (reorient winding, flip inside-out shells and voids, drop degenerate and
        duplicate faces), each reported as a ``repaired_*`` warning finding; the
        repaired mesh is then validated and measured. Holes are never filled.
    """
    if on_invalid not in ("raise", "report"):
        raise InputValueError("on_invalid", "'raise' or 'report'", on_invalid)
    density_assumed = density is None
    density = DEFAULT_DENSITY if density is None else check_density(density, source=mesh.source)
    repaired = None
    if repair:
        from .repair import repair_mesh

        repaired = repair_mesh(mesh)
    measured = repaired.mesh if repaired is not None else mesh
    moments = integrate_mesh(measured)
    report = validate(measured, moments)
    if repaired is not None:  # locate every finding in the file as read
        report = replace(report, findings=repaired.findings + repaired.remap(report.findings))
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
    )
    if not report.valid:
        return _invalid(base, on_invalid)

    properties = MassProperties.from_moments(moments, density)
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

    point = parse_vector(about, "about point") if about is not None else None
    omega = parse_vector(angular_velocity, "angular velocity") if angular_velocity is not None else None
    velocity = parse_vector(com_velocity, "velocity") if com_velocity is not None else None
    return replace(
        base,
        properties=properties,
        principal=frame,
        point=point,
        inertia_about_point=properties.inertia_about(point) if point is not None else None,
        spin=spin(properties, omega, com_velocity=velocity, point=point) if omega is not None else None,
    )


def _invalid(measurement: BodyMeasurement, on_invalid: str) -> BodyMeasurement:
    if on_invalid == "raise":
        first = measurement.validation.errors[0]
        raise InvalidMeshError(measurement.source, f"invalid mesh: {first.code}: {first.message}", measurement.findings)
    return measurement


def measure_file(
    path: str | os.PathLike,
    density: float | None = None,
    *,
    length_unit: str = "mm",
    about=None,
    angular_velocity=None,
    com_velocity=None,
    name: str | None = None,
    on_invalid: str = "raise",
    repair: bool = False,
) -> BodyMeasurement:
    """Load a mesh file and measure it; see :func:`measure_mesh`.

    ``about`` is given in metres here (the CLI converts from the mesh unit).
    """
    mesh = load_mesh(path, length_unit)
    return measure_mesh(
        mesh,
        density,
        about=about,
        angular_velocity=angular_velocity,
        com_velocity=com_velocity,
        name=name,
        on_invalid=on_invalid,
        repair=repair,
    )


def measure_files(
    paths,
    density: float | None = None,
    *,
    length_unit: str = "mm",
    about=None,
    angular_velocity=None,
    com_velocity=None,
    on_invalid: str = "report",
    repair: bool = False,
) -> list[BodyMeasurement]:
    """Measure several mesh files with the same settings (one body each).

    Every file is loaded before any result is returned, so an unreadable file
    fails the whole call (:class:`meshprops.errors.MeshFileError`) and nothing
    is half-reported. ``about`` is in metres.
    """
    meshes = [load_mesh(path, length_unit) for path in paths]
    return [
        measure_mesh(
            mesh,
            density,
            about=about,
            angular_velocity=angular_velocity,
            com_velocity=com_velocity,
            on_invalid=on_invalid,
            repair=repair,
        )
        for mesh in meshes
    ]
