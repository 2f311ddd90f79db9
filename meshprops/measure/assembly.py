"""Assemblies: the bodies and point masses of a manifest, placed and combined into totals, a
per-item breakdown and overlaps. Everything is SI, in the assembly frame, after placement.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np

from ..errors import InputValueError, MeshFileError, UnitError
from ..io import Mesh, load_mesh
from ..physics.finite import require_finite
from ..physics.mass import MassProperties, combine
from ..physics.plausibility import (
    Plausibility,
    check_against_known_extent,
    check_plausibility,
)
from ..physics.principal import PrincipalFrame, principal_frame
from ..physics.spin import spin
from ..validation.density import density_findings
from ..validation.findings import ERROR, WARNING, Finding, ValidationReport
from .body import BodyMeasurement, measure_mesh
from .manifest import (
    BodySpec,
    FrameSpec,
    Manifest,
    ManifestReader,
    Placement,
    PointMassSpec,
    load_manifest,
    read_manifest_text,
)
from .options import MeasureOptions
from .overlap import Overlap, find_overlaps

#: Implied density outside this ratio of the named material's density gets a warning.
IMPLIED_DENSITY_RATIO_RANGE = (0.1, 1.2)


@dataclass(frozen=True, slots=True, eq=False)
class AssemblyItem:
    """One item of an assembly, measured and placed.

    Attributes
    ----------
    name, kind : ``"mesh"`` or ``"point_mass"``
    measurement : the body's measurement in the **assembly frame** (after
        placement), with its validation findings; for a point mass a
        measurement without mesh
    local : mass properties in the body's own mesh frame (``None`` for point
        masses and invalid meshes)
    placement : body-local → assembly
    spec : the manifest entry
    density_basis : ``"material"``, ``"density"``, ``"measured_mass"`` or ``None`` (point mass)
    implied_density_ratio : implied density / material density, when both are known
    plausibility : equivalent-box check, or ``None`` for invalid meshes
    mesh : the loaded mesh (``None`` for point masses)
    """

    name: str
    kind: str
    measurement: BodyMeasurement
    local: MassProperties | None
    placement: Placement
    spec: BodySpec | PointMassSpec
    density_basis: str | None
    implied_density_ratio: float | None
    plausibility: Plausibility | None
    mesh: Mesh | None = None

    @property
    def valid(self) -> bool:
        return self.measurement.valid

    @property
    def properties(self) -> MassProperties | None:
        return self.measurement.properties

    def placed_triangles(self) -> np.ndarray:
        """``(F, 3, 3)`` triangles of the mesh in the assembly frame (m)."""
        triangles = self.mesh.triangles()
        return triangles @ self.placement.rotation.T + self.placement.translation

    def placed_corner_chunks(self):
        """Yield ``(k, 3)`` corners of the mesh in the assembly frame (m), chunk by chunk."""
        for chunk in self.mesh.triangle_chunks():
            yield chunk.reshape(-1, 3) @ self.placement.rotation.T + self.placement.translation


@dataclass(frozen=True, slots=True, eq=False)
class BreakdownEntry:
    """One item's share of the total.

    ``inertia_contribution`` (kg·m², assembly axes) is the item's inertia about
    the **assembly** centre of mass (its own inertia plus the parallel-axis
    term); the contributions sum to the total inertia.
    """

    name: str
    kind: str
    mass: float
    mass_share: float
    inertia_contribution: np.ndarray
    trace_share: float


@dataclass(frozen=True, slots=True, eq=False)
class FrameView:
    """The totals seen in a named frame (coordinates ``x_F = Rᵀ (x − o)``)."""

    frame: FrameSpec
    properties: MassProperties
    principal: PrincipalFrame
    inertia_about_origin: np.ndarray


@dataclass(frozen=True, slots=True, eq=False)
class AssemblyResult:
    """Totals of an assembly. Totals are ``None`` when a body's mesh failed validation."""

    manifest: Manifest
    items: tuple[AssemblyItem, ...]
    total: BodyMeasurement
    named_points: dict
    frames: dict
    breakdown: tuple[BreakdownEntry, ...]
    overlaps: tuple[Overlap, ...]
    overlap_samples: int
    warnings: tuple[str, ...] = field(default_factory=tuple)
    total_plausibility: Plausibility | None = None

    @property
    def valid(self) -> bool:
        return self.total.valid


def resolve_point(manifest: Manifest, about) -> np.ndarray | None:
    """A point for ``about``: the name of one of the manifest's points, or (3,) numbers in the
    manifest's length unit. Returns (3,) m in the assembly frame, or ``None``."""
    if about is None:
        return None
    if isinstance(about, str):
        if about not in manifest.points:
            raise InputValueError(
                "about point", f"a named point ({', '.join(manifest.points) or 'none defined'})", about,
                source=manifest.path,
            )  # fmt: skip
        return manifest.points[about].copy()
    vector = np.asarray(about, dtype=np.float64)
    if vector.shape != (3,) or not np.all(np.isfinite(vector)):
        raise InputValueError("about point", f"three finite numbers in {manifest.length_unit}", about, source=manifest.path)
    return vector * manifest.metres_per_unit


def _principal_extent(items: list[AssemblyItem], axes: np.ndarray, *, known_only: bool = False) -> np.ndarray | None:
    """Extent (m) of the items' geometry along each of ``axes`` (rows).

    ``None`` if some item's extent is unknown (a point mass with a typed inertia and no
    box), unless ``known_only``: then such an item counts by its position alone.
    """
    low = np.full(3, np.inf)
    high = np.full(3, -np.inf)
    for item in items:
        if item.kind == "mesh":
            for placed in item.placed_corner_chunks():
                projected = placed @ axes.T
                low = np.minimum(low, projected.min(axis=0))
                high = np.maximum(high, projected.max(axis=0))
        else:
            spec = item.spec
            if spec.box_size is not None:
                half = spec.box_size / 2.0
                corners = spec.position + np.array([[sx, sy, sz] for sx in (-1, 1) for sy in (-1, 1) for sz in (-1, 1)]) * half
            elif spec.inertia_given and not known_only:
                return None  # own inertia without a size: its spread is unknown
            else:
                corners = spec.position[None, :]
            projected = corners @ axes.T
            low = np.minimum(low, projected.min(axis=0))
            high = np.maximum(high, projected.max(axis=0))
    return high - low


def _measure_body(manifest: Manifest, spec: BodySpec, reader: ManifestReader, cache: dict) -> AssemblyItem:
    key = ("body", spec.index)
    if (spec.mesh_path, spec.length_unit) not in cache:  # four wheels, one file: read and measure it once
        try:
            mesh = load_mesh(spec.mesh_path, spec.length_unit)
        except (MeshFileError, UnitError) as exc:
            raise reader.fail(key + ("mesh",), f"cannot load mesh: {exc}") from None
        # Measured at unit density, then scaled: mass and inertia are linear in the density.
        cache[spec.mesh_path, spec.length_unit] = (mesh, measure_mesh(mesh, density=1.0, on_invalid="report"))
    mesh, unit = cache[spec.mesh_path, spec.length_unit]
    # The unit-density measurement's density finding is about 1 kg/m^3, not this body's density.
    unit = replace(unit, name=spec.name, validation=replace(
        unit.validation, findings=tuple(f for f in unit.findings if f.code != "implausible_density")
    ))  # fmt: skip
    basis = "measured_mass" if spec.measured_mass is not None else ("material" if spec.material else "density")
    if not unit.valid:
        density = spec.density
        measurement = replace(unit, density=density, density_assumed=False)
        return AssemblyItem(spec.name, "mesh", measurement, None, spec.placement, spec, basis, None, None, mesh)
    volume = unit.properties.volume
    density = spec.measured_mass / volume if spec.measured_mass is not None else spec.density
    with np.errstate(over="ignore", invalid="ignore"):  # an overflow is refused just below, by name
        local = MassProperties(density * volume, volume, unit.properties.center_of_mass, density * unit.properties.inertia_about_com)
        placed = local.moved(spec.placement.rotation, spec.placement.translation)
    require_finite(placed, source=spec.mesh_path)
    findings = unit.findings + density_findings(density)
    ratio = None
    if spec.measured_mass is not None and spec.material is not None:
        ratio = density / spec.material.density
        low, high = IMPLIED_DENSITY_RATIO_RANGE
        if not low <= ratio <= high:
            findings = findings + (
                Finding(
                    "implied_density_unusual",
                    WARNING,
                    1,
                    f"measured mass {spec.measured_mass:.6g} kg implies density {density:.6g} kg/m^3, {ratio:.3g} x "
                    f"{spec.material.name} ({spec.material.density:g} kg/m^3): check the weighed mass, the mesh and "
                    "its length unit",
                ),
            )
    frame = principal_frame(placed.inertia_about_com)
    measurement = replace(
        unit,
        validation=replace(unit.validation, findings=findings),
        density=density,
        density_assumed=False,
        properties=placed,
        principal=frame,
    )
    item = AssemblyItem(spec.name, "mesh", measurement, local, spec.placement, spec, basis, ratio, None, mesh)
    extent = _principal_extent([item], frame.axes)
    return replace(item, plausibility=check_plausibility(placed.mass, frame.moments, extent))


def _point_mass_item(manifest: Manifest, spec: PointMassSpec) -> AssemblyItem:
    properties = MassProperties.point_mass(spec.mass, spec.position, spec.inertia)
    frame = principal_frame(properties.inertia_about_com)
    measurement = BodyMeasurement(
        source=f"{manifest.path}: point_mass {spec.name!r}",
        name=spec.name,
        file_format="point_mass",
        length_unit=manifest.length_unit,
        face_count=0,
        validation=None,
        density=None,
        density_assumed=False,
        properties=properties,
        principal=frame,
    )
    item = AssemblyItem(spec.name, "point_mass", measurement, None, Placement.identity(), spec, None, None, None)
    extent = _principal_extent([item], frame.axes)
    return replace(item, plausibility=check_plausibility(spec.mass, frame.moments, extent))


def _with_views(measurement: BodyMeasurement, point, omega, velocity) -> BodyMeasurement:
    properties = measurement.properties
    return replace(
        measurement,
        point=point,
        inertia_about_point=properties.inertia_about(point) if point is not None else None,
        spin=spin(properties, omega, com_velocity=velocity, point=point) if omega is not None else None,
    )


def measure_assembly(
    manifest: Manifest,
    options: MeasureOptions | None = None,
    *,
    overlap_seed: int = 0,
    **settings,
) -> AssemblyResult:
    """Measure every body of ``manifest`` and combine them in the assembly frame.

    Parameters
    ----------
    options : :class:`MeasureOptions` (``length_unit``, ``density`` and ``repair`` do not apply:
        the manifest sets units and densities); ``**settings`` replace its fields.
    about : (3,) m, optional
        Point (assembly frame) for ``inertia_about_point`` of every item and of the total.
    angular_velocity : (3,) rad/s, optional
        The whole assembly spins rigidly at this rate (assembly axes).
    com_velocity : (3,) m/s, optional
        Velocity of the assembly's centre of mass; each item's centre of mass
        then moves at ``v + ω × (c_i − c)``, so item angular momenta about
        ``about`` add up to the total's.
    overlap_samples : Monte-Carlo points per candidate pair (0: skip the overlap check)

    A mesh that fails validation leaves the total without numbers
    (``result.valid`` false); its findings say why.
    """
    options = MeasureOptions.build(options, **settings)
    overlap_samples = options.overlap_samples
    reader = ManifestReader(manifest.path, read_manifest_text(manifest.path))
    cache: dict = {}
    items = [_measure_body(manifest, spec, reader, cache) for spec in manifest.bodies]
    items += [_point_mass_item(manifest, spec) for spec in manifest.point_masses]
    point, omega, velocity = options.about, options.angular_velocity, options.com_velocity

    total_stub = BodyMeasurement(
        source=manifest.path,
        name="total",
        file_format="assembly",
        length_unit=manifest.length_unit,
        face_count=sum(item.measurement.face_count for item in items),
        validation=None,
        density=None,
        density_assumed=False,
        properties=None,
        principal=None,
    )
    invalid = [item.name for item in items if not item.valid]
    if invalid:
        total = replace(total_stub, validation=_total_report(
            [Finding("invalid_body", ERROR, len(invalid),
                     f"no totals: {len(invalid)} body mesh(es) failed validation: {', '.join(invalid)}")]
        ))  # fmt: skip
        return AssemblyResult(manifest, tuple(items), total, {}, {}, (), (), overlap_samples, ())

    with np.errstate(over="ignore", invalid="ignore"):
        properties = combine(item.properties for item in items)
    require_finite(properties, what="assembly totals", source=manifest.path)
    frame = principal_frame(properties.inertia_about_com)
    center = properties.center_of_mass
    placed_items = []
    for item in items:
        item_velocity = None
        if omega is not None:
            base_velocity = np.zeros(3) if velocity is None else velocity
            item_velocity = base_velocity + np.cross(omega, item.properties.center_of_mass - center)
        with np.errstate(over="ignore", invalid="ignore"):
            viewed = _with_views(item.measurement, point, omega, item_velocity)
        require_finite({"inertia_about_point": viewed.inertia_about_point, "spin": viewed.spin},
                       what=f"{item.name}'s views", source=manifest.path)
        placed_items.append(replace(item, measurement=viewed))
    items = placed_items

    trace = float(np.trace(properties.inertia_about_com))
    breakdown = []
    for item in items:
        contribution = item.properties.inertia_about(center)
        breakdown.append(
            BreakdownEntry(
                item.name,
                item.kind,
                item.properties.mass,
                item.properties.mass / properties.mass,
                contribution,
                float(np.trace(contribution)) / trace if trace > 0 else 0.0,
            )
        )

    named = {name: (position, properties.inertia_about(position)) for name, position in manifest.points.items()}
    frames = {}
    for name, spec in manifest.frames.items():
        seen = properties.moved(spec.rotation.T, -spec.rotation.T @ spec.origin)
        frames[name] = FrameView(spec, seen, principal_frame(seen.inertia_about_com), seen.inertia_about(np.zeros(3)))

    overlaps: list[Overlap] = []
    meshes = [item for item in items if item.kind == "mesh"]
    if overlap_samples and len(meshes) > 1:
        boxes = [_placed_box(item) for item in meshes]
        overlaps = find_overlaps(
            [item.name for item in meshes],
            [item.placed_triangles for item in meshes],
            boxes,
            [item.measurement.density for item in meshes],
            [item.properties.volume for item in meshes],
            samples=overlap_samples,
            seed=overlap_seed,
        )
    warnings = [
        f"{o.first} and {o.second} overlap by about {o.estimate.volume:.4g} m^3 (+/- {o.estimate.standard_error:.2g}, "
        f"{100 * o.share_of_smaller_volume:.3g} % of the smaller body): {o.double_counted_mass[0]:.4g} to "
        f"{o.double_counted_mass[1]:.4g} kg counted twice"
        for o in overlaps
    ]
    findings = [Finding("bodies_overlap", WARNING, 1, text) for text in warnings]
    for item in items:
        warnings.extend(f"{item.name}: {f.code}: {f.message}" for f in item.measurement.findings if f.severity == WARNING)

    extent = _principal_extent(items, frame.axes)
    plausibility = check_plausibility(properties.mass, frame.moments, extent)
    if extent is None:  # a typed inertia somewhere: still compare with what the known geometry allows
        plausibility = check_against_known_extent(
            properties.mass, frame.moments, _principal_extent(items, frame.axes, known_only=True)
        )
    checked_items = []
    for item in items:
        if item.plausibility is not None and item.plausibility.status == "not_checked" and item.kind == "point_mass":
            moments = item.measurement.principal.moments
            bound = _principal_extent(items, item.measurement.principal.axes, known_only=True)
            item = replace(item, plausibility=check_against_known_extent(item.properties.mass, moments, bound))
        checked_items.append(item)
    items = checked_items
    for name, check in [(item.name, item.plausibility) for item in items] + [("total", plausibility)]:
        if check is not None and check.status == "suspicious":
            text = f"{name}: implausible inertia: {check.message}"
            warnings.append(text)
            findings.append(Finding("implausible_inertia", WARNING, 1, text))
    with np.errstate(over="ignore", invalid="ignore"):
        total = _with_views(
            replace(total_stub, validation=_total_report(findings), properties=properties, principal=frame),
            point,
            omega,
            velocity,
        )
    require_finite({"inertia_about_point": total.inertia_about_point, "spin": total.spin,
                    "named_points": named, "frames": frames}, what="assembly totals", source=manifest.path)
    return AssemblyResult(
        manifest,
        tuple(items),
        total,
        named,
        frames,
        tuple(breakdown),
        tuple(overlaps),
        overlap_samples,
        tuple(warnings),
        plausibility,
    )


def _total_report(findings) -> ValidationReport:
    """Findings of the total (no mesh of its own: zero counts)."""
    return ValidationReport(tuple(findings), 0, 0, 0)


def _placed_box(item: AssemblyItem) -> np.ndarray:
    low = np.full(3, np.inf)
    high = np.full(3, -np.inf)
    for placed in item.placed_corner_chunks():
        low = np.minimum(low, placed.min(axis=0))
        high = np.maximum(high, placed.max(axis=0))
    return np.array([low, high])


def measure_manifest(path, options: MeasureOptions | None = None, *, about=None, **settings) -> AssemblyResult:
    """:func:`load_manifest` then :func:`measure_assembly`.

    ``about`` is a named point of the manifest or (3,) numbers in its length unit (see
    :func:`resolve_point`); ``**settings`` are other fields of :class:`MeasureOptions`.
    """
    manifest = load_manifest(path)
    return measure_assembly(manifest, options, about=resolve_point(manifest, about), **settings)
