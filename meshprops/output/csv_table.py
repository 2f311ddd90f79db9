"""The per-body breakdown of an assembly as CSV (one row per item plus the total; the header
carries the units).
"""

from __future__ import annotations

import csv
import io

import numpy as np

#: CSV columns: (header with unit, function of a breakdown entry and its body dict).
CSV_COLUMNS = (
    ("name", lambda e, b: e["name"]),
    ("kind", lambda e, b: e["kind"]),
    ("material", lambda e, b: (b.get("material") or {}).get("name", "")),
    ("density [kg/m^3]", lambda e, b: b.get("density")),
    ("volume [m^3]", lambda e, b: b.get("volume")),
    ("mass [kg]", lambda e, b: e["mass"]),
    ("mass share [1]", lambda e, b: e["mass_share"]),
    ("com x [m]", lambda e, b: b["center_of_mass"][0]),
    ("com y [m]", lambda e, b: b["center_of_mass"][1]),
    ("com z [m]", lambda e, b: b["center_of_mass"][2]),
    ("Ixx about assembly com [kg*m^2]", lambda e, b: e["inertia_contribution_about_com"][0][0]),
    ("Iyy about assembly com [kg*m^2]", lambda e, b: e["inertia_contribution_about_com"][1][1]),
    ("Izz about assembly com [kg*m^2]", lambda e, b: e["inertia_contribution_about_com"][2][2]),
    ("Ixy about assembly com (tensor entry = -product of inertia) [kg*m^2]", lambda e, b: e["inertia_contribution_about_com"][0][1]),
    ("Ixz about assembly com (tensor entry = -product of inertia) [kg*m^2]", lambda e, b: e["inertia_contribution_about_com"][0][2]),
    ("Iyz about assembly com (tensor entry = -product of inertia) [kg*m^2]", lambda e, b: e["inertia_contribution_about_com"][1][2]),
    ("inertia trace share [1]", lambda e, b: e["inertia_trace_share"]),
)


def breakdown_csv(doc: dict) -> str:
    """CSV of the per-item breakdown plus a ``total`` row; header row with units.

    Inertia columns are tensor entries (off-diagonals = minus the products of
    inertia) about the assembly centre of mass, in assembly axes. Numbers are
    written with ``repr`` precision.
    """
    from ..errors import SimulatorExportError

    if not doc.get("breakdown"):
        raise SimulatorExportError("no breakdown to write: a body's mesh failed validation")
    bodies = {body["name"]: body for body in doc["bodies"]}
    stream = io.StringIO()
    writer = csv.writer(stream, lineterminator="\n")
    writer.writerow([header for header, _ in CSV_COLUMNS])
    for entry in doc["breakdown"]:
        writer.writerow([_cell(column(entry, bodies[entry["name"]])) for _, column in CSV_COLUMNS])
    total = doc["total"]
    total_entry = {
        "name": "total",
        "kind": "total",
        "mass": total["mass"],
        "mass_share": 1.0,
        "inertia_contribution_about_com": total["inertia_about_com"],
        "inertia_trace_share": 1.0,
    }
    writer.writerow([_cell(column(total_entry, dict(total, density=None, material=None))) for _, column in CSV_COLUMNS])
    return stream.getvalue()


def _cell(value):
    if value is None:
        return ""
    if isinstance(value, float):
        return repr(value)
    if isinstance(value, (np.floating,)):
        return repr(float(value))
    return value
