"""Wavefront OBJ reader: vertices and faces (polygons fan-triangulated, negative indices,
several objects); everything else is skipped.
"""

from __future__ import annotations

import numpy as np

from ..errors import MeshFileError
from .mesh import Mesh


def read_obj(source: str, data: bytes, unit: str, scale: float) -> Mesh:
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise MeshFileError(source, f"OBJ is not UTF-8 text (bad byte at offset {exc.start})") from None
    coordinates: list[str] = []
    triangles: list[tuple[int, int, int]] = []
    vertex_count = 0
    for line_number, raw in enumerate(text.splitlines(), start=1):
        words = raw.split("#", 1)[0].split()
        if not words:
            continue
        keyword = words[0]
        if keyword == "v":
            if len(words) not in (4, 5, 7):  # x y z [w] or x y z r g b (a common extension)
                raise MeshFileError(source, f"expected 'v X Y Z', found {len(words) - 1} values", line=line_number)
            for word in words[1:4]:
                try:
                    float(word)
                except ValueError:
                    raise MeshFileError(source, f"vertex coordinate {word!r} is not a number", line=line_number) from None
            coordinates.extend(words[1:4])
            vertex_count += 1
        elif keyword == "f":
            corners = []
            for word in words[1:]:
                index_text = word.split("/", 1)[0]
                try:
                    index = int(index_text)
                except ValueError:
                    raise MeshFileError(source, f"face index {word!r} is not an integer", line=line_number) from None
                if index > 0:
                    index -= 1
                elif index < 0:
                    index += vertex_count
                else:
                    raise MeshFileError(source, "face index 0 (OBJ indices start at 1)", line=line_number)
                if not 0 <= index < vertex_count:
                    raise MeshFileError(
                        source, f"face index {word!r} refers to a vertex not defined before it", line=line_number
                    )
                corners.append(index)
            if len(corners) < 3:
                raise MeshFileError(source, f"face has {len(corners)} vertices, expected at least 3", line=line_number)
            for k in range(1, len(corners) - 1):  # fan triangulation of a polygon
                triangles.append((corners[0], corners[k], corners[k + 1]))
        elif keyword in ("vn", "vt", "vp", "o", "g", "s", "usemtl", "mtllib", "l", "p"):
            continue  # normals, texture coordinates, grouping, materials, lines and points carry no volume
        else:
            raise MeshFileError(source, f"unknown OBJ statement {keyword!r}", line=line_number)
    if not triangles:
        raise MeshFileError(source, "OBJ holds no faces")
    vertices = np.array(coordinates, dtype=np.float64).reshape(-1, 3)
    faces = np.array(triangles, dtype=np.int64)
    return Mesh(source, "obj", unit, scale, vertices=vertices, faces=faces)
