"""The pre-commit hook the repository publishes runs the real command on real files."""

import re
import shlex
from pathlib import Path

from paths import ROOT
from typer.testing import CliRunner

from meshprops.cli import app

ROOT = ROOT


def _hook() -> dict:
    # A tiny reader for our own flat hook file (no YAML dependency): "key: value" lines of one item.
    hook: dict = {}
    for line in (ROOT / ".pre-commit-hooks.yaml").read_text().splitlines():
        match = re.match(r"^[- ] (\w+): (.*)$", line)
        if match:
            hook[match.group(1)] = match.group(2).strip().strip("'")
    return hook


def test_hook_runs_meshprops_check_on_mesh_files():
    hook = _hook()
    assert hook["id"] == "meshprops-check"
    assert shlex.split(hook["entry"]) == ["meshprops", "check"]
    pattern = re.compile(hook["files"])
    assert all(pattern.search(name) for name in ("a.stl", "b.OBJ", "c.ply"))
    assert not pattern.search("notes.txt")


def test_hook_passes_sound_exports_and_fails_broken_ones():
    entry = shlex.split(_hook()["entry"])[1:]
    sound = sorted(str(p) for p in (ROOT / "sample_meshes").glob("*.stl"))
    broken = sorted(str(p) for p in (ROOT / "tests" / "meshes" / "invalid").glob("open_edges__*.stl"))
    assert sound and broken
    assert CliRunner().invoke(app, [*entry, *sound, "--units", "mm"]).exit_code == 0
    assert CliRunner().invoke(app, [*entry, *sound, *broken, "--units", "mm"]).exit_code == 1


def test_check_accepts_a_manifest_and_checks_each_mesh_it_lists_once(tmp_path):
    import json

    from meshprops.geometry import shapes
    from meshprops.io import writers

    writers.write_obj(tmp_path / "good.obj", *shapes.box((10.0, 20.0, 30.0)))
    vertices, faces = shapes.box((10.0, 20.0, 30.0))
    writers.write_obj(tmp_path / "open.obj", vertices, faces[1:])  # one face missing: a hole
    (tmp_path / "kit.toml").write_text(
        '[assembly]\nname = "kit"\nlength_unit = "mm"\nmanifest_version = 1\n\n'
        '[[body]]\nname = "a"\nmesh = "good.obj"\ndensity = 1000\n\n'
        '[[body]]\nname = "b"\nmesh = "good.obj"\ndensity = 1000\ntranslation = [50, 0, 0]\n\n'
        '[[body]]\nname = "c"\nmesh = "open.obj"\ndensity = 1000\n'
    )
    result = CliRunner().invoke(app, ["check", str(tmp_path / "kit.toml"), "--json"])
    assert result.exit_code == 1, result.output
    doc = json.loads(result.stdout)
    assert [Path(f["source"]).name for f in doc["files"]] == ["good.obj", "open.obj"]
    assert [f["valid"] for f in doc["files"]] == [True, False]
