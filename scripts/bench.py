"""Benchmark meshprops against a reference on large binary STL files.

This is a benchmark, never a test: it prints figures beside the project's goals
and exits 0 whatever they are (no timed assertions anywhere).

What it does, in one run:

1. Makes closed, outward-oriented binary STL tori of about 1M, 2M and 5M triangles
   (``meshprops.geometry.shapes.torus`` written with ``meshprops.io.writers.write_binary_stl``,
   millimetres) in ``bench_data/`` (git-ignored), reusing them on later runs.
2. End to end, each as a fresh process, alternating the two sides:
   ``meshprops measure FILE --json`` (start-up, load, validation, integration,
   output) against a small ``python -c`` script that runs trimesh's
   ``trimesh.load(FILE)`` and ``.mass_properties`` on the same file. Prints
   medians, the ratio, and each side's peak resident memory (the child's
   ``ru_maxrss`` from ``os.wait4``) in bytes per triangle.
3. In this process: reading the file alone (memory map + touching every byte),
   loading it (``meshprops.io.load_mesh``), integrating it
   (``meshprops.physics.moments.integrate_chunks(mesh.triangle_chunks())``) and
   validating it (``meshprops.validate``), with the integration/read ratio.

4. With ``--gate``, instead: the gate of issue 10 on a folder of small parts
   (``--gate-parts N``, default 500; cylinders of 128 triangles in varied sizes, mm,
   aluminium by a ``meshprops.toml``): ``meshprops check --all`` cold (no
   baseline: every part read and validated) against warm (after ``meshprops
   baseline``: every part unchanged, only hashed), each a fresh process run in the
   folder, and a single staged part (unchanged, and new) checked alone. Goals:
   warm <= 1/3 of cold; one small part well under a second.

Usage (from the repository root)::

    python scripts/bench.py                  # 1M, 2M and 5M triangles, 3 repetitions
    python scripts/bench.py --quick          # smoke run with small files
    python scripts/bench.py --sizes 2M --repeats 5
    python scripts/bench.py --batch          # batch modes: 2,000 small parts (scripts/batch_bench.py)
    python scripts/bench.py --batch --quick  # batch smoke run: 200 parts
    python scripts/bench.py --gate           # 500 small parts, cold and with a warm baseline
"""

from __future__ import annotations

import argparse
import json
import math
import os
import platform
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

from meshprops.geometry import shapes
from meshprops.io import load_mesh
from meshprops.io.mesh import STL_HEADER_BYTES
from meshprops.io.writers import write_binary_stl
from meshprops.physics.moments import integrate_chunks
from meshprops.validation.checks import validate

REPOSITORY = Path(__file__).resolve().parent.parent
DEFAULT_DATA = REPOSITORY / "bench_data"

#: The goals of issue 2, item 13.
GOAL_SPEEDUP = 5.0  # end to end, at 1M triangles and above
GOAL_SPEEDUP_FROM = 1_000_000
GOAL_BYTES_PER_TRIANGLE = 150.0
GOAL_INTEGRATION_OVER_READ = 10.0
#: The goals of issue 8, item 4: check at most 0.6x the reference's load-and-measure time at 1M
#: faces; measure (self-intersections tested at every size) at least 4x faster at 2M triangles.
GOAL_CHECK_OVER_REFERENCE = 0.6
GOAL_CHECK_AT = 1_000_000
GOAL_MEASURE_SPEEDUP_WITH_TEST = 4.0
GOAL_MEASURE_SPEEDUP_WITH_TEST_AT = 2_000_000

#: Torus size in millimetres (the benchmark's own part: a tyre-like ring).
MAJOR_RADIUS_MM = 100.0
MINOR_RADIUS_MM = 30.0

REFERENCE_SCRIPT = (
    "import sys, json, trimesh\n"
    "mesh = trimesh.load(sys.argv[1])\n"
    "properties = mesh.mass_properties\n"
    "print(json.dumps({'volume': float(properties['volume']),"
    " 'inertia': [[float(x) for x in row] for row in properties['inertia']]}))\n"
)


# ---------------------------------------------------------------------------- sizes and files


def parse_size(text: str) -> int:
    """``"1M"`` → 1_000_000, ``"250k"`` → 250_000, ``"12345"`` → 12345."""
    text = text.strip().lower().replace("_", "")
    factor = 1
    if text.endswith("m"):
        factor, text = 1_000_000, text[:-1]
    elif text.endswith("k"):
        factor, text = 1_000, text[:-1]
    value = float(text) * factor
    if not math.isfinite(value) or value < 16:
        raise argparse.ArgumentTypeError(f"expected a triangle count such as 1M or 250k (at least 16), got {text!r}")
    return int(value)


def torus_sections(target_faces: int) -> tuple[int, int]:
    """Major and minor section counts of a torus with at least ``target_faces`` triangles (within 0.1 %).

    The torus has ``2 · major · minor`` triangles; the major count is about twice the
    minor one, so the triangles are close to right isosceles on the mid-circle. At
    least the target, so that a goal stated "at 2M triangles" applies to the 2M file.
    """
    minor = max(3, round(math.sqrt(target_faces / 4.0)))
    major = max(3, math.ceil(target_faces / (2.0 * minor)))
    return major, minor


def bench_file(data_dir: Path, target_faces: int, regenerate: bool) -> tuple[Path, int, bool]:
    """The torus STL for a size, written if missing; returns ``(path, faces, reused)``."""
    major, minor = torus_sections(target_faces)
    faces = 2 * major * minor
    path = data_dir / f"torus_{faces}.stl"
    if path.exists() and not regenerate and path.stat().st_size == STL_HEADER_BYTES + 50 * faces:
        return path, faces, True
    data_dir.mkdir(parents=True, exist_ok=True)
    vertices, indices = shapes.torus(MAJOR_RADIUS_MM, MINOR_RADIUS_MM, major, minor)
    partial = path.with_suffix(".partial")
    write_binary_stl(partial, shapes.triangles_of(vertices, indices), header=b"meshprops benchmark torus, mm")
    os.replace(partial, path)  # never leave a half-written benchmark file under the final name
    return path, faces, False


# ---------------------------------------------------------------------------- fresh processes


def meshprops_command(path: Path) -> list[str]:
    """``meshprops measure FILE --json`` through the console script next to this interpreter."""
    script = Path(sys.executable).with_name("meshprops")
    program = [str(script)] if script.exists() else [sys.executable, "-m", "meshprops"]
    # Exactly the command of the issue: no --density, so 1000 kg/m^3 is assumed (a line on stderr).
    return program + ["measure", str(path), "--json"]


def check_command(path: Path) -> list[str]:
    """``meshprops check FILE --json``: every check, self-intersections included."""
    return meshprops_command(path)[:-3] + ["check", str(path), "--json"]


def reference_command(path: Path) -> list[str]:
    return [sys.executable, "-c", REFERENCE_SCRIPT, str(path)]


#: Spawns one child, waits for it with wait4 and prints "seconds maxrss exit-code". It runs in a
#: bare interpreter (-I -S, no imports beyond os/sys/time) because Linux counts the RSS a child
#: inherits before exec into its ru_maxrss: spawned straight from this process, every child
#: would report at least this process's own size. The launcher's few MB are below any child's.
LAUNCHER = (
    "import os, sys, time\n"
    "out, err, argv = sys.argv[1], sys.argv[2], sys.argv[3:]\n"
    "flags = os.O_WRONLY | os.O_CREAT | os.O_TRUNC\n"
    "actions = [(os.POSIX_SPAWN_OPEN, 0, os.devnull, os.O_RDONLY, 0),\n"
    "           (os.POSIX_SPAWN_OPEN, 1, out, flags, 0o600), (os.POSIX_SPAWN_OPEN, 2, err, flags, 0o600)]\n"
    "start = time.perf_counter()\n"
    "pid = os.posix_spawnp(argv[0], argv, os.environ, file_actions=actions)\n"
    "_, status, usage = os.wait4(pid, 0)\n"
    "seconds = time.perf_counter() - start\n"
    "scale = 1 if sys.platform == 'darwin' else 1024\n"
    "print(seconds, usage.ru_maxrss * scale, os.waitstatus_to_exitcode(status))\n"
)


def run_fresh(command: list[str]) -> dict:
    """Run ``command`` as a fresh process: wall time, its own peak RSS (bytes), exit code, output.

    The time runs from spawning the child to reaping it, so it holds the child's
    whole start-up and nothing of the launcher's.
    """
    with tempfile.TemporaryDirectory(prefix="meshprops-bench-") as scratch:
        out, err = os.path.join(scratch, "stdout"), os.path.join(scratch, "stderr")
        launched = subprocess.run(
            [sys.executable, "-I", "-S", "-c", LAUNCHER, out, err, *command], capture_output=True, text=True
        )
        if launched.returncode != 0:
            raise RuntimeError(f"benchmark launcher failed: {launched.stderr.strip()}")
        seconds, maxrss, code = launched.stdout.split()
        with open(out, encoding="utf-8", errors="replace") as handle:
            stdout = handle.read()
        with open(err, encoding="utf-8", errors="replace") as handle:
            stderr = handle.read()
    return {"seconds": float(seconds), "maxrss": int(maxrss), "code": int(code), "stdout": stdout, "stderr": stderr}


def end_to_end(path: Path, faces: int, repeats: int, with_reference: bool, command=None) -> dict:
    """Alternate ours (``command``, default measure) and the reference, each a fresh process, ``repeats`` times."""
    ours, reference = [], []
    build = command or meshprops_command
    for repetition in range(repeats):
        order = [("ours", build(path))]
        if with_reference:
            order.append(("reference", reference_command(path)))
        if repetition % 2:
            order.reverse()  # alternate which side runs first
        for side, command in order:
            result = run_fresh(command)
            (ours if side == "ours" else reference).append(result)
            if result["code"] not in (0, 3):  # check exits 3 on warnings only
                line = result["stderr"].strip().splitlines()[-1:] or ["(no message)"]
                print(f"  ! {side} exited {result['code']} on {path.name}: {line[0]}")
    return {"ours": ours, "reference": reference}


def startup_floor(repeats: int, with_reference: bool) -> dict:
    """Fresh processes that only start: ``meshprops --help`` and ``import trimesh``."""
    script = Path(sys.executable).with_name("meshprops")
    ours_command = ([str(script)] if script.exists() else [sys.executable, "-m", "meshprops"]) + ["--help"]
    floors = {"ours": [run_fresh(ours_command) for _ in range(repeats)]}
    if with_reference:
        floors["reference"] = [run_fresh([sys.executable, "-c", "import trimesh"]) for _ in range(repeats)]
    return floors


# ---------------------------------------------------------------------------- in process


def read_only(path: Path) -> int:
    """Memory-map the file and touch every byte once (sum of its 8-byte words)."""
    data = np.memmap(path, dtype=np.uint8, mode="r")
    words = data[: data.size // 8 * 8].view(np.uint64)
    total = int(np.add.reduce(words, dtype=np.uint64))
    del words, data
    return total


def timed(function, repeats: int) -> tuple[list[float], object]:
    times, result = [], None
    for _ in range(repeats):
        start = time.perf_counter()
        result = function()
        times.append(time.perf_counter() - start)
    return times, result


def in_process(path: Path, repeats: int) -> dict:
    read_times, _ = timed(lambda: read_only(path), repeats)
    load_times, mesh = timed(lambda: load_mesh(path, "mm"), repeats)
    integrate_times, moments = timed(lambda: integrate_chunks(mesh.triangle_chunks()), repeats)
    validate_times, report = timed(lambda: validate(mesh, moments), repeats)
    crossing_times, _ = timed(lambda: _crossing_seconds(mesh), repeats)
    return {
        "crossings": [seconds for seconds in crossing_times],
        "read": read_times,
        "load": load_times,
        "integrate": integrate_times,
        "validate": validate_times,
        "valid": report.valid,
        "findings": [finding.code for finding in report.findings],
    }


def _crossing_seconds(mesh) -> float:
    """Wall time of the self-intersection finder alone (grid + compiled kernels) on the welded mesh."""
    from meshprops.geometry.crossing import find_crossings
    from meshprops.geometry.welding import weld_exact
    from meshprops.validation.checks import welded_positions

    topology = weld_exact(mesh)
    positions = welded_positions(mesh, topology, mesh.reference_point())
    return find_crossings(positions, topology.face_vertices).seconds


# ---------------------------------------------------------------------------- printing


def load_average() -> str:
    try:
        return " ".join(f"{value:.2f}" for value in os.getloadavg())
    except OSError:
        return "unknown"


def median(values) -> float:
    return statistics.median(values) if values else float("nan")


def spread(values, scale: float = 1.0, digits: int = 2) -> str:
    if not values:
        return "-"
    return f"{median(values) * scale:.{digits}f} ({min(values) * scale:.{digits}f}-{max(values) * scale:.{digits}f})"


def verdict(met: bool | None) -> str:
    return "n/a" if met is None else ("met" if met else "MISSED")


def agreement(ours: list[dict], reference: list[dict]) -> str:
    """Volume and inertia of our JSON against the reference's, from the last good runs."""
    try:
        document = json.loads(next(r["stdout"] for r in reversed(ours) if r["code"] == 0))
        body = document["bodies"][0]
        theirs = json.loads(next(r["stdout"] for r in reversed(reference) if r["code"] == 0))
    except (StopIteration, ValueError, KeyError, IndexError):
        return "agreement: not available (a run failed)"
    if not body.get("valid", False) or body.get("volume") is None:
        return f"agreement: our body is not valid: {body.get('findings') or body}"
    # trimesh works in the file's unit (mm) with density 1: volume mm^3, inertia per unit density mm^5.
    their_volume = theirs["volume"] * 1e-9
    their_inertia = np.array(theirs["inertia"]) * 1e-15 * 1000.0  # mm^5 -> m^5, times 1000 kg/m^3
    our_inertia = np.array(body["inertia_about_com"])
    volume_difference = abs(body["volume"] - their_volume) / abs(their_volume)
    inertia_difference = np.abs(our_inertia - their_inertia).max() / np.abs(their_inertia).max()
    return (
        f"agreement with the reference: volume {volume_difference:.1e} relative, "
        f"inertia about the centre of mass {inertia_difference:.1e} relative (max entry)"
    )


GATE_CONFIG = """\
[[files]]
glob = "parts/**/*.stl"
length_unit = "mm"
material = "aluminium_6061"
"""


def gate_folder(folder: Path, parts: int) -> list[Path]:
    """Write ``parts`` closed cylinders (32 sections, 128 triangles) of varied sizes, and the configuration."""
    (folder / "meshprops.toml").write_text(GATE_CONFIG)
    paths = []
    for index in range(parts):
        radius, height = 5.0 + (index % 17), 3.0 + (index % 23)
        vertices, faces = shapes.cylinder(radius, height, sections=32)
        path = folder / "parts" / f"group_{index // 100:02d}" / f"part_{index:04d}.stl"
        path.parent.mkdir(parents=True, exist_ok=True)
        write_binary_stl(path, vertices[faces])
        paths.append(path)
    return paths


def _timed_in(folder: Path, arguments: list[str]) -> tuple[float, int, str]:
    script = Path(sys.executable).with_name("meshprops")
    program = [str(script)] if script.exists() else [sys.executable, "-m", "meshprops"]
    # As an installed package runs: with its compiled bytecode. PYTHONDONTWRITEBYTECODE (set on
    # some development machines) would make every run compile every module again (~0.2 s).
    environment = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
    start = time.perf_counter()
    done = subprocess.run(program + arguments, cwd=folder, capture_output=True, text=True, env=environment)
    return time.perf_counter() - start, done.returncode, done.stderr


def gate_bench(parts: int, repeats: int) -> None:
    """Cold against warm ``meshprops check --all`` on ``parts`` small parts, and one part alone."""
    print(f"gate benchmark: {parts} small parts (128 triangles each), {os.cpu_count()} CPUs, "
          f"medians of {repeats} fresh processes, run in the parts folder")
    print(f"load average at start: {load_average()}")
    with tempfile.TemporaryDirectory(prefix="meshprops-gate-bench-") as scratch:
        folder = Path(scratch)
        paths = gate_folder(folder, parts)
        _timed_in(folder, ["--help"])  # writes the bytecode caches once
        baseline = folder / "meshprops-baseline.json"
        cold, warm = [], []
        for _ in range(repeats):
            baseline.unlink(missing_ok=True)
            seconds, code, stderr = _timed_in(folder, ["check", "--all"])
            assert code == 0, stderr
            cold.append(seconds)
            seconds, code, stderr = _timed_in(folder, ["baseline"])
            assert code == 0, stderr
            recorded = seconds
            seconds, code, stderr = _timed_in(folder, ["check", "--all"])
            assert code == 0, stderr
            warm.append(seconds)
        one = str(paths[0].relative_to(folder))
        single_unchanged = [_timed_in(folder, ["check", one])[0] for _ in range(repeats)]
        extra = folder / "parts" / "staged.stl"
        vertices, faces = shapes.cylinder(12.0, 8.0, sections=32)
        write_binary_stl(extra, vertices[faces])
        single_new = [_timed_in(folder, ["check", str(extra.relative_to(folder))])[0] for _ in range(repeats)]
        startup = [_timed_in(folder, ["--help"])[0] for _ in range(repeats)]
    ratio = median(warm) / median(cold)
    print(f"  start-up alone (meshprops --help)       {spread(startup)} s")
    print(f"  check --all, cold (no baseline)         {spread(cold)} s  ({median(cold) / parts * 1e3:.1f} ms a part)")
    print(f"  baseline (record all, last run)         {recorded:.2f} s")
    print(f"  check --all, warm (all unchanged)       {spread(warm)} s  ({median(warm) / parts * 1e3:.2f} ms a part)")
    print(f"  warm / cold                             {ratio:.3f}   goal <= 0.333  {verdict(ratio <= 1 / 3)}")
    print(f"  one staged part, unchanged              {spread(single_unchanged)} s  goal well under 1 s  {verdict(median(single_unchanged) < 1.0)}")
    print(f"  one staged part, new (read, validated)  {spread(single_new)} s  goal well under 1 s  {verdict(median(single_new) < 1.0)}")


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0], formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--sizes", default="1M,2M,5M", help="comma-separated triangle counts, e.g. 1M,5M or 250k (default 1M,2M,5M)")
    parser.add_argument("--repeats", type=int, default=3, help="repetitions per measurement; medians are printed (default 3)")
    parser.add_argument("--quick", action="store_true", help="smoke run: 20k and 100k triangles, 2 repetitions")
    parser.add_argument("--data-dir", type=Path, default=DEFAULT_DATA, help=f"where the STL files live (default {DEFAULT_DATA})")
    parser.add_argument("--regenerate", action="store_true", help="rewrite the STL files even if present")
    parser.add_argument("--no-reference", action="store_true", help="skip the trimesh reference runs")
    parser.add_argument("--no-in-process", action="store_true", help="skip the in-process read/integrate/validate timings")
    parser.add_argument("--batch", action="store_true", help="instead: parts per second in every batch mode (scripts/batch_bench.py)")
    parser.add_argument("--parts", type=int, default=2000, help="--batch: number of small parts (default 2000)")
    parser.add_argument("--gate", action="store_true", help="instead: the gate on small parts, cold against a warm baseline")
    parser.add_argument("--gate-parts", type=int, default=500, help="--gate: number of small parts (default 500)")
    arguments = parser.parse_args(argv)
    if arguments.gate:
        gate_bench(max(1, arguments.gate_parts), 2 if arguments.quick else max(1, arguments.repeats))
        return 0
    if arguments.batch:
        sys.path.insert(0, str(Path(__file__).resolve().parent))
        import batch_bench

        return batch_bench.main(["--quick"] if arguments.quick else ["--parts", str(arguments.parts), "--data-dir", str(arguments.data_dir)])
    if not (hasattr(os, "wait4") and hasattr(os, "posix_spawnp")):
        print("bench.py needs os.wait4 and os.posix_spawnp (Linux or macOS) to read each child's peak memory", file=sys.stderr)
        return 2
    sizes = [parse_size(s) for s in ("20k,100k" if arguments.quick else arguments.sizes).split(",")]
    repeats = 2 if arguments.quick else max(1, arguments.repeats)
    with_reference = not arguments.no_reference
    if with_reference:
        probe = subprocess.run([sys.executable, "-c", "import trimesh"], capture_output=True)
        if probe.returncode != 0:
            print("  ! trimesh is not importable: skipping the reference runs")
            with_reference = False

    versions = f"Python {platform.python_version()}, numpy {np.__version__}"
    try:
        import importlib.metadata as metadata

        versions += f", meshprops {metadata.version('meshprops')}, trimesh {metadata.version('trimesh')}"
    except Exception:  # noqa: BLE001 - versions are informative only
        pass
    print(f"meshprops benchmark: {os.cpu_count()} CPUs, {platform.machine()}, {versions}")
    print(f"ours:      {' '.join(meshprops_command(Path('FILE')))}")
    print("reference: python -c <trimesh.load(FILE).mass_properties> FILE   (trimesh's default load, vertex merge included)")
    print(f"medians of {repeats} fresh processes per side, alternating; (min-max) in brackets")
    print(f"load average at start: {load_average()} (other work on the machine slows both sides)\n")

    files = []
    for size in sizes:
        start = time.perf_counter()
        path, faces, reused = bench_file(arguments.data_dir, size, arguments.regenerate)
        how = "reused" if reused else f"written in {time.perf_counter() - start:.1f} s"
        print(f"file: {path} ({faces:,} triangles, {path.stat().st_size / 1e6:.1f} MB, {how})")
        files.append((path, faces))

    floors = startup_floor(repeats, with_reference)
    print("\nstart-up alone (fresh process, no mesh):")
    print(f"  meshprops --help        {spread([r['seconds'] for r in floors['ours']])} s, peak {median([r['maxrss'] for r in floors['ours']]) / 1e6:.0f} MB")
    if with_reference:
        print(f"  python -c 'import trimesh' {spread([r['seconds'] for r in floors['reference']])} s, peak {median([r['maxrss'] for r in floors['reference']]) / 1e6:.0f} MB")

    print("\nend to end (seconds; peak memory in bytes per triangle):")
    header = f"  {'triangles':>11}  {'meshprops s':>18}  {'reference s':>18}  {'speed-up':>8}  {'goal>=5x':>8}  {'ours B/tri':>10}  {'ref B/tri':>9}  {'goal<=150':>9}"
    print(header)
    agreements = []
    for path, faces in files:
        runs = end_to_end(path, faces, repeats, with_reference)
        ours_seconds = [r["seconds"] for r in runs["ours"]]
        ref_seconds = [r["seconds"] for r in runs["reference"]]
        ours_bytes = median([r["maxrss"] for r in runs["ours"]]) / faces
        ref_bytes = median([r["maxrss"] for r in runs["reference"]]) / faces if ref_seconds else float("nan")
        speedup = median(ref_seconds) / median(ours_seconds) if ref_seconds else float("nan")
        speed_goal = None if not ref_seconds or faces < GOAL_SPEEDUP_FROM else speedup >= GOAL_SPEEDUP
        print(
            f"  {faces:>11,}  {spread(ours_seconds):>18}  {spread(ref_seconds):>18}  {speedup:>7.2f}x  {verdict(speed_goal):>8}"
            f"  {ours_bytes:>10.0f}  {ref_bytes:>9.0f}  {verdict(ours_bytes <= GOAL_BYTES_PER_TRIANGLE):>9}"
        )
        if with_reference:
            agreements.append(f"  {faces:,}: {agreement(runs['ours'], runs['reference'])}")
    print("  (speed-up goal applies from 1M triangles; peak memory is the whole process, interpreter included)")
    for line in agreements:
        print(line)
    if with_reference:
        print("\nissue 8 goals, side by side in this run (seconds; medians):")
        print(f"  {'triangles':>11}  {'check s':>18}  {'measure s':>18}  {'reference s':>18}  {'check/ref':>9}  {'goal<=0.6':>9}  {'speed-up':>8}  {'goal>=4x':>8}")
        for path, faces in files:
            checks = end_to_end(path, faces, repeats, True, command=check_command)
            measures = end_to_end(path, faces, repeats, False)
            check_seconds = median([r["seconds"] for r in checks["ours"]])
            measure_seconds = median([r["seconds"] for r in measures["ours"]])
            ref = median([r["seconds"] for r in checks["reference"]])
            check_goal = check_seconds / ref <= GOAL_CHECK_OVER_REFERENCE if faces >= GOAL_CHECK_AT else None
            speed_goal = ref / measure_seconds >= GOAL_MEASURE_SPEEDUP_WITH_TEST if faces >= GOAL_MEASURE_SPEEDUP_WITH_TEST_AT else None
            print(
                f"  {faces:>11,}  {spread([r['seconds'] for r in checks['ours']]):>18}  {spread([r['seconds'] for r in measures['ours']]):>18}"
                f"  {spread([r['seconds'] for r in checks['reference']]):>18}  {check_seconds / ref:>8.2f}x  {verdict(check_goal):>9}"
                f"  {ref / measure_seconds:>7.2f}x  {verdict(speed_goal):>8}"
            )
        print(f"  (check goal from {GOAL_CHECK_AT:,} faces; measure goal, self-intersections tested, from {GOAL_MEASURE_SPEEDUP_WITH_TEST_AT:,})")

    if not arguments.no_in_process:
        print("\nin process (milliseconds, and nanoseconds per triangle):")
        print(f"  {'triangles':>11}  {'read file':>16}  {'load_mesh':>16}  {'integrate':>16}  {'validate':>18}  {'crossings':>16}  {'integrate/read':>14}  {'goal<=10x':>9}")
        for path, faces in files:
            figures = in_process(path, repeats)
            cells = []
            for key in ("read", "load", "integrate", "validate", "crossings"):
                value = median(figures[key])
                cells.append(f"{value * 1e3:.1f} ({value * 1e9 / faces:.0f} ns)")
            ratio = median(figures["integrate"]) / median(figures["read"])
            print(
                f"  {faces:>11,}  {cells[0]:>16}  {cells[1]:>16}  {cells[2]:>16}  {cells[3]:>18}  {cells[4]:>16}  {ratio:>13.1f}x"
                f"  {verdict(ratio <= GOAL_INTEGRATION_OVER_READ):>9}"
            )
            if not figures["valid"]:
                print(f"  ! validation found errors: {figures['findings']}")
        print("  read file = memory map + touch every byte; integrate = integrate_chunks(mesh.triangle_chunks());")
        print("  validate = every check (weld, edges, shells, zero-area and duplicate faces, crossings);")
        print("  crossings = the compiled self-intersection finder alone (grid broad phase + narrow phase)")

    print(f"\nload average at end: {load_average()}")
    print(
        f"goals: end to end >= {GOAL_SPEEDUP:.0f}x faster than the reference from {GOAL_SPEEDUP_FROM:,} triangles;"
        f" peak memory <= {GOAL_BYTES_PER_TRIANGLE:.0f} bytes per triangle; integration <= {GOAL_INTEGRATION_OVER_READ:.0f}x reading"
    )
    return 0


if __name__ == "__main__":
    sys.exit(main())
