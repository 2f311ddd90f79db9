"""Write new inertials into a model's own bytes, changing nothing else.

:func:`meshprops.measure.robot_model.load_robot_model` records the byte span of each
link's inertial element (or, where a link has none, the offset just after the
link's start tag). :func:`filled_model_bytes` replaces exactly those spans with
new inertial elements in the model's own format and indentation; every other
byte (comments, joints, attribute order, white space) is copied as it was.
Filling a filled model again with the same values reproduces it byte for byte:
the new element's text depends only on the values and on the indentation of the
line it starts on.

Every element is written in the link frame with an unrotated inertial frame:
URDF ``<origin xyz rpy="0 0 0"/>`` and the six entries ``ixx ixy ixz iyy iyz izz``;
SDFormat ``<pose>x y z 0 0 0</pose>`` and ``<ixx>`` ... ``<izz>``; MJCF
``pos`` and ``fullinertia`` in the order ``M(1,1) M(2,2) M(3,3) M(1,2) M(1,3) M(2,3)``.
All are tensor entries (off-diagonals are minus the products of inertia), SI.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .simulators import clean_number


@dataclass(frozen=True, slots=True, eq=False)
class NewInertial:
    """An inertial to write, in the link frame.

    Attributes
    ----------
    mass : kg
    center_of_mass : (3,) m, link frame
    inertia_about_com : (3, 3) kg·m², about the centre of mass, link axes, tensor convention
    length_scale : m, size of the link's geometry; centre-of-mass components below 1e-12 of it print as 0
    """

    mass: float
    center_of_mass: np.ndarray
    inertia_about_com: np.ndarray
    length_scale: float


def _texts(inertial: NewInertial) -> tuple[str, list[str], dict[str, str]]:
    com = np.asarray(inertial.center_of_mass, dtype=np.float64)
    tensor = np.asarray(inertial.inertia_about_com, dtype=np.float64)
    length = max(float(np.max(np.abs(com))), float(inertial.length_scale))
    inertia_scale = float(np.max(np.abs(tensor)))
    position = [clean_number(v, length) for v in com]
    entries = {
        key: clean_number(tensor[i, j], inertia_scale)
        for key, (i, j) in (("ixx", (0, 0)), ("ixy", (0, 1)), ("ixz", (0, 2)), ("iyy", (1, 1)), ("iyz", (1, 2)), ("izz", (2, 2)))
    }
    return repr(float(inertial.mass)), position, entries


def inertial_element(file_format: str, inertial: NewInertial, indent: str, step: str) -> str:
    """The text of one inertial element; its first line unindented, the others under ``indent``."""
    mass, position, entries = _texts(inertial)
    if file_format == "urdf":
        inertia = " ".join(f'{key}="{entries[key]}"' for key in ("ixx", "ixy", "ixz", "iyy", "iyz", "izz"))
        lines = [
            "<inertial>",
            f'{step}<origin xyz="{" ".join(position)}" rpy="0 0 0"/>',
            f'{step}<mass value="{mass}"/>',
            f"{step}<inertia {inertia}/>",
            "</inertial>",
        ]
    elif file_format == "sdf":
        lines = [
            "<inertial>",
            f"{step}<pose>{' '.join(position)} 0 0 0</pose>",
            f"{step}<mass>{mass}</mass>",
            f"{step}<inertia>",
            *(f"{step}{step}<{key}>{entries[key]}</{key}>" for key in ("ixx", "ixy", "ixz", "iyy", "iyz", "izz")),
            f"{step}</inertia>",
            "</inertial>",
        ]
    elif file_format == "mjcf":
        full = " ".join(entries[key] for key in ("ixx", "iyy", "izz", "ixy", "ixz", "iyz"))
        lines = [f'<inertial pos="{" ".join(position)}" mass="{mass}" fullinertia="{full}"/>']
    else:
        raise ValueError(f"model format: expected urdf, sdf or mjcf, got {file_format!r}")
    return lines[0] + "".join("\n" + indent + line for line in lines[1:])


def filled_model_bytes(model, inertials: dict[int, NewInertial]) -> bytes:
    """The model's bytes with the inertial of each link ``index -> NewInertial`` replaced or added.

    Parameters
    ----------
    model : :class:`meshprops.measure.robot_model.RobotModel`
    inertials : new inertials by index into ``model.links``; other links are left as they are

    Returns
    -------
    bytes
        The file with only those inertial elements changed (UTF-8 for the new text).
    """
    data = model.data
    edits: list[tuple[int, int, bytes]] = []
    for index, inertial in inertials.items():
        link = model.links[index]
        if link.inertial_span is not None:
            start, end = link.inertial_span
            indent = _line_indent(data, start)
            text = inertial_element(model.format, inertial, indent, link.indent_step)
        else:
            start = end = link.insert_at
            if data[start - 2 : start] == b"/>":
                raise ValueError(f"link {link.name!r} is an empty element: no place for an inertial")
            text = "\n" + link.indent + inertial_element(model.format, inertial, link.indent, link.indent_step)
        edits.append((start, end, text.encode("utf-8")))
    edits.sort()
    pieces = []
    position = 0
    for start, end, text in edits:
        if start < position:
            raise ValueError("overlapping inertial spans")
        pieces += [data[position:start], text]
        position = end
    pieces.append(data[position:])
    return b"".join(pieces)


def _line_indent(data: bytes, position: int) -> str:
    line_start = data.rfind(b"\n", 0, position) + 1
    prefix = data[line_start:position]
    blank = len(prefix) - len(prefix.lstrip(b" \t"))
    return prefix[:blank].decode("ascii")
