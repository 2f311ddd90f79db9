"""Terminal tables rendered from the serializer's dicts.
"""

from __future__ import annotations


def _fmt(value: float) -> str:
    return f"{value + 0.0: .6g}"  # + 0.0 turns -0.0 into 0.0


def _matrix_row(row) -> str:
    return "    " + "".join(f"{value + 0.0:>15.6g}" for value in row)  # aligned columns


def _row(label: str, values, unit: str) -> str:
    if isinstance(values, (list, tuple)):
        text = "  ".join(_fmt(v) for v in values)
    else:
        text = _fmt(values)
    return f"  {label:<34}{text}  {unit}"


def render_table(doc: dict, extra_lines: list[str] | None = None) -> str:
    """A readable plain-text report of a measurement document (same data as the JSON).

    ``extra_lines`` (assemblies: named points, frames, breakdown) go before the closing
    units line and cautions, which always end the report.
    """
    lines: list[str] = []
    items = list(doc["bodies"]) + ([doc["total"]] if "total" in doc else [])
    for body in items:
        title = body.get("name") or body.get("source", "total")
        lines.append(f"{title}  [{'valid' if body.get('valid', True) else 'INVALID'}]")
        for finding in body.get("findings", []):
            lines.append(f"  {finding['severity']}: {finding['code']}: {finding['message']}")
        if body.get("mass") is None:
            lines.append("  no numbers: the mesh failed validation")
            lines.append("")
            continue
        mesh = body.get("mesh")
        if mesh:
            lines.append(f"  {'mesh':<34}{mesh['format']}, {mesh['faces']} faces, coordinates in {mesh['length_unit']}")
        if body.get("density") is not None:
            assumed = "  (ASSUMED: no density given)" if body.get("density_assumed") else ""
            lines.append(_row("density", body["density"], "kg/m^3") + assumed)
        if body.get("volume") is not None:
            lines.append(_row("volume", body["volume"], "m^3"))
        lines.append(_row("mass", body["mass"], "kg"))
        lines.append(_row("centre of mass (x y z)", body["center_of_mass"], "m"))
        lines.append("  inertia tensor about centre of mass, input axes (kg*m^2; off-diagonals = -products):")
        for row in body["inertia_about_com"]:
            lines.append(_matrix_row(row))
        products = body.get("products_of_inertia")
        if products:
            lines.append(_row("products of inertia Pxy Pyz Pzx", [products[k] for k in ("xy", "yz", "zx")], "kg*m^2"))
        if body.get("radii_of_gyration"):
            lines.append(_row("radii of gyration kx ky kz", body["radii_of_gyration"], "m"))
        lines.append(_row("principal moments I1 I2 I3", body["principal_moments"], "kg*m^2"))
        for k, axis in enumerate(body["principal_axes"], start=1):
            lines.append(_row(f"principal axis e{k}", axis, ""))
        symmetry = body.get("principal_symmetry")
        if symmetry and symmetry != "asymmetric":
            lines.append(f"  {'symmetry':<34}{symmetry} (principal axes not unique where moments coincide)")
        about = body.get("inertia_about_point")
        if about:
            lines.append(_row("inertia about point", about["point"], "m"))
            for row in about["tensor"]:
                lines.append(_matrix_row(row))
        state = body.get("spin")
        if state:
            lines.append(_row("angular velocity", state["angular_velocity"], "rad/s"))
            lines.append(_row("angular momentum about com", state["angular_momentum_about_com"], "kg*m^2/s"))
            lines.append(_row("rotational kinetic energy", state["kinetic_energy"], "J"))
            if state["angle_between_momentum_and_angular_velocity_deg"] is not None:
                lines.append(_row("angle between L and w", state["angle_between_momentum_and_angular_velocity_deg"], "deg"))
            if "about_point" in state:
                lines.append(_row("angular momentum about point", state["about_point"]["angular_momentum"], "kg*m^2/s"))
        lines.append("")
    if extra_lines:
        lines.extend(extra_lines)
        lines.append("")
    lines.append("Units SI. Inertia in tensor convention about the centre of mass unless stated.")
    lines.extend(f"CAUTION: {text}" for text in doc.get("cautions", []))
    return "\n".join(lines) + "\n"


def render_check_table(doc: dict) -> str:
    """A plain-text table of a check document: one row per finding, the first faces it concerns."""
    lines: list[str] = []
    for entry in doc["files"]:
        mesh = entry["mesh"]
        state = "valid" if entry["valid"] else "INVALID"
        lines.append(
            f"{entry['source']}  [{state}]  {mesh['faces']} faces, {mesh['vertices']} vertices, "
            f"{mesh['shells']} shell(s), coordinates in {mesh['length_unit']}"
        )
        if not entry["findings"]:
            lines.append("  no findings")
        else:
            lines.append(f"  {'severity':<8}  {'code':<30}  {'count':>8}  {'faces':<24}  message")
            for finding in entry["findings"]:
                faces = ",".join(str(place["face"]) for place in finding["where"]) or "-"
                lines.append(
                    f"  {finding['severity']:<8}  {finding['code']:<30}  {finding['count']:>8}  {faces:<24}  "
                    f"{finding['message']}"
                )
        lines.append("")
    summary = doc["summary"]
    lines.append(
        f"{summary['files']} file(s): {summary['valid']} valid, {summary['errors']} error finding(s), "
        f"{summary['warnings']} warning finding(s)"
    )
    return "\n".join(lines) + "\n"


def render_assembly_table(doc: dict) -> str:
    """Terminal report of an assembly document: per-item and total blocks, then breakdown and warnings."""
    lines = []
    assembly = doc.get("assembly", {})
    total = doc.get("total") or {}
    for name, entry in (total.get("inertia_about_named_points") or {}).items():
        lines.append(f"total inertia about point {name} {_short(entry['point'])} m (kg*m^2, assembly axes):")
        lines.extend("    " + _short(row) for row in entry["tensor"])
    for name, view in (total.get("in_frames") or {}).items():
        lines.append(f"total in frame {name}: centre of mass {_short(view['center_of_mass'])} m; inertia about com:")
        lines.extend("    " + _short(row) for row in view["inertia_about_com"])
    if doc.get("breakdown"):
        lines.append("")
        lines.append(f"breakdown of {assembly.get('name', 'assembly')} (inertia about the assembly centre of mass):")
        lines.append(f"  {'item':<20}{'mass kg':>12}{'share':>9}{'Ixx':>13}{'Iyy':>13}{'Izz':>13}{'trace share':>13}")
        for entry in doc["breakdown"]:
            tensor = entry["inertia_contribution_about_com"]
            lines.append(
                f"  {entry['name']:<20}{entry['mass']:>12.5g}{100 * entry['mass_share']:>8.2f}%"
                f"{tensor[0][0]:>13.4g}{tensor[1][1]:>13.4g}{tensor[2][2]:>13.4g}{100 * entry['inertia_trace_share']:>12.2f}%"
            )
    for warning in doc.get("warnings", []):
        lines.append(f"WARNING: {warning}")
    return render_table(doc, lines)


def _short(values) -> str:
    return "  ".join(f"{v + 0.0: .6g}" for v in values)


def render_materials_table(doc: dict) -> str:
    """The materials table for a terminal."""
    lines = [f"{'name':<22}{'density kg/m^3':>15}  source"]
    for material in doc["materials"]:
        mark = " (from memory)" if material["from_memory"] else ""
        lines.append(f"{material['name']:<22}{material['density']:>15g}  {material['source']}{mark}")
        lines.append(f"{'':<39}{material['description']}")
    lines.append("")
    lines.append(doc["note"] + ".")
    return "\n".join(lines) + "\n"
