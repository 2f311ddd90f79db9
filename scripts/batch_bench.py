"""Batch benchmark: parts per second in every batch mode, against the reference library.

A benchmark, never a test: it prints figures beside the goals of the batch work and
exits 0 whatever they are. Run it through ``python scripts/bench.py --batch`` (or
directly: ``python scripts/batch_bench.py``).

In one run, each side a fresh process, on the same folder of small closed parts
(distinct tori of 1,000 triangles, binary STL, millimetres; cached in the git-ignored
``bench_data/``):

- the reference: one ``python -c`` process that imports trimesh and runs
  ``trimesh.load(FILE).mass_properties`` on every file;
- ``meshprops check DIR --json`` with ``--jobs 1``, ``--jobs 2``, and ``--scheduler``
  on a ``dask.distributed.LocalCluster`` of two single-thread workers on 127.0.0.1
  (started before timing: the cluster already exists for a user);
- ``--jobs 2 --cache DB`` cold (a new database) and warm (the same database again);
- ``meshprops measure DIR --total --jobs 2``.

Goals: ``check --jobs 2`` takes at most the reference's time (although it validates far
more: welding, shells, orientation, self-intersections); a warm-cache run takes at most a
tenth of the cold one.

Every child runs as an installed package does, with its compiled bytecode: a
``PYTHONDONTWRITEBYTECODE`` in this environment is left out of the children's (a user's
install has its ``.pyc`` files; without them each run would compile meshprops' modules
again, ~70 ms), and one untimed run on two parts writes them before the timed runs.
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

REPOSITORY = Path(__file__).resolve().parent.parent
DEFAULT_DATA = REPOSITORY / "bench_data"

GOAL_REFERENCE_RATIO = 1.0  # check --jobs 2 time / reference time, at most
GOAL_WARM_OVER_COLD = 0.1

#: Torus sections giving 25 x 20 x 2 = 1,000 triangles a part.
MAJOR_SECTIONS, MINOR_SECTIONS = 25, 20

_REFERENCE = """
import sys, time
started = time.perf_counter()
import trimesh
total = 0.0
for path in open(sys.argv[1]).read().split("\\n"):
    if path:
        total += trimesh.load(path).mass_properties["volume"]
print(total)
"""


def make_parts(folder: Path, count: int) -> list[Path]:
    """``count`` distinct closed tori of 1,000 triangles (mm), reused when already there."""
    from meshprops.geometry import shapes
    from meshprops.io.writers import write_binary_stl

    folder.mkdir(parents=True, exist_ok=True)
    paths = [folder / f"part_{index:05d}.stl" for index in range(count)]
    generator = np.random.default_rng(14)
    for path in paths:
        major = generator.uniform(15.0, 40.0)
        minor = generator.uniform(2.0, 0.3 * major)
        if path.exists():
            continue
        vertices, faces = shapes.torus(major, minor, MAJOR_SECTIONS, MINOR_SECTIONS, center=generator.uniform(-50, 50, 3))
        write_binary_stl(path, shapes.triangles_of(vertices, faces))
    return paths


#: The children's environment: as here, less PYTHONDONTWRITEBYTECODE (see the module's text).
CHILD_ENVIRONMENT = {name: value for name, value in os.environ.items() if name != "PYTHONDONTWRITEBYTECODE"}


def timed(command: list[str], *, environment=None) -> tuple[float, int]:
    """Wall time of one child process (stdout discarded), and its exit code."""
    started = time.perf_counter()
    environment = CHILD_ENVIRONMENT if environment is None else environment
    done = subprocess.run(command, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, env=environment)
    elapsed = time.perf_counter() - started
    if done.returncode not in (0, 3):
        tail = done.stderr.decode(errors="replace").strip().splitlines()[-3:]
        print(f"  ! {' '.join(command[2:])} exited {done.returncode}: {' / '.join(tail)}")
    return elapsed, done.returncode


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--parts", type=int, default=2000, help="number of parts (default 2000)")
    parser.add_argument("--quick", action="store_true", help="a smoke run with 200 parts")
    parser.add_argument("--data-dir", type=Path, default=DEFAULT_DATA)
    parser.add_argument("--no-dask", action="store_true", help="skip the LocalCluster mode")
    options = parser.parse_args(argv)
    count = 200 if options.quick else options.parts
    folder = options.data_dir / f"batch_parts_{count}"
    started = time.perf_counter()
    paths = make_parts(folder, count)
    print(f"{count} parts of {2 * MAJOR_SECTIONS * MINOR_SECTIONS} triangles in {folder.name}/ "
          f"(ready in {time.perf_counter() - started:.1f} s); {os.cpu_count()} cores; load average {_load()}")
    print("children run with their compiled bytecode, as an installed package does (PYTHONDONTWRITEBYTECODE unset)")

    python = sys.executable
    meshprops = [python, "-m", "meshprops"]
    rows: list[tuple[str, float]] = []
    with tempfile.TemporaryDirectory() as scratch:
        listing = Path(scratch) / "files.txt"
        listing.write_text("\n".join(str(path) for path in paths))
        # untimed: writes the bytecode of every module a check and a cached check import
        warm_up = [str(path) for path in paths[:2]]
        timed(meshprops + ["check", *warm_up, "--json", "--jobs", "1", "--cache", str(Path(scratch) / "warm_up.sqlite")])
        timed(meshprops + ["check", *warm_up, "--json", "--jobs", "1", "--cache", str(Path(scratch) / "warm_up.sqlite")])
        reference, _ = timed([python, "-c", _REFERENCE, str(listing)])
        rows.append(("reference: trimesh load + mass_properties, one process", reference))
        for label, extra in (("check --jobs 1 (serial)", ["--jobs", "1"]), ("check --jobs 2", ["--jobs", "2"])):
            rows.append((label, timed(meshprops + ["check", str(folder), "--json"] + extra)[0]))
        if not options.no_dask:
            rows.append(("check --scheduler (LocalCluster, 2 workers)", _dask_time(meshprops, folder)))
        database = str(Path(scratch) / "cache.sqlite")
        cold = timed(meshprops + ["check", str(folder), "--json", "--jobs", "2", "--cache", database])[0]
        warm = timed(meshprops + ["check", str(folder), "--json", "--jobs", "2", "--cache", database])[0]
        rows.append(("check --jobs 2 --cache (cold)", cold))
        rows.append(("check --jobs 2 --cache (warm)", warm))
        rows.append(("measure --total --jobs 2", timed(meshprops + ["measure", str(folder), "--total", "--json", "--jobs", "2"])[0]))

    print(f"\n{'mode':<58} {'seconds':>8} {'parts/s':>9} {'x reference':>12}")
    for label, seconds in rows:
        print(f"{label:<58} {seconds:8.2f} {count / seconds:9.0f} {seconds / reference:12.2f}")
    jobs2 = dict(rows)["check --jobs 2"]
    verdict = "met" if jobs2 <= GOAL_REFERENCE_RATIO * reference else "NOT met"
    print(f"\ngoal check --jobs 2 <= reference: {jobs2:.2f} s vs {reference:.2f} s -> {verdict}")
    verdict = "met" if warm <= GOAL_WARM_OVER_COLD * cold else "NOT met"
    print(f"goal warm cache <= 1/10 of cold: {warm:.2f} s vs {cold:.2f} s ({warm / cold:.3f}) -> {verdict}")
    print(f"(load average now {_load()}; a shared machine moves these figures; compare runs made back to back)")
    return 0


def _load() -> str:
    try:
        return " ".join(f"{value:.2f}" for value in os.getloadavg())
    except OSError:
        return "unknown"


def _dask_time(meshprops: list[str], folder: Path) -> float:
    try:
        from distributed import LocalCluster
    except ImportError:
        print("  (dask extra not installed: pip install 'meshprops[dask]'; LocalCluster mode skipped)")
        return float("nan")
    with LocalCluster(n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1",
                      dashboard_address=":0", silence_logs=40) as cluster:
        return timed(meshprops + ["check", str(folder), "--json", "--scheduler", cluster.scheduler_address])[0]


if __name__ == "__main__":
    sys.exit(main())
