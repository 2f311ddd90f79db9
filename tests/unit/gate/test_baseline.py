"""The baseline file (stable bytes, atomic, strict reader) and comparisons under the default tolerances."""

import json

import numpy as np
import pytest

from meshprops.gate.baseline import (
    DEFAULT_TOLERANCES,
    BaselineEntry,
    BaselineError,
    Tolerances,
    baseline_to_json,
    compare_with_entry,
    empty_baseline,
    read_baseline,
    write_baseline,
)
from meshprops.gate.rules import FAIL, PASS

# A 100 x 60 x 10 mm aluminium plate: handbook box values (m = rho abc, I = m(b^2+c^2)/12, ...).
MASS = 2700.0 * 0.1 * 0.06 * 0.01
VOLUME = 0.1 * 0.06 * 0.01
MOMENTS = np.array(sorted([MASS * (0.06**2 + 0.01**2) / 12, MASS * (0.1**2 + 0.01**2) / 12, MASS * (0.1**2 + 0.06**2) / 12]))
CENTER = np.array([0.05, 0.03, 0.005])
SIZE = float(np.sqrt(0.1**2 + 0.06**2 + 0.01**2))


def _entry(path="exports/plate.stl", sha="sha256:" + "0" * 64):
    warnings = ({"code": "collapsed_faces", "count": 1, "message": "1 face has a repeated vertex"},)
    return BaselineEntry(path, sha, "mm", 2700.0, VOLUME, MASS, CENTER, SIZE, MOMENTS, warnings)


def _compare(**changes):
    values = {"volume": VOLUME, "mass": MASS, "center_of_mass": CENTER, "principal_moments": MOMENTS, **changes}
    return {v.quantity: v for v in compare_with_entry(_entry(), **values)}


def test_unchanged_part_passes_every_quantity():
    verdicts = _compare()
    assert list(verdicts) == ["mass", "volume", "center_of_mass_shift", "principal_moment_1", "principal_moment_2", "principal_moment_3"]
    assert all(v.verdict == PASS and v.rule == "baseline" for v in verdicts.values())


def test_mass_change_at_and_beyond_the_default_relative_tolerance():
    assert _compare(mass=MASS * (1 + 0.999e-3))["mass"].verdict == PASS
    failed = _compare(mass=MASS * 1.30)["mass"]  # a 30 % re-export
    assert failed.verdict == FAIL and failed.source == "exports/plate.stl"
    assert (failed.old, failed.new) == (MASS, pytest.approx(MASS * 1.3))
    assert failed.change == pytest.approx(MASS * 0.3) and failed.value == pytest.approx(0.3)
    assert failed.limit == (-1e-3, 1e-3)
    assert "mass changed from 0.162 kg to 0.2106 kg" in failed.message and "+30 %" in failed.message
    assert _compare(volume=VOLUME * (1 - 1.001e-3))["volume"].verdict == FAIL


def test_center_of_mass_tolerance_is_a_fraction_of_the_parts_size():
    allowed = 1e-3 * SIZE  # 0.1175 mm for this plate
    passed = _compare(center_of_mass=CENTER + [0.99 * allowed, 0, 0])["center_of_mass_shift"]
    assert passed.verdict == PASS and passed.limit == (None, pytest.approx(allowed))
    moved = _compare(center_of_mass=CENTER + [0, 0.6 * allowed, 0.8 * allowed * 1.01])["center_of_mass_shift"]
    assert moved.verdict == FAIL and moved.value == pytest.approx(allowed * np.hypot(0.6, 0.808))
    np.testing.assert_allclose(moved.old, CENTER)
    assert moved.change == moved.value and moved.unit == "m"


def test_each_principal_moment_relative():
    bigger = MOMENTS * [1.0, 1.0005, 1.002]
    verdicts = _compare(principal_moments=bigger)
    assert [verdicts[f"principal_moment_{i}"].verdict for i in (1, 2, 3)] == [PASS, PASS, FAIL]


def test_configured_tolerances_apply():
    loose = Tolerances(mass=0.5, volume=0.5, center_of_mass=1.0, principal_moments=0.5)
    verdicts = compare_with_entry(
        _entry(), volume=VOLUME * 1.3, mass=MASS * 1.3, center_of_mass=CENTER + 0.01, principal_moments=MOMENTS * 1.3, tolerances=loose
    )
    assert all(v.verdict == PASS for v in verdicts)
    assert DEFAULT_TOLERANCES == Tolerances(1e-3, 1e-3, 1e-3, 1e-3)


def test_the_document_has_stable_bytes_and_key_order(tmp_path):
    baseline = empty_baseline(tmp_path).updated([_entry("b.stl", "sha256:" + "b" * 64), _entry("a/z.obj", "sha256:" + "a" * 64)])
    text = baseline_to_json(baseline)
    doc = json.loads(text)
    assert list(doc) == ["format", "format_version", "units", "files"]
    assert list(doc["files"]) == ["a/z.obj", "b.stl"]
    assert list(doc["files"]["b.stl"]) == [
        "content_hash", "length_unit", "density", "volume", "mass", "center_of_mass", "size", "principal_moments", "warnings",
    ]  # fmt: skip
    assert doc["files"]["b.stl"]["warnings"] == [{"code": "collapsed_faces", "count": 1, "message": "1 face has a repeated vertex"}]
    path = tmp_path / "meshprops-baseline.json"
    write_baseline(path, baseline)
    assert path.read_text() == text
    again = read_baseline(path)
    assert baseline_to_json(again) == text  # full precision: floats round-trip exactly
    assert again.get(tmp_path / "b.stl").mass == MASS and again.get(tmp_path / "c.stl") is None
    assert [p.name for p in tmp_path.iterdir()] == ["meshprops-baseline.json"]  # no temporary left


def test_updating_replaces_only_the_named_entries(tmp_path):
    baseline = empty_baseline(tmp_path).updated([_entry("a.stl", "sha256:" + "a" * 64), _entry("b.stl", "sha256:" + "b" * 64)])
    updated = baseline.updated([_entry("b.stl", "sha256:" + "c" * 64)])
    assert updated.entries["a.stl"].content_hash == "sha256:" + "a" * 64 and updated.entries["b.stl"].content_hash == "sha256:" + "c" * 64
    assert baseline.entries["b.stl"].content_hash == "sha256:" + "b" * 64  # the original is not changed


def test_same_input_needs_the_same_bytes_unit_and_density():
    entry = _entry(sha="sha256:" + "f" * 64)
    assert entry.same_input("sha256:" + "f" * 64, "mm", 2700)
    assert not entry.same_input("sha256:" + "e" * 64, "mm", 2700)
    assert not entry.same_input("sha256:" + "f" * 64, "in", 2700)
    assert not entry.same_input("sha256:" + "f" * 64, "mm", 2710)


@pytest.mark.parametrize(
    ("text", "words"),
    [
        ("{", "line 1: not JSON"),
        ('{"format": "other"}', "not a meshprops baseline"),
        ('{"format": "meshprops.baseline", "format_version": 9, "files": {}}', "format_version: expected 1"),
        ('{"format": "meshprops.baseline", "format_version": 1, "files": {"a.stl": {"content_hash": "x"}}}', "files['a.stl']: missing"),
    ],
)
def test_a_malformed_baseline_is_refused_in_one_line(tmp_path, text, words):
    path = tmp_path / "meshprops-baseline.json"
    path.write_text(text)
    with pytest.raises(BaselineError, match=words.replace("[", r"\[").replace("]", r"\]")) as caught:
        read_baseline(path)
    assert caught.value.exit_code == 2 and "\n" not in str(caught.value)


def test_a_bad_hash_is_refused(tmp_path):
    doc = json.loads(baseline_to_json(empty_baseline(tmp_path).updated([_entry("a.stl")])))
    doc["files"]["a.stl"]["content_hash"] = "0" * 64  # no algorithm prefix
    path = tmp_path / "meshprops-baseline.json"
    path.write_text(json.dumps(doc))
    with pytest.raises(BaselineError, match="content_hash: expected 'sha256:'"):
        read_baseline(path)


def test_a_bad_value_names_the_entry_and_key(tmp_path):
    doc = json.loads(baseline_to_json(empty_baseline(tmp_path).updated([_entry("a.stl")])))
    doc["files"]["a.stl"]["center_of_mass"] = [0, 0]
    path = tmp_path / "meshprops-baseline.json"
    path.write_text(json.dumps(doc))
    with pytest.raises(BaselineError, match=r"files\['a.stl'\].center_of_mass: expected 3 numbers"):
        read_baseline(path)
