"""Read a robot or simulator model (URDF, SDFormat, MJCF) far enough to fill its inertials.

For each link (MJCF: each body) this finds the mesh files its geometry points at
(the collision meshes; where a link has none, its visual meshes), each with the
placement of the mesh in the link frame and the scale of its coordinates, the
inertial the file holds now, and the byte span of that inertial element in the
original file, so that :mod:`meshprops.output.inertial_fill` can replace exactly
those bytes and nothing else.

Frames, from each format's documentation:

URDF (``link`` element)
    ``collision/origin`` and ``visual/origin`` (``xyz``, ``rpy``) are the pose of
    the geometry's frame relative to the link frame; ``rpy`` is fixed-axis roll
    (x), pitch (y), yaw (z), ``R = Rz(yaw) Ry(pitch) Rx(roll)``. ``mesh/scale``
    multiplies the mesh file's coordinates. ``inertial/origin`` is the pose of the
    inertial frame (at the centre of mass) relative to the link frame, and
    ``inertia`` gives ``ixx ixy ixz iyy iyz izz`` in that frame's axes.
SDFormat (``link`` element)
    ``collision/pose`` and ``visual/pose`` (``x y z roll pitch yaw``, same rpy
    convention; ``degrees="true"`` for degrees) relative to the link frame unless
    ``relative_to`` names another frame (refused here); ``mesh/uri`` and
    ``mesh/scale``; ``inertial/pose`` is the centre-of-mass frame relative to the
    link frame, with ``inertia/ixx ... izz``. SDFormat's defaults where an element
    is missing are mass 1 and ``ixx = iyy = izz = 1`` (from memory).
MJCF (``body`` element)
    ``geom`` with ``type="mesh"`` (collision unless both ``contype`` and
    ``conaffinity`` are 0; default classes applied: the geom's ``class``, else the
    nearest body's ``childclass``, else ``main``) and ``pos`` plus one of ``quat`` (``w x y z``, scalar
    first), ``axisangle``, ``euler`` (sequence ``compiler/eulerseq``, angles in
    ``compiler/angle``, degrees by default); ``asset/mesh`` gives the file
    (under ``compiler/meshdir`` or ``assetdir``) and ``scale``. MuJoCo keeps the
    mesh's file coordinates in the geom frame. ``inertial`` holds ``pos``,
    ``mass`` and ``diaginertia`` (with an orientation) or ``fullinertia``
    (order ``M(1,1) M(2,2) M(3,3) M(1,2) M(1,3) M(2,3)``).

A mesh vertex ``v`` of the file lies at ``R (s ⊙ v) + t`` in the link frame, with
``s`` the scale, ``R`` and ``t`` the geometry's placement. Inertia values are
tensor entries (off-diagonals are minus the products of inertia) in all three.
"""

from __future__ import annotations

import math
import xml.parsers.expat
from dataclasses import dataclass
from pathlib import Path
from urllib.parse import unquote, urlparse

import numpy as np

from ..errors import ModelFileError
from ..physics.mass import rotate_tensor
from ..physics.rotations import (
    rotation_from_axis_angle,
    rotation_from_quaternion,
    rotation_from_rpy,
)

MODEL_FORMATS = ("urdf", "sdf", "mjcf")
#: Mesh file formats meshprops reads.
MESH_SUFFIXES = (".stl", ".obj", ".ply")


# --------------------------------------------------------------------------- XML with byte spans


class _Node:
    """An XML element with the byte span ``[start, end)`` of its whole text in the file."""

    __slots__ = ("tag", "attributes", "children", "text", "start", "end", "line", "parent")

    def __init__(self, tag: str, attributes: dict, start: int, line: int, parent: _Node | None) -> None:
        self.tag = tag
        self.attributes = attributes
        self.children: list[_Node] = []
        self.text = ""
        self.start = start
        self.end = start
        self.line = line
        self.parent = parent

    def find(self, tag: str) -> _Node | None:
        return next((child for child in self.children if child.tag == tag), None)

    def find_all(self, tag: str) -> list[_Node]:
        return [child for child in self.children if child.tag == tag]

    def iterate(self, tag: str):
        for child in self.children:
            if child.tag == tag:
                yield child
            yield from child.iterate(tag)


def _tag_end(data: bytes, position: int) -> int:
    """Index just after the ``>`` that closes the tag starting at ``position`` (quotes respected)."""
    quote = None
    for index in range(position, len(data)):
        byte = data[index]
        if quote is not None:
            if byte == quote:
                quote = None
        elif byte in (0x22, 0x27):  # " '
            quote = byte
        elif byte == 0x3E:  # >
            return index + 1
    return len(data)


def parse_xml_with_spans(data: bytes, source: str) -> _Node:
    """Parse ``data`` and return its root element, every element carrying its byte span."""
    parser = xml.parsers.expat.ParserCreate()
    stack: list[_Node] = []
    root: list[_Node] = []

    def start(tag, attributes):
        node = _Node(tag, dict(attributes), parser.CurrentByteIndex, parser.CurrentLineNumber, stack[-1] if stack else None)
        if stack:
            stack[-1].children.append(node)
        else:
            root.append(node)
        stack.append(node)

    def end(tag):
        node = stack.pop()
        start_tag_end = _tag_end(data, node.start)
        if data[start_tag_end - 2 : start_tag_end] == b"/>":  # an empty element <x/>
            node.end = start_tag_end
        else:  # expat reports an end tag </x> at its '<'
            node.end = _tag_end(data, parser.CurrentByteIndex)

    def text(content):
        if stack:
            stack[-1].text += content

    parser.StartElementHandler = start
    parser.EndElementHandler = end
    parser.CharacterDataHandler = text
    try:
        parser.Parse(data, True)
    except xml.parsers.expat.ExpatError as error:
        raise ModelFileError(source, f"not well-formed XML ({xml.parsers.expat.errors.messages[error.code]})", line=error.lineno) from None
    if not root:
        raise ModelFileError(source, "no XML element")
    return root[0]


def _line_indent(data: bytes, position: int) -> str:
    """The spaces and tabs between the start of the line holding ``position`` and the first non-blank."""
    line_start = data.rfind(b"\n", 0, position) + 1
    prefix = data[line_start:position]
    blank = len(prefix) - len(prefix.lstrip(b" \t"))
    return prefix[:blank].decode("ascii")


# --------------------------------------------------------------------------- results


@dataclass(frozen=True, slots=True, eq=False)
class MeshGeometry:
    """One mesh a link's geometry points at, and where it sits in the link frame.

    Attributes
    ----------
    reference : the file name as written in the model (``package://``, ``model://``, relative, ...)
    path : the mesh file it resolves to
    element : ``"collision"`` or ``"visual"`` (MJCF: by ``contype``/``conaffinity``)
    rotation : (3, 3) rotation ``R`` of the mesh frame in the link frame (columns: mesh axes in link axes)
    translation : (3,) m, origin of the mesh frame in the link frame
    scale : (3,) factors applied to the file's coordinates (0.001 for a millimetre file)
    line : 1-based line of the geometry element in the model
    """

    reference: str
    path: Path
    element: str
    rotation: np.ndarray
    translation: np.ndarray
    scale: np.ndarray
    line: int


@dataclass(frozen=True, slots=True, eq=False)
class LinkInertial:
    """An inertial as a model states it, expressed in the link frame.

    Attributes
    ----------
    mass : kg
    center_of_mass : (3,) m, link frame
    inertia_about_com : (3, 3) kg·m², about the centre of mass, link axes, tensor convention
    """

    mass: float
    center_of_mass: np.ndarray
    inertia_about_com: np.ndarray


@dataclass(frozen=True, slots=True, eq=False)
class ModelLink:
    """One link (MJCF: body) of a model.

    Attributes
    ----------
    name : the link's name (MJCF: ``body[k]`` for an unnamed body, k counting from 0 in file order)
    line : 1-based line of the link element
    meshes : the meshes its collision (else visual) geometry points at; empty: no mesh
    ignored_geometry : number of collision/visual geometries that are not meshes (boxes, ...)
    inertial : the inertial the model holds now, or ``None`` (none written)
    inertial_span : ``(start, end)`` byte span of the inertial element in the file, or ``None``
    insert_at : byte offset where a new inertial goes when there is none (just after the link's start tag)
    indent : indentation of the link's children; ``indent_step`` : one more level
    """

    name: str
    line: int
    meshes: tuple[MeshGeometry, ...]
    ignored_geometry: int
    inertial: LinkInertial | None
    inertial_span: tuple[int, int] | None
    insert_at: int
    indent: str
    indent_step: str


@dataclass(frozen=True, slots=True, eq=False)
class RobotModel:
    """A model file as read: its format, its bytes and its links in file order."""

    path: Path
    format: str
    data: bytes
    links: tuple[ModelLink, ...]


# --------------------------------------------------------------------------- number parsing


def _numbers(text: str | None, count: int, what: str, source: str, line: int, default=None) -> np.ndarray:
    if text is None:
        if default is None:
            raise ModelFileError(source, f"{what}: missing", line=line)
        return np.array(default, dtype=np.float64)
    try:
        values = [float(part) for part in text.split()]
    except ValueError:
        raise ModelFileError(source, f"{what}: expected {count} numbers, got {text!r}", line=line) from None
    if len(values) != count or not all(math.isfinite(v) for v in values):
        raise ModelFileError(source, f"{what}: expected {count} finite numbers, got {text!r}", line=line)
    return np.array(values, dtype=np.float64)


def _tensor(xx, xy, xz, yy, yz, zz) -> np.ndarray:
    return np.array([[xx, xy, xz], [xy, yy, yz], [xz, yz, zz]], dtype=np.float64)


# --------------------------------------------------------------------------- mesh file resolution


def resolve_mesh_reference(reference: str, model_folder: Path, source: str, line: int) -> Path:
    """The mesh file a model's file name or URI points at.

    ``package://NAME/rest`` (URDF) and ``model://NAME/rest`` (SDFormat) are looked
    for as ``NAME/rest`` in the model's folder and each folder above it, then as
    ``rest`` in those folders; ``file://`` URIs and plain paths (relative to the
    model's folder) are taken as they are.
    """
    parsed = urlparse(reference)
    if parsed.scheme in ("package", "model"):
        rest = unquote(parsed.path).lstrip("/")
        candidates = []
        for folder in (model_folder, *model_folder.parents):
            candidates.append(folder / parsed.netloc / rest)
            if folder.name == parsed.netloc:
                candidates.append(folder / rest)
        for folder in (model_folder, *model_folder.parents):
            candidates.append(folder / rest)
        for candidate in candidates:
            if candidate.is_file():
                return candidate
        raise ModelFileError(source, f"mesh {reference!r} not found in or above the model's folder", line=line)
    if parsed.scheme == "file":
        path = Path(unquote(parsed.path))
    elif parsed.scheme and len(parsed.scheme) > 1:
        raise ModelFileError(source, f"mesh {reference!r}: URI scheme {parsed.scheme!r} not supported", line=line)
    else:
        path = Path(reference)
        if not path.is_absolute():
            path = model_folder / path
    if not path.is_file():
        raise ModelFileError(source, f"mesh {reference!r} not found (looked for {path})", line=line)
    return path


# --------------------------------------------------------------------------- the formats


def detect_model_format(root_tag: str, source: str) -> str:
    formats = {"robot": "urdf", "sdf": "sdf", "mujoco": "mjcf"}
    if root_tag not in formats:
        raise ModelFileError(source, f"root element <{root_tag}>: expected <robot> (URDF), <sdf> or <mujoco> (MJCF)")
    return formats[root_tag]


def load_robot_model(path) -> RobotModel:
    """Read a URDF, SDFormat or MJCF model (told by its root element) and its links.

    Raises
    ------
    ModelFileError
        An unreadable or malformed file, a missing mesh, a bad number, or a
        construct this reader does not follow (said in the message).
    """
    path = Path(path)
    source = str(path)
    try:
        data = path.read_bytes()
    except OSError as error:
        raise ModelFileError(source, f"cannot read: {error.strerror or error}") from None
    root = parse_xml_with_spans(data, source)
    file_format = detect_model_format(root.tag, source)
    reader = {"urdf": _urdf_links, "sdf": _sdf_links, "mjcf": _mjcf_links}[file_format]
    links = tuple(reader(root, data, path.resolve().parent, source))
    return RobotModel(path, file_format, data, links)


def _child_indent(node: _Node, data: bytes) -> tuple[str, str]:
    """(indentation of ``node``'s children, one indentation step)."""
    own = _line_indent(data, node.start)
    for child in node.children:
        if data.rfind(b"\n", node.start, child.start) != -1:
            indent = _line_indent(data, child.start)
            if len(indent) > len(own) and indent.startswith(own):
                return indent, indent[len(own):]
    return own + "  ", "  "


def _link_entry(node, data, name, meshes, ignored, inertial, inertial_node) -> ModelLink:
    indent, step = _child_indent(node, data)
    return ModelLink(
        name=name,
        line=node.line,
        meshes=tuple(meshes),
        ignored_geometry=ignored,
        inertial=inertial,
        inertial_span=None if inertial_node is None else (inertial_node.start, inertial_node.end),
        insert_at=_tag_end(data, node.start),
        indent=indent,
        indent_step=step,
    )


def _pick_meshes(candidates: dict[str, list], ignored: dict[str, int]) -> tuple[list, int]:
    """Collision meshes, else visual meshes; and how many non-mesh geometries of that kind were skipped."""
    for element in ("collision", "visual"):
        if candidates[element]:
            return candidates[element], ignored[element]
    return [], ignored["collision"]


# URDF ---------------------------------------------------------------------


def _urdf_origin(node: _Node | None, source: str) -> tuple[np.ndarray, np.ndarray]:
    if node is None:
        return np.eye(3), np.zeros(3)
    xyz = _numbers(node.attributes.get("xyz"), 3, "origin xyz", source, node.line, default=(0, 0, 0))
    rpy = _numbers(node.attributes.get("rpy"), 3, "origin rpy", source, node.line, default=(0, 0, 0))
    return rotation_from_rpy(*rpy), xyz


def _urdf_links(root: _Node, data: bytes, folder: Path, source: str):
    for link in root.find_all("link"):
        name = link.attributes.get("name", "")
        candidates = {"collision": [], "visual": []}
        ignored = {"collision": 0, "visual": 0}
        for element in ("collision", "visual"):
            for geometry_holder in link.find_all(element):
                geometry = geometry_holder.find("geometry")
                mesh = geometry.find("mesh") if geometry is not None else None
                if mesh is None:
                    ignored[element] += geometry is not None
                    continue
                reference = mesh.attributes.get("filename")
                if not reference:
                    raise ModelFileError(source, f"link {name!r}: <mesh> without a filename", line=mesh.line)
                rotation, translation = _urdf_origin(geometry_holder.find("origin"), source)
                scale = _numbers(mesh.attributes.get("scale"), 3, "mesh scale", source, mesh.line, default=(1, 1, 1))
                candidates[element].append(MeshGeometry(
                    reference, resolve_mesh_reference(reference, folder, source, mesh.line), element,
                    rotation, translation, scale, geometry_holder.line,
                ))  # fmt: skip
        meshes, skipped = _pick_meshes(candidates, ignored)
        inertial_node = link.find("inertial")
        inertial = None if inertial_node is None else _urdf_inertial(inertial_node, name, source)
        yield _link_entry(link, data, name, meshes, skipped, inertial, inertial_node)


def _urdf_inertial(node: _Node, link: str, source: str) -> LinkInertial:
    rotation, com = _urdf_origin(node.find("origin"), source)
    mass_node = node.find("mass")
    if mass_node is None:
        raise ModelFileError(source, f"link {link!r}: <inertial> without <mass>", line=node.line)
    mass = float(_numbers(mass_node.attributes.get("value"), 1, "mass value", source, mass_node.line)[0])
    inertia_node = node.find("inertia")
    if inertia_node is None:
        raise ModelFileError(source, f"link {link!r}: <inertial> without <inertia>", line=node.line)
    values = [
        float(_numbers(inertia_node.attributes.get(key), 1, f"inertia {key}", source, inertia_node.line, default=(0,))[0])
        for key in ("ixx", "ixy", "ixz", "iyy", "iyz", "izz")
    ]
    return LinkInertial(mass, com, rotate_tensor(_tensor(*values), rotation))


# SDFormat -----------------------------------------------------------------


def _sdf_pose(holder: _Node, source: str, frame_name: str) -> tuple[np.ndarray, np.ndarray]:
    pose = holder.find("pose")
    if pose is None:
        return np.eye(3), np.zeros(3)
    relative_to = pose.attributes.get("relative_to", "")
    if relative_to not in ("", frame_name):
        raise ModelFileError(
            source, f"pose relative_to={relative_to!r}: only poses relative to their link are followed", line=pose.line
        )
    text = pose.text.strip() or "0 0 0 0 0 0"
    parts = text.split()
    if len(parts) == 7:
        raise ModelFileError(source, "pose with a quaternion (rotation_format): not followed; use x y z roll pitch yaw", line=pose.line)
    values = _numbers(text, 6, "pose", source, pose.line)
    angles = values[3:]
    if pose.attributes.get("degrees", "false").strip().lower() in ("true", "1"):
        angles = np.radians(angles)
    return rotation_from_rpy(*angles), values[:3]


def _sdf_links(root: _Node, data: bytes, folder: Path, source: str):
    for link in root.iterate("link"):
        name = link.attributes.get("name", "")
        candidates = {"collision": [], "visual": []}
        ignored = {"collision": 0, "visual": 0}
        for element in ("collision", "visual"):
            for holder in link.find_all(element):
                geometry = holder.find("geometry")
                mesh = geometry.find("mesh") if geometry is not None else None
                if mesh is None:
                    ignored[element] += geometry is not None
                    continue
                uri = mesh.find("uri")
                reference = uri.text.strip() if uri is not None else ""
                if not reference:
                    raise ModelFileError(source, f"link {name!r}: <mesh> without a <uri>", line=mesh.line)
                if mesh.find("submesh") is not None:
                    raise ModelFileError(source, f"link {name!r}: <submesh> is not followed", line=mesh.line)
                scale_node = mesh.find("scale")
                scale = _numbers(None if scale_node is None else scale_node.text.strip(), 3, "mesh scale", source,
                                 mesh.line, default=(1, 1, 1))  # fmt: skip
                rotation, translation = _sdf_pose(holder, source, name)
                candidates[element].append(MeshGeometry(
                    reference, resolve_mesh_reference(reference, folder, source, mesh.line), element,
                    rotation, translation, scale, holder.line,
                ))  # fmt: skip
        meshes, skipped = _pick_meshes(candidates, ignored)
        inertial_node = link.find("inertial")
        inertial = None if inertial_node is None else _sdf_inertial(inertial_node, name, source)
        yield _link_entry(link, data, name, meshes, skipped, inertial, inertial_node)


def _sdf_inertial(node: _Node, link: str, source: str) -> LinkInertial:
    rotation, com = _sdf_pose(node, source, link)

    def value(holder, key, default):
        child = holder.find(key) if holder is not None else None
        if child is None:
            return float(default)
        return float(_numbers(child.text.strip(), 1, key, source, child.line)[0])

    mass = value(node, "mass", 1.0)
    inertia = node.find("inertia")
    values = [value(inertia, key, 1.0 if key in ("ixx", "iyy", "izz") else 0.0)
              for key in ("ixx", "ixy", "ixz", "iyy", "iyz", "izz")]  # fmt: skip
    return LinkInertial(mass, com, rotate_tensor(_tensor(*values), rotation))


# MJCF ---------------------------------------------------------------------

_ORIENTATIONS = ("quat", "axisangle", "euler", "xyaxes", "zaxis")


@dataclass(frozen=True, slots=True)
class _Compiler:
    degrees: bool
    euler_sequence: str
    mesh_folder: Path


def _mjcf_compiler(root: _Node, folder: Path, source: str) -> _Compiler:
    degrees, sequence, mesh_folder = True, "xyz", folder
    for compiler in root.iterate("compiler"):
        angle = compiler.attributes.get("angle")
        if angle is not None:
            if angle not in ("degree", "radian"):
                raise ModelFileError(source, f"compiler angle={angle!r}: expected 'degree' or 'radian'", line=compiler.line)
            degrees = angle == "degree"
        sequence = compiler.attributes.get("eulerseq", sequence)
        for key in ("assetdir", "meshdir"):  # meshdir wins over assetdir
            if key in compiler.attributes:
                mesh_folder = folder / compiler.attributes[key]
    if len(sequence) != 3 or any(axis not in "xyzXYZ" for axis in sequence):
        raise ModelFileError(source, f"compiler eulerseq={sequence!r}: expected three of x, y, z, X, Y, Z")
    return _Compiler(degrees, sequence, mesh_folder)


def _mjcf_rotation(attributes: dict, node: _Node, compiler: _Compiler, source: str) -> np.ndarray:
    """The rotation an element's orientation attributes (``attributes``, defaults applied) give."""
    given = [key for key in _ORIENTATIONS if key in attributes]
    if len(given) > 1:
        raise ModelFileError(source, f"<{node.tag}>: more than one orientation ({', '.join(given)})", line=node.line)
    if not given:
        return np.eye(3)
    key = given[0]
    text = attributes[key]
    if key == "quat":
        quaternion = _numbers(text, 4, "quat", source, node.line)
        if not np.linalg.norm(quaternion) > 0:
            raise ModelFileError(source, f"quat {text!r}: zero quaternion", line=node.line)
        return rotation_from_quaternion(quaternion)
    if key == "axisangle":
        values = _numbers(text, 4, "axisangle", source, node.line)
        angle = math.radians(values[3]) if compiler.degrees else values[3]
        return rotation_from_axis_angle(values[:3], angle)
    if key == "euler":
        angles = _numbers(text, 3, "euler", source, node.line)
        if compiler.degrees:
            angles = np.radians(angles)
        rotation = np.eye(3)
        units = {"x": (1, 0, 0), "y": (0, 1, 0), "z": (0, 0, 1)}
        for axis, angle in zip(compiler.euler_sequence, angles):
            step = rotation_from_axis_angle(units[axis.lower()], angle)
            # lower case: axes that move with the frame (post-multiply); upper case: fixed axes (pre-multiply)
            rotation = rotation @ step if axis.islower() else step @ rotation
        return rotation
    raise ModelFileError(source, f"<{node.tag}>: orientation '{key}' is not followed; use quat, axisangle or euler", line=node.line)


def _mjcf_defaults(root: _Node, source: str) -> dict[str, tuple[str | None, dict[str, dict]]]:
    """Default classes: ``class -> (parent class, {element tag: attributes})``; the top one is ``"main"``."""
    classes: dict[str, tuple[str | None, dict[str, dict]]] = {}

    def visit(node: _Node, parent: str | None) -> None:
        name = node.attributes.get("class", "main" if parent is None else None)
        if name is None:
            raise ModelFileError(source, "a nested <default> without a class", line=node.line)
        classes[name] = (parent, {child.tag: child.attributes for child in node.children if child.tag != "default"})
        for child in node.find_all("default"):
            visit(child, name)

    for default in root.find_all("default"):
        visit(default, None)
    return classes


def _with_defaults(node: _Node, classes, class_name: str, source: str) -> dict:
    """``node``'s attributes over those its default class chain gives its element (MuJoCo's inheritance)."""
    chain = []
    name: str | None = class_name
    while name is not None:
        if name not in classes:
            if name == "main":
                break
            raise ModelFileError(source, f"<{node.tag}> class {name!r} is not a default class", line=node.line)
        chain.append(name)
        name = classes[name][0]
    merged: dict = {}
    for name in reversed(chain):
        merged.update(classes[name][1].get(node.tag, {}))
    if any(key in node.attributes for key in _ORIENTATIONS):  # an orientation on the element replaces the default's
        merged = {key: value for key, value in merged.items() if key not in _ORIENTATIONS}
    merged.update(node.attributes)
    return merged


def _geom_class(geom: _Node) -> str:
    """The class a geom takes: its own, else the nearest enclosing body's ``childclass``, else ``main``."""
    if "class" in geom.attributes:
        return geom.attributes["class"]
    node = geom.parent
    while node is not None:
        if node.tag == "body" and "childclass" in node.attributes:
            return node.attributes["childclass"]
        node = node.parent
    return "main"


def _mjcf_links(root: _Node, data: bytes, folder: Path, source: str):
    compiler = _mjcf_compiler(root, folder, source)
    for include in root.iterate("include"):
        raise ModelFileError(source, "<include> is not followed: fill the included file on its own", line=include.line)
    classes = _mjcf_defaults(root, source)
    assets = {}
    for asset in root.iterate("asset"):
        for mesh in asset.find_all("mesh"):
            attributes = _with_defaults(mesh, classes, mesh.attributes.get("class", "main"), source)
            file_name = attributes.get("file")
            if not file_name:
                raise ModelFileError(source, "<mesh> without a file (vertex lists are not followed)", line=mesh.line)
            name = attributes.get("name") or Path(file_name).stem
            for key in ("refpos", "refquat"):
                if key in attributes:
                    raise ModelFileError(source, f"mesh {name!r}: {key} is not followed", line=mesh.line)
            scale = _numbers(attributes.get("scale"), 3, "mesh scale", source, mesh.line, default=(1, 1, 1))
            assets[name] = (file_name, scale, mesh.line)
    worldbody = root.find("worldbody")
    if worldbody is None:
        return
    for index, body in enumerate(worldbody.iterate("body")):
        name = body.attributes.get("name") or f"body[{index}]"
        candidates = {"collision": [], "visual": []}
        ignored = {"collision": 0, "visual": 0}
        for geom in body.find_all("geom"):
            attributes = _with_defaults(geom, classes, _geom_class(geom), source)
            element = "visual" if attributes.get("contype") == "0" and attributes.get("conaffinity") == "0" else "collision"
            geom_type = attributes.get("type", "mesh" if "mesh" in attributes else "sphere")
            if geom_type != "mesh":
                ignored[element] += 1
                continue
            mesh_name = attributes.get("mesh")
            if mesh_name not in assets:
                raise ModelFileError(source, f"body {name!r}: geom mesh {mesh_name!r} is not an asset mesh", line=geom.line)
            file_name, scale, _ = assets[mesh_name]
            if "fromto" in attributes:
                raise ModelFileError(source, f"body {name!r}: a mesh geom placed by fromto is not followed", line=geom.line)
            translation = _numbers(attributes.get("pos"), 3, "geom pos", source, geom.line, default=(0, 0, 0))
            path = Path(file_name) if Path(file_name).is_absolute() else compiler.mesh_folder / file_name
            if not path.is_file():
                raise ModelFileError(source, f"mesh {file_name!r} not found (looked for {path})", line=geom.line)
            candidates[element].append(
                MeshGeometry(file_name, path, element, _mjcf_rotation(attributes, geom, compiler, source), translation, scale, geom.line)
            )
        meshes, skipped = _pick_meshes(candidates, ignored)
        inertial_node = body.find("inertial")
        inertial = None if inertial_node is None else _mjcf_inertial(inertial_node, compiler, name, source)
        yield _link_entry(body, data, name, meshes, skipped, inertial, inertial_node)


def _mjcf_inertial(node: _Node, compiler: _Compiler, body: str, source: str) -> LinkInertial:
    attributes = node.attributes
    com = _numbers(attributes.get("pos"), 3, "inertial pos", source, node.line)
    mass = float(_numbers(attributes.get("mass"), 1, "inertial mass", source, node.line)[0])
    if "fullinertia" in attributes:
        xx, yy, zz, xy, xz, yz = _numbers(attributes["fullinertia"], 6, "fullinertia", source, node.line)
        tensor = _tensor(xx, xy, xz, yy, yz, zz)
    elif "diaginertia" in attributes:
        tensor = np.diag(_numbers(attributes["diaginertia"], 3, "diaginertia", source, node.line))
    else:
        raise ModelFileError(source, f"body {body!r}: <inertial> without diaginertia or fullinertia", line=node.line)
    return LinkInertial(mass, com, rotate_tensor(tensor, _mjcf_rotation(attributes, node, compiler, source)))
