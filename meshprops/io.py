"""Mesh loaders: binary and ASCII STL, OBJ, PLY (ASCII and binary) → :class:`Mesh`.

The format is told by the file's content (an STL header may begin with ``solid``
and still be binary), the extension only breaking ties. Lengths stay in the
file's own unit inside :class:`Mesh`; :meth:`Mesh.triangle_chunks` yields
float64 metres, so the unit is applied exactly once, as the triangles are read.

A binary STL is a zero-copy, read-only memory map of its 50-byte records and is
read in bounded chunks whose pages are released behind the reader, so a file of
any size streams in bounded memory.
"""

from __future__ import annotations

import mmap
import os
import re
from collections.abc import Iterator
from dataclasses import dataclass

import numpy as np

from .errors import MeshFileError
from .units import metres_per

#: One binary STL record: normal, three vertices, attribute byte count (50 bytes, little endian).
STL_RECORD = np.dtype([("normal", "<f4", (3,)), ("vertices", "<f4", (3, 3)), ("attribute", "<u2")])
STL_HEADER_BYTES = 84
#: Faces per chunk: 16384 keeps a chunk's float64 copy (1.2 MB) in cache and reused by the
#: allocator; 65536 measured about 1.5x slower per triangle (scripts/bench.py, DEVELOPERS.md).
DEFAULT_CHUNK_FACES = 1 << 14


@dataclass(frozen=True, slots=True, eq=False)
class Mesh:
    """A triangle mesh as read from a file, in the file's length unit.

    Exactly one representation is set:

    * ``soup``: ``(F, 3, 3)`` float array of triangle corners (STL; may be a
      read-only memory map), or
    * ``vertices`` ``(V, 3)`` float64 with ``faces`` ``(F, 3)`` int64 indices
      (OBJ, PLY).

    Corners are listed counter-clockwise seen from outside (outward normals by
    the right-hand rule), as STL, OBJ and PLY all specify.
    """

    source: str
    file_format: str
    length_unit: str
    metres_per_unit: float
    soup: np.ndarray | None = None
    vertices: np.ndarray | None = None
    faces: np.ndarray | None = None

    @property
    def face_count(self) -> int:
        """Number of triangles."""
        return int(self.soup.shape[0] if self.soup is not None else self.faces.shape[0])

    def reference_point(self) -> np.ndarray:
        """A point near the part, in the file's unit: the mean corner of the first 1024 faces.

        Integrating about it (see :func:`meshprops.moments.integrate_mesh`) keeps the
        digits of a part placed far from the file's origin.
        """
        if self.face_count == 0:  # e.g. a mesh whose every face a repair dropped
            return np.zeros(3)
        if self.soup is not None:
            corners = np.asarray(self.soup[:1024], dtype=np.float64).reshape(-1, 3)
        else:
            corners = self.vertices[self.faces[:1024].reshape(-1)]
        return corners.mean(axis=0)

    def triangle_chunks(self, chunk_faces: int = DEFAULT_CHUNK_FACES, *, relative_to=None) -> Iterator[np.ndarray]:
        """Yield ``(k, 3, 3)`` float64 triangle corners in metres, ``k <= chunk_faces``.

        With ``relative_to`` (a point in the FILE's unit) each corner is given as
        ``(x - relative_to)`` converted to metres: the subtraction happens before the
        unit conversion, so it is exact for nearby points however far the part lies
        from the origin.

        Each chunk is a fresh array indexed ``[face, corner, axis]``; its memory
        is laid out face-last (it is the transpose of a C-ordered
        ``(3 axes, 3 corners, k)`` block), so that the integrator reads each
        coordinate as one contiguous row without another copy. The pages of a
        memory-mapped binary STL are released as the chunks go by (see
        :meth:`coordinate_blocks`).
        """
        scale = np.float64(self.metres_per_unit)
        shift = None if relative_to is None else np.asarray(relative_to, dtype=np.float64).reshape(3, 1, 1)
        if self.soup is not None:
            for start, block in self.coordinate_blocks(chunk_faces):
                rows = np.empty((3, 3, block.shape[0]))  # [axis, corner, face]
                if shift is None:
                    # Widen to float64 first (a strong float64 scale), then scale: as exact as the file.
                    np.multiply(block.transpose(2, 1, 0), scale, out=rows)
                else:
                    np.subtract(block.transpose(2, 1, 0), shift, out=rows)
                    rows *= scale
                yield rows.transpose(2, 1, 0)
            return
        columns = self.vertices.T
        for start in range(0, self.face_count, chunk_faces):
            rows = np.take(columns, self.faces[start : start + chunk_faces].T, axis=1)  # [axis, corner, face]
            if shift is not None:
                rows -= shift
            if scale != 1.0:
                rows *= scale
            yield rows.transpose(2, 1, 0)

    def coordinate_blocks(
        self, block_rows: int = DEFAULT_CHUNK_FACES, *, release_pages: bool = True
    ) -> Iterator[tuple[int, np.ndarray]]:
        """Yield ``(start, block)``: consecutive views of the stored coordinates.

        ``block`` is ``soup[start:start + block_rows]`` (``(k, 3, 3)``, one row per
        face) for a triangle soup, else ``vertices[start:start + block_rows]``
        (``(k, 3)``), in the file's unit and dtype, not copied. For a
        memory-mapped binary STL with ``release_pages`` the block's pages are
        released (``madvise``) once the caller asks for the next block, so one
        full pass keeps about one block of the file resident instead of all of
        it. Reading a block again later is correct; it only faults its pages
        back in from the page cache (about 8 ns per triangle on the benchmark
        machine), so a pass that another pass follows soon may keep them.
        """
        array = self.soup if self.soup is not None else self.vertices
        mapping = _file_mapping(array) if release_pages and self.file_format == "stl-binary" else None
        released = 0
        for start in range(0, len(array), block_rows):
            yield start, array[start : start + block_rows]
            if mapping is not None:
                released = _release_pages(mapping, released, STL_HEADER_BYTES + 50 * min(start + block_rows, len(array)))

    def triangles(self) -> np.ndarray:
        """All triangle corners as one C-ordered ``(F, 3, 3)`` float64 array in metres."""
        result = np.empty((self.face_count, 3, 3))
        start = 0
        for chunk in self.triangle_chunks():
            result[start : start + len(chunk)] = chunk
            start += len(chunk)
        return result


def mesh_from_triangles(
    triangles: np.ndarray, *, length_unit: str = "m", source: str = "<triangles>"
) -> Mesh:
    """Build a :class:`Mesh` from a ``(F, 3, 3)`` array of corners in ``length_unit``."""
    soup = np.asarray(triangles, dtype=np.float64)
    if soup.ndim != 3 or soup.shape[1:] != (3, 3):
        raise MeshFileError(source, f"expected triangles of shape (F, 3, 3), got {soup.shape}")
    return _checked(Mesh(source, "array", length_unit, metres_per(length_unit), soup=soup))


def mesh_from_arrays(
    vertices: np.ndarray, faces: np.ndarray, *, length_unit: str = "m", source: str = "<arrays>"
) -> Mesh:
    """Build a :class:`Mesh` from ``(V, 3)`` vertices in ``length_unit`` and ``(F, 3)`` indices."""
    vertices = np.asarray(vertices, dtype=np.float64)
    faces = np.asarray(faces)
    if vertices.ndim != 2 or vertices.shape[1] != 3:
        raise MeshFileError(source, f"expected vertices of shape (V, 3), got {vertices.shape}")
    if faces.ndim != 2 or faces.shape[1] != 3 or not np.issubdtype(faces.dtype, np.integer):
        raise MeshFileError(source, f"expected integer faces of shape (F, 3), got {faces.dtype} {faces.shape}")
    faces = faces.astype(np.int64)
    if faces.size and (faces.min() < 0 or faces.max() >= len(vertices)):
        raise MeshFileError(source, f"face index out of range 0..{len(vertices) - 1}")
    return _checked(Mesh(source, "array", length_unit, metres_per(length_unit), vertices=vertices, faces=faces))


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
    scale = metres_per(length_unit)
    source = os.fspath(path)
    try:
        size = os.path.getsize(source)
        with open(source, "rb") as handle:
            head = handle.read(1024)
    except FileNotFoundError:
        raise MeshFileError(source, "no such file") from None
    except IsADirectoryError:
        raise MeshFileError(source, "is a directory, not a mesh file") from None
    except OSError as exc:
        raise MeshFileError(source, f"cannot read: {exc.strerror or exc}") from None
    if size == 0:
        raise MeshFileError(source, "file is empty")

    kind = _detect_format(source, head, size)
    if kind == "stl-binary":
        mesh = _read_binary_stl(source, size, length_unit, scale)
    else:
        data = _read_bytes(source)
        if kind == "stl-ascii":
            mesh = _read_ascii_stl(source, data, length_unit, scale)
        elif kind == "obj":
            mesh = _read_obj(source, data, length_unit, scale)
        else:
            mesh = _read_ply(source, data, length_unit, scale)
    return _checked(mesh)


# ---------------------------------------------------------------------------- detection


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
    if extension == ".obj" or (extension not in (".stl", ".ply") and _looks_like_obj(head)):
        return "obj"
    if extension == ".stl":
        if size < STL_HEADER_BYTES:
            raise MeshFileError(source, f"binary STL: file is {size} bytes, shorter than the 84-byte header")
        count = int(np.frombuffer(head[80:84], "<u4")[0])
        expected = STL_HEADER_BYTES + 50 * count
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
    try:
        with open(source, "rb") as handle:
            return handle.read()
    except OSError as exc:
        raise MeshFileError(source, f"cannot read: {exc.strerror or exc}") from None


#: Coordinates beyond this magnitude (in the file's unit) are refused: the moments multiply five
#: coordinates together, which would overflow float64 near 1e61.
MAX_ABS_COORDINATE = 1e30


def _checked(mesh: Mesh) -> Mesh:
    """Reject empty meshes and non-finite coordinates (scanned in blocks)."""
    if mesh.face_count == 0:
        raise MeshFileError(mesh.source, "mesh has no triangles")
    # The pages stay resident: the integration pass reads them next and releases them.
    for start, block in mesh.coordinate_blocks(release_pages=False):
        # A float64 sum is finite exactly when every value is, unless finite values overflow it
        # (possible for float64 data only): then the element-wise test below decides.
        with np.errstate(over="ignore", invalid="ignore"):
            total = np.add.reduce(block, axis=None, dtype=np.float64)
        what = "triangle" if mesh.soup is not None else "vertex"
        if np.isfinite(total):
            if block.dtype.itemsize > 4:
                # float64 coordinates can be finite yet so large that products of five of them
                # overflow (float32 ones cannot): refuse absurd magnitudes here, in one clear line.
                magnitude = np.abs(block)
                if magnitude.max() > MAX_ABS_COORDINATE:  # one flat reduction; locate the row only then
                    bad = int(np.argmax(magnitude.reshape(len(block), -1).max(axis=1) > MAX_ABS_COORDINATE)) + start
                    raise MeshFileError(mesh.source, f"{what} {bad} has a coordinate beyond {MAX_ABS_COORDINATE:g} in magnitude")
            continue
        finite = np.isfinite(block).reshape(len(block), -1).all(axis=1)
        if not finite.all():
            bad = int(np.argmin(finite)) + start
            raise MeshFileError(mesh.source, f"{what} {bad} has a NaN or infinite coordinate")
    return mesh


def _file_mapping(array: np.ndarray) -> mmap.mmap | None:
    """The :class:`mmap.mmap` under a view of a :class:`numpy.memmap`, or ``None``.

    numpy keeps it as the memmap's ``_mmap`` attribute (not public API): if that
    ever changes, pages are simply not released.
    """
    base = array
    while isinstance(base, np.ndarray):
        mapping = getattr(base, "_mmap", None)
        if isinstance(mapping, mmap.mmap):
            return mapping
        base = base.base
    return None


def _release_pages(mapping: mmap.mmap, released: int, stop: int) -> int:
    """Drop the resident pages of ``mapping`` in ``[released, stop)`` bytes; return the new mark.

    Only whole pages below ``stop`` go (the page holding ``stop`` is still being
    read). The mapping is read-only, so the pages are simply re-read from the
    page cache if touched again.
    """
    end = stop - stop % mmap.PAGESIZE
    if end > released and hasattr(mapping, "madvise") and hasattr(mmap, "MADV_DONTNEED"):
        mapping.madvise(mmap.MADV_DONTNEED, released, end - released)
        return end
    return released


# ---------------------------------------------------------------------------- STL


def _read_binary_stl(source: str, size: int, unit: str, scale: float) -> Mesh:
    count = (size - STL_HEADER_BYTES) // 50
    if count == 0:
        raise MeshFileError(source, "binary STL holds no triangles")
    try:
        # Read-only and zero-copy. numpy maps the file from byte 0 (the 84-byte offset is
        # below the allocation granularity), which _release_pages relies on.
        records = np.memmap(source, dtype=STL_RECORD, mode="r", offset=STL_HEADER_BYTES, shape=(count,))
    except ValueError:  # the file shrank between sizing and mapping it
        raise MeshFileError(source, "binary STL changed size while being read") from None
    except OSError as exc:
        raise MeshFileError(source, f"cannot map binary STL: {exc.strerror or exc}") from None
    return Mesh(source, "stl-binary", unit, scale, soup=records["vertices"])


_FLOAT = r"([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?|[-+]?(?:nan|inf|infinity))"


def _read_ascii_stl(source: str, data: bytes, unit: str, scale: float) -> Mesh:
    # latin-1 maps every byte: names after 'solid' may be UTF-8; a stray byte elsewhere
    # fails the keyword or number checks below with its line number.
    text = data.decode("latin-1")
    corners: list[str] = []
    state = "outside"  # outside → solid → facet → loop(0..3) → endloop → solid ...
    in_loop = 0
    line_number = 0
    for line_number, raw in enumerate(text.splitlines(), start=1):
        words = raw.split()
        if not words:
            continue
        keyword = words[0].lower()
        if state == "outside":
            if keyword != "solid":
                raise MeshFileError(source, f"expected 'solid', found {words[0]!r}", line=line_number)
            state = "solid"
        elif state == "solid":
            if keyword == "facet":
                if len(words) != 5 or words[1].lower() != "normal":
                    raise MeshFileError(source, "expected 'facet normal NX NY NZ'", line=line_number)
                state = "facet"
            elif keyword == "endsolid":
                state = "outside"
            else:
                raise MeshFileError(source, f"expected 'facet' or 'endsolid', found {words[0]!r}", line=line_number)
        elif state == "facet":
            if keyword != "outer" or len(words) != 2 or words[1].lower() != "loop":
                raise MeshFileError(source, "expected 'outer loop'", line=line_number)
            state, in_loop = "loop", 0
        elif state == "loop":
            if keyword == "vertex":
                if len(words) != 4:
                    raise MeshFileError(source, "expected 'vertex X Y Z'", line=line_number)
                if in_loop == 3:
                    raise MeshFileError(source, "facet has more than three vertices", line=line_number)
                corners.extend(words[1:])
                in_loop += 1
            elif keyword == "endloop":
                if in_loop != 3:
                    raise MeshFileError(source, f"facet has {in_loop} vertices, expected 3", line=line_number)
                state = "endloop"
            else:
                raise MeshFileError(source, f"expected 'vertex' or 'endloop', found {words[0]!r}", line=line_number)
        elif state == "endloop":
            if keyword != "endfacet":
                raise MeshFileError(source, f"expected 'endfacet', found {words[0]!r}", line=line_number)
            state = "solid"
    if state != "outside":
        raise MeshFileError(source, "file ends inside a solid (missing 'endsolid'); truncated?", line=line_number)
    soup = _parse_floats(source, corners, "vertex coordinate").reshape(-1, 3, 3)
    return Mesh(source, "stl-ascii", unit, scale, soup=soup)


def _parse_floats(source: str, words: list[str], what: str) -> np.ndarray:
    try:
        return np.array(words, dtype=np.float64)
    except ValueError:
        for word in words:
            try:
                float(word)
            except ValueError:
                raise MeshFileError(source, f"{what} {word!r} is not a number") from None
        raise


# ---------------------------------------------------------------------------- OBJ


def _read_obj(source: str, data: bytes, unit: str, scale: float) -> Mesh:
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


# ---------------------------------------------------------------------------- PLY

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


def _read_ply(source: str, data: bytes, unit: str, scale: float) -> Mesh:
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
            if element.name == "face" and prop.name in ("vertex_indices", "vertex_index"):
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
                        if not np.all(np.isfinite(items)) or np.any(items != np.round(items)) or np.any(np.abs(items) > 2**53):
                            raise MeshFileError(source, f"PLY list {prop.name!r} holds a value that is not an integer index")
                        rows[prop.name].append(items.astype(np.int64))
                        position += 1 + length
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
