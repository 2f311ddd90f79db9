"""The one serializer: result objects -> plain dicts (JSON data, SI). The JSON document, the
terminal tables, the CSV and the simulator blocks are all rendered from these dicts, so they can
never disagree.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import TYPE_CHECKING

import numpy as np

from ..materials import material_to_dict
from ..measure.body import BodyMeasurement
from ..physics.plausibility import Plausibility
from ..units import SI_UNITS
from ..validation.findings import Finding
from ..version import __version__
from .plain_records import CHECK_SCHEMA_NAME, CHECK_SCHEMA_VERSION, check_document_of  # noqa: F401  (re-exported)

SCHEMA_NAME = "meshprops.measure"


SCHEMA_VERSION = 2  # 2: products_of_inertia keys xy, xz, yz (were xy, yz, zx); unreadable bodies


CONVENTIONS = {
    "frame": "all vectors and tensors are in the axes of the input mesh; lengths converted to metres at load",
    "inertia_tensor": "I_ij = integral of (r^2 delta_ij - x_i x_j) dm; off-diagonal entries are the NEGATIVES "
    "of the products of inertia",
    "products_of_inertia": "P_ij = integral of x_i x_j dm about the centre of mass (P_xy, P_xz, P_yz); P_ij = -I_ij",
    "principal_moments": "ascending I1 <= I2 <= I3, about the centre of mass",
    "principal_axes": "rows e1, e2, e3 of a proper rotation R (det +1) with R I Rᵀ = diag(I1, I2, I3); e1 and e2 "
    "have their largest-magnitude component positive, e3 = e1 x e2; axes flagged not unique where moments coincide",
    "angular_velocity": "rad/s in the input axes; rpm is converted as 2*pi/60 rad/s per rpm",
    "spin": "angular_momentum_about_com = I_cm w; kinetic_energy = 1/2 wᵀ I_cm w (rotational); about a point p: "
    "L_p = (c - p) x m v + I_cm w",
    "density": "uniform density over each body's enclosed volume",
}


CAUTIONS = (
    "Geometry-derived values assume uniform density and an exact, closed CAD surface.",
    "For lifting, rotor balancing, flight weight and balance or any safety-relevant use, confirm mass and centre "
    "of mass by weighing and measurement, and follow local codes and licensed engineering practice.",
)


def vector_to_list(values) -> list[float] | None:
    if values is None:
        return None
    return [float(x) for x in np.asarray(values, dtype=np.float64).reshape(-1)]


def matrix_to_list(values) -> list[list[float]] | None:
    if values is None:
        return None
    return [[float(x) for x in row] for row in np.asarray(values, dtype=np.float64)]


def finding_to_dict(finding: Finding) -> dict:
    """A finding as plain JSON data."""
    return {
        "code": finding.code,
        "severity": finding.severity,
        "count": finding.count,
        "message": finding.message,
        "where": [dict(place) for place in finding.where],
        "volume_change": finding.volume_change,
    }


def body_to_dict(body: BodyMeasurement) -> dict:
    """One body as plain JSON data (SI). Numbers are ``null`` when the mesh is invalid."""
    properties = body.properties
    frame = body.principal
    validation = body.validation
    result: dict = {"source": body.source}
    if body.name is not None:
        result["name"] = body.name
    result.update(
        {
            "valid": body.valid,
            "findings": [finding_to_dict(f) for f in body.findings],
            "mesh": {
                "format": body.file_format,
                "length_unit": body.length_unit,
                "faces": body.face_count,
                "vertices": validation.vertex_count if validation else None,
                "edges": validation.edge_count if validation else None,
                "shells": validation.extra.get("shells") if validation else None,
                "voids": validation.extra.get("voids") if validation else None,
                "holes": validation.extra.get("holes") if validation else None,
            },
            "density": body.density,
            "density_assumed": body.density_assumed,
            "volume": properties.volume if properties else None,
            "mass": properties.mass if properties else None,
            "center_of_mass": vector_to_list(properties.center_of_mass) if properties else None,
            "inertia_about_com": matrix_to_list(properties.inertia_about_com) if properties else None,
            "products_of_inertia": dict(zip(("xy", "xz", "yz"), vector_to_list(properties.products_of_inertia)))
            if properties
            else None,
            "radii_of_gyration": vector_to_list(properties.radii_of_gyration) if properties else None,
            "principal_moments": vector_to_list(frame.moments) if frame else None,
            "principal_axes": matrix_to_list(frame.axes) if frame else None,
            "principal_symmetry": frame.symmetry if frame else None,
            "principal_axes_unique": list(frame.unique_axes) if frame else None,
            "triangle_inequality": frame.satisfies_triangle_inequality if frame else None,
        }
    )
    plain = body.shell_sum if properties else None
    result["shell_sum"] = (
        {"volume": plain.volume, "mass": plain.mass, "center_of_mass": vector_to_list(plain.center_of_mass)}
        if plain is not None
        else None
    )
    if body.inertia_about_point is not None:
        result["inertia_about_point"] = {"point": vector_to_list(body.point), "tensor": matrix_to_list(body.inertia_about_point)}
    if body.spin is not None:
        result["spin"] = spin_to_dict(body.spin)
    return result


def spin_to_dict(state) -> dict:
    angle = state.angle_between_momentum_and_angular_velocity
    data = {
        "angular_velocity": vector_to_list(state.angular_velocity),
        "angular_momentum_about_com": vector_to_list(state.angular_momentum_about_com),
        "kinetic_energy": state.rotational_kinetic_energy,
        "angle_between_momentum_and_angular_velocity": angle,
        "angle_between_momentum_and_angular_velocity_deg": math.degrees(angle) if angle is not None else None,
        "com_velocity": vector_to_list(state.com_velocity),
        "translational_kinetic_energy": state.translational_kinetic_energy,
        "total_kinetic_energy": state.kinetic_energy,
    }
    if state.point is not None:
        data["about_point"] = {
            "point": vector_to_list(state.point),
            "orbital_angular_momentum": vector_to_list(state.orbital_angular_momentum),
            "spin_angular_momentum": vector_to_list(state.angular_momentum_about_com),
            "angular_momentum": vector_to_list(state.angular_momentum_about_point),
        }
    return data


def document(bodies: Sequence[dict], *, input_length_unit: str, total: dict | None = None, extra=None) -> dict:
    """The whole JSON document around already-serialized bodies."""
    doc = {
        "schema": SCHEMA_NAME,
        "schema_version": SCHEMA_VERSION,
        "meshprops_version": __version__,
        "units": dict(SI_UNITS, input_length_unit=input_length_unit),
        "conventions": CONVENTIONS,
        "cautions": list(CAUTIONS),
        "bodies": list(bodies),
    }
    if total is not None:
        doc["total"] = total
    if extra:
        doc.update(extra)
    return doc


def check_to_dict(result) -> dict:
    """One checked file (:class:`meshprops.validation.checks.CheckResult`) as plain JSON data."""
    report = result.report
    return {
        "source": result.source,
        "valid": report.valid,
        "errors": len(report.errors),
        "warnings": len(report.warnings),
        "findings": [finding_to_dict(f) for f in report.findings],
        "mesh": {
            "format": result.file_format,
            "length_unit": result.length_unit,
            "faces": result.face_count,
            "vertices": report.vertex_count,
            "edges": report.edge_count,
            "shells": report.extra.get("shells"),
            "voids": report.extra.get("voids"),
            "holes": report.extra.get("holes"),
            "self_intersections_checked": report.extra.get("self_intersections_checked"),
        },
    }


def check_document(results, *, input_length_unit: str) -> dict:
    """The JSON document of ``meshprops check``: one entry per file plus totals."""
    return check_document_of([check_to_dict(result) for result in results], input_length_unit=input_length_unit)


if TYPE_CHECKING:  # the assembly machinery is imported only where a manifest is measured
    from ..measure.assembly import AssemblyItem, AssemblyResult


ASSEMBLY_CONVENTIONS = {
    "frame": "assembly frame: every body's values after its placement x -> R x + t (t in m); a mesh body's values "
    "in its own mesh frame are under body_frame; totals in the assembly frame, and in each named frame under "
    "total.in_frames",
    "placement": "rotation R (rows written out) maps body-local coordinates x to assembly coordinates R x + t",
    "named_frames": "a frame with origin o and rotation R has axes = columns of R in assembly coordinates; "
    "coordinates in it are R^T (x - o), tensors R^T I R",
    "breakdown": "inertia_contribution_about_com is each item's inertia about the ASSEMBLY centre of mass (own "
    "inertia plus parallel-axis term), assembly axes; contributions sum to total.inertia_about_com",
    "overlap": "Monte-Carlo estimate of shared volume (uniform points in the intersection of bounding boxes, exact "
    "ray-parity point-in-solid test); standard_error is one binomial standard error",
}


#: Keys only a mesh body has values for; point masses and the total carry them as null, so that
#: every item and the total have the same keys.
MESH_BODY_KEYS = (
    "material", "density_basis", "measured_mass", "implied_density", "implied_density_ratio_to_material",
    "placement", "body_frame",
)  # fmt: skip


def _item_to_dict(item: "AssemblyItem") -> dict:
    data = body_to_dict(item.measurement)
    data["name"] = item.name
    data["kind"] = item.kind
    if item.kind == "point_mass":
        data["source"] = None  # not modelled: no mesh file
        data["mesh"] = None
        spec = item.spec
        data.update(dict.fromkeys(MESH_BODY_KEYS))
        data["own_inertia_given"] = spec.inertia_given
        data["box_size"] = vector_to_list(spec.box_size)
    else:
        spec = item.spec
        data["material"] = material_to_dict(spec.material) if spec.material else None
        data["density_basis"] = item.density_basis
        data["measured_mass"] = spec.measured_mass
        data["implied_density"] = item.measurement.density if spec.measured_mass is not None else None
        data["implied_density_ratio_to_material"] = item.implied_density_ratio
        data["placement"] = {
            "rotation": matrix_to_list(item.placement.rotation),
            "translation": vector_to_list(item.placement.translation),
        }
        if item.local is not None:
            from ..physics.principal import principal_frame

            frame = principal_frame(item.local.inertia_about_com)
            data["body_frame"] = {
                "center_of_mass": vector_to_list(item.local.center_of_mass),
                "inertia_about_com": matrix_to_list(item.local.inertia_about_com),
                "principal_moments": vector_to_list(frame.moments),
                "principal_axes": matrix_to_list(frame.axes),
            }
        else:
            data["body_frame"] = None
    data["plausibility"] = plausibility_to_dict(item.plausibility) if item.plausibility else None
    return data


def summed_mesh(bodies: list[dict], length_unit: str, *, file_format: str = "assembly") -> dict:
    """The ``mesh`` entry of a total: the bodies' counts added (``None`` where any is unknown)."""
    meshes = [body["mesh"] for body in bodies if body.get("mesh")]
    summed = {"format": file_format, "length_unit": length_unit}
    for key in ("faces", "vertices", "edges", "shells", "voids", "holes"):
        values = [mesh.get(key) for mesh in meshes]
        summed[key] = None if any(v is None for v in values) else int(sum(values))
    return summed


def assembly_document(result: "AssemblyResult") -> dict:
    """The JSON document of an assembly (SI): every item in ``bodies``, the ``total`` with the same keys."""
    manifest = result.manifest
    bodies = [_item_to_dict(item) for item in result.items]
    total = body_to_dict(result.total)
    # The same keys as a body: the manifest is the total's source, its mesh the sum of the bodies' meshes.
    total["source"] = manifest.path
    total["mesh"] = summed_mesh(bodies, manifest.length_unit)
    total.update(dict.fromkeys(MESH_BODY_KEYS))
    total["name"] = "total"
    total["kind"] = "total"
    total["inertia_about_named_points"] = {
        name: {"point": vector_to_list(point), "tensor": matrix_to_list(tensor)} for name, (point, tensor) in result.named_points.items()
    }
    total["in_frames"] = {
        name: {
            "origin": vector_to_list(view.frame.origin),
            "axes": matrix_to_list(view.frame.rotation.T),
            "center_of_mass": vector_to_list(view.properties.center_of_mass),
            "inertia_about_com": matrix_to_list(view.properties.inertia_about_com),
            "inertia_about_origin": matrix_to_list(view.inertia_about_origin),
            "principal_moments": vector_to_list(view.principal.moments),
            "principal_axes": matrix_to_list(view.principal.axes),
        }
        for name, view in result.frames.items()
    }
    total["plausibility"] = plausibility_to_dict(result.total_plausibility) if result.total_plausibility else None
    breakdown = [
        {
            "name": entry.name,
            "kind": entry.kind,
            "mass": entry.mass,
            "mass_share": entry.mass_share,
            "inertia_contribution_about_com": matrix_to_list(entry.inertia_contribution),
            "inertia_trace_share": entry.trace_share,
        }
        for entry in result.breakdown
    ]
    overlaps = [
        {
            "bodies": [o.first, o.second],
            "volume": o.estimate.volume,
            "standard_error": o.estimate.standard_error,
            "samples": o.estimate.samples,
            "hits": o.estimate.hits,
            "sampled_box": matrix_to_list(o.estimate.box),
            "undetected_upper_bound": o.estimate.undetected_upper_bound,
            "double_counted_mass": list(o.double_counted_mass),
            "share_of_smaller_volume": o.share_of_smaller_volume,
        }
        for o in result.overlaps
    ]
    doc = document(
        bodies,
        input_length_unit=manifest.length_unit,
        total=total,
        extra={
            "assembly": {
                "name": manifest.name,
                "manifest": manifest.path,
                "length_unit": manifest.length_unit,
                "points": {name: vector_to_list(p) for name, p in manifest.points.items()},
                "frames": {
                    name: {"origin": vector_to_list(f.origin), "axes": matrix_to_list(f.rotation.T)} for name, f in manifest.frames.items()
                },
                "user_materials": {name: material_to_dict(m) for name, m in manifest.materials.items()},
            },
            "breakdown": breakdown if result.valid else None,
            "overlap_check": {"samples_per_pair": result.overlap_samples, "performed": bool(result.overlap_samples)},
            "overlaps": overlaps,
            "warnings": list(result.warnings),
        },
    )
    doc["conventions"] = dict(CONVENTIONS, **ASSEMBLY_CONVENTIONS)
    return doc


def materials_document() -> dict:
    """The built-in materials table as JSON data (densities in kg/m³)."""
    from ..materials import MATERIALS

    return {
        "schema": "meshprops.materials",
        "schema_version": 1,
        "units": {"density": "kg/m^3"},
        "note": "nominal densities of solid material; every value recalled from memory of the cited source "
        "(from_memory true): verify before relying on it",
        "materials": [material_to_dict(m) for m in MATERIALS.values()],
    }


def plausibility_to_dict(check: Plausibility) -> dict:
    def vector(values):
        return None if values is None else [float(v) for v in values]

    return {
        "status": check.status,
        "equivalent_box": vector(check.equivalent_box),
        "extent_along_principal_axes": vector(check.extent),
        "ratio": vector(check.ratio),
        "message": check.message,
    }
