"""The check document around plain records, the record helpers and JSON text: what a run served
from the cache is made of, with no numpy and no measuring code."""

from __future__ import annotations

import json
import math
import subprocess
import sys

import pytest

from meshprops.errors import MeshFileError, PhysicsError
from meshprops.output import gate, records, renderers, serialize
from meshprops.output.plain_records import (
    UNREADABLE,
    check_document_of,
    first_error_line,
    is_unreadable,
    plain_gate_fields,
    records_of,
    to_json,
)


def _record(source, *findings, valid=True):
    return {"source": source, "valid": valid, "errors": sum(f["severity"] == "error" for f in findings),
            "warnings": sum(f["severity"] == "warning" for f in findings), "findings": list(findings)}  # fmt: skip


def _finding(code, severity, message="m"):
    return {"code": code, "severity": severity, "message": message}


def test_the_unreadable_code_is_the_validation_s():
    from meshprops.validation.findings import UNREADABLE as validation_code

    assert UNREADABLE == validation_code


def test_the_old_homes_hand_out_the_same_functions():
    assert serialize.check_document_of is check_document_of and gate.plain_gate_fields is plain_gate_fields
    assert renderers.to_json is to_json and records.records_of is records_of
    assert records.first_error_line is first_error_line and records.is_unreadable is is_unreadable


def test_check_document_counts_files_errors_warnings_and_unreadable():
    files = [
        _record("a.stl"),
        _record("b.stl", _finding("open_edges", "error"), valid=False),
        _record("c.stl", _finding("collapsed_faces", "warning")),
        _record("d.stl", _finding(UNREADABLE, "error", "d.stl: no such file"), valid=False),
    ]
    doc = plain_gate_fields(check_document_of(files, input_length_unit="mm"))
    assert doc["schema"] == "meshprops.check" and doc["units"]["input_length_unit"] == "mm"
    assert doc["summary"] == {"files": 4, "valid": 2, "errors": 2, "warnings": 1, "unreadable": 1}
    assert doc["gate"]["passed"] is False and doc["gate"]["exit_code"] == 1 and doc["budget"] is None
    assert list(doc) == ["schema", "schema_version", "meshprops_version", "units", "files", "summary", "gate", "budget"]


def test_first_error_line_and_unreadable():
    assert first_error_line(_record("a.stl", _finding("collapsed_faces", "warning"))) is None
    line = first_error_line(_record("b.stl", _finding("open_edges", "error", "3 open edges")))
    assert line == "invalid mesh: open_edges: 3 open edges"
    unreadable = _record("d.stl", _finding(UNREADABLE, "error", "d.stl: no such file"))
    assert first_error_line(unreadable) == "d.stl: no such file" and is_unreadable(unreadable)
    assert not is_unreadable(_record("a.stl"))


class _Outcome:
    def __init__(self, result=None, error=None):
        self.result, self.error, self.path = result, error, "x.stl"

    @property
    def ok(self):
        return self.error is None


def test_records_of_gives_unreadable_files_their_own_record_and_raises_anything_else():
    made = records_of([_Outcome({"n": 1}), _Outcome(error=MeshFileError("x.stl", "no such file"))], lambda o: {"bad": o.path})
    assert made == [{"n": 1}, {"bad": "x.stl"}]
    with pytest.raises(PhysicsError):
        records_of([_Outcome(error=PhysicsError("overflow"))], lambda o: {})


def test_to_json_keeps_every_float_bit_and_refuses_nan():
    value = 0.1 + 0.2  # 0.30000000000000004: the shortest text that reads back as the same float64
    text = to_json({"volume": value, "list": [1, 2]})
    assert text.endswith("\n") and json.loads(text)["volume"] == value and '"list": [\n    1,' in text
    with pytest.raises(ValueError):
        to_json({"volume": math.nan})


def test_importing_it_loads_no_numpy():
    code = "import sys, meshprops.output.plain_records; print('numpy' in sys.modules)"
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert done.stdout.strip() == "False"
