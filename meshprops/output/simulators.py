"""Inertial blocks for robot and physics simulators: URDF, SDF and MJCF.

Fed by the same body dictionaries as the JSON document (:mod:`meshprops.output.serialize`,
:mod:`meshprops.assembly_emit`), so the blocks can never disagree with it. All
three formats take SI values (m, kg, kg·m²) and the inertia **tensor** entries
about the centre of mass: ``ixy = I_xy = −∫ x y dm`` (minus the product of
inertia), the same convention as meshprops' JSON. What differs, from each
format's specification (recalled from memory, not re-read while writing this):

URDF (ROS ``urdf/XML/link`` specification)
    ``<inertial><origin xyz rpy/><mass value/><inertia ixx ixy ixz iyy iyz izz/></inertial>``.
    ``origin`` is the pose of the inertial frame relative to the link frame; its
    ``xyz`` must be the centre of mass; ``rpy`` (fixed-axis roll about x, pitch
    about y, yaw about z) orients the axes the six values are given in. Six
    values in the order xx, xy, xz, yy, yz, zz.
SDF (sdformat.org ``link/inertial``)
    ``<inertial><pose>x y z roll pitch yaw</pose><mass/><inertia><ixx/><ixy/><ixz/>
    <iyy/><iyz/><izz/></inertia></inertial>``. Same meaning of the pose (relative
    to the link frame, same rpy convention) and of the six entries as URDF.
MJCF (MuJoCo XML reference, ``body/inertial``)
    ``<inertial pos mass fullinertia="ixx iyy izz ixy ixz iyz"/>``: note the order,
    diagonal first, then xy, xz, yz; the matrix is in the body frame. The
    principal form is ``diaginertia="I1 I2 I3"`` with ``quat="w x y z"``
    (scalar first) orienting the inertial frame in the body frame. MuJoCo's
    compiler rejects inertias that are not positive definite or that break
    ``A + B >= C``.

Frames used here: a mesh body's block is in **its own mesh frame** (the frame a
link's visual/collision mesh is given in); an assembly total's block is in the
assembly frame. Both forms, ``full`` (six tensor entries in the frame's axes, no
rotation) and ``principal`` (three principal moments plus the orientation of
the principal axes), describe the same tensor.

Before anything is printed every block is checked: numbers present (the mesh
passed validation), mass > 0, the tensor positive definite and its principal
moments meeting the triangle inequality ``I1 + I2 >= I3`` within
``TRIANGLE_RTOL`` of the trace (round-off near equality, e.g. a thin plate, is
common). A failure raises :class:`SimulatorExportError`; nothing is printed.

Plausibility ("equivalent box"): the uniform solid box with the same mass and
principal moments has sides ``a_k = sqrt(6 (I_i + I_j − I_k) / m)`` along the
principal axes (handbook box formula ``I = m (b² + c²) / 12`` inverted). For
any mass distribution that fits inside an extent ``e_k`` along axis ``k`` the
variance of the coordinate is at most ``e_k² / 4``, so ``a_k <= sqrt(3) e_k``:
a larger equivalent box is **impossible** for that geometry and is refused (a
placeholder inertia or an inertia typed in the wrong unit). An equivalent box
smaller than ``LOW_RATIO`` of the extent on every axis is possible (mass
concentrated near the centre) but unusual and gives a warning.
"""

from __future__ import annotations

import xml.etree.ElementTree as ET
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..errors import InputValueError, SimulatorExportError
from ..physics.rotations import quaternion_from_rotation, rpy_from_rotation
from ..version import __version__
from .numbers import ROUND_OFF_RELATIVE, clean

FORMATS = ("urdf", "sdf", "mjcf")


FORMS = ("full", "principal")


#: Positive-definite and triangle-inequality tolerance, relative to the trace.
TRIANGLE_RTOL = 1e-9




@dataclass(frozen=True, slots=True, eq=False)
class SimulatorExport:
    """Text of the inertial blocks and the warnings raised while writing them."""

    text: str
    warnings: tuple[str, ...]


#: Entries smaller than this fraction of their group's scale are round-off and print as 0.
ROUND_OFF = ROUND_OFF_RELATIVE


def clean_number(value: float, scale: float) -> str:
    """Shortest round-trip text of ``value``; ``0`` where it is round-off below ``ROUND_OFF * scale``
    (the shared rule of :func:`meshprops.output.numbers.clean`, which tables use too)."""
    cleaned = clean(float(value), scale)
    return "0" if cleaned == 0.0 else repr(cleaned)


def _number(value: float) -> str:
    return clean_number(value, 0.0)


def _numbers(values, scale: float = 0.0) -> str:
    """Numbers of one group (a position, a tensor's entries): round-off below 1e-12 of the largest prints as 0."""
    values = [float(v) for v in values]
    scale = max([scale, *(abs(v) for v in values)])
    return " ".join(clean_number(v, scale) for v in values)


def _angles(values) -> str:
    return _numbers(values, 1.0)


def _six(values) -> dict[str, str]:
    """``ixx ixy ixz iyy iyz izz`` of a symmetric (3, 3) tensor, round-off relative to its largest entry."""
    scale = float(np.max(np.abs(values)))
    return {key: clean_number(values[i, j], scale) for key, (i, j) in SIX_ENTRIES}


SIX_ENTRIES = (("ixx", (0, 0)), ("ixy", (0, 1)), ("ixz", (0, 2)), ("iyy", (1, 1)), ("iyz", (1, 2)), ("izz", (2, 2)))


def _label(body: dict, index: int) -> str:
    if body.get("name"):
        return str(body["name"])
    if body.get("source"):
        return Path(body["source"]).stem
    return f"body{index}"


def _block_values(body: dict, label: str) -> tuple[float, np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Mass, centre of mass, tensor, principal moments and axes of one body in its block frame, checked."""
    frame = body.get("body_frame") or body
    mass = body.get("mass")
    if mass is None or frame.get("inertia_about_com") is None:
        raise SimulatorExportError(f"{label}: no numbers to export: its mesh failed validation")
    mass = float(mass)
    com = np.array(frame["center_of_mass"], dtype=np.float64)
    tensor = np.array(frame["inertia_about_com"], dtype=np.float64)
    moments = np.array(frame["principal_moments"], dtype=np.float64)
    axes = np.array(frame["principal_axes"], dtype=np.float64)
    if not mass > 0:
        raise SimulatorExportError(f"{label}: mass {mass!r} kg is not positive; simulators need a mass > 0")
    eigen = np.linalg.eigvalsh((tensor + tensor.T) / 2.0)
    slack = TRIANGLE_RTOL * max(float(np.trace(tensor)), 0.0)
    if not eigen[0] > slack:
        raise SimulatorExportError(
            f"{label}: inertia tensor is not positive definite (smallest principal moment {eigen[0]:.6g} kg*m^2); "
            "simulators reject it (a point mass needs an inertia or box_size of its own)"
        )
    if eigen[0] + eigen[1] < eigen[2] - slack:
        raise SimulatorExportError(
            f"{label}: principal moments {eigen[0]:.6g}, {eigen[1]:.6g}, {eigen[2]:.6g} kg*m^2 violate the "
            "triangle inequality I1 + I2 >= I3; no physical body has them"
        )
    return mass, com, tensor, moments, axes


def checked_block(body: dict, label: str):
    """``((mass, com, tensor, moments, axes), warning or None)`` of one body, or raise.

    Raises :class:`SimulatorExportError` for the refusals of :func:`_block_values` and for an
    ``impossible`` plausibility; an ``unusual`` one is returned as a warning.
    """
    values = _block_values(body, label)
    plausibility = body.get("plausibility")
    if plausibility and plausibility["status"] == "impossible":
        raise SimulatorExportError(f"{label}: implausible inertia: {plausibility['message']}")
    warning = f"{label}: {plausibility['message']}" if plausibility and plausibility["status"] == "unusual" else None
    return values, warning


def inertial_blocks(doc: dict, file_format: str, *, form: str = "full") -> SimulatorExport:
    """Write the inertial element of every body (and of the total, if any) of a JSON document.

    Parameters
    ----------
    doc : a measurement document (:func:`meshprops.output.serialize.document` or an assembly document)
    file_format : ``"urdf"``, ``"sdf"`` or ``"mjcf"``
    form : ``"full"`` (six tensor entries, axes of the frame) or ``"principal"``
        (principal moments plus the orientation of the principal axes)

    Raises
    ------
    SimulatorExportError
        A body without numbers, with a non-positive mass, a tensor that is not
        positive definite or that violates the triangle inequality, or an
        equivalent box that cannot fit the body's extent.
    """
    if file_format not in FORMATS:
        raise InputValueError("simulator format", f"one of {', '.join(FORMATS)}", file_format)
    if form not in FORMS:
        raise InputValueError("--inertial-form", f"one of {', '.join(FORMS)}", form)
    items = [(_label(body, k), body, "its own mesh frame" if body.get("source") else "the assembly frame")
             for k, body in enumerate(doc["bodies"])]  # fmt: skip
    if doc.get("total") is not None:
        items.append(("total", doc["total"], "the assembly frame"))

    checked = []
    warnings: list[str] = []
    for label, body, frame_text in items:
        values, warning = checked_block(body, label)
        if warning is not None:
            warnings.append(warning)
        checked.append((label, frame_text, values))

    name = (doc.get("assembly") or {}).get("name") or "meshprops"
    root = {"urdf": _urdf_root, "sdf": _sdf_root, "mjcf": _mjcf_root}[file_format](name)
    container = root if file_format == "urdf" else root[0]
    header = (
        f" meshprops {__version__}: inertial blocks ({form} form), SI units (m, kg, kg*m^2). Inertia values are "
        "tensor entries about the centre of mass (off-diagonals = minus the products of inertia). A mesh body's "
        "block is in its own mesh frame; the total's in the assembly frame. Paste each inertial element into "
        "your model; this file is not a complete model. "
    )
    root.insert(0, ET.Comment(header))
    for label, frame_text, (mass, com, tensor, moments, axes) in checked:
        container.append(ET.Comment(f" {label}: frame = {frame_text} "))
        writer = {"urdf": _urdf_link, "sdf": _sdf_link, "mjcf": _mjcf_body}[file_format]
        container.append(writer(label, mass, com, tensor, moments, axes, form))
    ET.indent(root, space="  ")
    text = '<?xml version="1.0"?>\n' + ET.tostring(root, encoding="unicode") + "\n"
    return SimulatorExport(text, tuple(warnings))


def _urdf_root(name: str) -> ET.Element:
    return ET.Element("robot", {"name": name})


def _sdf_root(name: str) -> ET.Element:
    root = ET.Element("sdf", {"version": "1.9"})
    ET.SubElement(root, "model", {"name": name})
    return root


def _mjcf_root(name: str) -> ET.Element:
    root = ET.Element("mujoco", {"model": name})
    ET.SubElement(root, "worldbody")
    return root


def _orientation(form: str, tensor, moments, axes):
    """(rotation of the inertial frame in the block frame, its six-value tensor) for a form."""
    if form == "full":
        return np.eye(3), tensor
    # Principal axes are the rows of R with R I Rᵀ = diag: the inertial frame's axes,
    # written in the block frame, are the columns of Rᵀ.
    return np.asarray(axes).T, np.diag(moments)


def _urdf_link(label, mass, com, tensor, moments, axes, form) -> ET.Element:
    rotation, values = _orientation(form, tensor, moments, axes)
    link = ET.Element("link", {"name": label})
    inertial = ET.SubElement(link, "inertial")
    ET.SubElement(inertial, "origin", {"xyz": _numbers(com), "rpy": _angles(rpy_from_rotation(rotation))})
    ET.SubElement(inertial, "mass", {"value": _number(mass)})
    ET.SubElement(inertial, "inertia", _six(values))
    return link


def _sdf_link(label, mass, com, tensor, moments, axes, form) -> ET.Element:
    rotation, values = _orientation(form, tensor, moments, axes)
    link = ET.Element("link", {"name": label})
    inertial = ET.SubElement(link, "inertial")
    ET.SubElement(inertial, "pose").text = _numbers(com) + " " + _angles(rpy_from_rotation(rotation))
    ET.SubElement(inertial, "mass").text = _number(mass)
    inertia = ET.SubElement(inertial, "inertia")
    for key, text in _six(values).items():
        ET.SubElement(inertia, key).text = text
    return link


def _mjcf_body(label, mass, com, tensor, moments, axes, form) -> ET.Element:
    body = ET.Element("body", {"name": label})
    if form == "full":
        t = tensor
        attributes = {
            "pos": _numbers(com),
            "mass": _number(mass),
            "fullinertia": _numbers([t[0, 0], t[1, 1], t[2, 2], t[0, 1], t[0, 2], t[1, 2]]),
        }
    else:
        attributes = {
            "pos": _numbers(com),
            "quat": _angles(quaternion_from_rotation(np.asarray(axes).T)),
            "mass": _number(mass),
            "diaginertia": _numbers(moments),
        }
    ET.SubElement(body, "inertial", attributes)
    return body
