"""Per-file records: what a worker returns is exactly the file's entry of the JSON document,
survives pickling and JSON to the last bit, and the total is rebuilt from records alone."""

from __future__ import annotations

import json
import pickle

import numpy as np
import pytest

from meshprops.batch.runner import FileJob
from meshprops.geometry import shapes
from meshprops.io import load_mesh, writers
from meshprops.measure.body import measure_mesh
from meshprops.measure.options import MeasureOptions
from meshprops.output.records import (
    MeasureRecord,
    check_record,
    first_error_line,
    mass_properties_of,
    total_record,
)
from meshprops.output.serialize import body_to_dict, check_to_dict
from meshprops.validation.solid import check_mesh


@pytest.fixture
def files(tmp_path):
    sound = tmp_path / "block.stl"
    writers.write_binary_stl(sound, shapes.triangles_of(*shapes.box((10.0, 20.0, 30.0), (5.0, 0.0, 0.0))))
    vertices, faces = shapes.box((10.0, 10.0, 10.0))
    broken = tmp_path / "open.obj"
    writers.write_obj(broken, vertices, faces[:-1])  # one face missing: a hole
    return sound, broken


def test_check_record_is_the_document_entry(files):
    for path in files:
        assert check_record(FileJob(str(path), "mm")) == check_to_dict(check_mesh(load_mesh(path, "mm")))


def test_measure_record_is_the_body_entry_and_pickles(files):
    options = MeasureOptions(density=2700.0)
    task = pickle.loads(pickle.dumps(MeasureRecord(options)))
    for path in files:
        expected = body_to_dict(measure_mesh(load_mesh(path, "mm"), options, on_invalid="report"))
        assert task(FileJob(str(path), "mm")) == expected


def test_mass_properties_come_back_to_the_last_bit_through_json(files):
    record = MeasureRecord(MeasureOptions(density=2700.0))(FileJob(str(files[0]), "mm"))
    again = mass_properties_of(json.loads(json.dumps(record)))
    body = measure_mesh(load_mesh(files[0], "mm"), density=2700.0).properties
    assert again.mass == body.mass
    assert again.center_of_mass.tobytes() == body.center_of_mass.tobytes()
    assert again.inertia_about_com.tobytes() == body.inertia_about_com.tobytes()
    # m = rho a b c for the 10 x 20 x 30 mm block (common practice)
    assert again.mass == pytest.approx(2700.0 * 6e-6, rel=1e-12)


def test_first_error_line_and_an_invalid_body(files):
    record = MeasureRecord(MeasureOptions())(FileJob(str(files[1]), "mm"))
    assert not record["valid"] and mass_properties_of(record) is None
    assert first_error_line(record).startswith("invalid mesh: open_edges: ")
    assert first_error_line(check_record(FileJob(str(files[0]), "mm"))) is None


def test_total_record_sums_in_input_order(files, tmp_path):
    second = tmp_path / "second.stl"
    writers.write_binary_stl(second, shapes.triangles_of(*shapes.box((10.0, 20.0, 30.0), (-5.0, 0.0, 0.0))))
    options = MeasureOptions(density=1000.0)
    records = [MeasureRecord(options)(FileJob(str(path), "mm")) for path in (files[0], second)]
    total = total_record(records, options, source=str(tmp_path))
    # two 10 x 20 x 30 mm blocks side by side along x are one 20 x 20 x 30 mm block (handbook box formula)
    mass = 1000.0 * 12e-6
    assert total["mass"] == pytest.approx(mass, rel=1e-12)
    np.testing.assert_allclose(total["center_of_mass"], 0.0, atol=1e-18)
    np.testing.assert_allclose(np.diag(total["inertia_about_com"]), mass / 12 * np.array([0.02**2 + 0.03**2, 0.02**2 + 0.03**2, 0.02**2 + 0.02**2]), rtol=1e-10)
    assert (total["kind"], total["name"], total["parts"], total["mesh"]["faces"]) == ("total", "total", 2, 24)
    with_broken = total_record(records + [MeasureRecord(options)(FileJob(str(files[1]), "mm"))], options, source="x")
    assert with_broken["mass"] is None and not with_broken["valid"]
