"""The command lines whose outputs are recorded as golden files.

Every sample and every example mesh, through every renderer: JSON, table, CSV and the
simulator blocks. ``python tests/golden/cases.py`` rewrites the golden files (run it only
for an intended change of output, and say so in the commit); ``tests/test_golden.py``
compares the current outputs with them byte for byte.
"""

from __future__ import annotations

import re
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
GOLDEN = Path(__file__).resolve().parent / "outputs"
SAMPLES = "sample_meshes"
EXAMPLES = "tests/meshes"

# The version string is masked so that a release does not change every golden file.
_VERSION = re.compile(r'("meshprops_version": ")[^"]*(")|(meshprops )\d+\.\d+\.\d+\S*')


def mask(text: str) -> str:
    """Mask the version and the checkout's own folder (manifest mesh paths are absolute)."""
    text = text.replace(str(ROOT) + "/", "<checkout>/")
    return _VERSION.sub(lambda m: (m.group(1) + "<version>" + m.group(2)) if m.group(1) else m.group(3) + "<version>", text)


def _sample_meshes() -> list[str]:
    return sorted(p.name for p in (ROOT / SAMPLES).iterdir() if p.suffix.lower() in {".stl", ".obj", ".ply"})


def _example_meshes() -> list[str]:
    return sorted(str(p.relative_to(ROOT)) for p in (ROOT / EXAMPLES).glob("*/*") if p.suffix.lower() in {".stl", ".obj", ".ply"})


def cases() -> dict[str, list[str]]:
    """name -> argv (run from the repository root)."""
    out: dict[str, list[str]] = {}
    manifest = f"{SAMPLES}/rover.toml"
    for fmt in ("table", "json", "csv", "urdf", "sdf", "mjcf"):
        out[f"rover.{fmt}"] = ["measure", manifest, "--format", fmt]
    out["rover.mjcf-principal"] = ["measure", manifest, "--format", "mjcf", "--inertial-form", "principal"]
    for fmt in ("urdf", "sdf", "mjcf"):  # the inertial blocks alone (complete models above)
        out[f"rover.{fmt}-blocks"] = ["measure", manifest, "--format", fmt, "--blocks-only"]
    out["rover.spin.json"] = ["measure", manifest, "--json", "--about", "mast_base", "--rpm", "120", "--axis", "0,0,1"]
    out["rover.check.table"] = ["check", manifest]
    out["rover.check.json"] = ["check", manifest, "--json"]
    for name in _sample_meshes():
        path = f"{SAMPLES}/{name}"
        out[f"{name}.table"] = ["measure", path, "--density", "2700"]
        out[f"{name}.json"] = ["measure", path, "--density", "2700", "--json", "--about", "1,2,3", "--spin", "0.5,-1,2", "--velocity", "0.1,0,0"]
        for fmt in ("urdf", "sdf", "mjcf"):
            out[f"{name}.{fmt}"] = ["measure", path, "--density", "2700", "--format", fmt]
    for path in _example_meshes():
        name = path.replace("/", "_")
        out[f"{name}.measure.json"] = ["measure", path, "--json"]
        out[f"{name}.measure.table"] = ["measure", path]
        out[f"{name}.repair.json"] = ["measure", path, "--json", "--repair"]
        out[f"{name}.check.json"] = ["check", path, "--json"]
        out[f"{name}.check.table"] = ["check", path]
    return out


def run_case(argv: list[str]) -> str:
    """Run the real CLI in process; returns exit code, stdout and stderr as one text."""
    import os

    from typer.testing import CliRunner

    from meshprops.cli import app

    here = os.getcwd()
    os.chdir(ROOT)
    try:
        result = CliRunner().invoke(app, argv, catch_exceptions=False)
    finally:
        os.chdir(here)
    stderr = result.stderr if result.stderr_bytes is not None else ""
    return mask(f"exit {result.exit_code}\n--- stdout\n{result.stdout}--- stderr\n{stderr}")


def main() -> None:
    GOLDEN.mkdir(exist_ok=True)
    for old in GOLDEN.glob("*.txt"):
        old.unlink()
    for name, argv in cases().items():
        (GOLDEN / f"{name}.txt").write_text(run_case(argv), encoding="utf-8")
    print(f"wrote {len(cases())} golden files to {GOLDEN.relative_to(ROOT)}")


if __name__ == "__main__":
    sys.path.insert(0, str(ROOT))
    from meshprops.geometry.warm_up import warm_up

    warm_up()  # compiled and cached first, so no recorded output carries the one-time compile notice
    main()
