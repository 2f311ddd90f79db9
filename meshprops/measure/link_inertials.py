"""Inertials of a model's links computed from the model's own meshes.

For every link of a URDF, SDFormat or MJCF model (:func:`meshprops.measure.robot_model.load_robot_model`)
with collision (else visual) meshes, each mesh is loaded, validated and integrated, scaled by
the model's mesh scale and placed by the geometry's origin in the link frame
(:func:`meshprops.physics.link_frame.in_link_frame`); several meshes of one link add up. The
density comes from the per-link map, else the command's ``--density`` / ``--material``, else the
default (water, flagged as assumed). A measured mass in the map scales the density.

Links without a mesh are left alone. A link whose mesh fails validation is left alone too
and carries the findings; :attr:`ModelFill.valid` is then false. The old inertial of every
filled link is compared with the new one, and placeholders are called out: an identity
matrix, a zero mass or tensor, or an equivalent box that no body within the mesh's extent
can have (:func:`meshprops.physics.plausibility.check_plausibility`).
"""

from __future__ import annotations

import math
import tomllib
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..errors import (
    InputValueError,
    ManifestError,
    MeshFileError,
    ModelFileError,
    UnitError,
)
from ..io import load_mesh
from ..materials import Material, find_material
from ..physics.link_frame import in_link_frame, with_mass
from ..physics.mass import MassProperties, check_density, combine
from ..physics.plausibility import check_plausibility
from ..physics.principal import principal_frame
from ..units import LENGTH_UNITS
from ..validation.findings import Finding
from .body import measure_mesh
from .options import DEFAULT_DENSITY
from .robot_model import (
    LinkInertial,
    MeshGeometry,
    ModelLink,
    RobotModel,
    load_robot_model,
)

MAP_KEYS = frozenset({"material", "density", "measured_mass"})
#: An old tensor within this of the identity matrix (kg·m², each entry) is the usual placeholder.
IDENTITY_TOLERANCE = 1e-9


@dataclass(frozen=True, slots=True, eq=False)
class LinkSetting:
    """What the map says about one link: exactly one of a material, a density (kg/m³), a measured mass (kg)."""

    material: Material | None = None
    density: float | None = None
    measured_mass: float | None = None


@dataclass(frozen=True, slots=True, eq=False)
class LinkFill:
    """The outcome for one link.

    Attributes
    ----------
    index : position in :attr:`RobotModel.links`
    link : the link as read
    status : ``"filled"``, ``"no_mesh"`` (left alone) or ``"invalid_mesh"`` (left alone, see ``findings``)
    new : mass properties in the link frame (centre of mass in m, inertia about it in link axes), or ``None``
    density : kg/m³ used, or ``None``; ``density_basis``: ``"map_material"``, ``"map_density"``,
        ``"measured_mass"``, ``"material"``, ``"density"`` or ``"assumed"``
    placeholder : why the old inertial looks like a placeholder, or ``None``
    findings : validation findings of the link's meshes, each with its file
    size : m, the largest side of the meshes' bounding box in the link frame, or ``None``
    """

    index: int
    link: ModelLink
    status: str
    new: MassProperties | None
    density: float | None
    density_basis: str | None
    placeholder: str | None
    findings: tuple[tuple[str, Finding], ...]
    size: float | None = None

    @property
    def old(self) -> LinkInertial | None:
        return self.link.inertial


@dataclass(frozen=True, slots=True, eq=False)
class ModelFill:
    """Every link of a model and what filling did to it."""

    model: RobotModel
    links: tuple[LinkFill, ...]

    @property
    def valid(self) -> bool:
        return all(link.status != "invalid_mesh" for link in self.links)


def load_link_map(path) -> dict[str, LinkSetting]:
    """Read a map file (TOML, our own): ``[link.NAME]`` tables with one of ``material``,
    ``density`` (kg/m³) or ``measured_mass`` (kg), and an optional ``[materials]`` table of
    ``name = { density = ... }`` additions.

    Raises
    ------
    ManifestError
        Unreadable TOML, an unknown key, a bad value (the dotted key is named).
    """
    source = str(path)
    try:
        document = tomllib.loads(Path(path).read_text(encoding="utf-8"))
    except OSError as error:
        raise ManifestError(source, None, f"cannot read: {error.strerror or error}") from None
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as error:
        raise ManifestError(source, None, f"not valid TOML: {error}") from None
    unknown = set(document) - {"link", "materials"}
    if unknown:
        raise ManifestError(source, sorted(unknown)[0], "unknown key; expected [link.NAME] tables (and [materials])")
    overrides = {}
    for name, entry in (document.get("materials") or {}).items():
        if not isinstance(entry, dict) or set(entry) - {"density", "source"} or "density" not in entry:
            raise ManifestError(source, f"materials.{name}", "expected { density = KG_PER_M3 }")
        try:
            density = check_density(entry["density"], source=source)
        except InputValueError as error:
            raise ManifestError(source, f"materials.{name}.density", error.problem) from None
        overrides[name] = Material(name, density, f"map material {name!r}", str(entry.get("source", "map file")), False)
    settings = {}
    for name, entry in (document.get("link") or {}).items():
        key = f"link.{name}"
        if not isinstance(entry, dict):
            raise ManifestError(source, key, "expected a table with material, density or measured_mass")
        extra = set(entry) - MAP_KEYS
        if extra:
            raise ManifestError(source, f"{key}.{sorted(extra)[0]}", f"unknown key; expected one of {', '.join(sorted(MAP_KEYS))}")
        given = [k for k in ("material", "density", "measured_mass") if k in entry]
        if len(given) != 1:
            raise ManifestError(source, key, "give exactly one of material, density, measured_mass")
        try:
            if "material" in entry:
                settings[name] = LinkSetting(material=find_material(str(entry["material"]), overrides, source=source))
            elif "density" in entry:
                settings[name] = LinkSetting(density=check_density(entry["density"], source=source))
            else:
                mass = entry["measured_mass"]
                if isinstance(mass, bool) or not isinstance(mass, (int, float)) or not math.isfinite(mass) or mass <= 0:
                    raise InputValueError("measured_mass", "a finite mass > 0 kg", mass)
                settings[name] = LinkSetting(measured_mass=float(mass))
        except InputValueError as error:
            raise ManifestError(source, f"{key}.{given[0]}", error.problem) from None
    return settings


def _unit_for(scale: np.ndarray) -> str | None:
    """The length unit whose size the (uniform) scale is, e.g. ``"mm"`` for 0.001, else ``None``."""
    if not np.all(scale == scale[0]):
        return None
    for unit, metres in LENGTH_UNITS.items():
        if math.isclose(float(scale[0]), metres, rel_tol=1e-12):
            return unit
    return None


def _measure_geometry(geometry: MeshGeometry):
    """(properties at unit density in the link frame, extent corners in the link frame, findings)."""
    unit = _unit_for(geometry.scale)
    mesh = load_mesh(geometry.path, unit or "m")
    scale = np.ones(3) if unit else geometry.scale
    measurement = measure_mesh(mesh, density=1.0, on_invalid="report")
    findings = tuple((str(geometry.path), finding) for finding in measurement.findings)
    if not measurement.valid:
        return None, None, findings
    placed = in_link_frame(measurement.properties, geometry.rotation, geometry.translation, scale)
    low = np.full(3, np.inf)
    high = np.full(3, -np.inf)
    for chunk in mesh.triangle_chunks():
        points = chunk.reshape(-1, 3)
        low = np.minimum(low, points.min(axis=0))
        high = np.maximum(high, points.max(axis=0))
    corners = np.array([[x, y, z] for x in (low[0], high[0]) for y in (low[1], high[1]) for z in (low[2], high[2])])
    corners = (corners * scale) @ geometry.rotation.T + geometry.translation
    return placed, corners, findings


def _placeholder(old: LinkInertial | None, corners: np.ndarray) -> str | None:
    if old is None:
        return None
    tensor = old.inertia_about_com
    if not old.mass > 0:
        return f"mass {old.mass!r} kg"
    if not np.any(tensor):
        return "zero inertia tensor"
    if np.all(np.abs(tensor - np.eye(3)) <= IDENTITY_TOLERANCE):
        return "identity inertia matrix"
    frame = principal_frame(tensor)
    if np.any(frame.moments <= 0):
        return "inertia tensor not positive definite"
    projected = corners @ frame.axes.T
    extent = projected.max(axis=0) - projected.min(axis=0)
    check = check_plausibility(old.mass, frame.moments, extent)
    if check.status == "impossible":
        return f"a box far larger than the mesh: {check.message}"
    return None


def fill_model(
    path,
    *,
    density: float | None = None,
    material: Material | None = None,
    link_map: dict[str, LinkSetting] | None = None,
    map_source: str | None = None,
) -> ModelFill:
    """Compute every meshed link's inertial from its meshes; see the module docstring.

    Parameters
    ----------
    path : the model file (URDF, SDFormat or MJCF)
    density : kg/m³ for links the map does not name (not with ``material``)
    material : the same as a material
    link_map : per-link settings (:func:`load_link_map`), by link name
    map_source : the map's file name, for errors

    Raises
    ------
    ModelFileError
        The model or one of its meshes cannot be read (nothing is filled).
    ManifestError
        The map names a link the model does not have.
    """
    model = load_robot_model(path)
    link_map = link_map or {}
    names = {link.name for link in model.links}
    for name in link_map:
        if name not in names:
            raise ManifestError(map_source or "map", f"link.{name}", f"no link of that name in {model.path}")
    if density is not None and material is not None:
        raise InputValueError("--density/--material", "one of --density or --material, not both", f"{density} and {material.name}")
    results = []
    for index, link in enumerate(model.links):
        if not link.meshes:
            results.append(LinkFill(index, link, "no_mesh", None, None, None, None, ()))
            continue
        parts, corner_sets, findings = [], [], []
        for geometry in link.meshes:
            try:
                placed, corners, found = _measure_geometry(geometry)
            except (MeshFileError, UnitError) as error:
                raise ModelFileError(str(model.path), f"link {link.name!r}: {error}", line=geometry.line) from None
            findings.extend(found)
            if placed is None:
                parts = None
                break
            parts.append(placed)
            corner_sets.append(corners)
        if parts is None:
            results.append(LinkFill(index, link, "invalid_mesh", None, None, None, None, tuple(findings)))
            continue
        unit_density = combine(parts)
        setting = link_map.get(link.name)
        if setting is not None and setting.measured_mass is not None:
            new = with_mass(unit_density, setting.measured_mass)
            chosen, basis = setting.measured_mass / unit_density.volume, "measured_mass"
        else:
            if setting is not None and setting.material is not None:
                chosen, basis = setting.material.density, "map_material"
            elif setting is not None and setting.density is not None:
                chosen, basis = setting.density, "map_density"
            elif material is not None:
                chosen, basis = material.density, "material"
            elif density is not None:
                chosen, basis = check_density(density), "density"
            else:
                chosen, basis = DEFAULT_DENSITY, "assumed"
            new = with_mass(unit_density, chosen * unit_density.volume)
        corners = np.concatenate(corner_sets)
        size = float(np.max(corners.max(axis=0) - corners.min(axis=0)))
        results.append(LinkFill(index, link, "filled", new, chosen, basis, _placeholder(link.inertial, corners),
                                tuple(findings), size))  # fmt: skip
    return ModelFill(model, tuple(results))
