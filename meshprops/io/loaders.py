"""Load a mesh file: tell its format from the content and hand it to that format's reader
(one table, :data:`LOADERS`, maps a format to its reader).
"""

from __future__ import annotations

import os

import numpy as np

from ..errors import MeshFileError
from ..units import canonical_length_unit, metres_per
from .mesh import STL_HEADER_BYTES, STL_RECORD, Mesh, checked_mesh
from .obj import read_obj
from .ply import read_ply
from .reading import file_errors
from .stl import read_ascii_stl, read_binary_stl

#: format name -> reader of the file's bytes ``(source, data, unit, scale) -> Mesh``. Binary STL
#: is not here: it is memory-mapped by :func:`read_binary_stl` instead of read into memory.
LOADERS = {
    "stl-ascii": read_ascii_stl,
    "obj": read_obj,
    "ply": read_ply,
}


def load_mesh(path: str | os.PathLike, length_unit: str = "mm") -> Mesh:
    """Read a mesh file; the format is detected from the content.

    Parameters
    ----------
    path
        STL (binary or ASCII), OBJ or PLY (ASCII or binary) file.
    length_unit
        The unit the file's coordinates are in (``m``, ``cm``, ``mm``, ``in``, ``ft``).

    Raises
    ------
    MeshFileError
        Missing, unreadable, empty, truncated or malformed file, or a coordinate
        that is NaN or infinite.
    UnitError
        Unknown ``length_unit``.
    """
    length_unit = canonical_length_unit(length_unit)
    scale = metres_per(length_unit)
    source = os.fspath(path)
    with file_errors(source):
        size = os.path.getsize(source)
        with open(source, "rb") as handle:
            head = handle.read(1024)
    if size == 0:
        raise MeshFileError(source, "file is empty")

    kind = _detect_format(source, head, size)
    if kind == "stl-binary":
        mesh = read_binary_stl(source, size, length_unit, scale)
    else:
        mesh = LOADERS[kind](source, _read_bytes(source), length_unit, scale)
    return checked_mesh(mesh)


def load_mesh_content(data: bytes, source: str, length_unit: str = "mm") -> Mesh:
    """Read a mesh from a file's bytes, as :func:`load_mesh` reads the file ``source``.

    For batch runs that ship files by content (``--ship-content``): ``source`` names the
    file in the mesh and in every error, exactly as if it had been read from disk, so a
    result or an error is the same whichever way the file arrived. A binary STL is a
    zero-copy view of ``data`` instead of a memory map.
    """
    scale = metres_per(length_unit)
    source = os.fspath(source)
    if len(data) == 0:
        raise MeshFileError(source, "file is empty")
    kind = _detect_format(source, bytes(data[:1024]), len(data))
    if kind == "stl-binary":
        count = (len(data) - STL_HEADER_BYTES) // 50
        if count == 0:
            raise MeshFileError(source, "binary STL holds no triangles")
        records = np.frombuffer(data, dtype=STL_RECORD, count=count, offset=STL_HEADER_BYTES)
        mesh = Mesh(source, "stl-binary", length_unit, scale, soup=records["vertices"])
    else:
        mesh = LOADERS[kind](source, bytes(data), length_unit, scale)
    return checked_mesh(mesh)


def _detect_format(source: str, head: bytes, size: int) -> str:
    extension = os.path.splitext(source)[1].lower()
    if head.startswith(b"ply"):
        return "ply"
    binary_size_matches = False
    if size >= STL_HEADER_BYTES:
        count = int(np.frombuffer(head[80:84], "<u4")[0]) if len(head) >= 84 else -1
        binary_size_matches = STL_HEADER_BYTES + 50 * count == size
    starts_solid = head.lstrip()[:5].lower() == b"solid"
    if binary_size_matches:
        # A binary header may begin with "solid" too; a real ASCII file is text with facets.
        if starts_solid and _looks_like_text(head) and b"facet" in head.lower():
            return "stl-ascii"
        return "stl-binary"
    # A solid's name may hold non-ASCII bytes (UTF-8 names); a binary STL below 2^24 triangles
    # always has a NUL byte in its triangle count, so "no NUL and facets" means text.
    if starts_solid and (_looks_like_text(head) or (b"\0" not in head and b"facet" in head.lower())):
        return "stl-ascii"
    # By content whatever the name: an OBJ (or PLY, above) named .stl is read as what it is.
    if extension == ".obj" or _looks_like_obj(head):
        return "obj"
    if _looks_like_text(head):
        first = head.strip().splitlines()[0][:40].decode("ascii", "replace") if head.strip() else ""
        raise MeshFileError(
            source, f"text that is not an STL, OBJ or PLY mesh (it begins {first!r}); expected a mesh file"
        )
    if extension == ".stl" or size >= STL_HEADER_BYTES:
        if size < STL_HEADER_BYTES:
            raise MeshFileError(source, f"binary STL: file is {size} bytes, shorter than the 84-byte header")
        count = int(np.frombuffer(head[80:84], "<u4")[0])
        expected = STL_HEADER_BYTES + 50 * count
        if extension != ".stl":
            raise MeshFileError(source, "unrecognised mesh format (binary data, not STL, OBJ or PLY)")
        problem = "truncated" if size < expected else "has trailing bytes"
        raise MeshFileError(
            source, f"binary STL {problem}: header says {count} triangles, expected {expected} bytes, found {size}"
        )
    raise MeshFileError(source, "unrecognised mesh format; expected STL, OBJ or PLY")


def _looks_like_text(head: bytes) -> bool:
    return all(b in b"\t\n\r" or 32 <= b < 127 for b in head)


def _looks_like_obj(head: bytes) -> bool:
    if not _looks_like_text(head):
        return False
    for line in head.splitlines():
        word = line.split(maxsplit=1)[:1]
        if word and not word[0].startswith(b"#"):
            return word[0] in (b"v", b"vn", b"vt", b"f", b"o", b"g", b"mtllib", b"usemtl", b"s")
    return False


def _read_bytes(source: str) -> bytes:
    with file_errors(source), open(source, "rb") as handle:
        return handle.read()
