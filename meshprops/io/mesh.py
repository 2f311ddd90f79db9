"""The :class:`Mesh` container: coordinates as read (file unit, file dtype), with the
length unit declared once and applied as triangles are read. Binary STL stays a zero-copy
memory map whose pages are released behind the reader.
"""

from __future__ import annotations

import mmap
from collections.abc import Iterator
from dataclasses import dataclass

import numpy as np

from ..errors import MeshFileError
from ..units import metres_per

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

        Integrating about it (see :func:`meshprops.physics.moments.integrate_mesh`) keeps the
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
    return checked_mesh(Mesh(source, "array", length_unit, metres_per(length_unit), soup=soup))


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
    return checked_mesh(Mesh(source, "array", length_unit, metres_per(length_unit), vertices=vertices, faces=faces))


#: Coordinates beyond this magnitude (in the file's unit) are refused: the moments multiply five
#: coordinates together, which would overflow float64 near 1e61.
MAX_ABS_COORDINATE = 1e30


def checked_mesh(mesh: Mesh) -> Mesh:
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
