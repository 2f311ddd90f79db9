"""PLY reader: ASCII and binary (either byte order); vertex x, y, z and the face index lists.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

from ..errors import MeshFileError
from .mesh import Mesh

#: The face lists that hold vertex indices; every other list is skipped, whatever its type.
INDEX_LISTS = ("vertex_indices", "vertex_index")

_PLY_TYPES = {
    "char": "i1", "int8": "i1", "uchar": "u1", "uint8": "u1",
    "short": "i2", "int16": "i2", "ushort": "u2", "uint16": "u2",
    "int": "i4", "int32": "i4", "uint": "u4", "uint32": "u4",
    "float": "f4", "float32": "f4", "double": "f8", "float64": "f8",
}  # fmt: skip


@dataclass(frozen=True, slots=True)
class _PlyProperty:
    name: str
    dtype: str  # numpy type code, without byte order
    count_dtype: str | None = None  # set for list properties


@dataclass(frozen=True, slots=True)
class _PlyElement:
    name: str
    count: int
    properties: tuple[_PlyProperty, ...]


def read_ply(source: str, data: bytes, unit: str, scale: float) -> Mesh:
    end = re.search(rb"end_header[ \t]*\r?\n", data)
    if end is None:
        raise MeshFileError(source, "PLY header has no 'end_header' line")
    try:
        header_lines = data[: end.start()].decode("ascii").splitlines()
    except UnicodeDecodeError:
        raise MeshFileError(source, "PLY header is not ASCII text") from None
    body = data[end.end() :]
    encoding = None
    elements: list[_PlyElement] = []
    pending: list[tuple[str, int, list[_PlyProperty]]] = []
    for line_number, raw in enumerate(header_lines, start=1):
        words = raw.split()
        if not words or words[0] in ("comment", "obj_info"):
            continue
        if words[0] == "ply" and line_number == 1:
            continue
        if words[0] == "format":
            if len(words) != 3 or words[1] not in ("ascii", "binary_little_endian", "binary_big_endian"):
                raise MeshFileError(source, f"unsupported PLY format line {raw.strip()!r}", line=line_number)
            encoding = words[1]
        elif words[0] == "element":
            if len(words) != 3 or not words[2].isdigit():
                raise MeshFileError(source, f"expected 'element NAME COUNT', found {raw.strip()!r}", line=line_number)
            pending.append((words[1], int(words[2]), []))
        elif words[0] == "property":
            if not pending:
                raise MeshFileError(source, "PLY property before any element", line=line_number)
            if len(words) == 5 and words[1] == "list":
                if words[2] not in _PLY_TYPES or words[3] not in _PLY_TYPES:
                    raise MeshFileError(source, f"unknown PLY type in {raw.strip()!r}", line=line_number)
                pending[-1][2].append(_PlyProperty(words[4], _PLY_TYPES[words[3]], _PLY_TYPES[words[2]]))
            elif len(words) == 3 and words[1] in _PLY_TYPES:
                pending[-1][2].append(_PlyProperty(words[2], _PLY_TYPES[words[1]]))
            else:
                raise MeshFileError(source, f"bad PLY property line {raw.strip()!r}", line=line_number)
        else:
            raise MeshFileError(source, f"unknown PLY header line {raw.strip()!r}", line=line_number)
    if encoding is None:
        raise MeshFileError(source, "PLY header has no 'format' line")
    elements = [_PlyElement(name, count, tuple(props)) for name, count, props in pending]
    names = [element.name for element in elements]
    if "vertex" not in names or "face" not in names:
        raise MeshFileError(source, "PLY needs a 'vertex' and a 'face' element")
    if len(set(names)) != len(names):
        raise MeshFileError(source, f"PLY header declares an element twice: {', '.join(names)}")
    for element in elements:
        property_names = [prop.name for prop in element.properties]
        if len(set(property_names)) != len(property_names):
            raise MeshFileError(source, f"PLY element {element.name!r} declares a property twice: {', '.join(property_names)}")
        for prop in element.properties:
            if prop.count_dtype is not None and prop.count_dtype.startswith("f"):
                raise MeshFileError(source, f"PLY list {prop.name!r} has a floating-point count type; counts are integers")
            if element.name == "face" and prop.name in INDEX_LISTS:
                if prop.count_dtype is None:
                    raise MeshFileError(source, f"PLY face property {prop.name!r} must be a list")
                if prop.dtype.startswith("f"):
                    raise MeshFileError(source, f"PLY face property {prop.name!r} holds floats; vertex indices are integers")

    if encoding == "ascii":
        values = _ply_ascii_values(source, elements, body)
    else:
        values = _ply_binary_values(source, elements, body, "<" if encoding == "binary_little_endian" else ">")

    vertex = values["vertex"]
    try:
        vertices = np.column_stack([vertex["x"], vertex["y"], vertex["z"]]).astype(np.float64)
    except KeyError:
        raise MeshFileError(source, "PLY vertex element lacks x, y or z") from None
    lists = values["face"].get("vertex_indices", values["face"].get("vertex_index"))
    if lists is None:
        raise MeshFileError(source, "PLY face element lacks a 'vertex_indices' list")
    faces = _triangulate_lists(source, lists, len(vertices))
    return Mesh(source, f"ply-{'ascii' if encoding == 'ascii' else 'binary'}", unit, scale, vertices=vertices, faces=faces)


def _triangulate_lists(source: str, lists: list | np.ndarray, vertex_count: int) -> np.ndarray:
    """Fan-triangulate PLY face lists into an ``(F, 3)`` int64 array."""
    if isinstance(lists, np.ndarray):  # fast path: every face had the same corner count
        polygons = lists.astype(np.int64)
        if polygons.shape[1] < 3:
            raise MeshFileError(source, f"PLY faces have {polygons.shape[1]} vertices, expected at least 3")
        fans = [polygons[:, [0, k, k + 1]] for k in range(1, polygons.shape[1] - 1)]
        faces = np.stack(fans, axis=1).reshape(-1, 3)
    else:
        triangles = []
        for number, polygon in enumerate(lists):
            if len(polygon) < 3:
                raise MeshFileError(source, f"PLY face {number} has {len(polygon)} vertices, expected at least 3")
            triangles.extend((polygon[0], polygon[k], polygon[k + 1]) for k in range(1, len(polygon) - 1))
        faces = np.array(triangles, dtype=np.int64).reshape(-1, 3)
    if faces.size and (faces.min() < 0 or faces.max() >= vertex_count):
        raise MeshFileError(source, f"PLY face index out of range 0..{vertex_count - 1}")
    return faces


def _ply_ascii_values(source: str, elements: list[_PlyElement], body: bytes) -> dict[str, dict]:
    try:
        words = body.decode("ascii").split()
    except UnicodeDecodeError:
        raise MeshFileError(source, "ASCII PLY body holds a non-ASCII byte") from None
    try:
        numbers = np.array(words, dtype=np.float64)
    except ValueError:
        bad = next(w for w in words if not _is_number(w))
        raise MeshFileError(source, f"PLY value {bad!r} is not a number") from None
    position = 0
    values: dict[str, dict] = {}
    for element in elements:
        columns: dict[str, object] = {}
        if all(p.count_dtype is None for p in element.properties):
            width = len(element.properties)
            block = numbers[position : position + width * element.count]
            if block.size != width * element.count:
                raise MeshFileError(source, f"PLY ends inside element {element.name!r} (truncated?)")
            block = block.reshape(element.count, width)
            for k, prop in enumerate(element.properties):
                columns[prop.name] = block[:, k]
            position += width * element.count
        else:
            rows: dict[str, list] = {p.name: [] for p in element.properties}
            for _ in range(element.count):
                for prop in element.properties:
                    if position >= numbers.size:
                        raise MeshFileError(source, f"PLY ends inside element {element.name!r} (truncated?)")
                    if prop.count_dtype is None:
                        rows[prop.name].append(numbers[position])
                        position += 1
                    else:
                        length = numbers[position]
                        if not np.isfinite(length) or length != int(length) or length < 0:
                            raise MeshFileError(source, f"PLY list length {float(length):g} is not a count")
                        length = int(length)
                        items = numbers[position + 1 : position + 1 + length]
                        if items.size != length:
                            raise MeshFileError(source, f"PLY ends inside element {element.name!r} (truncated?)")
                        position += 1 + length
                        if prop.name not in INDEX_LISTS:
                            continue  # other lists (texture coordinates, ...) may hold any type: skipped
                        if not np.all(np.isfinite(items)) or np.any(items != np.round(items)) or np.any(np.abs(items) > 2**53):
                            raise MeshFileError(source, f"PLY list {prop.name!r} holds a value that is not an integer index")
                        rows[prop.name].append(items.astype(np.int64))
            for prop in element.properties:
                columns[prop.name] = _as_uniform(rows[prop.name]) if prop.count_dtype else np.array(rows[prop.name])
        values[element.name] = columns
    if position != numbers.size:
        raise MeshFileError(source, f"PLY body has {numbers.size - position} values beyond its elements")
    return values


def _is_number(word: str) -> bool:
    try:
        float(word)
    except ValueError:
        return False
    return True


def _as_uniform(lists: list[np.ndarray]) -> np.ndarray | list[np.ndarray]:
    """Stack lists of equal length into a 2-D array; keep a ragged list otherwise."""
    if lists and all(len(item) == len(lists[0]) for item in lists):
        return np.stack(lists)
    return lists


def _ply_binary_values(source: str, elements: list[_PlyElement], body: bytes, order: str) -> dict[str, dict]:
    position = 0
    values: dict[str, dict] = {}
    for element in elements:
        props = element.properties
        if all(p.count_dtype is None for p in props):
            dtype = np.dtype([(p.name, order + p.dtype) for p in props])
            size = dtype.itemsize * element.count
            if position + size > len(body):
                raise MeshFileError(source, f"binary PLY truncated inside element {element.name!r}")
            table = np.frombuffer(body, dtype=dtype, count=element.count, offset=position)
            values[element.name] = {p.name: table[p.name] for p in props}
            position += size
            continue
        fast = _ply_binary_uniform_lists(body, position, element, order)
        if fast is not None:
            values[element.name], position = fast
            continue
        rows: dict[str, list] = {p.name: [] for p in props}
        for _ in range(element.count):
            for prop in props:
                if prop.count_dtype is None:
                    item = np.dtype(order + prop.dtype)
                    if position + item.itemsize > len(body):
                        raise MeshFileError(source, f"binary PLY truncated inside element {element.name!r}")
                    rows[prop.name].append(np.frombuffer(body, item, 1, position)[0])
                    position += item.itemsize
                else:
                    count_type = np.dtype(order + prop.count_dtype)
                    item = np.dtype(order + prop.dtype)
                    if position + count_type.itemsize > len(body):
                        raise MeshFileError(source, f"binary PLY truncated inside element {element.name!r}")
                    length = int(np.frombuffer(body, count_type, 1, position)[0])
                    position += count_type.itemsize
                    if length < 0 or position + length * item.itemsize > len(body):
                        raise MeshFileError(source, f"binary PLY truncated inside element {element.name!r}")
                    if prop.name in INDEX_LISTS:  # other lists may hold any type: skipped
                        rows[prop.name].append(np.frombuffer(body, item, length, position).astype(np.int64))
                    position += length * item.itemsize
        values[element.name] = {
            p.name: (_as_uniform(rows[p.name]) if p.count_dtype else np.array(rows[p.name])) for p in props
        }
    if position != len(body):
        raise MeshFileError(source, f"binary PLY has {len(body) - position} bytes beyond its elements")
    return values


def _ply_binary_uniform_lists(body: bytes, position: int, element: _PlyElement, order: str):
    """Read an element whose lists all have the length of the first one in one numpy call.

    Returns ``(columns, new_position)`` or ``None`` when the lists are ragged.
    """
    props = element.properties
    if element.count == 0:
        return None
    # Peek at the first row to learn each list's length.
    lengths = []
    cursor = position
    for prop in props:
        if prop.count_dtype is None:
            cursor += np.dtype(prop.dtype).itemsize
        else:
            count_type = np.dtype(order + prop.count_dtype)
            if cursor + count_type.itemsize > len(body):
                return None
            length = int(np.frombuffer(body, count_type, 1, cursor)[0])
            lengths.append(length)
            cursor += count_type.itemsize + length * np.dtype(prop.dtype).itemsize
    fields = []
    list_number = 0
    for k, prop in enumerate(props):
        if prop.count_dtype is None:
            fields.append((f"p{k}", order + prop.dtype))
        else:
            fields.append((f"n{k}", order + prop.count_dtype))
            fields.append((f"p{k}", order + prop.dtype, (lengths[list_number],)))
            list_number += 1
    dtype = np.dtype(fields)
    size = dtype.itemsize * element.count
    if position + size > len(body):
        return None
    table = np.frombuffer(body, dtype=dtype, count=element.count, offset=position)
    list_number = 0
    for k, prop in enumerate(props):
        if prop.count_dtype is not None:
            if np.any(table[f"n{k}"] != lengths[list_number]):
                return None
            list_number += 1
    columns = {prop.name: table[f"p{k}"] for k, prop in enumerate(props)}
    return columns, position + size
