"""End to end through the real pre-commit framework: a git repository of CAD exports with a
configuration, a baseline and a mass budget, and the hook this checkout publishes.

No network: the hook is the checkout's own ``.pre-commit-hooks.yaml`` entry, installed as a
``repo: local`` hook whose entry is the meshprops console script of this environment (pre-commit
then creates no environment and downloads nothing).
"""

import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest
import yaml
from paths import ROOT, TESTS

from meshprops.geometry import shapes
from meshprops.io import writers

MESHES = TESTS / "meshes"

pytestmark = pytest.mark.skipif(shutil.which("git") is None, reason="git is needed for pre-commit")

CONFIG = """\
[[files]]
glob = "exports/**/*.stl"
length_unit = "mm"
material = "aluminium_6061"
subsystem = "structure"

[budget]
name = "desk_top_rover"
allocation = 2.0

[[budget.subsystem]]
name = "structure"
allocation = 1.50

[[budget.subsystem]]
name = "wiring"
allocation = 0.10

[[budget.item]]
name = "harness"
subsystem = "wiring"
maturity = "estimated"
mass = 0.05
"""


def _box(path: Path, size) -> None:
    vertices, faces = shapes.box(size, center=[s / 2 for s in size])
    writers.write_binary_stl(path, vertices[faces])


def _meshprops() -> str:
    script = Path(sys.executable).with_name("meshprops")
    assert script.exists(), "the meshprops console script of this environment"
    return str(script)


def _local_hook_config() -> str:
    """The checkout's published hook, as a local hook running this environment's console script."""
    (hook,) = [h for h in yaml.safe_load((ROOT / ".pre-commit-hooks.yaml").read_text()) if h["id"] == "meshprops-check"]
    command, *arguments = hook["entry"].split()
    assert command == "meshprops"
    local = {**hook, "language": "system", "entry": " ".join([_meshprops(), *arguments])}
    return yaml.safe_dump({"repos": [{"repo": "local", "hooks": [local]}]}, sort_keys=False)


class Repository:
    def __init__(self, path: Path) -> None:
        self.path = path
        self.env = {
            **{k: v for k, v in os.environ.items() if not k.startswith(("GIT_", "PRE_COMMIT"))},
            "HOME": str(path.parent / "home"),
            "PRE_COMMIT_HOME": str(path.parent / "pre-commit-home"),
            "GIT_CONFIG_NOSYSTEM": "1",
            "GIT_AUTHOR_NAME": "rover team", "GIT_AUTHOR_EMAIL": "team@rover.invalid",
            "GIT_COMMITTER_NAME": "rover team", "GIT_COMMITTER_EMAIL": "team@rover.invalid",
        }  # fmt: skip
        (path.parent / "home").mkdir(exist_ok=True)

    def run(self, *command: str) -> subprocess.CompletedProcess:
        return subprocess.run(command, cwd=self.path, env=self.env, capture_output=True, text=True, timeout=120)

    def commit(self, message: str) -> tuple[int, str]:
        """Stage everything and commit: (exit code, what git and the hook printed; git sends hook output to stderr)."""
        self.run("git", "add", "-A")
        done = self.run("git", "commit", "-m", message)
        return done.returncode, done.stdout + done.stderr


@pytest.fixture
def repository(tmp_path) -> Repository:
    path = tmp_path / "rover"
    (path / "exports").mkdir(parents=True)
    repo = Repository(path)
    assert repo.run("git", "init", "-q", "-b", "main").returncode == 0
    (path / "meshprops.toml").write_text(CONFIG)
    (path / ".pre-commit-config.yaml").write_text(_local_hook_config())
    _box(path / "exports" / "chassis_plate.stl", (100.0, 60.0, 10.0))  # 0.162 kg of aluminium
    _box(path / "exports" / "bracket.stl", (40.0, 20.0, 5.0))  # 0.0108 kg
    installed = subprocess.run(
        [sys.executable, "-m", "pre_commit", "install"], cwd=path, env=repo.env, capture_output=True, text=True, timeout=120
    )
    assert installed.returncode == 0, installed.stdout + installed.stderr
    recorded = repo.run(_meshprops(), "baseline")
    assert recorded.returncode == 0, recorded.stderr
    return repo


def test_the_gate_through_pre_commit(repository):
    repo = repository
    exports = repo.path / "exports"

    code, said = repo.commit("exports and their baseline")
    assert code == 0, said
    assert "meshprops mesh check" in said and "Passed" in said and "2 unchanged" in said

    # a part whose only finding is a warning commits, and the warning is printed
    shutil.copy(MESHES / "warnings" / "collapsed_faces__plate-with-collapsed-face.stl", exports / "spacer.stl")
    code, said = repo.commit("a spacer with a collapsed face")
    assert code == 0, said
    assert "collapsed_faces" in said and "warning" in said and "exports/spacer.stl" in said and "new" in said

    # a re-export whose mass changed by 20 % is refused, naming the file and the quantity
    _box(exports / "chassis_plate.stl", (100.0, 60.0, 12.0))
    code, said = repo.commit("thicker chassis plate")
    assert code != 0 and "Failed" in said
    assert "exports/chassis_plate.stl: baseline: mass changed from 0.162 kg to 0.1944 kg" in said

    # updating the baseline lets it through
    assert repo.run(_meshprops(), "baseline", "exports/chassis_plate.stl").returncode == 0
    code, said = repo.commit("thicker chassis plate, baseline updated")
    assert code == 0, said

    # an open mesh is refused
    shutil.copy(MESHES / "invalid" / "open_edges__chassis-plate-missing-face.stl", exports / "lid.stl")
    code, said = repo.commit("an open lid")
    assert code != 0 and "exports/lid.stl: invalid mesh: open_edges" in said
    (exports / "lid.stl").unlink()

    # a heavy new part drives the structure's margin negative: refused, naming the subsystem
    # (structure: 0.0108 + 0.1944 + 1.0368 (the spacer) + 0.81 kg, x 1.05 = 2.155 kg > 1.50 kg)
    _box(exports / "ballast.stl", (100.0, 100.0, 30.0))  # 0.81 kg
    code, said = repo.commit("ballast")
    assert code != 0
    assert "budget: subsystem 'structure': predicted" in said and "margin -" in said

    log = repo.run("git", "log", "--format=%s").stdout.split("\n")
    assert log[:3] == ["thicker chassis plate, baseline updated", "a spacer with a collapsed face", "exports and their baseline"]
