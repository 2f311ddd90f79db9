"""The one serializer: result objects -> plain JSON data with the documented keys, SI numbers as
plain floats, ``null`` numbers for an invalid body."""

from __future__ import annotations

import json

import numpy as np
import pytest
from paths import ROOT

from meshprops.geometry import shapes
from meshprops.io import mesh_from_arrays
from meshprops.measure.body import measure_mesh
from meshprops.output.serialize import (
    CAUTIONS,
    SCHEMA_NAME,
    body_to_dict,
    check_document,
    document,
    finding_to_dict,
    materials_document,
    matrix_to_list,
    vector_to_list,
)
from meshprops.validation.findings import WARNING, Finding
from meshprops.validation.solid import check_mesh
from meshprops.version import __version__

BODY_KEYS = {
    "source", "valid", "findings", "mesh", "density", "density_assumed", "volume", "mass", "center_of_mass",
    "inertia_about_com", "products_of_inertia", "radii_of_gyration", "principal_moments", "principal_axes",
    "principal_symmetry", "principal_axes_unique", "triangle_inequality", "shell_sum",
}  # fmt: skip
MESH_KEYS = {"format", "length_unit", "faces", "vertices", "edges", "shells", "voids", "holes"}


def _block_mesh(faces_to_drop: int = 0):
    # A 20 x 40 x 60 mm block offset from the origin.
    vertices, faces = shapes.box((20.0, 40.0, 60.0), (5.0, 0.0, -10.0))
    return mesh_from_arrays(vertices, faces[: len(faces) - faces_to_drop], length_unit="mm", source="block")


def test_a_body_has_every_documented_key_and_json_types():
    body = measure_mesh(_block_mesh(), density=1000.0, about=[0.0, 0.0, 0.0], angular_velocity=[0.0, 0.0, 2.0])
    data = body_to_dict(body)
    assert BODY_KEYS | {"inertia_about_point", "spin"} == set(data)
    assert set(data["mesh"]) == MESH_KEYS
    assert list(data["products_of_inertia"]) == ["xy", "xz", "yz"]  # this order everywhere (issue 9)
    assert json.loads(json.dumps(data, allow_nan=False)) == data  # plain JSON types only
    assert type(data["mass"]) is float and all(type(x) is float for x in data["center_of_mass"])
    # m = rho V = 1000 * (0.02 * 0.04 * 0.06) kg (definition of density).
    assert data["mass"] == pytest.approx(1000.0 * 0.02 * 0.04 * 0.06, rel=1e-13)
    np.testing.assert_allclose(data["center_of_mass"], [0.005, 0.0, -0.010], atol=1e-17)
    # Products of inertia are minus the off-diagonal tensor entries (the documented convention).
    tensor = np.array(data["inertia_about_com"])
    assert data["products_of_inertia"]["xy"] == -tensor[0, 1] and data["products_of_inertia"]["xz"] == -tensor[0, 2]
    assert set(data["spin"]) >= {"angular_velocity", "angular_momentum_about_com", "kinetic_energy", "about_point"}
    assert data["inertia_about_point"]["point"] == [0.0, 0.0, 0.0]


def test_optional_keys_are_absent_when_not_asked_for():
    data = body_to_dict(measure_mesh(_block_mesh(), density=1000.0))
    assert set(data) == BODY_KEYS


def test_an_invalid_body_has_the_same_keys_with_null_numbers():
    data = body_to_dict(measure_mesh(_block_mesh(faces_to_drop=1), density=1000.0, on_invalid="report"))
    assert set(data) == BODY_KEYS
    assert data["valid"] is False and data["findings"]
    for key in ("volume", "mass", "center_of_mass", "inertia_about_com", "principal_moments", "principal_axes"):
        assert data[key] is None


def test_finding_to_dict_copies_every_field():
    finding = Finding("zero_area_faces", WARNING, 2, "two slivers", ({"face": 3, "point": [0.0, 1.0, 2.0]},))
    data = finding_to_dict(finding)
    assert data == {"code": "zero_area_faces", "severity": "warning", "count": 2, "message": "two slivers",
                    "where": [{"face": 3, "point": [0.0, 1.0, 2.0]}], "volume_change": None}  # fmt: skip
    assert data["where"][0] is not finding.where[0]  # a copy: changing the output cannot change the finding


def test_the_document_wraps_bodies_with_schema_version_units_and_cautions():
    doc = document([{"source": "x"}], input_length_unit="in")
    assert doc["schema"] == SCHEMA_NAME and doc["schema_version"] == 2 and doc["meshprops_version"] == __version__
    assert doc["units"]["input_length_unit"] == "in" and doc["units"]["length"] == "m"
    assert doc["cautions"] == list(CAUTIONS) and any("weighing" in c for c in CAUTIONS)
    assert doc["bodies"] == [{"source": "x"}] and "total" not in doc
    assert document([], input_length_unit="mm", total={"mass": 1.0})["total"] == {"mass": 1.0}


def test_the_document_keys_are_the_schemas_keys():
    schema = json.loads((ROOT / "meshprops" / "schema" / "measure.schema.json").read_text(encoding="utf-8"))
    doc = document([body_to_dict(measure_mesh(_block_mesh(), density=1.0))], input_length_unit="mm")
    assert set(schema["required"]) <= set(doc)


def test_check_document_counts_files_errors_and_warnings():
    results = [check_mesh(_block_mesh()), check_mesh(_block_mesh(faces_to_drop=1))]
    doc = check_document(results, input_length_unit="mm")
    assert [f["valid"] for f in doc["files"]] == [True, False]
    assert doc["summary"]["files"] == 2 and doc["summary"]["valid"] == 1
    assert doc["summary"]["errors"] == sum(f["errors"] for f in doc["files"]) >= 1
    assert set(doc["files"][0]["mesh"]) == MESH_KEYS | {"self_intersections_checked"}


def test_materials_document_lists_every_material_with_its_source():
    from meshprops.materials import MATERIALS

    doc = materials_document()
    assert [m["name"] for m in doc["materials"]] == list(MATERIALS)
    assert all(m["source"] and m["density"] > 0 for m in doc["materials"])


def test_vector_and_matrix_lists_are_plain_floats():
    assert vector_to_list(None) is None and matrix_to_list(None) is None
    assert vector_to_list(np.float32([1.5, 2, 3])) == [1.5, 2.0, 3.0]
    matrix = matrix_to_list(np.eye(2, dtype=np.int64))
    assert matrix == [[1.0, 0.0], [0.0, 1.0]] and type(matrix[0][0]) is float
