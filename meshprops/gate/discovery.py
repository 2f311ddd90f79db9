"""Which gate files are in force for a folder: the configuration (``meshprops.toml``, or a
``pyproject.toml`` with a ``[tool.meshprops]`` table, from the folder upward) and the baseline
(``meshprops-baseline.json`` in the folder itself).

Finding them reads no more than those files (standard library only), so that a plain check
with no gate in force does not load the gate's machinery; reading and checking them is
:func:`meshprops.gate.config.load_config` and :func:`meshprops.gate.baseline.read_baseline`.
"""

from __future__ import annotations

import os
import re
import tomllib
from pathlib import Path

CONFIG_FILE_NAME = "meshprops.toml"
PYPROJECT_FILE_NAME = "pyproject.toml"
BASELINE_FILE_NAME = "meshprops-baseline.json"


def find_config(start: str | os.PathLike | None = None) -> str | None:
    """The path of the configuration in force for ``start`` (default: the current directory), or ``None``.

    From ``start`` upward, each folder is asked for ``meshprops.toml`` first, then
    for a ``pyproject.toml`` holding a ``[tool.meshprops]`` table.
    """
    folder = Path(os.path.abspath(os.fspath(start) if start is not None else os.getcwd()))
    for candidate in (folder, *folder.parents):
        own = candidate / CONFIG_FILE_NAME
        if own.is_file():
            return str(own)
        pyproject = candidate / PYPROJECT_FILE_NAME
        if pyproject.is_file() and _has_tool_table(pyproject):
            return str(pyproject)
    return None


def _has_tool_table(pyproject: Path) -> bool:
    try:
        text = pyproject.read_text(encoding="utf-8", errors="replace")
    except OSError:
        return False
    if "meshprops" not in text:
        return False
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError:
        # A broken pyproject.toml that mentions a [tool.meshprops] table is ours to report.
        return re.search(r"^\s*\[\s*tool\s*\.\s*meshprops", text, re.MULTILINE) is not None
    return isinstance(data.get("tool"), dict) and "meshprops" in data["tool"]


def baseline_path(start: str | os.PathLike | None = None) -> str:
    """Where the baseline of ``start`` (default: the current directory) is, whether or not it exists."""
    return os.path.join(os.fspath(start) if start is not None else os.getcwd(), BASELINE_FILE_NAME)


def gate_files(start: str | os.PathLike | None = None) -> tuple[str | None, str | None]:
    """``(configuration path or None, baseline path or None)`` of the files in force for ``start``."""
    baseline = baseline_path(start)
    return find_config(start), (baseline if os.path.exists(baseline) else None)
