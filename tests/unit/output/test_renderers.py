"""Renderers chosen by name from one table: the names, what each returns, ``--json`` and
``--format`` agreeing, and JSON that round-trips every float (the standard library's ``json``)."""

from __future__ import annotations

import json
import math
from xml.etree import ElementTree

import pytest

from meshprops.errors import InputValueError
from meshprops.geometry import shapes
from meshprops.io import mesh_from_arrays
from meshprops.measure.body import measure_mesh
from meshprops.output.renderers import (
    OUTPUT_FORMATS,
    RENDERERS,
    choose_format,
    format_document,
    to_json,
)
from meshprops.output.serialize import body_to_dict, document
from meshprops.output.table import render_table


@pytest.fixture(scope="module")
def doc():
    vertices, faces = shapes.box((20.0, 40.0, 60.0), (5.0, 0.0, -10.0))
    body = measure_mesh(mesh_from_arrays(vertices, faces, length_unit="mm", source="block.stl"), density=2700.0)
    return document([body_to_dict(body)], input_length_unit="mm")


def test_the_renderer_names():
    assert list(RENDERERS) == ["table", "json", "urdf", "sdf", "mjcf", "csv"]
    assert OUTPUT_FORMATS == tuple(RENDERERS)


def test_json_round_trips_every_float_and_refuses_nan(doc):
    text, warnings = format_document(doc, "json")
    assert warnings == () and text.endswith("}\n")
    assert json.loads(text) == doc  # repr floats: the same numbers back, bit for bit
    with pytest.raises(ValueError):
        to_json({"mass": math.nan})


def test_table_is_the_table_module_s_rendering(doc):
    assert format_document(doc, "table") == (render_table(doc), ())


def _mass_in(name: str, root: ElementTree.Element) -> float:
    inertial = root.find(".//inertial")
    if name == "urdf":
        return float(inertial.find("mass").get("value"))
    if name == "sdf":
        return float(inertial.find("mass").text)
    return float(inertial.get("mass"))  # mjcf


@pytest.mark.parametrize("name", ["urdf", "sdf", "mjcf"])
def test_simulator_renderers_write_well_formed_xml_with_the_mass(doc, name):
    text, warnings = format_document(doc, name)
    assert isinstance(warnings, tuple)
    root = ElementTree.fromstring(text)  # well-formed XML (standard library parser)
    assert root.tag == {"urdf": "robot", "sdf": "sdf", "mjcf": "mujoco"}[name]
    assert _mass_in(name, root) == doc["bodies"][0]["mass"]


def test_csv_needs_an_assembly(doc):
    with pytest.raises(InputValueError, match="assembly manifest"):
        format_document(doc, "csv")


@pytest.mark.parametrize(
    ("json_flag", "output_format", "chosen"),
    [(False, None, "table"), (True, None, "json"), (True, "json", "json"), (False, "mjcf", "mjcf"), (False, "csv", "csv")],
)
def test_choose_format(json_flag, output_format, chosen):
    assert choose_format(json_flag, output_format) == chosen


def test_choose_format_refuses_an_unknown_name_and_a_contradiction():
    with pytest.raises(InputValueError, match="one of table, json, urdf, sdf, mjcf, csv"):
        choose_format(False, "yaml")
    with pytest.raises(InputValueError, match="not both"):
        choose_format(True, "table")
