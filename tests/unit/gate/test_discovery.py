"""Finding the gate's files: the configuration from a folder upward (meshprops.toml before a
pyproject.toml with [tool.meshprops]), the baseline in the folder itself, and no heavy imports."""

from __future__ import annotations

import subprocess
import sys

from meshprops.gate import config
from meshprops.gate.discovery import (
    BASELINE_FILE_NAME,
    baseline_path,
    find_config,
    gate_files,
)


def test_nothing_in_force_in_an_empty_folder(tmp_path):
    assert gate_files(tmp_path) == (None, None)


def test_a_pyproject_counts_only_with_a_tool_meshprops_table(tmp_path):
    (tmp_path / "pyproject.toml").write_text('[project]\nname = "meshprops-parts"\n')
    assert find_config(tmp_path) is None  # mentions the name, has no table
    (tmp_path / "pyproject.toml").write_text('[project]\nname = "rover"\n\n[tool.meshprops]\nfail_on = "error"\n')
    assert find_config(tmp_path) == str(tmp_path / "pyproject.toml")
    (tmp_path / "meshprops.toml").write_text("config_version = 1\n")
    assert find_config(tmp_path) == str(tmp_path / "meshprops.toml")  # the own file wins in one folder


def test_a_broken_pyproject_that_names_the_table_is_ours_to_report(tmp_path):
    (tmp_path / "pyproject.toml").write_text("[tool.meshprops\nfail_on = \n")
    assert find_config(tmp_path) == str(tmp_path / "pyproject.toml")


def test_the_baseline_is_looked_for_in_the_folder_itself_only(tmp_path):
    inner = tmp_path / "exports"
    inner.mkdir()
    (tmp_path / BASELINE_FILE_NAME).write_text("{}")
    assert gate_files(inner) == (None, None)
    assert gate_files(tmp_path) == (None, str(tmp_path / BASELINE_FILE_NAME))
    assert baseline_path(inner) == str(inner / BASELINE_FILE_NAME)


def test_the_configuration_module_finds_with_the_same_function():
    assert config.find_config is find_config


def test_finding_imports_neither_numpy_nor_the_gate(tmp_path):
    # A plain check asks this module first; it must stay as light as the standard library.
    code = (
        "import sys; from meshprops.gate.discovery import gate_files; gate_files(sys.argv[1]); "
        "print(sorted(m for m in ('numpy', 'meshprops.gate.config', 'meshprops.gate.runner') if m in sys.modules))"
    )
    done = subprocess.run([sys.executable, "-c", code, str(tmp_path)], capture_output=True, text=True, check=True)
    assert done.stdout.strip() == "[]"
