"""The gate's configuration: ``meshprops.toml``, or ``[tool.meshprops]`` in ``pyproject.toml``.

The file is found from a start folder (the current directory) upward: in each
folder ``meshprops.toml`` first, then a ``pyproject.toml`` that has a
``[tool.meshprops]`` table; the first found wins. Both keep the same keys (in
``pyproject.toml`` under ``tool.meshprops``). Every path and glob in it is
relative to the folder that holds it. A full example, every key shown::

    config_version = 1
    fail_on = "error"            # "error" (default): warnings are printed, the gate passes;
                                 # "warning": a warning fails the gate too
    length_unit = "mm"           # unit of the lengths written in this file (rule boxes, points);
                                 # default "mm"

    [materials]                  # own materials, or overrides of the built-in table (kg/m^3)
    pla_printed_40pct = { density = 830.0, source = "weighed 20 mm test cube" }

    [[files]]                    # which meshes the gate covers; the first matching entry wins
    glob = "exports/**/*.stl"    # or a list: glob = ["exports/*.stl", "exports/*.obj"]
    length_unit = "mm"           # unit of the mesh coordinates (default: the top-level length_unit)
    material = "aluminium_6061"  # or: density = 2700 (kg/m^3), not both
    subsystem = "structure"      # optional: every matched file is an item of the mass budget
    maturity = "calculated"      # its maturity there (default "calculated")

    [[files]]
    manifest = "rover.toml"      # the meshes an assembly manifest lists, each with its body's
    subsystem = "payload"        # unit and material; with subsystem, every body and point mass
                                 # of the manifest is a budget item (point masses "estimated")

    [[rule]]                     # limits on the parts a glob matches; every key but glob optional
    glob = "exports/chassis_plate.stl"
    expected_mass = 0.172        # kg ...
    mass_tolerance = 0.004       # ... +- kg, or: mass_tolerance_fraction = 0.02 (of expected_mass)
    center_of_mass_min = [-5, -5, 0]    # a box for the centre of mass (length_unit, mesh axes)
    center_of_mass_max = [5, 5, 4]
    center_of_mass_near = [0, 0, 2]     # and/or: within a distance of a point
    center_of_mass_within = 3.0
    principal_moments_min = [1e-5, 1e-4, 1e-4]   # kg*m^2, ascending principal moments I1 <= I2 <= I3
    principal_moments_max = [1e-3, 1e-3, 2e-3]
    length_unit = "mm"           # unit of this rule's lengths (default: the top-level length_unit)

    [baseline]                   # tolerances of the comparison with meshprops-baseline.json
    mass = 1e-3                  # relative change of the mass (default 1e-3)
    volume = 1e-3                # relative change of the volume (default 1e-3)
    center_of_mass = 1e-3        # movement of the centre of mass, as a fraction of the part's size
                                 # (its bounding-box diagonal; default 1e-3)
    principal_moments = 1e-3     # relative change of each principal moment (default 1e-3)

    [budget]                     # the mass budget (see meshprops.gate.budget)
    name = "desk_top_rover"
    allocation = 1.30            # kg: the whole product's allocated mass
    growth_allowance = { estimated = 0.20, calculated = 0.05, measured = 0.0 }   # overrides
    growth_allowance_source = "program mass control plan, rev B"   # say where yours come from

    [[budget.subsystem]]
    name = "structure"
    allocation = 0.60            # kg

    [[budget.subsystem]]
    name = "payload"
    allocation = 0.45

    [[budget.item]]              # one of: file, manifest + body, or mass (a typed-in item)
    name = "harness"
    subsystem = "structure"
    maturity = "estimated"       # estimated | calculated | measured
    mass = 0.045                 # kg: the basic mass of an item that is not modelled
    # file = "exports/bracket.stl"         a covered mesh (maturity default "calculated")
    # manifest = "rover.toml"  body = "battery_pack"   a body or point mass of a manifest
    # growth_allowance = 0.15              this item's own allowance, overriding the table

Errors name the file, the dotted key (0-based indices, as ``rule[1].expected_mass``;
``tool.meshprops.`` first inside ``pyproject.toml``) and, best effort, the line.
"""

from __future__ import annotations

import os
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..errors import ConfigError, InputValueError
from ..materials import Material, find_material, user_material
from ..measure.manifest import (
    ManifestReader,
    dotted_key,
    find_key_line,
    kind_of,
    read_toml,
)
from ..units import metres_per
from .baseline import DEFAULT_TOLERANCES, Tolerances
from .budget import (
    DEFAULT_GROWTH_ALLOWANCE,
    DEFAULT_GROWTH_ALLOWANCE_SOURCE,
    MATURITIES,
)
from .discovery import CONFIG_FILE_NAME, PYPROJECT_FILE_NAME, find_config  # noqa: F401  (part of this module's API)

CONFIG_VERSION = 1
FAIL_ON = ("error", "warning")

#: Allowed keys per table: the one list the parser, the docs and the tests share.
TOP_KEYS = frozenset({"config_version", "fail_on", "length_unit", "materials", "files", "rule", "baseline", "budget"})
FILES_KEYS = frozenset({"glob", "manifest", "length_unit", "material", "density", "subsystem", "maturity"})
RULE_KEYS = frozenset({
    "glob", "length_unit", "expected_mass", "mass_tolerance", "mass_tolerance_fraction",
    "center_of_mass_min", "center_of_mass_max", "center_of_mass_near", "center_of_mass_within",
    "principal_moments_min", "principal_moments_max",
})  # fmt: skip
BASELINE_KEYS = frozenset({"mass", "volume", "center_of_mass", "principal_moments"})
BUDGET_KEYS = frozenset({"name", "allocation", "growth_allowance", "growth_allowance_source", "subsystem", "item"})
SUBSYSTEM_KEYS = frozenset({"name", "allocation"})
ITEM_KEYS = frozenset({"name", "subsystem", "maturity", "file", "manifest", "body", "mass", "growth_allowance"})
MATERIAL_KEYS = frozenset({"density", "source"})


# ------------------------------------------------------------------------------ the parsed config


@dataclass(frozen=True, slots=True, eq=False)
class FileGroup:
    """A ``[[files]]`` entry: meshes matched by ``globs`` (or listed by ``manifest``) and how to read them.

    ``manifest`` is an absolute path; ``density`` in kg/m³ (``None`` when neither
    ``material`` nor ``density`` is given, or when the manifest sets it).
    """

    index: int
    globs: tuple[str, ...]
    manifest: str | None
    length_unit: str
    material: Material | None
    density: float | None
    subsystem: str | None
    maturity: str


@dataclass(frozen=True, slots=True, eq=False)
class RuleSpec:
    """A ``[[rule]]`` entry, lengths in metres, masses in kg, moments in kg·m².

    ``mass_limits`` is the closed interval ``(low, high)`` or ``None``; the
    centre-of-mass box is ``(minimum (3,), maximum (3,))`` with ``None`` for an
    open side; ``principal_moments_min/max`` are (3,) ascending or ``None``.
    """

    index: int
    key: str
    globs: tuple[str, ...]
    expected_mass: float | None
    mass_limits: tuple[float, float] | None
    center_of_mass_min: np.ndarray | None
    center_of_mass_max: np.ndarray | None
    center_of_mass_near: np.ndarray | None
    center_of_mass_within: float | None
    principal_moments_min: np.ndarray | None
    principal_moments_max: np.ndarray | None


@dataclass(frozen=True, slots=True, eq=False)
class SubsystemSpec:
    """A ``[[budget.subsystem]]``: name and allocated mass (kg)."""

    name: str
    allocation: float


@dataclass(frozen=True, slots=True, eq=False)
class ItemSpec:
    """A ``[[budget.item]]``. Exactly one source: ``file`` (absolute path), ``manifest`` + ``body``, or ``mass`` (kg)."""

    index: int
    key: str
    name: str
    subsystem: str
    maturity: str | None
    file: str | None
    manifest: str | None
    body: str | None
    mass: float | None
    growth_allowance: float | None


@dataclass(frozen=True, slots=True, eq=False)
class BudgetSpec:
    """``[budget]``: product name and allocation (kg), the growth-allowance table in force, subsystems, items."""

    name: str
    allocation: float
    growth_allowance: dict
    growth_allowance_source: str
    subsystems: tuple[SubsystemSpec, ...]
    items: tuple[ItemSpec, ...]


@dataclass(frozen=True, slots=True, eq=False)
class GateConfig:
    """A checked gate configuration. ``root`` is the folder its paths and globs are relative to."""

    path: str
    root: str
    fail_on: str
    length_unit: str
    materials: dict
    files: tuple[FileGroup, ...]
    rules: tuple[RuleSpec, ...]
    tolerances: Tolerances
    budget: BudgetSpec | None

    def relative(self, path: str | os.PathLike) -> str | None:
        """``path`` relative to :attr:`root` in POSIX form, or ``None`` when it lies outside."""
        absolute = os.path.abspath(os.fspath(path))
        try:
            relative = os.path.relpath(absolute, self.root)
        except ValueError:  # another drive
            return None
        if relative == os.pardir or relative.startswith(os.pardir + os.sep):
            return None
        return Path(relative).as_posix()

    def group_for(self, path: str | os.PathLike) -> FileGroup | None:
        """The first glob ``[[files]]`` entry that matches ``path`` (manifest entries are matched by the caller)."""
        relative = self.relative(path)
        if relative is None:
            return None
        for group in self.files:
            if any(glob_matches(pattern, relative) for pattern in group.globs):
                return group
        return None

    def rules_for(self, path: str | os.PathLike) -> tuple[RuleSpec, ...]:
        """Every ``[[rule]]`` whose glob matches ``path``, in file order."""
        relative = self.relative(path)
        if relative is None:
            return ()
        return tuple(rule for rule in self.rules if any(glob_matches(pattern, relative) for pattern in rule.globs))


# ------------------------------------------------------------------------------ globs


def glob_to_regex(pattern: str) -> re.Pattern:
    """Compile a glob over POSIX relative paths: ``*`` and ``?`` stay inside one folder name,
    ``**/`` matches any number of folders (none included), ``[...]`` a character class."""
    index, out = 0, []
    while index < len(pattern):
        char = pattern[index]
        if pattern.startswith("**/", index):
            out.append("(?:[^/]+/)*")
            index += 3
            continue
        if pattern.startswith("**", index):
            out.append(".*")
            index += 2
            continue
        if char == "*":
            out.append("[^/]*")
        elif char == "?":
            out.append("[^/]")
        elif char == "[":
            end = pattern.find("]", index + 2)
            if end < 0:
                out.append(re.escape(char))
            else:
                body = pattern[index + 1 : end]
                if body.startswith("!"):
                    body = "^" + body[1:]
                out.append(f"[{body}]")
                index = end
        else:
            out.append(re.escape(char))
        index += 1
    return re.compile("".join(out) + r"\Z")


def glob_matches(pattern: str, relative_path: str) -> bool:
    """Whether the POSIX ``relative_path`` matches ``pattern`` (see :func:`glob_to_regex`)."""
    return glob_to_regex(pattern.removeprefix("./")).match(relative_path) is not None


# ------------------------------------------------------------------------------ finding and loading


def load_config(path: str | os.PathLike) -> GateConfig:
    """Read and check a configuration file (``meshprops.toml`` or a ``pyproject.toml``).

    Raises
    ------
    ConfigError
        Unreadable file, TOML syntax error, unknown key, bad value; the message
        names the file, the dotted key and the line where it can.
    """
    path = os.path.abspath(os.fspath(path))
    data, text = read_toml(path, ConfigError, "configuration")
    prefix: tuple = ()
    if os.path.basename(path) == PYPROJECT_FILE_NAME:
        prefix = ("tool", "meshprops")
        tool = data.get("tool", {})
        if not isinstance(tool, dict) or "meshprops" not in tool:
            raise ConfigError(path, None, "has no [tool.meshprops] table")
        data = tool["meshprops"]
    return parse_config(data, path=path, text=text, prefix=prefix)


def parse_config(data: dict, *, path: str, text: str = "", prefix: tuple = ()) -> GateConfig:
    """Check already-parsed configuration ``data``; paths relative to the folder of ``path``.

    ``prefix`` is the key path of ``data`` inside the file (``("tool", "meshprops")``
    for a ``pyproject.toml``), used in error messages and to find lines.
    """
    reader = _Reader(path, text, prefix)
    root = os.path.dirname(os.path.abspath(path))
    reader.keys(data, TOP_KEYS, ())
    version = data.get("config_version", CONFIG_VERSION)
    if isinstance(version, bool) or version != CONFIG_VERSION:
        raise reader.fail(("config_version",), f"expected {CONFIG_VERSION}, got {version!r}")
    fail_on = reader.choice(data.get("fail_on", "error"), ("fail_on",), FAIL_ON)
    length_unit = reader.unit(data.get("length_unit", "mm"), ("length_unit",))

    materials: dict[str, Material] = {}
    table = data.get("materials", {})
    reader.table(table, ("materials",))
    for name, value in table.items():
        key = ("materials", name)
        if isinstance(value, dict):
            reader.keys(value, MATERIAL_KEYS, key)
            if "density" not in value:
                raise reader.fail(key, "a material needs a density (kg/m^3)")
            density = reader.number(value["density"], key + ("density",), positive=True, what="a density in kg/m^3")
            source = reader.string(value["source"], key + ("source",)) if "source" in value else "user value from the configuration"
        else:
            density = reader.number(value, key, positive=True, what="a density in kg/m^3")
            source = "user value from the configuration"
        materials[name] = user_material(name, density, source)

    files = tuple(
        _file_group(reader, entry, index, root, length_unit, materials)
        for index, entry in enumerate(reader.array(data.get("files", []), ("files",)))
    )
    rules = tuple(
        _rule(reader, entry, index, length_unit) for index, entry in enumerate(reader.array(data.get("rule", []), ("rule",)))
    )
    tolerances = _tolerances(reader, data.get("baseline", {}))
    budget = _budget(reader, data["budget"], root) if "budget" in data else None
    if budget is not None:
        names = {subsystem.name for subsystem in budget.subsystems}
        for group in files:
            if group.subsystem is not None and group.subsystem not in names:
                raise reader.fail(("files", group.index, "subsystem"), _unknown_subsystem(group.subsystem, names))
    elif any(group.subsystem is not None for group in files):
        first = next(group for group in files if group.subsystem is not None)
        raise reader.fail(("files", first.index, "subsystem"), "a subsystem needs a [budget] with that [[budget.subsystem]]")
    return GateConfig(path, root, fail_on, length_unit, materials, files, rules, tolerances, budget)


def _unknown_subsystem(name: str, names) -> str:
    known = ", ".join(sorted(names)) if names else "none declared"
    return f"unknown subsystem {name!r}; [[budget.subsystem]] names: {known}"


def _globs(reader: _Reader, value, key: tuple) -> tuple[str, ...]:
    if isinstance(value, str):
        value = [value]
    if not isinstance(value, list) or not value:
        raise reader.fail(key, f"expected a glob or a list of globs, got {kind_of(value)} {value!r}")
    globs = tuple(reader.string(item, key) for item in value)
    for pattern in globs:
        if os.path.isabs(pattern) or pattern.startswith("../"):
            raise reader.fail(key, f"globs are relative to the configuration's folder, got {pattern!r}")
    return globs


def _file_group(reader, entry, index, root, default_unit, materials) -> FileGroup:
    key = ("files", index)
    reader.keys(entry, FILES_KEYS, key)
    has_glob, has_manifest = "glob" in entry, "manifest" in entry
    if has_glob == has_manifest:
        raise reader.fail(key, "give either glob (meshes and how to read them) or manifest (an assembly manifest), one of them")
    maturity = reader.choice(entry.get("maturity", "calculated"), key + ("maturity",), MATURITIES)
    subsystem = reader.string(entry["subsystem"], key + ("subsystem",)) if "subsystem" in entry else None
    if has_manifest:
        for forbidden in ("length_unit", "material", "density"):
            if forbidden in entry:
                raise reader.fail(key + (forbidden,), "the manifest sets units and materials of its bodies; remove this key")
        manifest = os.path.normpath(os.path.join(root, reader.string(entry["manifest"], key + ("manifest",))))
        if not os.path.isfile(manifest):
            raise reader.fail(key + ("manifest",), f"no such manifest file {manifest}")
        return FileGroup(index, (), manifest, default_unit, None, None, subsystem, maturity)
    globs = _globs(reader, entry["glob"], key + ("glob",))
    unit = reader.unit(entry.get("length_unit", default_unit), key + ("length_unit",))
    material, density = None, None
    if "material" in entry and "density" in entry:
        raise reader.fail(key + ("density",), "give material or density, not both")
    if "material" in entry:
        try:
            material = find_material(reader.string(entry["material"], key + ("material",)), materials)
        except InputValueError as exc:
            raise reader.fail(key + ("material",), exc.problem.removeprefix("material: ")) from None
        density = material.density
    elif "density" in entry:
        density = reader.number(entry["density"], key + ("density",), positive=True, what="a density in kg/m^3")
    return FileGroup(index, globs, None, unit, material, density, subsystem, maturity)


def _rule(reader, entry, index, default_unit) -> RuleSpec:
    key = ("rule", index)
    reader.keys(entry, RULE_KEYS, key)
    if "glob" not in entry:
        raise reader.fail(key, "a rule needs a glob (the files it applies to)")
    globs = _globs(reader, entry["glob"], key + ("glob",))
    scale = metres_per(reader.unit(entry.get("length_unit", default_unit), key + ("length_unit",)))
    if len(set(entry) - {"glob", "length_unit"}) == 0:
        raise reader.fail(key, "a rule needs at least one limit (expected_mass, center_of_mass_*, principal_moments_*)")

    expected_mass, mass_limits = None, None
    tolerance_keys = [name for name in ("mass_tolerance", "mass_tolerance_fraction") if name in entry]
    if "expected_mass" in entry:
        expected_mass = reader.number(entry["expected_mass"], key + ("expected_mass",), positive=True, what="a mass in kg")
        if len(tolerance_keys) != 1:
            raise reader.fail(key + ("expected_mass",), "give one of mass_tolerance (kg) or mass_tolerance_fraction with expected_mass")
        name = tolerance_keys[0]
        tolerance = reader.number(entry[name], key + (name,), what="a tolerance")
        if tolerance < 0:
            raise reader.fail(key + (name,), f"expected a tolerance >= 0, got {tolerance!r}")
        if name == "mass_tolerance_fraction":
            tolerance *= expected_mass
        mass_limits = (expected_mass - tolerance, expected_mass + tolerance)
    elif tolerance_keys:
        raise reader.fail(key + (tolerance_keys[0],), "a mass tolerance needs expected_mass")

    def vector(name: str) -> np.ndarray | None:
        return reader.vector(entry[name], key + (name,)) * scale if name in entry else None

    box_min, box_max = vector("center_of_mass_min"), vector("center_of_mass_max")
    if box_min is not None and box_max is not None and np.any(box_min > box_max):
        raise reader.fail(key + ("center_of_mass_max",), "every coordinate must be >= center_of_mass_min's")
    near = vector("center_of_mass_near")
    within = None
    if ("center_of_mass_near" in entry) != ("center_of_mass_within" in entry):
        raise reader.fail(key, "center_of_mass_near and center_of_mass_within go together")
    if "center_of_mass_within" in entry:
        within = reader.number(entry["center_of_mass_within"], key + ("center_of_mass_within",), what="a distance") * scale
        if within < 0:
            raise reader.fail(key + ("center_of_mass_within",), f"expected a distance >= 0, got {entry['center_of_mass_within']!r}")

    def moments(name: str) -> np.ndarray | None:
        if name not in entry:
            return None
        values = reader.vector(entry[name], key + (name,), what="three principal moments in kg*m^2 (ascending)")
        if np.any(values < 0):
            raise reader.fail(key + (name,), f"principal moments are >= 0, got {entry[name]!r}")
        return values

    moments_min, moments_max = moments("principal_moments_min"), moments("principal_moments_max")
    if moments_min is not None and moments_max is not None and np.any(moments_min > moments_max):
        raise reader.fail(key + ("principal_moments_max",), "every moment must be >= principal_moments_min's")
    return RuleSpec(
        index, reader.dotted(key), globs, expected_mass, mass_limits, box_min, box_max, near, within, moments_min, moments_max
    )


def _tolerances(reader, table) -> Tolerances:
    key = ("baseline",)
    reader.keys(table, BASELINE_KEYS, key)
    values = {}
    for name in BASELINE_KEYS:
        if name in table:
            value = reader.number(table[name], key + (name,), what="a tolerance")
            if value < 0:
                raise reader.fail(key + (name,), f"expected a tolerance >= 0, got {value!r}")
            values[name] = value
    return Tolerances(**{**{name: getattr(DEFAULT_TOLERANCES, name) for name in BASELINE_KEYS}, **values})


def _budget(reader, table, root) -> BudgetSpec:
    key = ("budget",)
    reader.keys(table, BUDGET_KEYS, key)
    for needed in ("name", "allocation"):
        if needed not in table:
            raise reader.fail(key, f"a budget needs {needed}")
    name = reader.string(table["name"], key + ("name",))
    allocation = reader.number(table["allocation"], key + ("allocation",), positive=True, what="a mass in kg")
    allowance = dict(DEFAULT_GROWTH_ALLOWANCE)
    source = DEFAULT_GROWTH_ALLOWANCE_SOURCE
    if "growth_allowance" in table:
        overrides = table["growth_allowance"]
        reader.keys(overrides, frozenset(MATURITIES), key + ("growth_allowance",))
        for maturity, value in overrides.items():
            allowance[maturity] = reader.fraction(value, key + ("growth_allowance", maturity))
        source = "overridden in the configuration" + (f" ({', '.join(sorted(overrides))})" if overrides else "")
    if "growth_allowance_source" in table:
        source = reader.string(table["growth_allowance_source"], key + ("growth_allowance_source",))

    subsystems: list[SubsystemSpec] = []
    for index, entry in enumerate(reader.array(table.get("subsystem", []), key + ("subsystem",))):
        entry_key = key + ("subsystem", index)
        reader.keys(entry, SUBSYSTEM_KEYS, entry_key)
        for needed in ("name", "allocation"):
            if needed not in entry:
                raise reader.fail(entry_key, f"a subsystem needs {needed}")
        subsystem_name = reader.string(entry["name"], entry_key + ("name",))
        if any(s.name == subsystem_name for s in subsystems):
            raise reader.fail(entry_key + ("name",), f"subsystem {subsystem_name!r} is declared twice")
        subsystems.append(
            SubsystemSpec(subsystem_name, reader.number(entry["allocation"], entry_key + ("allocation",), positive=True, what="a mass in kg"))
        )
    names = {s.name for s in subsystems}

    items: list[ItemSpec] = []
    for index, entry in enumerate(reader.array(table.get("item", []), key + ("item",))):
        entry_key = key + ("item", index)
        reader.keys(entry, ITEM_KEYS, entry_key)
        if "subsystem" not in entry:
            raise reader.fail(entry_key, "an item needs a subsystem")
        subsystem = reader.string(entry["subsystem"], entry_key + ("subsystem",))
        if subsystem not in names:
            raise reader.fail(entry_key + ("subsystem",), _unknown_subsystem(subsystem, names))
        sources = [name for name in ("file", "manifest", "mass") if name in entry]
        if len(sources) != 1:
            raise reader.fail(entry_key, "give exactly one of file, manifest (with body) or mass")
        if ("body" in entry) != ("manifest" in entry):
            raise reader.fail(entry_key, "manifest and body go together")
        maturity = reader.choice(entry["maturity"], entry_key + ("maturity",), MATURITIES) if "maturity" in entry else None
        file = manifest = body = mass = None
        if "file" in entry:
            file = os.path.normpath(os.path.join(root, reader.string(entry["file"], entry_key + ("file",))))
        elif "manifest" in entry:
            manifest = os.path.normpath(os.path.join(root, reader.string(entry["manifest"], entry_key + ("manifest",))))
            body = reader.string(entry["body"], entry_key + ("body",))
        else:
            mass = reader.number(entry["mass"], entry_key + ("mass",), what="a mass in kg")
            if mass < 0:
                raise reader.fail(entry_key + ("mass",), f"expected a mass >= 0 kg, got {mass!r}")
            if maturity is None:
                raise reader.fail(entry_key, "an item given by its mass needs a maturity (estimated, calculated or measured)")
        item_name = reader.string(entry["name"], entry_key + ("name",)) if "name" in entry else (entry.get("file") or entry.get("body"))
        if item_name is None:
            raise reader.fail(entry_key, "an item given by its mass needs a name")
        allowance_override = (
            reader.fraction(entry["growth_allowance"], entry_key + ("growth_allowance",)) if "growth_allowance" in entry else None
        )
        items.append(
            ItemSpec(index, reader.dotted(entry_key), item_name, subsystem, maturity, file, manifest, body, mass, allowance_override)
        )
    return BudgetSpec(name, allocation, allowance, source, tuple(subsystems), tuple(items))


# ------------------------------------------------------------------------------ reading values with key and line


class _Reader(ManifestReader):
    """Check values of parsed TOML, raising :class:`ConfigError` with the dotted key and its line.

    The value checks (numbers, vectors, strings, length units by their usual spellings) are the
    manifest's; only the error, the key prefix of a ``pyproject.toml`` and a few kinds of value
    are the gate's own.
    """

    def __init__(self, path: str, text: str, prefix: tuple = ()) -> None:
        super().__init__(path, text)
        self.prefix = prefix

    def dotted(self, key: tuple) -> str:
        return dotted_key(self.prefix + key)

    def fail(self, key: tuple, message: str) -> ConfigError:
        full = self.prefix + key
        return ConfigError(self.path, dotted_key(full) if full else None, message, line=find_key_line(self.lines, full))

    def table(self, value, key: tuple) -> None:
        if not isinstance(value, dict):
            raise self.fail(key, f"expected a table, got {kind_of(value)}")

    def array(self, value, key: tuple) -> list:
        if not isinstance(value, list) or not all(isinstance(entry, dict) for entry in value):
            raise self.fail(key, f"expected an array of tables ([[{key[-1]}]]), got {kind_of(value)}")
        return value

    def fraction(self, value, key: tuple) -> float:
        value = self.number(value, key, what="a growth allowance (a fraction: 0.05 is 5 %)")
        if not 0.0 <= value <= 1.0:
            raise self.fail(key, f"expected a growth allowance between 0 and 1 (a fraction: 0.05 is 5 %), got {value!r}")
        return value

    def choice(self, value, key: tuple, choices) -> str:
        if value not in choices:
            raise self.fail(key, f"expected one of {', '.join(map(repr, choices))}, got {value!r}")
        return value
