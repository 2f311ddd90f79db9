"""Run the gate: validate files, compare them with the baseline, apply the rules, roll up the budget.

The library side of ``meshprops check`` and ``meshprops baseline`` once a
configuration or a baseline is in force; it returns data, never prints.
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..errors import EXIT_INVALID, EXIT_OK, InvalidMeshError
from ..io.hashing import file_sha256
from .baseline import (
    DEFAULT_TOLERANCES,
    Baseline,
    BaselineEntry,
    Tolerances,
    compare_with_entry,
)
from .budget import BudgetItem, BudgetRollup, growth_allowance_for, roll_up
from .config import ConfigError, GateConfig
from .rules import Verdict, apply_rule

#: File name endings of the meshes the gate reads (case-insensitive).
MESH_SUFFIXES = (".stl", ".obj", ".ply")

#: Density used for a file whose density nothing declares (water, as `measure`); flagged as assumed.
ASSUMED_DENSITY = 1000.0

STATUS_UNCHANGED = "unchanged"  # bytes and settings as recorded: not read again
STATUS_CHANGED = "changed"  # measured and compared with its entry
STATUS_NEW = "new"  # a baseline is in force but has no entry for the file
STATUS_CHECKED = "checked"  # no baseline in force
STATUS_INVALID = "invalid"  # failed validation: no numbers
STATUS_MISSING = "missing"  # recorded in the baseline, no longer on disk (``check --all``)


@dataclass(frozen=True, slots=True)
class FileSettings:
    """How a file is read and weighed: length unit, density (kg/m³) and where they come from."""

    length_unit: str
    density: float
    density_assumed: bool
    material: str | None = None
    origin: str = "command line"


@dataclass(frozen=True, slots=True, eq=False)
class PartNumbers:
    """What the gate compares of a part, SI: volume m³, mass kg, centre of mass (3,) m,
    principal moments (3,) kg·m² ascending, size m (bounding-box diagonal)."""

    volume: float
    mass: float
    center_of_mass: np.ndarray
    principal_moments: np.ndarray
    size: float

    @classmethod
    def from_entry(cls, entry: BaselineEntry) -> PartNumbers:
        return cls(entry.volume, entry.mass, entry.center_of_mass, entry.principal_moments, entry.size)


@dataclass(frozen=True, slots=True, eq=False)
class FileOutcome:
    """The gate's result for one file.

    ``numbers`` is ``None`` for an invalid file (never printed); for an
    unchanged file it is the baseline's record (the file was not read).
    """

    source: str
    key: str
    content_hash: str
    status: str
    settings: FileSettings
    measured: Measured | None
    numbers: PartNumbers | None
    verdicts: tuple[Verdict, ...]
    recorded_findings: tuple = ()

    @property
    def findings(self) -> tuple:
        """This run's findings; for an unchanged file, the warnings its baseline entry recorded."""
        return self.measured.findings if self.measured is not None else self.recorded_findings

    @property
    def valid(self) -> bool:
        return self.numbers is not None

    @property
    def errors(self) -> tuple:
        return tuple(f for f in self.findings if f.severity == "error")

    @property
    def warnings(self) -> tuple:
        return tuple(f for f in self.findings if f.severity == "warning")

    @property
    def failed_verdicts(self) -> tuple[Verdict, ...]:
        return tuple(v for v in self.verdicts if v.failed)


@dataclass(frozen=True, slots=True, eq=False)
class GateReport:
    """Everything one gate run found."""

    files: tuple[FileOutcome, ...]
    budget: BudgetRollup | None
    fail_on: str
    config_path: str | None
    baseline_path: str | None
    notes: tuple[str, ...] = field(default=())

    @property
    def error_count(self) -> int:
        return sum(len(f.errors) for f in self.files)

    @property
    def warning_count(self) -> int:
        return sum(len(f.warnings) for f in self.files)

    @property
    def failed_verdicts(self) -> tuple[Verdict, ...]:
        found = tuple(v for f in self.files for v in f.failed_verdicts)
        if self.budget is not None:
            found += tuple(v for v in self.budget.verdicts if v.failed)
        return found

    @property
    def passed(self) -> bool:
        if self.error_count or self.failed_verdicts:
            return False
        return not (self.fail_on == "warning" and self.warning_count)

    @property
    def exit_code(self) -> int:
        return EXIT_OK if self.passed else EXIT_INVALID


# ------------------------------------------------------------------------------ inputs and settings per file

#: Files that stand for the gate itself when pre-commit passes them: they are not meshes.
GATE_FILE_NAMES = ("meshprops.toml", "pyproject.toml", "meshprops-baseline.json")


def load_gate(start: str | None = None):
    """``(config or None, baseline or None)`` in force for ``start`` (default: the current directory).

    The configuration is found from there upward; the baseline is
    ``meshprops-baseline.json`` in that folder itself.
    """
    from .baseline import read_baseline
    from .config import load_config
    from .discovery import gate_files

    config_path, baseline_path = gate_files(start)
    config = load_config(config_path) if config_path is not None else None
    baseline = read_baseline(baseline_path) if baseline_path is not None else None
    return config, baseline


def _body_settings(body, manifest_path: str) -> FileSettings:
    origin = f"manifest {os.path.basename(manifest_path)} body {body.name}"
    if body.density is None:  # measured_mass sets it from the volume: no per-file density
        return FileSettings(body.length_unit, ASSUMED_DENSITY, True, None, origin)
    material = body.material.name if body.material is not None else None
    return FileSettings(body.length_unit, float(body.density), False, material, origin)


def gate_inputs(paths) -> tuple[list[str], dict]:
    """Mesh files to check, in order, each once, and the settings manifests give some of them.

    Folders stand for every mesh below them; an assembly manifest (``.toml``) for the meshes
    it lists, each read with its body's unit and density; the gate's own files
    (:data:`GATE_FILE_NAMES`) are left out: their presence is what puts the gate in force.
    """
    from ..batch.runner import expand_inputs
    from ..measure.manifest import load_manifest

    files: list[str] = []
    settings: dict[str, FileSettings] = {}
    for path in expand_inputs(paths):
        if os.path.basename(path) in GATE_FILE_NAMES:
            continue
        if path.lower().endswith(".toml"):
            for body in load_manifest(path).bodies:
                files.append(body.mesh_path)
                settings.setdefault(os.path.abspath(body.mesh_path), _body_settings(body, path))
        else:
            files.append(path)
    return list(dict.fromkeys(files)), settings


def manifest_settings(config: GateConfig | None) -> dict[str, FileSettings]:
    """Settings of every mesh listed by the ``[[files]] manifest = ...`` entries, by absolute path."""
    if config is None:
        return {}
    from ..measure.manifest import load_manifest

    found: dict[str, FileSettings] = {}
    for group in config.files:
        if group.manifest is not None:
            for body in load_manifest(group.manifest).bodies:
                found.setdefault(os.path.abspath(body.mesh_path), _body_settings(body, group.manifest))
    return found


def settings_for(
    path: str,
    config: GateConfig | None,
    from_manifests: dict[str, FileSettings],
    *,
    length_unit: str | None,
    density: float | None,
) -> FileSettings:
    """The unit and density a file is read with: the command line's, else the configuration's, else defaults.

    An explicit ``length_unit`` or ``density`` (command-line options) wins over the
    configuration; without either, the first matching ``[[files]]`` glob entry,
    then a manifest listing the file, then ``mm`` and an assumed 1000 kg/m³.
    """
    unit, dens, assumed, material, origin = "mm", ASSUMED_DENSITY, True, None, "default"
    group = config.group_for(path) if config is not None else None
    if group is not None:
        unit, origin = group.length_unit, f"{os.path.basename(config.path)} files[{group.index}]"
        if group.density is not None:
            dens, assumed = group.density, False
            material = group.material.name if group.material is not None else None
    elif os.path.abspath(path) in from_manifests:
        chosen = from_manifests[os.path.abspath(path)]
        unit, dens, assumed, material, origin = (
            chosen.length_unit, chosen.density, False, chosen.material, chosen.origin,
        )  # fmt: skip
    if length_unit is not None:
        unit, origin = length_unit, "command line"
    if density is not None:
        dens, assumed, material, origin = float(density), False, None, "command line"
    return FileSettings(unit, float(dens), assumed, material, origin)


# ------------------------------------------------------------------------------ measuring one file


@dataclass(frozen=True, slots=True, eq=False)
class Measured:
    """One file read, validated thoroughly and (when sound) measured; picklable for worker processes.

    ``report`` is the :class:`~meshprops.validation.findings.ValidationReport` of every
    check; ``numbers`` is ``None`` when it holds an error.
    """

    source: str
    file_format: str
    length_unit: str
    face_count: int
    report: object
    numbers: PartNumbers | None

    @property
    def findings(self) -> tuple:
        return tuple(self.report.findings)


def measure_for_gate(path: str, length_unit: str, density: float) -> Measured:
    """Load ``path``, run every check (self-intersections included) and compute the gate's numbers.

    Raises
    ------
    MeshFileError
        Unreadable, malformed or empty file.
    """
    from dataclasses import replace

    from ..io import load_mesh
    from ..physics.mass import MassProperties
    from ..physics.principal import principal_frame
    from ..validation.solid import resolve_solid

    mesh = load_mesh(path, length_unit)
    solid = resolve_solid(mesh, density=density)  # the same verdict and solid as measure and check
    report, moments = solid.report, solid.moments
    numbers = None
    if report.valid:
        properties = MassProperties.from_moments(moments, density)
        frame = principal_frame(properties.inertia_about_com)
        if frame.satisfies_triangle_inequality:
            numbers = PartNumbers(
                float(properties.volume), float(properties.mass), np.asarray(properties.center_of_mass, dtype=float),
                np.asarray(frame.moments, dtype=float), _diagonal(mesh),
            )  # fmt: skip
        else:
            from ..validation.findings import ERROR, Finding

            impossible = Finding("impossible_inertia", ERROR, 1, "principal moments violate the triangle inequality I1 + I2 >= I3")
            report = replace(report, findings=tuple(report.findings) + (impossible,))
    return Measured(mesh.source, mesh.file_format, mesh.length_unit, mesh.face_count, report, numbers)


def _diagonal(mesh) -> float:
    """Bounding-box diagonal in metres."""
    low = np.full(3, np.inf)
    high = np.full(3, -np.inf)
    for _, block in mesh.coordinate_blocks(release_pages=False):
        corners = np.asarray(block, dtype=np.float64).reshape(-1, 3)
        low = np.minimum(low, corners.min(axis=0))
        high = np.maximum(high, corners.max(axis=0))
    return float(np.linalg.norm(high - low) * mesh.metres_per_unit)


# ------------------------------------------------------------------------------ the gate


def _rule_verdicts(config: GateConfig | None, path: str, numbers: PartNumbers, source: str) -> list[Verdict]:
    if config is None:
        return []
    verdicts: list[Verdict] = []
    for rule in config.rules_for(path):
        verdicts += apply_rule(
            rule, mass=numbers.mass, center_of_mass=numbers.center_of_mass, principal_moments=numbers.principal_moments,
            source=source,
        )  # fmt: skip
    return verdicts


def _needs_density(config: GateConfig | None, path: str, settings: FileSettings) -> None:
    if config is None or not settings.density_assumed:
        return
    for rule in config.rules_for(path):
        if rule.mass_limits is not None:
            raise ConfigError(
                config.path, f"{rule.key}.expected_mass",
                f"{path} has no declared density or material (give its [[files]] entry one, or --density)",
            )  # fmt: skip


def evaluate_file(
    path: str,
    settings: FileSettings,
    content_hash: str,
    measured: Measured | None,
    *,
    config: GateConfig | None,
    baseline: Baseline | None,
    tolerances: Tolerances,
) -> FileOutcome:
    """Turn a file's measurement (``None``: unchanged, not read) into its outcome."""
    key = baseline.key(path) if baseline is not None else Path(os.path.relpath(os.path.abspath(path))).as_posix()
    entry = baseline.get(path) if baseline is not None else None
    if measured is None:
        from ..validation.findings import WARNING, Finding

        numbers = PartNumbers.from_entry(entry)
        verdicts = _rule_verdicts(config, path, numbers, path)
        recorded = tuple(Finding(w["code"], WARNING, w["count"], f"as recorded: {w['message']}") for w in entry.warnings)
        return FileOutcome(path, key, content_hash, STATUS_UNCHANGED, settings, None, numbers, tuple(verdicts), recorded)
    if measured.numbers is None:
        return FileOutcome(path, key, content_hash, STATUS_INVALID, settings, measured, None, ())
    verdicts: list[Verdict] = []
    if entry is not None:
        status = STATUS_CHANGED
        numbers = measured.numbers
        verdicts += compare_with_entry(
            entry, volume=numbers.volume, mass=numbers.mass, center_of_mass=numbers.center_of_mass,
            principal_moments=numbers.principal_moments, tolerances=tolerances, source=path,
        )  # fmt: skip
    else:
        status = STATUS_NEW if baseline is not None else STATUS_CHECKED
    verdicts += _rule_verdicts(config, path, measured.numbers, path)
    return FileOutcome(path, key, content_hash, status, settings, measured, measured.numbers, tuple(verdicts))


def _measure_job(job: tuple[str, str, float]) -> Measured:
    path, unit, density = job
    return measure_for_gate(path, unit, density)


def backend_map(*, jobs: int | None = None, scheduler: str | None = None):
    """A map for :func:`run_gate` that spreads its measuring over the batch backends
    (:func:`meshprops.batch.backends.choose_backend`: ``jobs`` local processes, all cores when
    ``None``; or an existing Dask cluster at ``scheduler``); in order, first error raised."""

    def mapped(task, items) -> list:
        from ..batch.backends import choose_backend
        from ..batch.runner import raise_first_error, run_files

        items = list(items)
        with choose_backend(jobs=jobs, scheduler=scheduler, item_count=len(items)) as backend:
            return raise_first_error(run_files(items, task, label=lambda job: job[0], backend=backend))

    return mapped


def serial_map(task, jobs) -> list:
    """Run ``task`` over ``jobs`` through the batch loop (:func:`meshprops.batch.runner.run_files`),
    in order; the first error (in input order) is raised again."""
    from ..batch.runner import raise_first_error, run_files

    return raise_first_error(run_files(list(jobs), task, label=lambda job: job[0]))


def run_gate(
    paths,
    *,
    config: GateConfig | None,
    baseline: Baseline | None,
    length_unit: str | None = None,
    density: float | None = None,
    settings: dict | None = None,
    map_function=None,
    missing_entries: bool = False,
) -> GateReport:
    """Check ``paths`` (mesh files, in order) against ``config`` and ``baseline``.

    A file whose bytes (SHA-256) and settings match its baseline entry is not
    read again: its recorded numbers stand and only the rules are applied to
    them. Every other file is read, validated thoroughly and measured
    (``map_function`` maps :func:`measure_for_gate` over ``(path, unit,
    density)`` jobs and may run them in worker processes), then compared with
    its entry and with the rules. The budget is rolled up when the
    configuration has one. ``settings`` (absolute path -> :class:`FileSettings`,
    from :func:`gate_inputs`) fixes some files' settings, over everything else.
    With ``missing_entries`` every baseline entry whose
    file no longer exists fails (``status`` ``missing``).

    Raises
    ------
    MeshFileError
        A file that cannot be read (exit 2: nothing is reported).
    ConfigError
        A mass rule on a file without a declared density, a budget item that
        cannot be resolved.
    """
    tolerances = config.tolerances if config is not None else DEFAULT_TOLERANCES
    from_manifests = manifest_settings(config)
    paths = [os.fspath(p) for p in paths]
    map_function = map_function or serial_map
    fixed = settings or {}
    planned = []
    for path in paths:
        chosen = fixed.get(os.path.abspath(path)) or settings_for(
            path, config, from_manifests, length_unit=length_unit, density=density
        )
        _needs_density(config, path, chosen)
        content_hash = file_sha256(path)
        entry = baseline.get(path) if baseline is not None else None
        unchanged = entry is not None and entry.same_input(content_hash, chosen.length_unit, chosen.density)
        planned.append((path, chosen, content_hash, unchanged))
    jobs = [(path, s.length_unit, s.density) for path, s, _, unchanged in planned if not unchanged]
    results = iter(map_function(_measure_job, jobs) if jobs else [])
    outcomes = []
    for path, chosen, content_hash, unchanged in planned:
        measured = None if unchanged else next(results)
        outcomes.append(
            evaluate_file(path, chosen, content_hash, measured, config=config, baseline=baseline, tolerances=tolerances)
        )
    if missing_entries and baseline is not None:
        checked = {baseline.key(path) for path in paths}
        for key in sorted(baseline.entries):
            path = os.path.join(baseline.root, *key.split("/"))
            if key not in checked and not os.path.exists(path):
                outcomes.append(_missing(baseline, key, path))
    budget = None
    notes: list[str] = []
    if config is not None and config.budget is not None:
        budget = budget_rollup(
            config, baseline, {os.path.abspath(o.source): o for o in outcomes}, from_manifests, map_function=map_function
        )
    return GateReport(
        tuple(outcomes), budget, config.fail_on if config is not None else "error",
        config.path if config is not None else None, _baseline_file(baseline), tuple(notes),
    )  # fmt: skip


def _missing(baseline: Baseline, key: str, path: str) -> FileOutcome:
    entry = baseline.entries[key]
    verdict = Verdict(
        "baseline", "file_present", (1.0, 1.0), 0.0, "1", "fail", source=key,
        message="recorded in the baseline but missing (re-record with `meshprops baseline` if it was removed on purpose)",
    )  # fmt: skip
    settings = FileSettings(entry.length_unit, entry.density, False, None, "baseline")
    return FileOutcome(os.path.relpath(path), key, entry.content_hash, STATUS_MISSING, settings, None, None, (verdict,))


def _baseline_file(baseline: Baseline | None) -> str | None:
    from .baseline import BASELINE_FILE_NAME

    return None if baseline is None else os.path.join(baseline.root, BASELINE_FILE_NAME)


# ------------------------------------------------------------------------------ budget


def covered_files(config: GateConfig) -> list[str]:
    """Every file under the configuration's folder that a ``[[files]]`` glob entry matches, sorted."""
    found = []
    for path in iter_mesh_files(config.root):
        group = config.group_for(path)
        if group is not None:
            found.append(path)
    return found


def budget_rollup(config: GateConfig, baseline, known: dict, from_manifests: dict, *, map_function=None) -> BudgetRollup:
    """Resolve every budget item's basic mass and roll the budget up.

    Items come from ``[[budget.item]]`` entries and from the files and manifests of
    ``[[files]]`` entries with a ``subsystem``. A file's mass comes, in order, from
    ``known`` (this run's outcomes), from a baseline entry with the same bytes and
    settings, or from measuring it now. An item whose mesh fails validation has no
    basic mass: that is a configuration problem the gate reports as an error.
    """
    map_function = map_function or serial_map
    budget = config.budget
    table = budget.growth_allowance
    explicit_files = {item.file for item in budget.items if item.file is not None}
    explicit_bodies = {(item.manifest, item.body) for item in budget.items if item.manifest is not None}

    file_items: list[tuple[str, str, str, float | None, str]] = []  # (name, subsystem, maturity, override, path)
    for path in covered_files(config):
        group = config.group_for(path)
        if group.subsystem is not None and os.path.abspath(path) not in explicit_files:
            file_items.append((config.relative(path), group.subsystem, group.maturity, None, path))
    for item in budget.items:
        if item.file is not None:
            file_items.append((item.name, item.subsystem, item.maturity or "calculated", item.growth_allowance, item.file))

    masses = _file_masses(config, baseline, known, from_manifests, [path for *_, path in file_items], map_function)
    items: list[BudgetItem] = []
    left_out: list[str] = []
    for name, subsystem, maturity, override, path in file_items:
        if path not in masses:
            left_out.append(name)
            continue
        items.append(
            BudgetItem(name, subsystem, maturity, masses[path], growth_allowance_for(maturity, table, override), config.relative(path) or path)
        )

    manifests: dict[str, object] = {}

    def manifest_masses(manifest_path: str) -> dict:
        if manifest_path not in manifests:
            from ..measure.assembly import measure_assembly
            from ..measure.manifest import load_manifest

            result = measure_assembly(load_manifest(manifest_path), overlap_samples=0)
            masses_by_name = {}
            for entry in result.items:
                properties = entry.measurement.properties
                if properties is None:
                    raise InvalidMeshError(manifest_path, f"budget: body {entry.name!r} failed validation; it has no mass")
                masses_by_name[entry.name] = (entry.kind, float(properties.mass))
            manifests[manifest_path] = masses_by_name
        return manifests[manifest_path]

    for group in config.files:
        if group.manifest is None or group.subsystem is None:
            continue
        for body_name, (kind, mass) in manifest_masses(group.manifest).items():
            if (group.manifest, body_name) in explicit_bodies:
                continue
            maturity = "estimated" if kind == "point_mass" else group.maturity
            items.append(
                BudgetItem(body_name, group.subsystem, maturity, mass, growth_allowance_for(maturity, table), f"{config.relative(group.manifest)}#{body_name}")
            )
    for item in budget.items:
        if item.manifest is not None:
            found = manifest_masses(item.manifest)
            if item.body not in found:
                raise ConfigError(
                    config.path, f"{item.key}.body", f"no body or point mass {item.body!r} in {item.manifest}; it has {', '.join(found)}"
                )
            kind, mass = found[item.body]
            maturity = item.maturity or ("estimated" if kind == "point_mass" else "calculated")
            items.append(
                BudgetItem(item.name, item.subsystem, maturity, mass, growth_allowance_for(maturity, table, item.growth_allowance), f"{config.relative(item.manifest)}#{item.body}")
            )
        elif item.mass is not None:
            items.append(
                BudgetItem(item.name, item.subsystem, item.maturity, item.mass, growth_allowance_for(item.maturity, table, item.growth_allowance), "configuration")
            )
    rollup = roll_up(
        budget.name, budget.allocation, [(s.name, s.allocation) for s in budget.subsystems], items,
        growth_allowance=table, growth_allowance_source=budget.growth_allowance_source,
    )  # fmt: skip
    if left_out:
        from dataclasses import replace

        note = f"left out of the budget, their meshes failed validation: {', '.join(left_out)}"
        rollup = replace(rollup, notes=rollup.notes + (note,))
    return rollup


def _file_masses(config, baseline, known, from_manifests, paths, map_function) -> dict[str, float]:
    masses: dict[str, float] = {}
    jobs = []
    for path in dict.fromkeys(paths):
        outcome = known.get(os.path.abspath(path))
        if outcome is not None:
            if outcome.numbers is not None:  # an invalid file checked in this run already fails it
                masses[path] = outcome.numbers.mass
            continue
        settings = settings_for(path, config, from_manifests, length_unit=None, density=None)
        if settings.density_assumed:
            raise ConfigError(config.path, "budget", f"{path} has no declared density or material; a budget item needs one")
        entry = baseline.get(path) if baseline is not None else None
        if entry is not None and entry.same_input(file_sha256(path), settings.length_unit, settings.density):
            masses[path] = entry.mass
            continue
        jobs.append((path, settings.length_unit, settings.density))
    for (path, *_), measured in zip(jobs, map_function(_measure_job, jobs) if jobs else []):
        if measured.numbers is None:
            raise InvalidMeshError(path, "budget: the mesh failed validation; it has no mass")
        masses[path] = measured.numbers.mass
    return masses


# ------------------------------------------------------------------------------ files and the baseline


def is_mesh_file(path: str) -> bool:
    return path.lower().endswith(MESH_SUFFIXES)


def iter_mesh_files(root: str):
    """Every mesh file under ``root``, recursively, sorted; folders whose name starts with ``.`` are skipped
    (``.git``, virtual environments such as ``.venv``)."""
    found = []
    for folder, subfolders, names in os.walk(root):
        subfolders[:] = sorted(name for name in subfolders if not name.startswith("."))
        for name in names:
            if is_mesh_file(name):
                found.append(os.path.join(folder, name))
    return sorted(found)


def record(paths, *, config: GateConfig | None, baseline: Baseline, length_unit=None, density=None, settings=None, map_function=None):
    """Measure ``paths`` and return ``(baseline with their entries, outcomes)``.

    A file whose mesh fails validation has no sound numbers to record: raises
    :class:`InvalidMeshError` naming it (nothing is written).
    """
    map_function = map_function or serial_map
    from_manifests = manifest_settings(config)
    fixed = settings or {}
    planned = []
    for path in map(os.fspath, paths):
        chosen = fixed.get(os.path.abspath(path)) or settings_for(
            path, config, from_manifests, length_unit=length_unit, density=density
        )
        planned.append((path, chosen, file_sha256(path)))
    jobs = [(path, s.length_unit, s.density) for path, s, _ in planned]
    entries = []
    for (path, settings, sha), measured in zip(planned, map_function(_measure_job, jobs) if jobs else []):
        if measured.numbers is None:
            codes = ", ".join(sorted({f.code for f in measured.findings if f.severity == "error"}))
            raise InvalidMeshError(path, f"fails validation ({codes}); no baseline recorded", measured.findings)
        numbers = measured.numbers
        warnings = tuple(
            {"code": f.code, "count": int(f.count), "message": f.message} for f in measured.findings if f.severity == "warning"
        )
        entries.append(
            BaselineEntry(
                baseline.key(path), sha, settings.length_unit, settings.density, numbers.volume, numbers.mass,
                numbers.center_of_mass, numbers.size, numbers.principal_moments, warnings,
            )
        )  # fmt: skip
    return baseline.updated(entries), entries


__all__ = [
    "FileOutcome", "FileSettings", "GateReport", "PartNumbers", "run_gate", "record", "iter_mesh_files",
    "measure_for_gate", "settings_for", "budget_rollup",
]  # fmt: skip
