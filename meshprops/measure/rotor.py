"""A part on a shaft: measure a mesh or an assembly manifest, then its balance about the shaft.

The mass properties come from :func:`meshprops.measure.body.measure_file` (one mesh) or
:func:`meshprops.measure.assembly.measure_assembly` (a manifest, whose bodies may be placed
off-centre or tilted on the shaft); the balance from :func:`meshprops.physics.balance.balance`.
The geometry also gives the part's extent along the shaft (its two ends are the default
correction planes) and its largest radius from the shaft (the rim speed).

Lengths in :class:`RotorOptions` are in the INPUT length unit (the mesh's ``length_unit``, or
the manifest's): the axis point, bearing and plane positions, and the correction radius. They
are converted to metres here, once the input's unit is known. Results are SI.
"""

from __future__ import annotations

import math
import os
from collections.abc import Iterator
from dataclasses import dataclass

import numpy as np

from ..errors import InputValueError, InvalidMeshError
from ..io.loaders import load_mesh
from ..physics.balance import (
    BalanceGrade,
    BalanceResult,
    axial_pair,
    balance_of,
    find_grade,
    finite_vector,
    positive_number,
    shaft_axes,
    unit_vector,
)
from ..physics.mass import MassProperties
from ..units import rpm_to_rad_per_s
from ..validation.findings import Finding
from .assembly import AssemblyResult, measure_assembly
from .body import BodyMeasurement, measure_mesh
from .manifest import load_manifest
from .options import MeasureOptions


@dataclass(frozen=True, slots=True, eq=False)
class RotorOptions:
    """The shaft, the speed, the grade and the optional planes of one balance run.

    Lengths are in the INPUT length unit (see the module docstring).

    Attributes
    ----------
    axis_point : (3,) input unit, a point of the shaft axis, input frame
    axis_direction : (3,) any length > 0 (normalized by the balance)
    rpm : float, > 0, service speed in rev/min, right-handed about ``axis_direction``
    grade : BalanceGrade (text such as ``"G6.3"`` or a number is looked up in the table)
    bearing_positions : two axial positions (input unit) or ``None``
    correction_planes : two axial positions (input unit) or ``None`` for the part's two ends
    correction_radius : input unit or ``None`` (no correction masses then)
    angle_reference : (3,) or ``None``; direction angles are measured from
    precession_axis : (3,) or ``None``; with ``precession_rate`` (rad/s) gives the gyroscopic moment
    """

    axis_point: np.ndarray
    axis_direction: np.ndarray
    rpm: float
    grade: BalanceGrade
    bearing_positions: tuple[float, float] | None = None
    correction_planes: tuple[float, float] | None = None
    correction_radius: float | None = None
    angle_reference: np.ndarray | None = None
    precession_axis: np.ndarray | None = None
    precession_rate: float | None = None

    def __post_init__(self) -> None:
        set_ = object.__setattr__
        set_(self, "axis_point", finite_vector(self.axis_point, "axis point"))
        unit_vector(self.axis_direction, "axis direction")  # refuses a zero direction now, before any file is read
        set_(self, "axis_direction", finite_vector(self.axis_direction, "axis direction"))
        set_(self, "rpm", positive_number(self.rpm, "rpm", "rev/min"))
        if not isinstance(self.grade, BalanceGrade):
            set_(self, "grade", find_grade(self.grade))
        set_(self, "bearing_positions", axial_pair(self.bearing_positions, "bearing positions"))
        set_(self, "correction_planes", axial_pair(self.correction_planes, "correction planes"))
        if self.correction_radius is not None:
            set_(self, "correction_radius", positive_number(self.correction_radius, "correction radius", "(input unit)"))
        if self.angle_reference is not None:
            unit_vector(self.angle_reference, "angle reference")
            set_(self, "angle_reference", finite_vector(self.angle_reference, "angle reference"))
            shaft_axes(self.axis_point, self.axis_direction, self.angle_reference)  # not parallel to the shaft
        if self.precession_axis is not None:
            set_(self, "precession_axis", unit_vector(self.precession_axis, "precession axis"))
        if (self.precession_axis is None) != (self.precession_rate is None):
            raise InputValueError("precession", "both an axis and a rate, or neither", self.precession_rate)
        if self.precession_rate is not None:
            rate = float(self.precession_rate)
            if not math.isfinite(rate):
                raise InputValueError("precession rate", "a finite rate in rad/s", self.precession_rate)
            set_(self, "precession_rate", rate)

    @property
    def angular_speed(self) -> float:
        """The service speed in rad/s."""
        return rpm_to_rad_per_s(self.rpm)


@dataclass(frozen=True, slots=True, eq=False)
class RotorMeasurement:
    """A measured part and its balance about the shaft (SI, input frame).

    Attributes
    ----------
    source : the mesh file or the manifest
    kind : ``"mesh"`` or ``"manifest"``
    length_unit : the input's length unit (the options' lengths were in it)
    body : the mesh's measurement (``kind == "mesh"``), else ``None``
    assembly : the manifest's result (``kind == "manifest"``), else ``None``
    properties : mass properties of the whole part
    axial_extent : (2,) m, lowest and highest position of the geometry along the shaft
    max_radius : m, largest distance of the geometry (corners, point masses) from the shaft axis
    planes_from : ``"given"`` or ``"part_ends"`` (the correction planes are ``axial_extent``)
    rotor : the options as given (input unit)
    balance : the balance result
    """

    source: str
    kind: str
    length_unit: str
    body: BodyMeasurement | None
    assembly: AssemblyResult | None
    properties: MassProperties
    axial_extent: np.ndarray
    max_radius: float
    planes_from: str
    rotor: RotorOptions
    balance: BalanceResult

    @property
    def rim_speed(self) -> float:
        """Speed of the outermost point at the service speed (m/s)."""
        return self.max_radius * self.balance.spin.angular_speed

    @property
    def findings(self) -> tuple[Finding, ...]:
        """Validation findings (warnings only: a part with errors is never balanced)."""
        if self.body is not None:
            return self.body.findings
        return tuple(f for item in self.assembly.items for f in item.measurement.findings)


def _extent(corner_blocks: Iterator[np.ndarray], point: np.ndarray, direction: np.ndarray) -> tuple[float, float, float]:
    """Lowest and highest axial position and the largest radius of points (m) about the shaft."""
    low, high, radius = math.inf, -math.inf, 0.0
    for corners in corner_blocks:
        relative = corners - point
        axial = relative @ direction
        radial = relative - np.outer(axial, direction)
        low = min(low, float(axial.min()))
        high = max(high, float(axial.max()))
        radius = max(radius, float(np.sqrt(np.einsum("ij,ij->i", radial, radial)).max()))
    return low, high, radius


def _mesh_corners(mesh) -> Iterator[np.ndarray]:
    for chunk in mesh.triangle_chunks():
        yield chunk.reshape(-1, 3)


def _assembly_corners(result: AssemblyResult) -> Iterator[np.ndarray]:
    for item in result.items:
        if item.mesh is not None:
            yield from item.placed_corner_chunks()
        else:
            yield item.properties.center_of_mass.reshape(1, 3)


def measure_rotor(
    path: str | os.PathLike,
    rotor: RotorOptions,
    options: MeasureOptions | None = None,
    **settings,
) -> RotorMeasurement:
    """Measure ``path`` (a mesh file, or an assembly manifest ending in ``.toml``) and balance it.

    ``options`` / ``settings`` are the :class:`MeasureOptions` of the measurement
    (``length_unit`` and ``density`` apply to a mesh; a manifest sets its own). A part whose
    mesh fails validation raises :class:`~meshprops.errors.InvalidMeshError`: no numbers.
    """
    options = MeasureOptions.build(options, **settings)
    source = os.fspath(path)
    if source.lower().endswith(".toml"):
        manifest = load_manifest(source)
        assembly = measure_assembly(manifest, options)
        if not assembly.valid:
            invalid = [item.name for item in assembly.items if not item.valid]
            first = next(item for item in assembly.items if not item.valid).measurement.validation.errors[0]
            raise InvalidMeshError(
                source,
                f"invalid mesh in body {', '.join(invalid)}: {first.code}: {first.message}",
                tuple(f for item in assembly.items for f in item.measurement.findings),
            )
        kind, body, unit, scale = "manifest", None, manifest.length_unit, manifest.metres_per_unit
        properties = assembly.total.properties
        corners = _assembly_corners(assembly)
    else:
        mesh = load_mesh(source, options.length_unit)
        body = measure_mesh(mesh, options)  # raises InvalidMeshError on a broken mesh
        kind, assembly, unit, scale = "mesh", None, options.length_unit, mesh.metres_per_unit
        properties = body.properties
        corners = _mesh_corners(mesh)

    point = rotor.axis_point * scale
    direction = rotor.axis_direction / float(np.linalg.norm(rotor.axis_direction))
    low, high, max_radius = _extent(corners, point, direction)
    if rotor.correction_planes is not None:
        planes = tuple(z * scale for z in rotor.correction_planes)
        planes_from = "given"
    else:
        if not high > low:
            raise InputValueError("correction planes", "two positions (the part has no length along the shaft)", None, source=source)
        planes, planes_from = (low, high), "part_ends"
    result = balance_of(
        properties,
        axis_point=point,
        axis_direction=direction,
        angular_speed=rotor.angular_speed,
        grade=rotor.grade,
        angle_reference=rotor.angle_reference,
        correction_planes=planes,
        correction_radius=None if rotor.correction_radius is None else rotor.correction_radius * scale,
        bearing_positions=None if rotor.bearing_positions is None else tuple(z * scale for z in rotor.bearing_positions),
        precession_axis=rotor.precession_axis,
        precession_rate=rotor.precession_rate,
    )
    return RotorMeasurement(
        source=source,
        kind=kind,
        length_unit=unit,
        body=body,
        assembly=assembly,
        properties=properties,
        axial_extent=np.array([low, high]),
        max_radius=max_radius,
        planes_from=planes_from,
        rotor=rotor,
        balance=result,
    )
