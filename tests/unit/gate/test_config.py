"""The gate's configuration: finding it, every key of the documented example, and errors with key and line."""

import re

import numpy as np
import pytest

from meshprops.errors import ConfigError
from meshprops.gate import config as gate_config
from meshprops.gate.baseline import DEFAULT_TOLERANCES
from meshprops.gate.budget import DEFAULT_GROWTH_ALLOWANCE
from meshprops.gate.config import find_config, glob_matches, load_config


def _documented_example() -> str:
    """The full example of the module docstring, as a user would copy it."""
    doc = gate_config.__doc__
    block = doc.split("A full example, every key shown::\n\n", 1)[1].split("\nErrors name", 1)[0]
    return "\n".join(line[4:] for line in block.splitlines()) + "\n"


def _write(folder, text, name="meshprops.toml"):
    path = folder / name
    path.write_text(text)
    return path


def test_the_documented_example_parses_with_every_key(tmp_path):
    (tmp_path / "rover.toml").write_text("")  # the manifest entry must name an existing file
    config = load_config(_write(tmp_path, _documented_example()))
    assert config.fail_on == "error" and config.length_unit == "mm"
    glob_group, manifest_group = config.files
    assert glob_group.globs == ("exports/**/*.stl",) and glob_group.density == 2700.0  # aluminium_6061 in the table
    assert glob_group.subsystem == "structure" and glob_group.maturity == "calculated"
    assert manifest_group.manifest == str(tmp_path / "rover.toml") and manifest_group.subsystem == "payload"
    (rule,) = config.rules
    assert rule.mass_limits == pytest.approx((0.168, 0.176))
    np.testing.assert_allclose(rule.center_of_mass_min, [-0.005, -0.005, 0.0])  # mm -> m
    np.testing.assert_allclose(rule.center_of_mass_max, [0.005, 0.005, 0.004])
    np.testing.assert_allclose(rule.center_of_mass_near, [0, 0, 0.002])
    assert rule.center_of_mass_within == pytest.approx(0.003)
    np.testing.assert_allclose(rule.principal_moments_max, [1e-3, 1e-3, 2e-3])  # kg*m^2, not scaled
    assert config.tolerances.mass == 1e-3 and config.tolerances.center_of_mass == 1e-3
    budget = config.budget
    assert budget.allocation == 1.30 and budget.growth_allowance == {"estimated": 0.20, "calculated": 0.05, "measured": 0.0}
    assert budget.growth_allowance_source == "program mass control plan, rev B"
    assert [(s.name, s.allocation) for s in budget.subsystems] == [("structure", 0.60), ("payload", 0.45)]
    (item,) = budget.items
    assert (item.name, item.maturity, item.mass, item.key) == ("harness", "estimated", 0.045, "budget.item[0]")


def test_the_same_keys_work_under_tool_meshprops_in_pyproject(tmp_path):
    body = "\n".join(
        re.sub(r"^\[(\[?)", r"[\1tool.meshprops.", line) if line.startswith("[") else line
        for line in _documented_example().splitlines()
    )
    # top-level keys of the example go into [tool.meshprops] itself
    top, rest = body.split("[tool.meshprops.materials]", 1)
    text = '[project]\nname = "robot"\n\n[tool.meshprops]\n' + top + "[tool.meshprops.materials]" + rest
    (tmp_path / "rover.toml").write_text("")
    path = _write(tmp_path, text, "pyproject.toml")
    assert find_config(tmp_path) == str(path)
    config = load_config(path)
    assert config.rules[0].mass_limits == pytest.approx((0.168, 0.176)) and config.budget.name == "desk_top_rover"


def test_found_from_the_current_folder_upward(tmp_path, monkeypatch):
    deep = tmp_path / "a" / "b"
    deep.mkdir(parents=True)
    assert find_config(deep) is None
    top = _write(tmp_path, "fail_on = 'warning'\n")
    assert find_config(deep) == str(top)
    # a pyproject.toml without [tool.meshprops] does not stop the search
    _write(tmp_path / "a", "[project]\nname = 'x'\n", "pyproject.toml")
    assert find_config(deep) == str(top)
    own = _write(tmp_path / "a", "[tool.meshprops]\nfail_on = 'error'\n", "pyproject.toml")
    assert find_config(deep) == str(own)
    # in one folder meshprops.toml wins over pyproject.toml
    nearer = _write(tmp_path / "a", "")
    assert find_config(deep) == str(nearer)
    monkeypatch.chdir(deep)
    assert find_config() == str(nearer)


def test_defaults_of_an_empty_file(tmp_path):
    config = load_config(_write(tmp_path, ""))
    assert config.fail_on == "error" and config.files == () and config.rules == () and config.budget is None
    assert config.tolerances == DEFAULT_TOLERANCES


def test_growth_allowance_overrides_replace_only_their_maturity(tmp_path):
    config = load_config(
        _write(tmp_path, "[budget]\nname='p'\nallocation=1\ngrowth_allowance={estimated=0.3}\n[[budget.subsystem]]\nname='s'\nallocation=1\n")
    )
    assert config.budget.growth_allowance == {**DEFAULT_GROWTH_ALLOWANCE, "estimated": 0.3}
    assert "overridden" in config.budget.growth_allowance_source


def test_globs_stay_within_folders_and_double_star_crosses_them():
    assert glob_matches("exports/*.stl", "exports/a.stl")
    assert not glob_matches("exports/*.stl", "exports/sub/a.stl")
    assert glob_matches("exports/**/*.stl", "exports/a.stl")  # no folder in between
    assert glob_matches("exports/**/*.stl", "exports/x/y/a.stl")
    assert not glob_matches("exports/**/*.stl", "other/a.stl")
    assert glob_matches("**/*.[sS][tT][lL]", "a/b/C.STL")
    assert glob_matches("./parts/p?.obj", "parts/p1.obj") and not glob_matches("parts/p?.obj", "parts/p12.obj")
    assert not glob_matches("*.stl", "a.stl.bak")


def test_first_matching_group_wins_and_rules_accumulate(tmp_path):
    config = load_config(
        _write(
            tmp_path,
            "[[files]]\nglob='exports/inch/*.stl'\nlength_unit='in'\ndensity=1240\n"
            "[[files]]\nglob=['exports/**/*.stl', 'exports/**/*.obj']\nmaterial='aluminium_6061'\n"
            "[[rule]]\nglob='exports/**'\nexpected_mass=1\nmass_tolerance=0.1\n"
            "[[rule]]\nglob='exports/inch/*'\ncenter_of_mass_max=[1,1,1]\nlength_unit='in'\n",
        )
    )
    inch = config.group_for(tmp_path / "exports" / "inch" / "p.stl")
    assert (inch.length_unit, inch.density) == ("in", 1240.0)
    metric = config.group_for(tmp_path / "exports" / "p.obj")
    assert (metric.length_unit, metric.material.name) == ("mm", "aluminium_6061")
    assert config.group_for(tmp_path / "elsewhere.stl") is None
    assert config.group_for(tmp_path.parent / "outside.stl") is None
    assert [r.index for r in config.rules_for(tmp_path / "exports" / "inch" / "p.stl")] == [0, 1]
    assert [r.index for r in config.rules_for(tmp_path / "exports" / "p.stl")] == [0]
    np.testing.assert_allclose(config.rules[1].center_of_mass_max, [0.0254] * 3)  # 1 in = 25.4 mm exactly


@pytest.mark.parametrize(
    ("text", "key", "line", "words"),
    [
        ("fail_on = 'warnings'\n", "fail_on", 1, "expected one of 'error', 'warning'"),
        ("\n[[files]]\nglob = 'a/*.stl'\ncolour = 'red'\n", "files[0].colour", 4, "unknown key 'colour'"),
        ("[[files]]\nglob='*.stl'\n[[files]]\nglob='*.obj'\nmaterial='alu'\n", "files[1].material", 5, "a known material"),
        ("[[files]]\nglob='*.stl'\nmanifest='m.toml'\n", "files[0]", 1, "either glob"),
        ("[[files]]\nglob='*.stl'\nlength_unit='mil'\n", "files[0].length_unit", 3, "unknown length unit 'mil'"),
        ("[[files]]\nglob='/abs/*.stl'\n", "files[0].glob", 2, "relative"),
        ("[[rule]]\nglob='*.stl'\nexpected_mass = 1.0\n", "rule[0].expected_mass", 3, "mass_tolerance"),
        ("[[rule]]\nglob='*.stl'\nmass_tolerance = 1.0\n", "rule[0].mass_tolerance", 3, "needs expected_mass"),
        ("[[rule]]\nglob='*.stl'\n", "rule[0]", 1, "at least one limit"),
        ("[[rule]]\nglob='*'\ncenter_of_mass_min=[0,0,1]\ncenter_of_mass_max=[1,1,0]\n", "rule[0].center_of_mass_max", 4, ">="),
        ("[[rule]]\nglob='*'\ncenter_of_mass_near=[0,0,1]\n", "rule[0]", 1, "go together"),
        ("[[rule]]\nglob='*'\nprincipal_moments_min=[1,2]\n", "rule[0].principal_moments_min", 3, "3 numbers"),
        ("[baseline]\nmass = -1e-3\n", "baseline.mass", 2, ">= 0"),
        ("[baseline]\nweight = 1e-3\n", "baseline.weight", 2, "unknown key"),
        ("[budget]\nname='p'\n", "budget", 1, "needs allocation"),
        ("[budget]\nname='p'\nallocation=1\ngrowth_allowance={guessed=0.1}\n", "budget.growth_allowance.guessed", 4, "unknown key"),
        ("[budget]\nname='p'\nallocation=1\ngrowth_allowance={estimated=20}\n", "budget.growth_allowance.estimated", 4, "between 0 and 1"),
        ("[budget]\nname='p'\nallocation=1\n[[budget.subsystem]]\nname='s'\nallocation=0\n", "budget.subsystem[0].allocation", 6, "> 0"),
        ("[budget]\nname='p'\nallocation=1\n[[budget.subsystem]]\nname='s'\nallocation=1\n[[budget.item]]\nsubsystem='s'\nmass=1\n",
         "budget.item[0]", 7, "needs a maturity"),
        ("[budget]\nname='p'\nallocation=1\n[[budget.subsystem]]\nname='s'\nallocation=1\n[[budget.item]]\nsubsystem='s'\nfile='a.stl'\nmass=1\n",
         "budget.item[0]", 7, "exactly one of"),
        ("[[files]]\nglob='*.stl'\nsubsystem='s'\n", "files[0].subsystem", 3, "needs a [budget]"),
        ("config_version = 2\n", "config_version", 1, "expected 1"),
    ],
)  # fmt: skip
def test_errors_name_the_file_the_key_and_the_line(tmp_path, text, key, line, words):
    path = _write(tmp_path, text)
    with pytest.raises(ConfigError) as caught:
        load_config(path)
    error = caught.value
    assert (error.key, error.line) == (key, line), str(error)
    assert words in str(error)
    assert str(error).startswith(f"{path}: line {line}: {key}: ")
    assert isinstance(error, ValueError) and error.exit_code == 2


def test_pyproject_errors_carry_the_tool_prefix_and_the_right_line(tmp_path):
    path = _write(tmp_path, "[project]\nname='x'\n\n[tool.meshprops]\nfail_on='error'\n\n[[tool.meshprops.rule]]\nglob='*'\nexpected_mass='heavy'\n", "pyproject.toml")
    with pytest.raises(ConfigError) as caught:
        load_config(path)
    assert (caught.value.key, caught.value.line) == ("tool.meshprops.rule[0].expected_mass", 9)


def test_syntax_error_gives_the_parsers_line(tmp_path):
    with pytest.raises(ConfigError) as caught:
        load_config(_write(tmp_path, "fail_on = 'error'\n[[rule]\n"))
    assert caught.value.line == 2 and "TOML syntax error" in str(caught.value)


def test_missing_file(tmp_path):
    with pytest.raises(ConfigError, match="no such configuration file"):
        load_config(tmp_path / "meshprops.toml")


def test_the_readme_shows_the_same_full_example():
    from paths import ROOT

    assert _documented_example().rstrip() in (ROOT / "README.md").read_text()
