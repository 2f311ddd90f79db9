"""Assemblies: a TOML manifest of bodies → totals, breakdown, overlaps.

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
from dataclasses import dataclass, field, replace

import numpy as np

from .body import BodyMeasurement, measure_mesh
from .checks import ERROR, WARNING, Finding, ValidationReport
from .errors import InputValueError, ManifestError, MeshFileError, UnitError
from .io import Mesh, load_mesh
from .mass import MassProperties, combine
from .materials import Material, find_material, user_material
from .overlap import DEFAULT_SAMPLES, Overlap, find_overlaps
from .principal import PrincipalFrame, principal_frame
from .rotations import nearest_rotation, rotation_from_axis_angle, rotation_from_rpy
from .simulators import Plausibility, check_against_known_extent, check_plausibility
from .spin import spin
from .units import LENGTH_UNITS, metres_per

MANIFEST_VERSION = 1

#: Allowed keys per table: the single source the parser and the schema test share.
ASSEMBLY_KEYS = frozenset({"name", "length_unit", "manifest_version"})
ROTATION_KEYS = frozenset({"rotation_axis", "rotation_angle_deg", "rotation_matrix", "rotation_rpy_deg"})
BODY_KEYS = frozenset({"name", "mesh", "material", "density", "measured_mass", "length_unit", "translation"}) | ROTATION_KEYS
POINT_MASS_KEYS = frozenset({"name", "mass", "position", "inertia", "box_size"})
FRAME_KEYS = frozenset({"origin"}) | ROTATION_KEYS
MATERIAL_KEYS = frozenset({"density", "source"})
TOP_KEYS = frozenset({"assembly", "materials", "body", "point_mass", "points", "frames"})

#: Implied density outside this ratio of the named material's density gets a warning.
IMPLIED_DENSITY_RATIO_RANGE = (0.1, 1.2)
NAME_PATTERN = re.compile(r"^[A-Za-z_][A-Za-z0-9_.\-]*$")


# ------------------------------------------------------------------------------ manifest


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


class _Reader:
    """Check values of a parsed manifest, raising :class:`ManifestError` with key and line."""

    def __init__(self, path: str, text: str) -> None:
        self.path = path
        self.text = text
        self.lines = text.splitlines()

    def fail(self, key: tuple, message: str) -> ManifestError:
        return ManifestError(self.path, _dotted(key), message, line=_find_line(self.lines, key))

    def keys(self, table: dict, allowed: frozenset, key: tuple) -> None:
        if not isinstance(table, dict):
            raise self.fail(key, f"expected a table, got {_kind(table)}")
        for name in table:
            if name not in allowed:
                raise self.fail(key + (name,), f"unknown key {name!r}; expected one of {', '.join(sorted(allowed))}")

    def number(self, value, key: tuple, *, positive: bool = False, what: str = "a number") -> float:
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise self.fail(key, f"expected {what}, got {_kind(value)} {value!r}")
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
            raise self.fail(key, f"expected a non-empty string, got {_kind(value)} {value!r}")
        return value

    def name(self, value, key: tuple) -> str:
        value = self.string(value, key)
        if not NAME_PATTERN.match(value):
            raise self.fail(key, f"expected a name of letters, digits, '_', '-', '.' (not starting with a digit), got {value!r}")
        return value

    def unit(self, value, key: tuple) -> str:
        value = self.string(value, key)
        if value not in LENGTH_UNITS:
            raise self.fail(key, f"unknown length unit {value!r}; expected one of {', '.join(LENGTH_UNITS)}")
        return value

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


def _kind(value) -> str:
    return {bool: "a boolean", int: "an integer", float: "a number", str: "a string", list: "an array", dict: "a table"}.get(
        type(value), type(value).__name__
    )


def _dotted(key: tuple) -> str:
    text = ""
    for part in key:
        text += f"[{part}]" if isinstance(part, int) else (f".{part}" if text else str(part))
    return text


_HEADER = re.compile(r"^\s*(\[\[?)\s*([^\]]+?)\s*\]\]?\s*(#.*)?$")
_KEY = re.compile(r"^\s*([A-Za-z0-9_\-\.\"' ]+?)\s*=")


def _find_line(lines: list[str], key: tuple) -> int | None:
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


def load_manifest(path: str | os.PathLike) -> Manifest:
    """Read and check an assembly manifest (TOML).

    Raises
    ------
    ManifestError
        Unreadable file, TOML syntax error, unknown key, missing mesh file, bad
        or missing value; the message names the manifest, the key and the line.
    """
    path = os.fspath(path)
    try:
        with open(path, "rb") as handle:
            raw = handle.read()
    except FileNotFoundError:
        raise ManifestError(path, None, "no such manifest file") from None
    except IsADirectoryError:
        raise ManifestError(path, None, "is a directory, not a manifest") from None
    except OSError as exc:
        raise ManifestError(path, None, f"cannot read: {exc.strerror or exc}") from None
    try:
        text = raw.decode("utf-8")
        data = tomllib.loads(text)
    except UnicodeDecodeError as exc:
        raise ManifestError(path, None, f"not UTF-8 text ({exc.reason} at byte {exc.start})") from None
    except tomllib.TOMLDecodeError as exc:
        found = re.search(r"\(at line (\d+), column (\d+)\)", str(exc))
        message = re.sub(r"\s*\(at line \d+, column \d+\)", "", str(exc))
        line = int(found.group(1)) if found else None
        raise ManifestError(path, None, f"TOML syntax error: {message}", line=line) from None
    return parse_manifest(data, path=path, text=text)


def parse_manifest(data: dict, *, path: str = "<manifest>", text: str = "") -> Manifest:
    """Check already-parsed manifest ``data`` (see the module docstring); mesh paths relative to ``path``."""
    reader = _Reader(path, text)
    reader.keys(data, TOP_KEYS, ())
    assembly = data.get("assembly", {})
    reader.keys(assembly, ASSEMBLY_KEYS, ("assembly",))
    version = assembly.get("manifest_version", MANIFEST_VERSION)
    if isinstance(version, bool) or version != MANIFEST_VERSION:
        raise reader.fail(("assembly", "manifest_version"), f"expected {MANIFEST_VERSION}, got {version!r}")
    name = reader.name(assembly.get("name", "assembly"), ("assembly", "name"))
    unit = reader.unit(assembly.get("length_unit", "mm"), ("assembly", "length_unit"))
    scale = metres_per(unit)
    base = os.path.dirname(os.path.abspath(path)) if path != "<manifest>" else os.getcwd()

    materials: dict[str, Material] = {}
    table = data.get("materials", {})
    if not isinstance(table, dict):
        raise reader.fail(("materials",), f"expected a table, got {_kind(table)}")
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
            raise reader.fail(key, f"duplicate name {item_name!r} (also at {_dotted(names[item_name])})")
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
        raise reader.fail(("points",), f"expected a table, got {_kind(table)}")
    for point_name, value in table.items():
        reader.name(point_name, ("points", point_name))
        points[point_name] = reader.vector(value, ("points", point_name)) * scale

    frames = {}
    table = data.get("frames", {})
    if not isinstance(table, dict):
        raise reader.fail(("frames",), f"expected a table, got {_kind(table)}")
    for frame_name, entry in table.items():
        key = ("frames", frame_name)
        reader.name(frame_name, key)
        reader.keys(entry, FRAME_KEYS, key)
        origin = reader.vector(entry.get("origin", [0, 0, 0]), key + ("origin",)) * scale
        frames[frame_name] = FrameSpec(frame_name, origin, reader.rotation(entry, key))

    return Manifest(path, name, unit, tuple(bodies), tuple(point_masses), points, frames, materials)


# ------------------------------------------------------------------------------ measuring


@dataclass(frozen=True, slots=True, eq=False)
class AssemblyItem:
    """One item of an assembly, measured and placed.

    Attributes
    ----------
    name, kind : ``"mesh"`` or ``"point_mass"``
    measurement : the body's measurement in the **assembly frame** (after
        placement), with its validation findings; for a point mass a
        measurement without mesh
    local : mass properties in the body's own mesh frame (``None`` for point
        masses and invalid meshes)
    placement : body-local → assembly
    spec : the manifest entry
    density_basis : ``"material"``, ``"density"``, ``"measured_mass"`` or ``None`` (point mass)
    implied_density_ratio : implied density / material density, when both are known
    plausibility : equivalent-box check, or ``None`` for invalid meshes
    mesh : the loaded mesh (``None`` for point masses)
    """

    name: str
    kind: str
    measurement: BodyMeasurement
    local: MassProperties | None
    placement: Placement
    spec: BodySpec | PointMassSpec
    density_basis: str | None
    implied_density_ratio: float | None
    plausibility: Plausibility | None
    mesh: Mesh | None = None

    @property
    def valid(self) -> bool:
        return self.measurement.valid

    @property
    def properties(self) -> MassProperties | None:
        return self.measurement.properties

    def placed_triangles(self) -> np.ndarray:
        """``(F, 3, 3)`` triangles of the mesh in the assembly frame (m)."""
        triangles = self.mesh.triangles()
        return triangles @ self.placement.rotation.T + self.placement.translation

    def placed_corner_chunks(self):
        """Yield ``(k, 3)`` corners of the mesh in the assembly frame (m), chunk by chunk."""
        for chunk in self.mesh.triangle_chunks():
            yield chunk.reshape(-1, 3) @ self.placement.rotation.T + self.placement.translation


@dataclass(frozen=True, slots=True, eq=False)
class BreakdownEntry:
    """One item's share of the total.

    ``inertia_contribution`` (kg·m², assembly axes) is the item's inertia about
    the **assembly** centre of mass (its own inertia plus the parallel-axis
    term); the contributions sum to the total inertia.
    """

    name: str
    kind: str
    mass: float
    mass_share: float
    inertia_contribution: np.ndarray
    trace_share: float


@dataclass(frozen=True, slots=True, eq=False)
class FrameView:
    """The totals seen in a named frame (coordinates ``x_F = Rᵀ (x − o)``)."""

    frame: FrameSpec
    properties: MassProperties
    principal: PrincipalFrame
    inertia_about_origin: np.ndarray


@dataclass(frozen=True, slots=True, eq=False)
class AssemblyResult:
    """Totals of an assembly. Totals are ``None`` when a body's mesh failed validation."""

    manifest: Manifest
    items: tuple[AssemblyItem, ...]
    total: BodyMeasurement
    named_points: dict
    frames: dict
    breakdown: tuple[BreakdownEntry, ...]
    overlaps: tuple[Overlap, ...]
    overlap_samples: int
    warnings: tuple[str, ...] = field(default_factory=tuple)
    total_plausibility: Plausibility | None = None

    @property
    def valid(self) -> bool:
        return self.total.valid


def resolve_point(manifest: Manifest, text) -> np.ndarray | None:
    """A ``--about`` value: a named point of the manifest, or ``X,Y,Z`` in the manifest's length unit → m."""
    if text is None:
        return None
    if isinstance(text, str) and text.strip() in manifest.points:
        return manifest.points[text.strip()].copy()
    from .body import parse_vector

    try:
        vector = parse_vector(text, "about point", source=manifest.path)
    except InputValueError:
        raise InputValueError(
            "--about",
            f"X,Y,Z in {manifest.length_unit} or a named point ({', '.join(manifest.points) or 'none defined'})",
            text,
            source=manifest.path,
        ) from None
    return vector * manifest.metres_per_unit


def _principal_extent(items: list[AssemblyItem], axes: np.ndarray, *, known_only: bool = False) -> np.ndarray | None:
    """Extent (m) of the items' geometry along each of ``axes`` (rows).

    ``None`` if some item's extent is unknown (a point mass with a typed inertia and no
    box), unless ``known_only``: then such an item counts by its position alone.
    """
    low = np.full(3, np.inf)
    high = np.full(3, -np.inf)
    for item in items:
        if item.kind == "mesh":
            for placed in item.placed_corner_chunks():
                projected = placed @ axes.T
                low = np.minimum(low, projected.min(axis=0))
                high = np.maximum(high, projected.max(axis=0))
        else:
            spec = item.spec
            if spec.box_size is not None:
                half = spec.box_size / 2.0
                corners = spec.position + np.array([[sx, sy, sz] for sx in (-1, 1) for sy in (-1, 1) for sz in (-1, 1)]) * half
            elif spec.inertia_given and not known_only:
                return None  # own inertia without a size: its spread is unknown
            else:
                corners = spec.position[None, :]
            projected = corners @ axes.T
            low = np.minimum(low, projected.min(axis=0))
            high = np.maximum(high, projected.max(axis=0))
    return high - low


def _measure_body(manifest: Manifest, spec: BodySpec, reader: _Reader, cache: dict) -> AssemblyItem:
    key = ("body", spec.index)
    if (spec.mesh_path, spec.length_unit) not in cache:  # four wheels, one file: read and measure it once
        try:
            mesh = load_mesh(spec.mesh_path, spec.length_unit)
        except (MeshFileError, UnitError) as exc:
            raise reader.fail(key + ("mesh",), f"cannot load mesh: {exc}") from None
        # Measured at unit density, then scaled: mass and inertia are linear in the density.
        cache[spec.mesh_path, spec.length_unit] = (mesh, measure_mesh(mesh, 1.0, on_invalid="report"))
    mesh, unit = cache[spec.mesh_path, spec.length_unit]
    unit = replace(unit, name=spec.name)
    basis = "measured_mass" if spec.measured_mass is not None else ("material" if spec.material else "density")
    if not unit.valid:
        density = spec.density
        measurement = replace(unit, density=density, density_assumed=False)
        return AssemblyItem(spec.name, "mesh", measurement, None, spec.placement, spec, basis, None, None, mesh)
    volume = unit.properties.volume
    density = spec.measured_mass / volume if spec.measured_mass is not None else spec.density
    local = MassProperties(density * volume, volume, unit.properties.center_of_mass, density * unit.properties.inertia_about_com)
    placed = local.moved(spec.placement.rotation, spec.placement.translation)
    findings = unit.findings
    ratio = None
    if spec.measured_mass is not None and spec.material is not None:
        ratio = density / spec.material.density
        low, high = IMPLIED_DENSITY_RATIO_RANGE
        if not low <= ratio <= high:
            findings = findings + (
                Finding(
                    "implied_density_unusual",
                    WARNING,
                    1,
                    f"measured mass {spec.measured_mass:.6g} kg implies density {density:.6g} kg/m^3, {ratio:.3g} x "
                    f"{spec.material.name} ({spec.material.density:g} kg/m^3): check the weighed mass, the mesh and "
                    "its length unit",
                ),
            )
    frame = principal_frame(placed.inertia_about_com)
    measurement = replace(
        unit,
        validation=replace(unit.validation, findings=findings),
        density=density,
        density_assumed=False,
        properties=placed,
        principal=frame,
    )
    item = AssemblyItem(spec.name, "mesh", measurement, local, spec.placement, spec, basis, ratio, None, mesh)
    extent = _principal_extent([item], frame.axes)
    return replace(item, plausibility=check_plausibility(placed.mass, frame.moments, extent))


def _point_mass_item(manifest: Manifest, spec: PointMassSpec) -> AssemblyItem:
    properties = MassProperties.point_mass(spec.mass, spec.position, spec.inertia)
    frame = principal_frame(properties.inertia_about_com)
    measurement = BodyMeasurement(
        source=f"{manifest.path}: point_mass {spec.name!r}",
        name=spec.name,
        file_format="point_mass",
        length_unit=manifest.length_unit,
        face_count=0,
        validation=None,
        density=None,
        density_assumed=False,
        properties=properties,
        principal=frame,
    )
    item = AssemblyItem(spec.name, "point_mass", measurement, None, Placement.identity(), spec, None, None, None)
    extent = _principal_extent([item], frame.axes)
    return replace(item, plausibility=check_plausibility(spec.mass, frame.moments, extent))


def _with_views(measurement: BodyMeasurement, point, omega, velocity) -> BodyMeasurement:
    properties = measurement.properties
    return replace(
        measurement,
        point=point,
        inertia_about_point=properties.inertia_about(point) if point is not None else None,
        spin=spin(properties, omega, com_velocity=velocity, point=point) if omega is not None else None,
    )


def measure_assembly(
    manifest: Manifest,
    *,
    about=None,
    angular_velocity=None,
    com_velocity=None,
    overlap_samples: int = DEFAULT_SAMPLES,
    overlap_seed: int = 0,
) -> AssemblyResult:
    """Measure every body of ``manifest`` and combine them in the assembly frame.

    Parameters
    ----------
    about : (3,) m, optional
        Point (assembly frame) for ``inertia_about_point`` of every item and of the total.
    angular_velocity : (3,) rad/s, optional
        The whole assembly spins rigidly at this rate (assembly axes).
    com_velocity : (3,) m/s, optional
        Velocity of the assembly's centre of mass; each item's centre of mass
        then moves at ``v + ω × (c_i − c)``, so item angular momenta about
        ``about`` add up to the total's.
    overlap_samples : Monte-Carlo points per candidate pair (0: skip the overlap check)

    A mesh that fails validation leaves the total without numbers
    (``result.valid`` false); its findings say why.
    """
    if isinstance(overlap_samples, bool) or not isinstance(overlap_samples, (int, np.integer)) or overlap_samples < 0:
        raise InputValueError("overlap samples", "a whole number >= 0 (0 skips the overlap check)", overlap_samples)
    reader = _Reader(manifest.path, _read_text(manifest.path))
    cache: dict = {}
    items = [_measure_body(manifest, spec, reader, cache) for spec in manifest.bodies]
    items += [_point_mass_item(manifest, spec) for spec in manifest.point_masses]
    point = None if about is None else np.asarray(about, dtype=np.float64)
    omega = None if angular_velocity is None else np.asarray(angular_velocity, dtype=np.float64)
    velocity = None if com_velocity is None else np.asarray(com_velocity, dtype=np.float64)

    total_stub = BodyMeasurement(
        source=manifest.path,
        name="total",
        file_format="assembly",
        length_unit=manifest.length_unit,
        face_count=sum(item.measurement.face_count for item in items),
        validation=None,
        density=None,
        density_assumed=False,
        properties=None,
        principal=None,
    )
    invalid = [item.name for item in items if not item.valid]
    if invalid:
        total = replace(total_stub, validation=_total_report(
            [Finding("invalid_body", ERROR, len(invalid),
                     f"no totals: {len(invalid)} body mesh(es) failed validation: {', '.join(invalid)}")]
        ))  # fmt: skip
        return AssemblyResult(manifest, tuple(items), total, {}, {}, (), (), overlap_samples, ())

    properties = combine(item.properties for item in items)
    frame = principal_frame(properties.inertia_about_com)
    center = properties.center_of_mass
    placed_items = []
    for item in items:
        item_velocity = None
        if omega is not None:
            base_velocity = np.zeros(3) if velocity is None else velocity
            item_velocity = base_velocity + np.cross(omega, item.properties.center_of_mass - center)
        placed_items.append(replace(item, measurement=_with_views(item.measurement, point, omega, item_velocity)))
    items = placed_items

    trace = float(np.trace(properties.inertia_about_com))
    breakdown = []
    for item in items:
        contribution = item.properties.inertia_about(center)
        breakdown.append(
            BreakdownEntry(
                item.name,
                item.kind,
                item.properties.mass,
                item.properties.mass / properties.mass,
                contribution,
                float(np.trace(contribution)) / trace if trace > 0 else 0.0,
            )
        )

    named = {name: (position, properties.inertia_about(position)) for name, position in manifest.points.items()}
    frames = {}
    for name, spec in manifest.frames.items():
        seen = properties.moved(spec.rotation.T, -spec.rotation.T @ spec.origin)
        frames[name] = FrameView(spec, seen, principal_frame(seen.inertia_about_com), seen.inertia_about(np.zeros(3)))

    overlaps: list[Overlap] = []
    meshes = [item for item in items if item.kind == "mesh"]
    if overlap_samples and len(meshes) > 1:
        boxes = [_placed_box(item) for item in meshes]
        overlaps = find_overlaps(
            [item.name for item in meshes],
            [item.placed_triangles for item in meshes],
            boxes,
            [item.measurement.density for item in meshes],
            [item.properties.volume for item in meshes],
            samples=overlap_samples,
            seed=overlap_seed,
        )
    warnings = [
        f"{o.first} and {o.second} overlap by about {o.estimate.volume:.4g} m^3 (+/- {o.estimate.standard_error:.2g}, "
        f"{100 * o.share_of_smaller_volume:.3g} % of the smaller body): {o.double_counted_mass[0]:.4g} to "
        f"{o.double_counted_mass[1]:.4g} kg counted twice"
        for o in overlaps
    ]
    findings = [Finding("bodies_overlap", WARNING, 1, text) for text in warnings]
    for item in items:
        warnings.extend(f"{item.name}: {f.code}: {f.message}" for f in item.measurement.findings if f.severity == WARNING)

    extent = _principal_extent(items, frame.axes)
    plausibility = check_plausibility(properties.mass, frame.moments, extent)
    if extent is None:  # a typed inertia somewhere: still compare with what the known geometry allows
        plausibility = check_against_known_extent(
            properties.mass, frame.moments, _principal_extent(items, frame.axes, known_only=True)
        )
    checked_items = []
    for item in items:
        if item.plausibility is not None and item.plausibility.status == "not_checked" and item.kind == "point_mass":
            moments = item.measurement.principal.moments
            bound = _principal_extent(items, item.measurement.principal.axes, known_only=True)
            item = replace(item, plausibility=check_against_known_extent(item.properties.mass, moments, bound))
        checked_items.append(item)
    items = checked_items
    for name, check in [(item.name, item.plausibility) for item in items] + [("total", plausibility)]:
        if check is not None and check.status == "suspicious":
            text = f"{name}: implausible inertia: {check.message}"
            warnings.append(text)
            findings.append(Finding("implausible_inertia", WARNING, 1, text))
    total = _with_views(
        replace(total_stub, validation=_total_report(findings), properties=properties, principal=frame),
        point,
        omega,
        velocity,
    )
    return AssemblyResult(
        manifest,
        tuple(items),
        total,
        named,
        frames,
        tuple(breakdown),
        tuple(overlaps),
        overlap_samples,
        tuple(warnings),
        plausibility,
    )


def _total_report(findings) -> ValidationReport:
    """Findings of the total (no mesh of its own: zero counts)."""
    return ValidationReport(tuple(findings), 0, 0, 0)


def _placed_box(item: AssemblyItem) -> np.ndarray:
    low = np.full(3, np.inf)
    high = np.full(3, -np.inf)
    for placed in item.placed_corner_chunks():
        low = np.minimum(low, placed.min(axis=0))
        high = np.maximum(high, placed.max(axis=0))
    return np.array([low, high])


def _read_text(path: str) -> str:
    try:
        with open(path, encoding="utf-8") as handle:
            return handle.read()
    except (OSError, UnicodeDecodeError):
        return ""


def measure_manifest(path, **options) -> AssemblyResult:
    """:func:`load_manifest` then :func:`measure_assembly` (``about`` as accepted by :func:`resolve_point`)."""
    manifest = load_manifest(path)
    about = options.pop("about", None)
    return measure_assembly(manifest, about=resolve_point(manifest, about), **options)
