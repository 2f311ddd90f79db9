"""Complete simulator models of an assembly: URDF, SDFormat and MJCF files that load as they are.

Fed by the assembly JSON document (:mod:`meshprops.output.serialize`), so a model can
never disagree with ``--json``. The model is a tree of depth one:

* a root link (MJCF: body) at the assembly frame with an explicit, empty inertial
  (mass 0): clients assume 1 kg for a link without one;
* one link per mesh body, its frame the mesh's own frame, placed by a **fixed** joint
  whose origin is the manifest placement (URDF/SDFormat ``xyz`` + fixed-axis ``rpy``;
  MJCF ``pos`` + ``quat``, scalar first); its inertial is the body's centre of mass and
  inertia in that frame; visual and collision geometry point at the mesh file by a path
  relative to the model's folder, with the mesh's unit as scale (0.001 for mm);
* one link per point mass, fixed at its centre of mass, its inertia in assembly axes.

So the model's total mass, centre of mass and inertia about it are the assembly's
total. Clients that read neither PLY nor ASCII STL get a binary STL copy of such a
mesh (same coordinates, same unit) beside the model; :class:`MeshCopy` lists them for
the caller to write.

The inertial of each link passes the same checks as the inertial blocks
(:func:`meshprops.output.simulators.checked_block`) before any text is made.
"""

from __future__ import annotations

import os
import xml.etree.ElementTree as ET
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..errors import InputValueError
from ..physics.rotations import quaternion_from_rotation, rpy_from_rotation
from ..units import metres_per
from ..version import __version__
from .simulators import FORMATS, FORMS, SIX_ENTRIES, checked_block, clean_number

#: Mesh formats every client reads: others are copied to binary STL beside the model.
PORTABLE_MESH_FORMATS = ("stl-binary", "obj")


@dataclass(frozen=True, slots=True, eq=False)
class MeshCopy:
    """A mesh to copy as binary STL (same coordinates, same unit) so that every client reads it."""

    source: Path
    target: Path


@dataclass(frozen=True, slots=True, eq=False)
class SimulatorModel:
    """Text of a complete model, the mesh copies it refers to, and the warnings raised."""

    text: str
    mesh_copies: tuple[MeshCopy, ...]
    warnings: tuple[str, ...]


@dataclass(frozen=True, slots=True, eq=False)
class _Link:
    name: str
    mass: float
    center_of_mass: np.ndarray  # link frame, m
    tensor: np.ndarray  # about the centre of mass, link axes
    moments: np.ndarray
    axes: np.ndarray  # principal axes as rows, link axes
    rotation: np.ndarray  # link frame in the root frame
    translation: np.ndarray
    joint_name: str  # of the fixed joint to the root, unique among every link and joint name
    mesh_reference: str | None  # path relative to the model's folder, "/" separated
    mesh_scale: float
    length_scale: float  # m, for round-off


def _unique_name(wanted: str, taken: set[str]) -> str:
    name = wanted
    while name in taken:
        name += "_"
    return name


def _number(value: float, scale: float) -> str:
    return clean_number(value, scale)


def _vector(values, scale: float) -> str:
    values = [float(v) for v in values]
    scale = max([scale, *(abs(v) for v in values)])
    return " ".join(_number(v, scale) for v in values)


def _angles(values) -> str:
    return " ".join(_number(v, 1.0) for v in values)


def complete_model(doc: dict, file_format: str, output_path, *, form: str = "full", copy_meshes: bool = True) -> SimulatorModel:
    """The complete model of an assembly document, to be written at ``output_path``.

    Parameters
    ----------
    doc : an assembly measurement document (``bodies`` with ``placement`` and ``body_frame``)
    file_format : ``"urdf"``, ``"sdf"`` or ``"mjcf"``
    output_path : where the model will be written; mesh paths are relative to its folder
    form : ``"full"`` (six tensor entries) or ``"principal"`` (principal moments and orientation)
    copy_meshes : refer to binary STL copies of PLY and ASCII STL meshes (listed in ``mesh_copies``);
        ``False``: refer to the sources themselves

    Raises
    ------
    SimulatorExportError
        A body without numbers (its mesh failed validation), a mass that is not positive, a
        tensor that is not positive definite, violates the triangle inequality or cannot fit
        the body's extent.
    """
    if file_format not in FORMATS:
        raise InputValueError("simulator format", f"one of {', '.join(FORMATS)}", file_format)
    if form not in FORMS:
        raise InputValueError("--inertial-form", f"one of {', '.join(FORMS)}", form)
    output_path = Path(output_path)
    folder = output_path.resolve().parent
    taken = {str(body.get("name")) for body in doc["bodies"]}
    root_name = _unique_name("assembly_root", taken)
    taken.add(root_name)
    links: list[_Link] = []
    copies: dict[Path, MeshCopy] = {}
    warnings: list[str] = []
    for index, body in enumerate(doc["bodies"]):
        label = str(body.get("name") or f"body{index}")
        (mass, com, tensor, moments, axes), warning = checked_block(body, label)
        if warning is not None:
            warnings.append(warning)
        mesh = body.get("mesh")
        if body.get("kind", "mesh") == "mesh" and body.get("source"):
            placement = body["placement"]
            rotation = np.array(placement["rotation"], dtype=np.float64)
            translation = np.array(placement["translation"], dtype=np.float64)
            source = Path(body["source"]).resolve()
            if copy_meshes and mesh["format"] not in PORTABLE_MESH_FORMATS:
                target = folder / f"{output_path.stem}.{source.stem}.stl"
                copies.setdefault(source, MeshCopy(source, target))
                source = copies[source].target
            reference = Path(os.path.relpath(source, folder)).as_posix()
            scale = metres_per(mesh["length_unit"])
        else:  # a point mass: its link frame at its centre of mass, assembly axes
            rotation, translation = np.eye(3), np.array(com, dtype=np.float64)
            com = np.zeros(3)
            reference, scale = None, 1.0
        length = float(np.max(np.abs(translation))) if np.any(translation) else 0.0
        joint_name = _unique_name(f"{label}_fixed", taken)  # SDFormat: one namespace for links and joints
        taken.add(joint_name)
        links.append(_Link(label, mass, np.asarray(com), tensor, moments, axes, rotation, translation, joint_name,
                           reference, scale, max(length, float(np.max(np.abs(com))))))  # fmt: skip
    name = (doc.get("assembly") or {}).get("name") or "meshprops_assembly"
    writer = {"urdf": _urdf, "sdf": _sdf, "mjcf": _mjcf}[file_format]
    root = writer(name, root_name, links, form)
    ET.indent(root, space="  ")
    text = '<?xml version="1.0"?>\n' + _header(file_format, root_name) + ET.tostring(root, encoding="unicode") + "\n"
    return SimulatorModel(text, tuple(copies.values()), tuple(warnings))


def _header(file_format: str, root_name: str) -> str:
    loading = {
        "urdf": (
            f"The root link '{root_name}' has no joint to the world: load it with a floating (free-flyer) root "
            "joint for a free body, or attach it to the world for a fixed base (some libraries otherwise merge every "
            "link into the world)."
        ),
        "sdf": f"The root link '{root_name}' is free; add a fixed joint from 'world' to it for a fixed base.",
        "mjcf": (
            f"The root body '{root_name}' is welded to the world (a fixed base); put <freejoint/> inside it for a "
            "free body."
        ),
    }[file_format]
    return (
        f"<!-- meshprops {__version__}: complete model, SI units (m, kg, kg*m^2). One link per mesh body, in the "
        "mesh's own frame, fixed to the root at the manifest placement; point masses fixed at their centres of mass. "
        "Inertia values are tensor entries about each link's centre of mass (off-diagonals = minus the products of "
        f"inertia). {loading} Mass properties from geometry assume uniform density: confirm by weighing and "
        "measurement. -->\n"
    )


def _inertial_frame(link: _Link, form: str) -> tuple[np.ndarray, np.ndarray]:
    """(rotation of the inertial frame in the link frame, tensor in those axes)."""
    if form == "full":
        return np.eye(3), link.tensor
    return np.asarray(link.axes).T, np.diag(link.moments)


_SIX = SIX_ENTRIES


def _six(tensor) -> dict[str, str]:
    scale = float(np.max(np.abs(tensor)))
    return {key: _number(tensor[i, j], scale) for key, (i, j) in _SIX}


# URDF -----------------------------------------------------------------------


def _urdf(name: str, root_name: str, links: list[_Link], form: str) -> ET.Element:
    robot = ET.Element("robot", {"name": name})
    root = ET.SubElement(robot, "link", {"name": root_name})
    _urdf_inertial(root, "0 0 0", "0 0 0", "0", {key: "0" for key, _ in _SIX})
    for link in links:
        element = ET.SubElement(robot, "link", {"name": link.name})
        rotation, tensor = _inertial_frame(link, form)
        _urdf_inertial(element, _vector(link.center_of_mass, link.length_scale), _angles(rpy_from_rotation(rotation)),
                       repr(float(link.mass)), _six(tensor))  # fmt: skip
        if link.mesh_reference is not None:
            for kind in ("visual", "collision"):
                holder = ET.SubElement(element, kind)
                ET.SubElement(holder, "origin", {"xyz": "0 0 0", "rpy": "0 0 0"})
                geometry = ET.SubElement(holder, "geometry")
                ET.SubElement(geometry, "mesh", {"filename": link.mesh_reference, "scale": _vector([link.mesh_scale] * 3, 0)})
        joint = ET.SubElement(robot, "joint", {"name": link.joint_name, "type": "fixed"})
        ET.SubElement(joint, "parent", {"link": root_name})
        ET.SubElement(joint, "child", {"link": link.name})
        ET.SubElement(joint, "origin", {
            "xyz": _vector(link.translation, 0.0), "rpy": _angles(rpy_from_rotation(link.rotation)),
        })  # fmt: skip
    return robot


def _urdf_inertial(link: ET.Element, xyz: str, rpy: str, mass: str, six: dict[str, str]) -> None:
    inertial = ET.SubElement(link, "inertial")
    ET.SubElement(inertial, "origin", {"xyz": xyz, "rpy": rpy})
    ET.SubElement(inertial, "mass", {"value": mass})
    ET.SubElement(inertial, "inertia", six)


# SDFormat -------------------------------------------------------------------


def _sdf(name: str, root_name: str, links: list[_Link], form: str) -> ET.Element:
    sdf = ET.Element("sdf", {"version": "1.9"})
    model = ET.SubElement(sdf, "model", {"name": name})
    root = ET.SubElement(model, "link", {"name": root_name})
    _sdf_inertial(root, "0 0 0 0 0 0", "0", {key: "0" for key, _ in _SIX})
    for link in links:
        element = ET.SubElement(model, "link", {"name": link.name})
        ET.SubElement(element, "pose", {"relative_to": root_name}).text = (
            _vector(link.translation, 0.0) + " " + _angles(rpy_from_rotation(link.rotation))
        )
        rotation, tensor = _inertial_frame(link, form)
        pose = _vector(link.center_of_mass, link.length_scale) + " " + _angles(rpy_from_rotation(rotation))
        _sdf_inertial(element, pose, repr(float(link.mass)), _six(tensor))
        if link.mesh_reference is not None:
            for kind in ("visual", "collision"):
                holder = ET.SubElement(element, kind, {"name": kind})
                mesh = ET.SubElement(ET.SubElement(holder, "geometry"), "mesh")
                ET.SubElement(mesh, "uri").text = link.mesh_reference
                ET.SubElement(mesh, "scale").text = _vector([link.mesh_scale] * 3, 0)
        joint = ET.SubElement(model, "joint", {"name": link.joint_name, "type": "fixed"})
        ET.SubElement(joint, "parent").text = root_name
        ET.SubElement(joint, "child").text = link.name
    return sdf


def _sdf_inertial(link: ET.Element, pose: str, mass: str, six: dict[str, str]) -> None:
    inertial = ET.SubElement(link, "inertial")
    ET.SubElement(inertial, "pose").text = pose
    ET.SubElement(inertial, "mass").text = mass
    inertia = ET.SubElement(inertial, "inertia")
    for key, _ in _SIX:
        ET.SubElement(inertia, key).text = six[key]


# MJCF -----------------------------------------------------------------------


def _mjcf(name: str, root_name: str, links: list[_Link], form: str) -> ET.Element:
    mujoco = ET.Element("mujoco", {"model": name})
    # Inertias come from the inertial elements only, never from the geoms' own density.
    ET.SubElement(mujoco, "compiler", {"angle": "radian", "inertiafromgeom": "false"})
    asset = ET.SubElement(mujoco, "asset")
    meshes: dict[tuple[str, float], str] = {}
    for link in links:
        if link.mesh_reference is not None and (link.mesh_reference, link.mesh_scale) not in meshes:
            mesh_name = _unique_name(Path(link.mesh_reference).stem, set(meshes.values()))
            meshes[(link.mesh_reference, link.mesh_scale)] = mesh_name
            ET.SubElement(asset, "mesh", {
                "name": mesh_name, "file": link.mesh_reference, "scale": _vector([link.mesh_scale] * 3, 0),
            })  # fmt: skip
    if not meshes:
        mujoco.remove(asset)
    worldbody = ET.SubElement(mujoco, "worldbody")
    root = ET.SubElement(worldbody, "body", {"name": root_name, "pos": "0 0 0"})
    ET.SubElement(root, "inertial", {"pos": "0 0 0", "mass": "0", "diaginertia": "0 0 0"})
    for link in links:
        body = ET.SubElement(root, "body", {
            "name": link.name, "pos": _vector(link.translation, 0.0),
            "quat": _vector(quaternion_from_rotation(link.rotation), 1.0),
        })  # fmt: skip
        position = _vector(link.center_of_mass, link.length_scale)
        if form == "full":
            tensor = link.tensor
            scale = float(np.max(np.abs(tensor)))
            full = [tensor[0, 0], tensor[1, 1], tensor[2, 2], tensor[0, 1], tensor[0, 2], tensor[1, 2]]
            attributes = {"pos": position, "mass": repr(float(link.mass)), "fullinertia": " ".join(_number(v, scale) for v in full)}
        else:
            attributes = {
                "pos": position, "quat": _vector(quaternion_from_rotation(np.asarray(link.axes).T), 1.0),
                "mass": repr(float(link.mass)), "diaginertia": _vector(link.moments, 0.0),
            }  # fmt: skip
        ET.SubElement(body, "inertial", attributes)
        if link.mesh_reference is not None:
            ET.SubElement(body, "geom", {"type": "mesh", "mesh": meshes[(link.mesh_reference, link.mesh_scale)]})
    return mujoco
