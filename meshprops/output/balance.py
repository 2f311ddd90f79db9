"""Output of ``meshprops balance``: one serializer (result -> plain dict) feeding the JSON
document and the terminal table, so they can never disagree.

SI throughout (keys without a unit suffix), plus the figures the balancing trade reads:
``_g_mm`` (g·mm), ``_g_mm2`` (g·mm²), ``_g`` (grams), ``_deg`` (degrees), ``_rpm``.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

import numpy as np

from ..physics.balance import (
    BALANCE_GRADES,
    EQUAL_MOMENT_RTOL,
    G_MM_PER_KG_M,
    GRADE_TABLE_FROM_MEMORY,
    GRADE_TABLE_SOURCE,
    NEAR_EQUAL_RTOL,
    PLANE_SHARE_BOUNDS,
    BalanceResult,
    RotatingVector,
)
from ..units import SI_UNITS
from ..version import __version__
from .serialize import finding_to_dict

if TYPE_CHECKING:
    from ..measure.rotor import RotorMeasurement

BALANCE_SCHEMA_NAME = "meshprops.balance"
BALANCE_SCHEMA_VERSION = 1

BALANCE_CONVENTIONS = {
    "frame": "vectors and tensors in the axes of the input; lengths converted to metres at load",
    "inertia_tensor": "I_ij = integral of (r^2 delta_ij - x_i x_j) dm about the centre of mass; off-diagonal "
    "entries are the NEGATIVES of the products of inertia",
    "shaft_axes": "a = unit shaft direction; u = angle_reference (perpendicular to a; by default the input axis "
    "with the smallest component along a, x before y before z on a tie, projected and normalized); v = a x u",
    "angles": "in the plane perpendicular to the shaft, from u towards v (right-handed about a: counter-clockwise "
    "with a pointing at the viewer), 0 to 360 deg, at the orientation the part is modelled in; null where the "
    "vector is numerically zero",
    "rotation": "the rotor spins right-handed about a: angular velocity = (2 pi rpm / 60) a",
    "axial_positions": "signed distance along a from the axis point, in metres",
    "static_unbalance": "mass x radial offset of the centre of mass from the shaft axis (kg*m; g*mm)",
    "couple_unbalance": "products of inertia P_ua, P_va = integral of x_a (x_u, x_v) dm about the centre of mass, "
    "in shaft axes (kg*m^2; g*mm^2); its angle is that of the unbalance on the +a side of the couple",
    "correction": "plane unbalances U1 + U2 = static unbalance and z1 U1 + z2 U2 = first axial moment about the "
    "axis point; correction mass = |U| / radius, ADDED at correction_angle_deg (opposite the unbalance), or "
    "removed at angle_deg",
    "grade": "ISO 21940-11 (formerly ISO 1940-1): U_per = G m / omega, i.e. 9549 G m / n g*mm with G in mm/s, m in "
    "kg, n in rpm",
    "allocation": "U_per split between the correction planes by the lever rule about the centre of mass, each share "
    f"kept within {PLANE_SHARE_BOUNDS[0]:.0%}..{PLANE_SHARE_BOUNDS[1]:.0%} (simplified, from memory); the standard "
    "has other rules for overhung and narrow rotors",
    "bearing_forces": "rotating forces the rotor exerts on each bearing at speed (N), turning with the shaft; gravity "
    "and external loads not included",
    "gyroscopic_moment": "omega_p b x (I_cm omega a), applied to the rotor by its mounts; exact for a rotor symmetric "
    "about the shaft precessing about an axis perpendicular to it",
    "free_spin": "a free body spun about each principal axis: largest and smallest moments stable, intermediate "
    "unstable (rigid body; with energy dissipation only the largest is stable); rates from Euler's equations "
    f"linearized about the spin; gaps below {NEAR_EQUAL_RTOL:.0%} of the largest moment flagged near-equal",
}

BALANCE_CAUTIONS = (
    "Geometry-derived unbalance assumes uniform density and perfect manufacture; real parts carry unbalance from "
    "material, tolerances, assembly and fits that no model shows.",
    "Real rotors are balanced on a balancing machine; use these figures to plan, not to sign off.",
    "High-speed rotors store energy that can injure: a burst or a loose correction mass is a projectile. Guard "
    "and contain them.",
    "Defer to the machine's standards (ISO 21940 and the machine's own), the manufacturer, and licensed engineering "
    "practice.",
)


def _list(values) -> list[float] | None:
    if values is None:
        return None
    return [float(x) + 0.0 for x in np.asarray(values, dtype=np.float64).reshape(-1)]


def _matrix(values) -> list[list[float]]:
    return [[float(x) + 0.0 for x in row] for row in np.asarray(values, dtype=np.float64)]


def _degrees(angle: float | None) -> float | None:
    return None if angle is None else math.degrees(angle)


def _rotating(vector: RotatingVector) -> dict:
    return {
        "magnitude": vector.magnitude,
        "angle_deg": vector.angle_deg,
        "components_uv": _list(vector.components),
        "vector": _list(vector.vector),
    }


def grade_table_to_dict() -> dict:
    """The table of usual balance grades, with its source."""
    return {
        "source": GRADE_TABLE_SOURCE,
        "from_memory": GRADE_TABLE_FROM_MEMORY,
        "grades": [
            {"grade": g.value, "label": g.label, "applications": g.applications} for g in BALANCE_GRADES
        ],
    }


def balance_result_to_dict(result: BalanceResult) -> dict:
    """A :class:`~meshprops.physics.balance.BalanceResult` as plain JSON data (SI plus trade figures).

    The five headline keys (``static_unbalance_g_mm``, ``couple_unbalance_g_mm2``,
    ``permissible_unbalance_g_mm``, ``achieved_grade``, ``passes``) sit at the top.
    """
    axes = result.axes
    check = result.grade
    static = result.static
    couple = result.couple
    tilt = result.tilt
    spin = result.spin
    data: dict = {
        "static_unbalance_g_mm": static.g_mm,
        "couple_unbalance_g_mm2": couple.g_mm2,
        "permissible_unbalance_g_mm": check.permissible_g_mm,
        "achieved_grade": None if check.achieved_grade is None else check.achieved_grade.value,
        "passes": check.passes,
        "mass": result.mass,
        "center_of_mass": _list(result.center_of_mass),
        "inertia_about_com": _matrix(result.inertia_about_com),
        "shaft": {
            "axis_point": _list(axes.point),
            "axis_direction": _list(axes.direction),
            "angle_reference": _list(axes.reference),
            "angle_quadrature": _list(axes.quadrature),
        },
        "speed": {
            "rpm": check.angular_speed * 60.0 / (2.0 * math.pi),
            "angular_speed": check.angular_speed,
        },
        "static_unbalance": {
            "unbalance": static.unbalance.magnitude,
            "unbalance_g_mm": static.g_mm,
            "angle_deg": static.unbalance.angle_deg,
            "vector": _list(static.unbalance.vector),
            "com_offset": _list(static.com_offset),
            "com_offset_distance": static.offset_distance,
            "com_axial_position": static.com_axial_position,
        },
        "couple_unbalance": {
            "unbalance": couple.unbalance.magnitude,
            "unbalance_g_mm2": couple.g_mm2,
            "angle_deg": couple.unbalance.angle_deg,
            "products_of_inertia_shaft": {
                "ua": float(couple.unbalance.components[0]),
                "va": float(couple.unbalance.components[1]),
                "uv": couple.product_uv,
            },
            "inertia_in_shaft_axes": _matrix(couple.inertia_in_shaft_axes),
        },
        "principal_tilt": {
            "angle": tilt.angle,
            "angle_deg": tilt.angle_deg,
            "axis": _list(tilt.axis),
            "moment": tilt.moment,
            "axis_unique": tilt.unique,
            "moment_about_shaft": tilt.moment_about_shaft,
        },
        "correction": None,
        "grade_check": {
            "grade": check.grade.value,
            "grade_label": check.grade.label,
            "applications": check.grade.applications,
            "basis": check.basis,
            "permissible_unbalance": check.permissible,
            "permissible_unbalance_g_mm": check.permissible_g_mm,
            "permissible_specific_unbalance": check.permissible_offset,
            "permissible_specific_unbalance_g_mm_per_kg": check.permissible_offset * 1e3 * 1e3,
            "residual_grade_mm_per_s": check.residual_grade,
            "achieved_grade": None if check.achieved_grade is None else check.achieved_grade.value,
            "achieved_grade_label": None if check.achieved_grade is None else check.achieved_grade.label,
            "passes": check.passes,
        },
        "bearings": None,
        "at_speed": {
            "angular_velocity": _list(spin.angular_velocity),
            "angular_momentum_about_com": _list(spin.angular_momentum_about_com),
            "momentum_angle_to_shaft": spin.momentum_angle_to_shaft,
            "momentum_angle_to_shaft_deg": _degrees(spin.momentum_angle_to_shaft),
            "inertia_about_shaft": spin.inertia_about_shaft,
            "kinetic_energy": spin.kinetic_energy,
            "rotational_kinetic_energy_about_com": spin.rotational_kinetic_energy,
            "unbalance_force": _list(spin.unbalance_force),
            "unbalance_force_magnitude": float(np.linalg.norm(spin.unbalance_force)),
            "unbalance_moment": _list(spin.unbalance_moment),
            "unbalance_moment_magnitude": float(np.linalg.norm(spin.unbalance_moment)),
        },
        "gyroscopic": None,
        "free_spin": {
            "axes": [
                {"moment": a.moment, "axis": _list(a.axis), "stability": a.stability, "rate": a.rate}
                for a in result.free_spin.axes
            ],
            "relative_gaps": _list(result.free_spin.relative_gaps),
            "near_equal": list(result.free_spin.near_equal),
        },
        "flywheel": {
            "inertia_about_shaft": result.flywheel.inertia_about_shaft,
            "stored_energy": result.flywheel.stored_energy,
            "angular_momentum": result.flywheel.angular_momentum,
            "energy_per_mass": result.flywheel.energy_per_mass,
        },
    }
    if result.planes is not None:
        data["correction"] = {
            "radius": result.correction_radius,
            "planes": [
                {
                    "position": plane.position,
                    "unbalance": plane.unbalance.magnitude,
                    "unbalance_g_mm": plane.unbalance.magnitude * G_MM_PER_KG_M,
                    "angle_deg": plane.unbalance.angle_deg,
                    "vector": _list(plane.unbalance.vector),
                    "correction_angle_deg": _degrees(plane.correction_angle),
                    "correction_mass": plane.correction_mass,
                    "correction_mass_g": None if plane.correction_mass is None else plane.correction_mass * 1e3,
                    "share": plane.share,
                    "permissible_unbalance": plane.permissible,
                    "permissible_unbalance_g_mm": plane.permissible * G_MM_PER_KG_M,
                    "passes": plane.passes,
                }
                for plane in result.planes
            ],
        }
    if result.bearings is not None:
        data["bearings"] = [
            {
                "position": bearing.position,
                "static_force": _rotating(bearing.static),
                "couple_force": _rotating(bearing.couple),
                "force": _rotating(bearing.total),
            }
            for bearing in result.bearings
        ]
    if result.gyroscopic is not None:
        data["gyroscopic"] = {
            "precession_axis": _list(result.gyroscopic.axis),
            "precession_rate": result.gyroscopic.rate,
            "moment": _list(result.gyroscopic.moment),
            "magnitude": result.gyroscopic.magnitude,
        }
    return data



BALANCE_UNITS = dict(
    SI_UNITS,
    force="N",
    moment="N*m",
    unbalance="kg*m (keys ending _g_mm: g*mm)",
    couple_unbalance="kg*m^2 (keys ending _g_mm2: g*mm^2)",
    grade="mm/s (balance quality grade G = e_per * omega)",
    specific_energy="J/kg",
)


def balance_document(rotor: RotorMeasurement) -> dict:
    """The whole JSON document of ``meshprops balance`` for a measured part."""
    body = rotor.body
    findings = []
    if body is not None:
        findings = [finding_to_dict(f) for f in body.findings]
    else:
        for item in rotor.assembly.items:
            findings += [dict(finding_to_dict(f), body=item.name) for f in item.measurement.findings]
    source_input: dict = {"kind": rotor.kind, "length_unit": rotor.length_unit, "findings": findings}
    if body is not None:
        source_input.update(
            density=body.density, density_assumed=body.density_assumed, bodies=1, point_masses=0, faces=body.face_count
        )
    else:
        items = rotor.assembly.items
        source_input.update(
            density=None,
            density_assumed=False,
            bodies=sum(1 for item in items if item.kind == "mesh"),
            point_masses=sum(1 for item in items if item.kind == "point_mass"),
            faces=int(rotor.assembly.total.face_count),
        )
    doc = {
        "schema": BALANCE_SCHEMA_NAME,
        "schema_version": BALANCE_SCHEMA_VERSION,
        "meshprops_version": __version__,
        "units": dict(BALANCE_UNITS, input_length_unit=rotor.length_unit),
        "conventions": BALANCE_CONVENTIONS,
        "cautions": list(BALANCE_CAUTIONS),
        "grade_table": grade_table_to_dict(),
        "source": rotor.source,
        "input": source_input,
        "geometry": {"axial_extent": _list(rotor.axial_extent), "max_radius": rotor.max_radius},
        "correction_planes_from": rotor.planes_from,
    }
    doc.update(balance_result_to_dict(rotor.balance))
    doc["speed"]["rpm"] = rotor.rotor.rpm  # as typed (the serializer's is converted back from rad/s)
    doc["flywheel"].update(max_radius=rotor.max_radius, rim_speed=rotor.rim_speed)
    return doc


# ---------------------------------------------------------------------------- terminal table


def _number(value, digits: int = 4) -> str:
    if value is None:
        return "-"
    return f"{float(value) + 0.0:.{digits}g}"


def _angle(value) -> str:
    return "-" if value is None else f"{value:6.1f} deg"


def _mm(value) -> str:
    return "-" if value is None else f"{value * 1e3:.4g} mm"


def _verdict(passes) -> str:
    return "-" if passes is None else ("pass" if passes else "FAIL")


def render_balance_table(doc: dict) -> str:
    """A plain-text report of a balance document (the same data as the JSON, trade units)."""
    lines: list[str] = []
    shaft = doc["shaft"]
    speed = doc["speed"]
    check = doc["grade_check"]
    title = doc.get("source", "rotor")
    lines.append(f"{title}: balance about a shaft at {_number(speed['rpm'], 6)} rpm ({_number(speed['angular_speed'], 6)} rad/s)")
    lines.append(f"  mass {_number(doc['mass'], 6)} kg; centre of mass {_vector(doc['center_of_mass'])} m")
    lines.append(f"  shaft through {_vector(shaft['axis_point'])} m along {_vector(shaft['axis_direction'])}")
    lines.append(
        f"  angles from u = {_vector(shaft['angle_reference'])} towards v = {_vector(shaft['angle_quadrature'])}"
        " (right-handed about the shaft)"
    )
    source_input = doc.get("input", {})
    for finding in source_input.get("findings", []):
        where = f" ({finding['body']})" if "body" in finding else ""
        lines.append(f"  {finding['severity']}{where}: {finding['code']}: {finding['message']}")
    if source_input.get("density_assumed"):
        lines.append("  density ASSUMED (none given): unbalance, forces and energy scale with it")
    lines.append("")

    static = doc["static_unbalance"]
    couple = doc["couple_unbalance"]
    tilt = doc["principal_tilt"]
    lines.append("Unbalance of the part as modelled")
    lines.append(f"  {'static  (centre of mass off axis)':<38}{_number(static['unbalance_g_mm']):>10} g*mm    {_angle(static['angle_deg'])}")
    lines.append(
        f"  {'':<38}offset {_number(static['com_offset_distance'] * 1e6)} um at {_mm(static['com_axial_position'])} along the shaft"
    )
    lines.append(f"  {'couple  (shaft not a principal axis)':<38}{_number(couple['unbalance_g_mm2']):>10} g*mm^2  {_angle(couple['angle_deg'])}")
    unique = "" if tilt["axis_unique"] else " (moment shared with another axis)"
    lines.append(f"  {'nearest principal axis from the shaft':<38}{_number(tilt['angle_deg']):>10} deg{unique}")
    lines.append("")

    verdict = "PASSES" if check["passes"] else "FAILS"
    lines.append(f"Balance grade {check['grade_label']}: the part as modelled {verdict}")
    lines.append(f"  typical parts: {check['applications']}")
    lines.append(
        f"  permissible residual unbalance U_per = {_number(check['permissible_unbalance_g_mm'])} g*mm"
        f" ({_number(check['permissible_specific_unbalance_g_mm_per_kg'])} g*mm/kg)"
    )
    achieved = check["achieved_grade_label"] or "coarser than the coarsest grade"
    lines.append(f"  residual grade {_number(check['residual_grade_mm_per_s'])} mm/s; finest grade met: {achieved}")
    correction = doc.get("correction")
    if correction:
        radius = correction["radius"]
        origin = doc.get("correction_planes_from")
        heading = "  correction planes" + (" at the part's two ends along the shaft" if origin == "part_ends" else "")
        heading += f", correction radius {_mm(radius)}" if radius is not None else ", no correction radius given"
        lines.append(heading)
        lines.append(
            f"    {'plane':<6}{'position':>12} {'unbalance':>15} {'angle':>10} {'share':>6} {'allowed':>15}  {'check':<6}add mass"
        )
        for number, plane in enumerate(correction["planes"], start=1):
            add = "-"
            if plane["correction_mass_g"] is not None and plane["correction_angle_deg"] is not None:
                add = f"{_number(plane['correction_mass_g'])} g at {plane['correction_angle_deg']:.1f} deg"
            lines.append(
                f"    {number:<6}{_mm(plane['position']):>12} {_number(plane['unbalance_g_mm']) + ' g*mm':>15}"
                f" {_angle(plane['angle_deg']):>10} {plane['share'] * 100:>5.0f}%"
                f" {_number(plane['permissible_unbalance_g_mm']) + ' g*mm':>15}  {_verdict(plane['passes']):<6}{add}"
            )
    else:
        lines.append("  no correction planes: static unbalance checked against U_per; couple not checked")
    lines.append("")

    bearings = doc.get("bearings")
    if bearings:
        lines.append("Rotating bearing forces at speed (force of the rotor on each bearing)")
        lines.append(f"    {'bearing':<8}{'position':>12} {'static':>12} {'couple':>12} {'total':>12} {'angle':>10}")
        for number, bearing in enumerate(bearings, start=1):
            lines.append(
                f"    {number:<8}{_mm(bearing['position']):>12} {_number(bearing['static_force']['magnitude']) + ' N':>12}"
                f" {_number(bearing['couple_force']['magnitude']) + ' N':>12} {_number(bearing['force']['magnitude']) + ' N':>12}"
                f" {_angle(bearing['force']['angle_deg']):>10}"
            )
        lines.append("")

    at_speed = doc["at_speed"]
    lines.append("At speed")
    lines.append(f"  {'angular momentum about com':<38}{_vector(at_speed['angular_momentum_about_com'])} kg*m^2/s")
    lines.append(f"  {'its angle to the shaft':<38}{_number(at_speed['momentum_angle_to_shaft_deg'])} deg")
    lines.append(f"  {'unbalance force (rotating)':<38}{_number(at_speed['unbalance_force_magnitude'])} N")
    lines.append(f"  {'moment to turn L with the shaft':<38}{_number(at_speed['unbalance_moment_magnitude'])} N*m")
    lines.append(f"  {'kinetic energy':<38}{_number(at_speed['kinetic_energy'])} J")
    gyroscopic = doc.get("gyroscopic")
    if gyroscopic:
        lines.append(
            f"  {'gyroscopic moment':<38}{_number(gyroscopic['magnitude'])} N*m at {_number(gyroscopic['precession_rate'])} rad/s"
            f" about {_vector(gyroscopic['precession_axis'])}: {_vector(gyroscopic['moment'])} N*m"
        )
    flywheel = doc["flywheel"]
    lines.append(
        f"  {'flywheel: stored energy':<38}{_number(flywheel['stored_energy'])} J"
        f" ({_number(flywheel['energy_per_mass'])} J/kg); angular momentum {_number(flywheel['angular_momentum'])} kg*m^2/s"
    )
    if flywheel.get("rim_speed") is not None:
        lines.append(f"  {'rim speed':<38}{_number(flywheel['rim_speed'])} m/s at radius {_mm(flywheel['max_radius'])}")
    lines.append("")

    spin = doc["free_spin"]
    lines.append("Free spin about each principal axis (no bearings)")
    for number, axis in enumerate(spin["axes"], start=1):
        kind = {"stable": "wobble", "unstable": "tumble growth"}.get(axis["stability"], "")
        rate = f"{kind} {_number(axis['rate'])} rad/s" if kind else ""
        lines.append(
            f"    I{number} = {_number(axis['moment'], 6):<12} kg*m^2  axis {_vector(axis['axis'])}  {axis['stability']:<9} {rate}"
        )
    for label, close, gap in zip(("I1, I2", "I2, I3"), spin["near_equal"], spin["relative_gaps"]):
        if close and gap <= EQUAL_MOMENT_RTOL:
            lines.append(f"    {label} equal: the axes in their plane are not unique (marginal spins)")
        elif close:
            lines.append(f"    {label} within {gap:.1%} of each other: those spins are sensitive to small changes")
    lines.append("")
    lines.append("Units: g*mm, g*mm^2, mm, N, J as shown; the JSON is SI plus the g*mm figures.")
    lines.extend(f"CAUTION: {text}" for text in doc.get("cautions", BALANCE_CAUTIONS))
    return "\n".join(lines) + "\n"


def _vector(values) -> str:
    return "(" + ", ".join(_number(v) for v in values) + ")"
