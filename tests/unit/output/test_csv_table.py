"""The assembly breakdown as CSV: it parses with the standard library's ``csv`` module, has one
row per item plus a total whose numbers are the JSON total's, and the header carries the units."""

from __future__ import annotations

import csv
import io

import pytest

from meshprops.errors import SimulatorExportError
from meshprops.geometry import shapes
from meshprops.io.writers import write_binary_stl
from meshprops.measure.assembly import measure_manifest
from meshprops.output.csv_table import CSV_COLUMNS, breakdown_csv
from meshprops.output.serialize import assembly_document

MANIFEST = """
[assembly]
name = "bench_pair"
length_unit = "mm"
manifest_version = 1

[[body]]
name = "plate"
mesh = "plate.stl"
material = "aluminium_6061"

[[body]]
name = "block"
mesh = "block.stl"
density = 1240
translation = [0, 0, 25]

[[point_mass]]
name = "battery"
mass = 0.05
position = [30, 0, 10]
"""


@pytest.fixture(scope="module")
def assembly(tmp_path_factory):
    folder = tmp_path_factory.mktemp("bench_pair")
    write_binary_stl(folder / "plate.stl", shapes.triangles_of(*shapes.box((80.0, 40.0, 4.0))))
    write_binary_stl(folder / "block.stl", shapes.triangles_of(*shapes.box((20.0, 20.0, 20.0))))
    (folder / "pair.toml").write_text(MANIFEST, encoding="utf-8")
    return assembly_document(measure_manifest(folder / "pair.toml", overlap_samples=0))


def _rows(text):
    return list(csv.DictReader(io.StringIO(text)))


def test_one_row_per_item_plus_the_total(assembly):
    rows = _rows(breakdown_csv(assembly))
    assert [row["name"] for row in rows] == ["plate", "block", "battery", "total"]
    assert [row["kind"] for row in rows] == ["mesh", "mesh", "point_mass", "total"]
    assert list(rows[0]) == [header for header, _ in CSV_COLUMNS]


def test_the_total_row_is_the_json_total(assembly):
    total = _rows(breakdown_csv(assembly))[-1]
    json_total = assembly["total"]
    assert float(total["mass [kg]"]) == json_total["mass"]  # repr precision: equal, not close
    assert [float(total[f"com {axis} [m]"]) for axis in "xyz"] == json_total["center_of_mass"]
    tensor = json_total["inertia_about_com"]
    assert float(total["Ixx about assembly com [kg*m^2]"]) == tensor[0][0]
    assert float(total["Izz about assembly com [kg*m^2]"]) == tensor[2][2]
    assert float(total["mass share [1]"]) == 1.0


def test_item_masses_are_density_times_volume_and_sum_to_the_total(assembly):
    rows = _rows(breakdown_csv(assembly))
    masses = {row["name"]: float(row["mass [kg]"]) for row in rows}
    # m = rho V: 6061 at 2700 kg/m^3 (materials table) x 80 x 40 x 4 mm; 1240 kg/m^3 x 20^3 mm^3; 50 g.
    assert masses["plate"] == pytest.approx(2700.0 * 0.08 * 0.04 * 0.004, rel=1e-12)
    assert masses["block"] == pytest.approx(1240.0 * 0.02**3, rel=1e-12)
    assert masses["battery"] == 0.05
    assert masses["total"] == pytest.approx(masses["plate"] + masses["block"] + masses["battery"], rel=1e-14)
    shares = [float(row["mass share [1]"]) for row in rows[:-1]]
    assert sum(shares) == pytest.approx(1.0, rel=1e-14)


def test_cells_are_the_json_values_and_empty_where_an_item_has_none(assembly):
    rows = {row["name"]: row for row in _rows(breakdown_csv(assembly))}
    bodies = {body["name"]: body for body in assembly["bodies"]}
    assert rows["battery"]["material"] == "" and rows["battery"]["density [kg/m^3]"] == ""
    assert rows["plate"]["material"] == "aluminium_6061" and rows["block"]["material"] == ""
    for name in ("plate", "block", "battery"):
        assert float(rows[name]["volume [m^3]"]) == bodies[name]["volume"]
        assert [float(rows[name][f"com {axis} [m]"]) for axis in "xyz"] == bodies[name]["center_of_mass"]


def test_every_header_names_its_unit():
    for header, _ in CSV_COLUMNS[3:]:
        assert header.endswith("]") and "[" in header


def test_no_breakdown_is_refused(assembly):
    with pytest.raises(SimulatorExportError, match="no breakdown"):
        breakdown_csv(dict(assembly, breakdown=None))
