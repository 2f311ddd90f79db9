"""Terminal tables show the values of the serializer's dicts (six significant digits), the
units, and end with the cautions; the check, assembly and materials tables likewise."""

from __future__ import annotations

import copy
import re

import numpy as np
import pytest

from meshprops.geometry import shapes
from meshprops.io import mesh_from_arrays
from meshprops.measure.body import measure_mesh
from meshprops.output.numbers import clean, format_number
from meshprops.output.serialize import (
    CAUTIONS,
    body_to_dict,
    check_document,
    document,
    materials_document,
)
from meshprops.output.table import (
    render_assembly_table,
    render_check_table,
    render_materials_table,
    render_table,
)
from meshprops.validation.solid import check_mesh


def _doc(**settings):
    vertices, faces = shapes.box((20.0, 40.0, 60.0), (5.0, 0.0, -10.0))
    body = measure_mesh(mesh_from_arrays(vertices, faces, length_unit="mm", source="block.stl"), **settings)
    return document([body_to_dict(body)], input_length_unit="mm")


def _six(value: float) -> str:
    return format_number(value, 6)


def _cells(values, scale=None) -> str:
    """A regular expression for the values in order, as the table prints them (column-aligned)."""
    return r"\s+".join(re.escape(format_number(v)) for v in np.ravel(clean(values, scale)))


def test_the_table_shows_the_values_of_the_dict():
    doc = _doc(density=2700.0)
    body = doc["bodies"][0]
    text = render_table(doc)
    assert text.startswith("block.stl  [valid]\n")
    assert f"{_six(body['mass'])}  kg" in text and f"{_six(body['volume'])}  m^3" in text
    assert re.search(r"position x y z\s+" + _cells(body["center_of_mass"]) + r"\s+m\n", text)
    tensor = np.array(body["inertia_about_com"])
    for axis, row in zip("xyz", tensor):
        assert re.search(rf"\n\s+{axis}\s+" + _cells(row, np.abs(tensor).max()) + "\n", text)
    for k, moment in enumerate(body["principal_moments"], start=1):
        assert re.search(rf"I{k}, e{k}\s+{re.escape(_six(moment))}\s", text)


def test_the_table_follows_the_dict_not_the_measurement():
    doc = _doc(density=2700.0)
    changed = copy.deepcopy(doc)
    changed["bodies"][0]["mass"] = 123.456
    assert " 123.456  kg" in render_table(changed) and " 123.456  kg" not in render_table(doc)


def test_an_assumed_density_is_flagged():
    assert "ASSUMED" in render_table(_doc())
    assert "ASSUMED" not in render_table(_doc(density=1000.0))


def test_spin_and_point_lines_appear_only_when_asked():
    plain = render_table(_doc(density=1.0))
    asked = render_table(_doc(density=1.0, about=[0.0, 0.0, 0.0], angular_velocity=[0.0, 0.0, 1.0]))
    for label in ("about the point", "angular momentum (com)", "rotational energy"):
        assert label in asked and label not in plain


def test_the_table_ends_with_the_units_and_every_caution():
    lines = render_table(_doc()).rstrip("\n").splitlines()
    assert lines[-len(CAUTIONS):] == [f"CAUTION: {c}" for c in CAUTIONS]
    assert lines[-len(CAUTIONS) - 1].startswith("Units SI (m, kg, kg*m^2, kg/m^3)")


def test_an_invalid_body_shows_no_numbers():
    vertices, faces = shapes.box((20.0, 40.0, 60.0))
    body = measure_mesh(mesh_from_arrays(vertices, faces[:-2], length_unit="mm", source="open.stl"), on_invalid="report")
    text = render_table(document([body_to_dict(body)], input_length_unit="mm"))
    assert "open.stl  [INVALID]" in text and "no numbers: the mesh failed validation" in text
    assert " kg\n" not in text and "error: open_edges" in text


def test_negative_zero_is_shown_as_zero():
    doc = _doc(density=1.0)
    doc["bodies"][0]["center_of_mass"] = [-0.0, 0.0, -0.0]
    assert "-0 " not in render_table(doc) and re.search(r"position x y z\s+0  0  0  m", render_table(doc))


def test_check_table_lists_each_finding_with_its_faces():
    vertices, faces = shapes.box((20.0, 40.0, 60.0))
    results = [check_mesh(mesh_from_arrays(vertices, faces[:-1], length_unit="mm", source="open.stl"))]
    doc = check_document(results, input_length_unit="mm")
    text = render_check_table(doc)
    finding = doc["files"][0]["findings"][0]
    assert "open.stl  [INVALID]  11 faces" in text
    assert finding["code"] in text and finding["message"] in text
    assert ",".join(str(p["face"]) for p in finding["where"]) in text
    assert text.rstrip().endswith("warning finding(s)") and "1 file(s): 0 valid" in text


def test_materials_table_shows_each_density_and_source():
    doc = materials_document()
    text = render_materials_table(doc)
    for material in doc["materials"]:
        assert f"{material['name']:<22}{material['density']:>15g}  {material['source']}" in text


def test_assembly_table_adds_the_breakdown_before_the_cautions():
    doc = _doc(density=1.0)
    doc["assembly"] = {"name": "pair"}
    doc["breakdown"] = [{"name": "block", "mass": 0.25, "mass_share": 1.0, "inertia_trace_share": 1.0,
                         "inertia_contribution_about_com": [[1e-3, 0, 0], [0, 2e-3, 0], [0, 0, 3e-3]]}]  # fmt: skip
    doc["warnings"] = ["check the battery"]
    text = render_assembly_table(doc)
    assert "breakdown of pair" in text and "100.00%" in text and "WARNING: check the battery" in text
    assert text.index("WARNING: check the battery") < text.index("CAUTION:")


@pytest.mark.parametrize("render", [render_table, render_assembly_table])
def test_tables_end_with_one_newline(render):
    assert render(_doc()).endswith("\n") and not render(_doc()).endswith("\n\n")
