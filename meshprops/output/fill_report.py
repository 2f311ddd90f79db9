"""What ``meshprops fill-inertials`` did, as plain data and as a table.

:func:`fill_to_dict` is the one serializer of a :class:`meshprops.measure.link_inertials.ModelFill`;
:func:`fill_table` renders that dictionary. Mass in kg, inertia in kg·m² (tensor entries about
the link's centre of mass, link axes), ratios new / old (the inertia ratio is the ratio of the
traces, ``Ixx + Iyy + Izz``).
"""

from __future__ import annotations

import numpy as np

from .inertial_fill import NewInertial


def _tensor(value) -> list[list[float]] | None:
    return None if value is None else np.asarray(value, dtype=np.float64).tolist()


def _ratio(new: float | None, old: float | None) -> float | None:
    if new is None or old is None or old == 0:
        return None
    return float(new) / float(old)


def fill_to_dict(fill) -> dict:
    """The model, and per link: status, old and new mass, centre of mass and inertia, ratios, notes."""
    links = []
    for item in fill.links:
        old, new = item.old, item.new
        old_trace = None if old is None else float(np.trace(old.inertia_about_com))
        new_trace = None if new is None else float(np.trace(new.inertia_about_com))
        links.append({
            "name": item.link.name,
            "line": item.link.line,
            "status": item.status,
            "meshes": [str(mesh.path) for mesh in item.link.meshes],
            "mesh_element": item.link.meshes[0].element if item.link.meshes else None,
            "density": item.density,
            "density_basis": item.density_basis,
            "old": None if old is None else {
                "mass": old.mass, "center_of_mass": old.center_of_mass.tolist(),
                "inertia_about_com": _tensor(old.inertia_about_com),
            },
            "new": None if new is None else {
                "mass": new.mass, "center_of_mass": new.center_of_mass.tolist(),
                "inertia_about_com": _tensor(new.inertia_about_com),
            },
            "mass_ratio": _ratio(None if new is None else new.mass, None if old is None else old.mass),
            "inertia_trace_ratio": _ratio(new_trace, old_trace),
            "placeholder": item.placeholder,
            "findings": [{"file": source, "code": finding.code, "severity": finding.severity, "message": finding.message}
                         for source, finding in item.findings],  # fmt: skip
            "size": item.size,
            "ignored_geometry": item.link.ignored_geometry,
        })  # fmt: skip
    return {"model": str(fill.model.path), "format": fill.model.format, "valid": fill.valid, "links": links}


def new_inertials(fill) -> dict[int, NewInertial]:
    """The inertials to write: one per filled link, by its index in the model."""
    return {
        item.index: NewInertial(item.new.mass, item.new.center_of_mass, item.new.inertia_about_com, item.size or 0.0)
        for item in fill.links
        if item.status == "filled"
    }


def _g(value: float | None) -> str:
    return "-" if value is None else f"{value:.6g}"


def fill_table(report: dict) -> str:
    """One row per link (old and new mass and principal-axis diagonal, ratios) and the notes under it."""
    header = ("link", "status", "old mass", "new mass", "ratio", "old Ixx, Iyy, Izz", "new Ixx, Iyy, Izz", "I ratio")
    rows = []
    notes = []
    for link in report["links"]:
        old, new = link["old"], link["new"]

        def diagonal(block):
            return "-" if block is None else ", ".join(f"{block['inertia_about_com'][k][k]:.4g}" for k in range(3))

        status = {"filled": "filled", "no_mesh": "no mesh, left alone", "invalid_mesh": "INVALID MESH, left alone"}[link["status"]]
        rows.append((
            link["name"], status, _g(old and old["mass"]), _g(new and new["mass"]), _g(link["mass_ratio"]),
            diagonal(old), diagonal(new), _g(link["inertia_trace_ratio"]),
        ))  # fmt: skip
        if link["status"] == "filled" and link["ignored_geometry"]:
            notes.append(
                f"{link['name']}: {link['ignored_geometry']} {link['mesh_element']} geometry that is not a mesh "
                "(box, cylinder, ...) is not counted in the new inertial"
            )
        if link["placeholder"]:
            notes.append(f"{link['name']}: old inertial was a placeholder ({link['placeholder']})")
        if link["status"] == "filled" and link["density_basis"] == "assumed":
            notes.append(f"{link['name']}: density {link['density']:g} kg/m^3 assumed (give --density, --material or --map)")
        for finding in link["findings"]:
            if link["status"] == "invalid_mesh" and finding["severity"] == "error" or link["status"] != "invalid_mesh":
                notes.append(f"{link['name']}: {finding['file']}: {finding['severity']} {finding['code']}: {finding['message']}")
    widths = [max(len(str(row[k])) for row in [header, *rows]) for k in range(len(header))]
    lines = [f"{report['model']} ({report['format']}): mass kg, inertia kg*m^2 about each link's centre of mass, link axes"]
    lines.append("  ".join(str(cell).ljust(width) for cell, width in zip(header, widths)).rstrip())
    lines.append("  ".join("-" * width for width in widths))
    lines += ["  ".join(str(cell).ljust(width) for cell, width in zip(row, widths)).rstrip() for row in rows]
    without = [link["name"] for link in report["links"] if link["status"] == "no_mesh"]
    if without:
        lines.append(f"links without a mesh (left alone): {', '.join(without)}")
    lines += notes
    return "\n".join(lines) + "\n"
