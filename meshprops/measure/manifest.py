"""The assembly manifest (TOML): specs of bodies, point masses, named points and frames, each
value checked and every error located by its dotted key and line.

A manifest (format of our own, ``manifest_version = 1``; the README holds a full
example and ``meshprops/schema/manifest.schema.json`` its JSON Schema) lists:

* ``[assembly]``: ``name``, ``length_unit`` (unit of every length written in the
  manifest: translations, positions, named points, frame origins, box sizes;
  default ``mm``), ``manifest_version``.
* ``[materials]``: user materials or overrides of the built-in table, each
  ``name = density`` (kg/m³) or ``name = { density = ..., source = "..." }``.
* ``[[body]]``: ``name``, ``mesh`` (path relative to the manifest), one of
  ``material`` or ``density`` (kg/m³), optional ``measured_mass`` (kg: the
  density is then ``measured_mass / volume``, the common practice of
  calibrating to a weighed part, and reported as the implied density),
  optional ``length_unit`` of the mesh file (default: the assembly's), optional
  placement: ``translation`` plus at most one rotation form,
  ``rotation_axis`` + ``rotation_angle_deg`` (right-hand rule),
  ``rotation_matrix`` (3 rows, checked orthonormal with det +1), or
  ``rotation_rpy_deg`` (``[roll, pitch, yaw]``, ``R = Rz(yaw) Ry(pitch) Rx(roll)``,
  fixed axes x then y then z, as URDF). A body-local point ``x`` sits at
  ``R x + t`` in the assembly.
* ``[[point_mass]]``: ``name``, ``mass`` (kg), ``position``, optional ``inertia``
  (3×3 kg·m² about its own centre, assembly axes, tensor convention) and/or
  ``box_size`` (``[a, b, c]``: the inertia of a uniform box of that size, axes
  along the assembly axes, when ``inertia`` is absent; the envelope of the
  plausibility check in any case).
* ``[points]``: ``name = [x, y, z]``, reference points at which the total
  inertia is reported.
* ``[frames]``: ``name = { origin = [...], <rotation form> }``, frames in which
  the totals are also reported (their axes are the assembly axes rotated by R).

Everything inside is SI, in the assembly frame, after placement.
"""

from __future__ import annotations

import math
import os
import re
import tomllib
from dataclasses import dataclass

import numpy as np

from ..errors import InputValueError, ManifestError, UnitError
from ..materials import Material, find_material, user_material
from ..physics.principal import principal_frame
from ..physics.rotations import (
    nearest_rotation,
    rotation_from_axis_angle,
    rotation_from_rpy,
)
from ..units import LENGTH_UNITS, canonical_length_unit, metres_per

MANIFEST_VERSION = 1


#: Allowed keys per table: the single source the parser and the schema test share.
ASSEMBLY_KEYS = frozenset({"name", "length_unit", "manifest_version"})


ROTATION_KEYS = frozenset({"rotation_axis", "rotation_angle_deg", "rotation_matrix", "rotation_rpy_deg"})


BODY_KEYS = frozenset({"name", "mesh", "material", "density", "measured_mass", "length_unit", "translation"}) | ROTATION_KEYS


POINT_MASS_KEYS = frozenset({"name", "mass", "position", "inertia", "box_size"})


FRAME_KEYS = frozenset({"origin"}) | ROTATION_KEYS


MATERIAL_KEYS = frozenset({"density", "source"})


TOP_KEYS = frozenset({"assembly", "materials", "body", "point_mass", "points", "frames"})


NAME_PATTERN = re.compile(r"^[A-Za-z_][A-Za-z0-9_.\-]*$")


@dataclass(frozen=True, slots=True, eq=False)
class Placement:
    """Rigid placement ``x ↦ R x + t`` of a body-local point into the assembly (t in m)."""

    rotation: np.ndarray
    translation: np.ndarray

    @classmethod
    def identity(cls) -> Placement:
        return cls(np.eye(3), np.zeros(3))


@dataclass(frozen=True, slots=True, eq=False)
class BodySpec:
    """A mesh body of a manifest. ``density`` is ``None`` when ``measured_mass`` sets it."""

    index: int
    name: str
    mesh_path: str
    length_unit: str
    material: Material | None
    density: float | None
    measured_mass: float | None
    placement: Placement


@dataclass(frozen=True, slots=True, eq=False)
class PointMassSpec:
    """A non-modelled item: mass (kg) at ``position`` (m), own inertia (kg·m², assembly axes)."""

    index: int
    name: str
    mass: float
    position: np.ndarray
    inertia: np.ndarray
    box_size: np.ndarray | None
    inertia_given: bool


@dataclass(frozen=True, slots=True, eq=False)
class FrameSpec:
    """A named frame: origin (m) and axes = columns of ``rotation`` in assembly coordinates."""

    name: str
    origin: np.ndarray
    rotation: np.ndarray


@dataclass(frozen=True, slots=True, eq=False)
class Manifest:
    """A parsed, checked assembly manifest (lengths in metres)."""

    path: str
    name: str
    length_unit: str
    bodies: tuple[BodySpec, ...]
    point_masses: tuple[PointMassSpec, ...]
    points: dict
    frames: dict
    materials: dict

    @property
    def metres_per_unit(self) -> float:
        return metres_per(self.length_unit)


class ManifestReader:
    """Check values of a parsed manifest, raising :class:`ManifestError` with key and line."""

    def __init__(self, path: str, text: str) -> None:
        self.path = path
        self.text = text
        self.lines = text.splitlines()

    def fail(self, key: tuple, message: str) -> ManifestError:
        return ManifestError(self.path, dotted_key(key), message, line=find_key_line(self.lines, key))

    def keys(self, table: dict, allowed: frozenset, key: tuple) -> None:
        if not isinstance(table, dict):
            raise self.fail(key, f"expected a table, got {kind_of(table)}")
        for name in table:
            if name not in allowed:
                raise self.fail(key + (name,), f"unknown key {name!r}; expected one of {', '.join(sorted(allowed))}")

    def number(self, value, key: tuple, *, positive: bool = False, what: str = "a number") -> float:
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise self.fail(key, f"expected {what}, got {kind_of(value)} {value!r}")
        value = float(value)
        if not math.isfinite(value):
            raise self.fail(key, f"expected {what} (finite), got {value!r}")
        if positive and value <= 0:
            raise self.fail(key, f"expected {what} > 0, got {value!r}")
        return value

    def vector(self, value, key: tuple, *, positive: bool = False, what: str = "a vector [x, y, z]") -> np.ndarray:
        if not isinstance(value, list) or len(value) != 3:
            raise self.fail(key, f"expected {what} of 3 numbers, got {value!r}")
        return np.array([self.number(v, key, positive=positive, what="numbers") for v in value])

    def matrix(self, value, key: tuple) -> np.ndarray:
        if not isinstance(value, list) or len(value) != 3 or not all(isinstance(r, list) and len(r) == 3 for r in value):
            raise self.fail(key, f"expected a 3x3 matrix (3 rows of 3 numbers), got {value!r}")
        return np.array([[self.number(v, key) for v in row] for row in value])

    def string(self, value, key: tuple) -> str:
        if not isinstance(value, str) or not value.strip():
            raise self.fail(key, f"expected a non-empty string, got {kind_of(value)} {value!r}")
        return value

    def name(self, value, key: tuple) -> str:
        value = self.string(value, key)
        if not NAME_PATTERN.match(value):
            raise self.fail(key, f"expected a name of letters, digits, '_', '-', '.' (not starting with a digit), got {value!r}")
        return value

    def unit(self, value, key: tuple) -> str:
        value = self.string(value, key)
        try:
            return canonical_length_unit(value)
        except UnitError:
            raise self.fail(key, f"unknown length unit {value!r}; expected one of {', '.join(LENGTH_UNITS)}") from None

    def rotation(self, table: dict, key: tuple) -> np.ndarray:
        forms = []
        if "rotation_axis" in table or "rotation_angle_deg" in table:
            forms.append("rotation_axis")
        if "rotation_matrix" in table:
            forms.append("rotation_matrix")
        if "rotation_rpy_deg" in table:
            forms.append("rotation_rpy_deg")
        if len(forms) > 1:
            raise self.fail(key + (forms[1],), f"give one rotation form, not {' and '.join(forms)}")
        if not forms:
            return np.eye(3)
        if forms[0] == "rotation_axis":
            for needed in ("rotation_axis", "rotation_angle_deg"):
                if needed not in table:
                    raise self.fail(key, f"rotation_axis and rotation_angle_deg go together; {needed} is missing")
            axis = self.vector(table["rotation_axis"], key + ("rotation_axis",), what="an axis")
            if not np.any(axis != 0):
                raise self.fail(key + ("rotation_axis",), "expected a non-zero axis, got [0, 0, 0]")
            angle = self.number(table["rotation_angle_deg"], key + ("rotation_angle_deg",), what="an angle in degrees")
            return rotation_from_axis_angle(axis, math.radians(angle))
        if forms[0] == "rotation_matrix":
            matrix = self.matrix(table["rotation_matrix"], key + ("rotation_matrix",))
            try:
                return nearest_rotation(matrix)
            except ValueError as exc:
                raise self.fail(key + ("rotation_matrix",), str(exc)) from None
        roll, pitch, yaw = self.vector(table["rotation_rpy_deg"], key + ("rotation_rpy_deg",), what="[roll, pitch, yaw] in degrees")
        return rotation_from_rpy(math.radians(roll), math.radians(pitch), math.radians(yaw))


def kind_of(value) -> str:
    return {bool: "a boolean", int: "an integer", float: "a number", str: "a string", list: "an array", dict: "a table"}.get(
        type(value), type(value).__name__
    )


def dotted_key(key: tuple) -> str:
    text = ""
    for part in key:
        text += f"[{part}]" if isinstance(part, int) else (f".{part}" if text else str(part))
    return text


_HEADER = re.compile(r"^\s*(\[\[?)\s*([^\]]+?)\s*\]\]?\s*(#.*)?$")


_KEY = re.compile(r"^\s*([A-Za-z0-9_\-\.\"' ]+?)\s*=")


def find_key_line(lines: list[str], key: tuple) -> int | None:
    """Best-effort 1-based line of ``key`` (e.g. ``("body", 2, "material")``) in the manifest text.

    TOML parsers do not report positions of keys, so the text is scanned: table
    headers set the current path (``[[body]]`` counts array entries), and a
    ``key =`` line completes it. Returns the line of the deepest matching
    prefix (the key itself, else its table header).
    """
    counters: dict[tuple, int] = {}
    current: tuple = ()
    best_line, best_depth = None, 0
    for number, line in enumerate(lines, start=1):
        header = _HEADER.match(line)
        if header and not line.lstrip().startswith("#"):
            parts = tuple(p.strip().strip("\"'") for p in header.group(2).split("."))
            if header.group(1) == "[[":
                count = counters.get(parts, -1) + 1
                counters[parts] = count
                current = parts + (count,)
            else:
                # [body.placement] after [[body]]: attach to the latest array entry
                resolved: tuple = ()
                for part in parts:
                    resolved += (part,)
                    if resolved in counters:
                        resolved += (counters[resolved],)
                current = resolved
            path = current
        else:
            found = _KEY.match(line)
            if not found or line.lstrip().startswith("#"):
                continue
            path = current + tuple(p.strip().strip("\"'") for p in found.group(1).split("."))
        depth = 0
        for mine, wanted in zip(path, key):
            if mine != wanted:
                break
            depth += 1
        if depth == len(path) and depth > best_depth:  # the line's path is a prefix of the key
            best_line, best_depth = number, depth
            if depth == len(key):
                return number
    return best_line


def read_toml(path: str, error: type, what: str) -> tuple[dict, str]:
    """Parse the TOML file ``path``; returns ``(data, text)``.

    Every problem (missing, a folder, unreadable, not UTF-8, a TOML syntax error with its line)
    raises ``error(path, None, message, line=...)``: :class:`ManifestError` here, the gate's
    ``ConfigError`` for its configuration; ``what`` names the kind of file in the messages.
    """
    try:
        with open(path, "rb") as handle:
            raw = handle.read()
    except FileNotFoundError:
        raise error(path, None, f"no such {what} file") from None
    except IsADirectoryError:
        raise error(path, None, f"is a directory, not a {what} file") from None
    except OSError as exc:
        raise error(path, None, f"cannot read: {exc.strerror or exc}") from None
    try:
        text = raw.decode("utf-8")
        return tomllib.loads(text), text
    except UnicodeDecodeError as exc:
        raise error(path, None, f"not UTF-8 text ({exc.reason} at byte {exc.start})") from None
    except tomllib.TOMLDecodeError as exc:
        found = re.search(r"\(at line (\d+), column (\d+)\)", str(exc))
        message = re.sub(r"\s*\(at line \d+, column \d+\)", "", str(exc))
        line = int(found.group(1)) if found else None
        raise error(path, None, f"TOML syntax error: {message}", line=line) from None


def load_manifest(path: str | os.PathLike) -> Manifest:
    """Read and check an assembly manifest (TOML).

    Raises
    ------
    ManifestError
        Unreadable file, TOML syntax error, unknown key, missing mesh file, bad
        or missing value; the message names the manifest, the key and the line.
    """
    path = os.fspath(path)
    data, text = read_toml(path, ManifestError, "manifest")
    return parse_manifest(data, path=path, text=text)


def parse_manifest(data: dict, *, path: str = "<manifest>", text: str = "") -> Manifest:
    """Check already-parsed manifest ``data`` (see the module docstring); mesh paths relative to ``path``."""
    reader = ManifestReader(path, text)
    reader.keys(data, TOP_KEYS, ())
    assembly = data.get("assembly", {})
    reader.keys(assembly, ASSEMBLY_KEYS, ("assembly",))
    if "manifest_version" not in assembly:
        raise reader.fail(
            ("assembly", "manifest_version"),
            f"missing; add manifest_version = {MANIFEST_VERSION} to the [assembly] table "
            "(the version of the manifest format this file is written in)",
        )
    version = assembly["manifest_version"]
    if isinstance(version, bool) or version != MANIFEST_VERSION:
        raise reader.fail(("assembly", "manifest_version"), f"expected {MANIFEST_VERSION}, got {version!r}")
    name = reader.name(assembly.get("name", "assembly"), ("assembly", "name"))
    unit = reader.unit(assembly.get("length_unit", "mm"), ("assembly", "length_unit"))
    scale = metres_per(unit)
    base = os.path.dirname(os.path.abspath(path)) if path != "<manifest>" else os.getcwd()

    materials: dict[str, Material] = {}
    table = data.get("materials", {})
    if not isinstance(table, dict):
        raise reader.fail(("materials",), f"expected a table, got {kind_of(table)}")
    for material_name, entry in table.items():
        key = ("materials", material_name)
        reader.name(material_name, key)
        if isinstance(entry, dict):
            reader.keys(entry, MATERIAL_KEYS, key)
            if "density" not in entry:
                raise reader.fail(key, "missing key 'density' (kg/m^3)")
            density = reader.number(entry["density"], key + ("density",), positive=True, what="a density in kg/m^3")
            source = reader.string(entry.get("source", "user value from the manifest"), key + ("source",))
        else:
            density = reader.number(entry, key, positive=True, what="a density in kg/m^3")
            source = "user value from the manifest"
        materials[material_name] = user_material(material_name, density, source)

    names: dict[str, tuple] = {}

    def claim(item_name: str, key: tuple) -> None:
        if item_name == "total":
            raise reader.fail(key, "the name 'total' is reserved for the assembly total")
        if item_name in names:
            raise reader.fail(key, f"duplicate name {item_name!r} (also at {dotted_key(names[item_name])})")
        names[item_name] = key

    bodies = []
    entries = data.get("body", [])
    if not isinstance(entries, list):
        raise reader.fail(("body",), "expected an array of tables [[body]]")
    for k, entry in enumerate(entries):
        key = ("body", k)
        reader.keys(entry, BODY_KEYS, key)
        for needed in ("name", "mesh"):
            if needed not in entry:
                raise reader.fail(key, f"missing key {needed!r}")
        body_name = reader.name(entry["name"], key + ("name",))
        claim(body_name, key + ("name",))
        mesh_text = reader.string(entry["mesh"], key + ("mesh",))
        mesh_path = os.path.normpath(os.path.join(base, mesh_text))
        if os.path.isdir(mesh_path):
            raise reader.fail(key + ("mesh",), f"is a directory, not a mesh file: {mesh_path}")
        if not os.path.isfile(mesh_path):
            raise reader.fail(key + ("mesh",), f"mesh file not found: {mesh_path}")
        material = density = measured = None
        if "material" in entry and "density" in entry:
            raise reader.fail(key + ("density",), "give material or density, not both")
        if "density" in entry and "measured_mass" in entry:
            raise reader.fail(key + ("measured_mass",), "measured_mass sets the density; do not also give density")
        if "material" in entry:
            material_text = reader.string(entry["material"], key + ("material",))
            try:
                material = find_material(material_text, materials)
            except InputValueError as exc:
                raise reader.fail(key + ("material",), f"unknown material {material_text!r}; expected {exc.expected}") from None
            density = material.density
        if "density" in entry:
            density = reader.number(entry["density"], key + ("density",), positive=True, what="a density in kg/m^3")
        if "measured_mass" in entry:
            measured = reader.number(entry["measured_mass"], key + ("measured_mass",), positive=True, what="a mass in kg")
            density = None
        elif material is None and density is None:
            raise reader.fail(key, "give material, density or measured_mass")
        body_unit = reader.unit(entry.get("length_unit", unit), key + ("length_unit",))
        translation = reader.vector(entry.get("translation", [0, 0, 0]), key + ("translation",)) * scale
        rotation = reader.rotation(entry, key)
        bodies.append(BodySpec(k, body_name, mesh_path, body_unit, material, density, measured, Placement(rotation, translation)))

    point_masses = []
    entries = data.get("point_mass", [])
    if not isinstance(entries, list):
        raise reader.fail(("point_mass",), "expected an array of tables [[point_mass]]")
    for k, entry in enumerate(entries):
        key = ("point_mass", k)
        reader.keys(entry, POINT_MASS_KEYS, key)
        for needed in ("name", "mass", "position"):
            if needed not in entry:
                raise reader.fail(key, f"missing key {needed!r}")
        item_name = reader.name(entry["name"], key + ("name",))
        claim(item_name, key + ("name",))
        mass = reader.number(entry["mass"], key + ("mass",), positive=True, what="a mass in kg")
        position = reader.vector(entry["position"], key + ("position",)) * scale
        box = None
        if "box_size" in entry:
            box = reader.vector(entry["box_size"], key + ("box_size",), positive=True, what="box sizes [a, b, c]") * scale
        if "inertia" in entry:
            inertia = reader.matrix(entry["inertia"], key + ("inertia",))
            if not np.allclose(inertia, inertia.T, rtol=1e-9, atol=0.0):
                raise reader.fail(key + ("inertia",), "inertia tensor must be symmetric")
            frame = principal_frame(inertia)
            if not frame.satisfies_triangle_inequality:
                raise reader.fail(
                    key + ("inertia",),
                    f"principal moments {', '.join(f'{v:.6g}' for v in frame.moments)} kg*m^2 are negative or violate "
                    "the triangle inequality I1 + I2 >= I3; no physical body has them",
                )
        elif box is not None:
            a, b, c = box  # uniform solid box (handbook: I_x = m (b^2 + c^2) / 12, ...)
            inertia = mass / 12.0 * np.diag([b * b + c * c, a * a + c * c, a * a + b * b])
        else:
            inertia = np.zeros((3, 3))
        point_masses.append(PointMassSpec(k, item_name, mass, position, inertia, box, "inertia" in entry))

    if not bodies and not point_masses:
        raise ManifestError(path, None, "the manifest lists no [[body]] and no [[point_mass]]")

    points = {}
    table = data.get("points", {})
    if not isinstance(table, dict):
        raise reader.fail(("points",), f"expected a table, got {kind_of(table)}")
    for point_name, value in table.items():
        reader.name(point_name, ("points", point_name))
        points[point_name] = reader.vector(value, ("points", point_name)) * scale

    frames = {}
    table = data.get("frames", {})
    if not isinstance(table, dict):
        raise reader.fail(("frames",), f"expected a table, got {kind_of(table)}")
    for frame_name, entry in table.items():
        key = ("frames", frame_name)
        reader.name(frame_name, key)
        reader.keys(entry, FRAME_KEYS, key)
        origin = reader.vector(entry.get("origin", [0, 0, 0]), key + ("origin",)) * scale
        frames[frame_name] = FrameSpec(frame_name, origin, reader.rotation(entry, key))

    return Manifest(path, name, unit, tuple(bodies), tuple(point_masses), points, frames, materials)


def read_manifest_text(path: str) -> str:
    try:
        with open(path, encoding="utf-8") as handle:
            return handle.read()
    except (OSError, UnicodeDecodeError):
        return ""
