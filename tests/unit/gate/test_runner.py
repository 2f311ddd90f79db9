"""The gate run as a library: settings per file, manifests, budget items, and the skip of unchanged files."""

from __future__ import annotations

import pytest

from meshprops.errors import ConfigError, InvalidMeshError
from meshprops.gate.baseline import empty_baseline
from meshprops.gate.config import load_config
from meshprops.gate.runner import (
    STATUS_CHANGED,
    STATUS_CHECKED,
    STATUS_UNCHANGED,
    budget_rollup,
    gate_inputs,
    manifest_settings,
    record,
    run_gate,
    settings_for,
)
from meshprops.geometry import shapes
from meshprops.io import writers


def _box(path, size):
    path.parent.mkdir(parents=True, exist_ok=True)
    vertices, faces = shapes.box(size, center=[s / 2 for s in size])
    writers.write_binary_stl(path, vertices[faces])


MANIFEST = """
[assembly]
name = "kit"
length_unit = "mm"
manifest_version = 1

[[body]]
name = "plate"
mesh = "parts/plate.stl"
material = "aluminium_6061"

[[body]]
name = "cap"
mesh = "parts/cap.stl"
density = 1240

[[point_mass]]
name = "battery"
mass = 0.1
position = [0, 0, 0]
box_size = [10, 10, 10]
"""


@pytest.fixture
def kit(tmp_path):
    _box(tmp_path / "parts" / "plate.stl", (100.0, 60.0, 10.0))  # 60 cm^3: 0.162 kg of aluminium
    _box(tmp_path / "parts" / "cap.stl", (10.0, 10.0, 10.0))  # 1 cm^3: 1.24 g of PLA
    (tmp_path / "kit.toml").write_text(MANIFEST)
    return tmp_path


def test_settings_command_line_over_glob_over_manifest_over_defaults(kit):
    config_path = kit / "meshprops.toml"
    config_path.write_text("[[files]]\nglob = 'parts/plate.stl'\nlength_unit = 'cm'\ndensity = 7850\n[[files]]\nmanifest = 'kit.toml'\n")
    config = load_config(config_path)
    manifests = manifest_settings(config)
    plate = settings_for(str(kit / "parts" / "plate.stl"), config, manifests, length_unit=None, density=None)
    assert (plate.length_unit, plate.density, plate.density_assumed) == ("cm", 7850.0, False)
    cap = settings_for(str(kit / "parts" / "cap.stl"), config, manifests, length_unit=None, density=None)
    assert (cap.length_unit, cap.density, cap.origin) == ("mm", 1240.0, "manifest kit.toml body cap")
    forced = settings_for(str(kit / "parts" / "cap.stl"), config, manifests, length_unit="in", density=1000.0)
    assert (forced.length_unit, forced.density, forced.origin) == ("in", 1000.0, "command line")
    other = settings_for(str(kit / "elsewhere.stl"), config, manifests, length_unit=None, density=None)
    assert (other.length_unit, other.density, other.density_assumed) == ("mm", 1000.0, True)


def test_a_manifest_argument_stands_for_its_meshes_with_their_settings(kit):
    files, settings = gate_inputs([str(kit / "kit.toml"), str(kit / "meshprops.toml")])
    assert [p.rsplit("/", 1)[-1] for p in files] == ["plate.stl", "cap.stl"]
    assert settings[str(kit / "parts" / "plate.stl")].material == "aluminium_6061"


def test_unchanged_files_keep_their_recorded_numbers_and_rules_apply_to_them(kit, monkeypatch):
    config_path = kit / "meshprops.toml"
    config_path.write_text("[[files]]\nglob = 'parts/*.stl'\nmaterial = 'aluminium_6061'\n")
    config = load_config(config_path)
    plate = str(kit / "parts" / "plate.stl")
    baseline, _ = record([plate], config=config, baseline=empty_baseline(kit))
    config_path.write_text(
        "[[files]]\nglob = 'parts/*.stl'\nmaterial = 'aluminium_6061'\n"
        "[[rule]]\nglob = 'parts/plate.stl'\nexpected_mass = 0.15\nmass_tolerance = 0.001\n"
    )
    config = load_config(config_path)
    monkeypatch.setattr("meshprops.gate.runner.measure_for_gate", lambda *a: pytest.fail("read again"))
    report = run_gate([plate], config=config, baseline=baseline)
    (outcome,) = report.files
    assert outcome.status == STATUS_UNCHANGED and outcome.numbers.mass == pytest.approx(0.162)
    assert [v.verdict for v in outcome.verdicts] == ["fail"] and report.exit_code == 1


def test_changed_material_means_measuring_again(kit):
    config_path = kit / "meshprops.toml"
    config_path.write_text("[[files]]\nglob = 'parts/*.stl'\nmaterial = 'aluminium_6061'\n")
    plate = str(kit / "parts" / "plate.stl")
    baseline, _ = record([plate], config=load_config(config_path), baseline=empty_baseline(kit))
    config_path.write_text("[[files]]\nglob = 'parts/*.stl'\nmaterial = 'steel_structural'\n")
    report = run_gate([plate], config=load_config(config_path), baseline=baseline)
    (outcome,) = report.files
    assert outcome.status == STATUS_CHANGED and outcome.numbers.mass == pytest.approx(60e-6 * 7850)
    assert {v.quantity: v.verdict for v in outcome.verdicts}["mass"] == "fail"  # +190 %
    assert run_gate([plate], config=None, baseline=None).files[0].status == STATUS_CHECKED


def test_budget_items_from_files_manifests_and_typed_in_masses(kit):
    _box(kit / "exports" / "bracket.stl", (40.0, 20.0, 5.0))  # 4 cm^3 of aluminium: 0.0108 kg
    config_path = kit / "meshprops.toml"
    config_path.write_text(
        "[[files]]\nglob = 'exports/*.stl'\nmaterial = 'aluminium_6061'\nsubsystem = 'structure'\n"
        "[[files]]\nmanifest = 'kit.toml'\nsubsystem = 'payload'\n"
        "[budget]\nname = 'kit'\nallocation = 1.0\n"
        "[[budget.subsystem]]\nname = 'structure'\nallocation = 0.5\n"
        "[[budget.subsystem]]\nname = 'payload'\nallocation = 0.3\n"
        "[[budget.item]]\nmanifest = 'kit.toml'\nbody = 'battery'\nsubsystem = 'payload'\nmaturity = 'measured'\n"
        "[[budget.item]]\nname = 'fasteners'\nsubsystem = 'structure'\nmaturity = 'estimated'\nmass = 0.02\n"
    )
    config = load_config(config_path)
    rollup = budget_rollup(config, None, {}, manifest_settings(config))
    structure, payload = rollup.subsystems
    assert {i.name: (i.maturity, round(i.basic_mass, 6)) for i in structure.items} == {
        "exports/bracket.stl": ("calculated", 0.0108), "fasteners": ("estimated", 0.02),
    }  # fmt: skip
    assert {i.name: (i.maturity, round(i.basic_mass, 6)) for i in payload.items} == {
        "plate": ("calculated", 0.162), "cap": ("calculated", 0.00124), "battery": ("measured", 0.1),
    }  # fmt: skip
    # 0.0108 x 1.05 + 0.02 x 1.2 ; (0.162 + 0.00124) x 1.05 + 0.1
    assert structure.predicted_mass == pytest.approx(0.03534)
    assert payload.predicted_mass == pytest.approx(0.271402)


def test_a_budget_file_that_fails_validation_outside_the_run_is_an_error(kit, tmp_path):
    vertices, faces = shapes.box((10.0, 10.0, 10.0))
    (kit / "exports").mkdir()
    writers.write_binary_stl(kit / "exports" / "open.stl", vertices[faces[1:]])
    config_path = kit / "meshprops.toml"
    config_path.write_text(
        "[[files]]\nglob = 'exports/*.stl'\ndensity = 1000\nsubsystem = 's'\n"
        "[budget]\nname = 'p'\nallocation = 1\n[[budget.subsystem]]\nname = 's'\nallocation = 1\n"
    )
    config = load_config(config_path)
    with pytest.raises(InvalidMeshError, match="budget"):
        budget_rollup(config, None, {}, {})
    # checked in the same run, it is left out with a note (the run fails on its findings)
    report = run_gate([str(kit / "exports" / "open.stl")], config=config, baseline=None)
    assert report.exit_code == 1 and "left out of the budget" in report.budget.notes[0]


def test_an_unknown_manifest_body_names_the_item(kit):
    config_path = kit / "meshprops.toml"
    config_path.write_text(
        "[budget]\nname = 'p'\nallocation = 1\n[[budget.subsystem]]\nname = 's'\nallocation = 1\n"
        "[[budget.item]]\nmanifest = 'kit.toml'\nbody = 'lid'\nsubsystem = 's'\n"
    )
    with pytest.raises(ConfigError, match=r"budget.item\[0\].body: no body or point mass 'lid'"):
        budget_rollup(load_config(config_path), None, {}, {})
