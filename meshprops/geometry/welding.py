"""Welding triangle corners into vertices, exactly.

A 64-bit hash of each corner's coordinate bits is sorted with the corner index packed into its
low bits; the true coordinates are then compared along the sorted order, so hash collisions
are detected and resolved exactly (never trusted). Vertices are numbered in order of first
appearance, which keeps later gathers local. See DEVELOPERS.md (validation fast path).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..io import Mesh
from .compiled import compiled_answers, kernels
from .faces import BLOCK_FACES, mesh_bounding_box


@dataclass(frozen=True, slots=True, eq=False)
class Topology:
    """Faces as welded vertex ids.

    Attributes
    ----------
    face_vertices : (F, 3) int32 (int64 for huge meshes), welded vertex ids in corner
        order, dense and numbered in order of first appearance (so nearby faces
        have nearby ids, which keeps later gathers local)
    vertex_count : number of distinct vertex positions
    id_bound : every id is smaller than this (``vertex_count`` after welding)
    vertex_positions : (V, 3) coordinates of each vertex id in the file's unit and float type,
        when the weld kept them (the compiled weld does), else None
    """

    face_vertices: np.ndarray
    vertex_count: int
    id_bound: int
    vertex_positions: np.ndarray | None = None


# splitmix64 finalizer multipliers
_MIX1 = np.uint64(0xBF58476D1CE4E5B9)
_MIX2 = np.uint64(0x94D049BB133111EB)

_SEED = np.uint64(0x9E3779B97F4A7C15)  # the golden-ratio constant: any fixed odd seed works


def index_dtype(count: int):
    return np.int32 if count < 2**31 - 1 else np.int64


def _coordinate_rows(positions: np.ndarray) -> np.ndarray:
    """Contiguous float32/float64 rows with -0.0 made +0.0 (a copy only when needed)."""
    data = positions
    if data.dtype not in (np.float32, np.float64):
        data = data.astype(np.float64)
    data = np.ascontiguousarray(data)
    unsigned = np.uint32 if data.dtype.itemsize == 4 else np.uint64
    negative_zero = unsigned(1 << (data.dtype.itemsize * 8 - 1))
    if np.any(data.view(unsigned) == negative_zero):  # -0.0 + 0.0 is +0.0; every other value is unchanged
        data = data + data.dtype.type(0.0)
    return data


def _mix_into(out: np.ndarray, tmp: np.ndarray) -> None:
    """The splitmix64 finalizer, in place. Every input bit reaches every output bit, which
    matters here: round coordinates (1.0, 0.5, 25.0) have all-zero low mantissa bits, and a
    bare multiply only carries bits upwards, so a weaker mix makes false collisions common."""
    np.right_shift(out, np.uint64(30), out=tmp)
    out ^= tmp
    out *= _MIX1
    np.right_shift(out, np.uint64(27), out=tmp)
    out ^= tmp
    out *= _MIX2
    np.right_shift(out, np.uint64(31), out=tmp)
    out ^= tmp


def _hash_rows(data: np.ndarray) -> np.ndarray:
    """A 64-bit hash of the coordinate bits of each row of ``data`` (N, 3) float32/float64.

    The row's words are absorbed one at a time, ``h = mix(h ^ word)``.
    """
    count = data.shape[0]
    result = np.empty(count, dtype=np.uint64)
    block = 1 << 20
    scratch = np.empty(min(count, block), dtype=np.uint64)
    if data.dtype == np.float32:
        # x and y together are one (unaligned) 64-bit word, z a 32-bit one.
        pair = np.ndarray((count,), dtype=np.uint64, buffer=data, offset=0, strides=(12,))
        last = np.ndarray((count,), dtype=np.uint32, buffer=data, offset=8, strides=(12,))
        words = (pair, last)
    else:
        bits = data.view(np.uint64)
        words = (bits[:, 0], bits[:, 1], bits[:, 2])
    for start in range(0, count, block):
        stop = min(count, start + block)
        out, tmp = result[start:stop], scratch[: stop - start]
        out[...] = _SEED
        for word in words:
            np.bitwise_xor(out, word[start:stop], out=out, casting="unsafe")
            _mix_into(out, tmp)
    return result


def _hash_runs(keys: np.ndarray, index_type) -> tuple[np.ndarray, int, np.ndarray]:
    """Group rows by hash, numbering the groups densely in order of first appearance.

    ``keys`` (N,) uint64 row hashes, consumed (sorted in place). The top bits of
    each hash are packed with the row index and sorted; within a run of equal
    hashes rows come in index order, so the run's first row is its smallest.

    Returns ``(ids, count, firsts)``: (N,) the group of each row, the number of
    groups, and (count,) the first row of each group (ascending).
    """
    count = keys.shape[0]
    index_bits = max(1, int(count - 1).bit_length())
    keys >>= np.uint64(index_bits)
    keys <<= np.uint64(index_bits)
    for start in range(0, count, 1 << 20):
        stop = min(count, start + (1 << 20))
        keys[start:stop] |= np.arange(start, stop, dtype=np.uint64)
    keys.sort()
    order = np.empty(count, dtype=index_type)
    np.bitwise_and(keys, np.uint64((1 << index_bits) - 1), out=order, casting="unsafe")
    keys >>= np.uint64(index_bits)  # the truncated hash, in sorted order
    run_start = np.empty(count, dtype=bool)
    run_start[0] = True
    np.not_equal(keys[1:], keys[:-1], out=run_start[1:])
    starts = np.flatnonzero(run_start)
    del run_start
    firsts = order[starts]  # first row of each run, in hash order
    # Rank the runs by first row: mark first rows in row order and count the marks.
    rank = np.zeros(count, dtype=index_type)
    rank[firsts] = 1
    np.cumsum(rank, out=rank)
    group = rank[firsts] - 1
    del rank
    lengths = np.diff(np.append(starts, count))
    ids = np.empty(count, dtype=index_type)
    ids[order] = np.repeat(group, lengths)
    firsts.sort()
    return ids, int(starts.size), firsts


def weld_positions(positions: np.ndarray) -> tuple[np.ndarray, int]:
    """Label bit-identical rows of ``positions`` (N, 3) with the same vertex id.

    Returns ``(ids, vertex_count)``: ``ids`` (N,) int32 (int64 above 2**31 rows)
    in ``0 .. vertex_count - 1``, numbered in order of first appearance (rows split
    off by a rare truncated-hash collision get the last ids), and the number of
    distinct positions. Exact: rows get the same id if and only if
    their coordinates are equal (with -0.0 equal to +0.0).

    Sort (truncated hash | row index) keys; each run of equal hashes names its
    first row; then every row is compared with the row it was given (in file
    order, so the gather is mostly local) and runs holding a hash collision are
    relabelled exactly.
    """
    count = positions.shape[0]
    index_type = index_dtype(count)
    if count == 0:
        return np.zeros(0, dtype=index_type), 0
    data = _coordinate_rows(positions)
    ids, group_count, firsts = _hash_runs(_hash_rows(data), index_type)
    unsigned = data.view(np.uint32 if data.dtype.itemsize == 4 else np.uint64)
    block = 1 << 20
    blocks = ((start, unsigned[start : start + block]) for start in range(0, count, block))
    return ids, _resolve_collisions(ids, group_count, unsigned[firsts], blocks)


def _resolve_collisions(ids: np.ndarray, count: int, table: np.ndarray, blocks) -> int:
    """Verify every row against the first row of its id and split off the rows that differ.

    ``table`` (count, 3) holds the coordinate bits of each id's first row; ``blocks``
    yields ``(first_row, bits (k, 3))`` over all rows, normalized like the table. A
    row that differs shares only a truncated hash with its id's first row; rows
    equal to each other within the same id get a new id together. ``ids`` is
    updated in place; returns the new count. Collisions are rare (a few rows per
    million vertices), so exact grouping by ``np.unique`` is cheap.
    """
    wrong_rows, wrong_bits = [], []
    for start, bits in blocks:
        named = np.take(table, ids[start : start + bits.shape[0]], axis=0)
        if not np.array_equal(named, bits):
            local = np.flatnonzero(np.any(named != bits, axis=1))
            wrong_rows.append(local + start)
            wrong_bits.append(bits[local].copy())
    if not wrong_rows:
        return count
    rows = np.concatenate(wrong_rows)
    keys = np.column_stack([ids[rows].astype(np.uint64), np.concatenate(wrong_bits).astype(np.uint64)])
    _, inverse = np.unique(keys, axis=0, return_inverse=True)
    inverse = inverse.reshape(-1)
    ids[rows] = count + inverse
    return count + int(inverse.max()) + 1


def _weld_memory_map(mesh: Mesh) -> tuple[np.ndarray, int, np.ndarray]:
    """Weld the corners of a memory-mapped soup without copying it whole.

    Hashes are taken block by block (the file's pages released behind the
    reader); each corner is then compared, block by block again, with the
    first corner of its vertex, gathered once into a table of one row per
    vertex; corners that differ (a truncated-hash collision) are split off
    exactly by :func:`_resolve_collisions`. Returns ``(ids (3F,), vertex_count, box (2, 3))``.
    """
    soup = mesh.soup
    count = mesh.face_count * 3
    keys = np.empty(count, dtype=np.uint64)
    buffer = np.empty((BLOCK_FACES, 3, 3), dtype=soup.dtype)
    low = np.full(3, np.inf)
    high = np.full(3, -np.inf)
    for start, corners in _soup_corner_blocks(mesh, buffer):
        keys[start : start + corners.shape[0]] = _hash_rows(corners)
        for axis in range(3):  # per column: numpy's min(axis=0) over (k, 3) rows is ~20x slower
            column = corners[:, axis]
            low[axis] = min(low[axis], float(column.min()))
            high[axis] = max(high[axis], float(column.max()))
    dense, vertex_count, representatives = _hash_runs(keys, index_dtype(count))
    del keys
    table = np.ascontiguousarray(soup[representatives // 3, representatives % 3])
    table += table.dtype.type(0.0)
    unsigned = np.uint32 if soup.dtype.itemsize == 4 else np.uint64
    blocks = ((start, corners.view(unsigned)) for start, corners in _soup_corner_blocks(mesh, buffer))
    vertex_count = _resolve_collisions(dense, vertex_count, table.view(unsigned), blocks)
    return dense, vertex_count, np.stack([low, high])


def _soup_corner_blocks(mesh: Mesh, buffer: np.ndarray):
    """Yield ``(first_corner_row, corners (k, 3))`` of a memory-mapped soup, copied into
    ``buffer`` (one strided copy out of the file's records) with -0.0 made +0.0."""
    for start, block in mesh.coordinate_blocks(BLOCK_FACES):
        buffer[: block.shape[0]] = block
        corners = buffer[: block.shape[0]].reshape(-1, 3)
        corners += corners.dtype.type(0.0)  # -0.0 + 0.0 is +0.0; every other value is unchanged
        yield 3 * start, corners


def _soup_corners(mesh: Mesh) -> np.ndarray:
    """``(3F, 3)`` contiguous corner coordinates of a soup mesh, in the file's dtype.

    A memory-mapped binary STL is copied block by block with its pages released
    behind the copy (:meth:`meshprops.io.Mesh.coordinate_blocks`), so the file
    does not stay resident next to the copy.
    """
    soup = mesh.soup
    if soup.flags.c_contiguous:
        return soup.reshape(-1, 3)
    corners = np.empty((mesh.face_count * 3, 3), dtype=soup.dtype)
    blocks = mesh.coordinate_blocks(BLOCK_FACES) if hasattr(mesh, "coordinate_blocks") else (
        (start, soup[start : start + BLOCK_FACES]) for start in range(0, mesh.face_count, BLOCK_FACES)
    )
    for start, block in blocks:
        corners[start * 3 : (start + block.shape[0]) * 3] = block.reshape(-1, 3)
    return corners


def weld_exact(mesh: Mesh) -> Topology:
    """Faces of ``mesh`` as dense ids of vertices with bit-identical coordinates."""
    return weld_with_box(mesh)[0]


def weld_with_box(mesh: Mesh) -> tuple[Topology, np.ndarray]:
    """The welded topology and the (2, 3) bounding box (file unit), in one pass over the data."""
    if compiled_answers(mesh.face_count) and _float_rows(mesh):
        return _weld_compiled_mesh(mesh)
    if mesh.soup is not None and not mesh.soup.flags.c_contiguous and mesh.soup.dtype in (np.float32, np.float64):
        ids, vertex_count, box = _weld_memory_map(mesh)
        return Topology(ids.reshape(-1, 3), vertex_count, vertex_count), box
    rows = mesh_rows(mesh)
    ids, vertex_count = weld_positions(rows)
    box = mesh_bounding_box(mesh, rows)
    if mesh.soup is not None:
        return Topology(ids.reshape(-1, 3), vertex_count, vertex_count), box
    return Topology(ids[mesh.faces], vertex_count, vertex_count), box


def mesh_rows(mesh: Mesh) -> np.ndarray:
    """The coordinate rows to weld: (3F, 3) contiguous corners of a soup, or the (V, 3) vertices."""
    return _soup_corners(mesh) if mesh.soup is not None else mesh.vertices


# ----------------------------------------------------------------------------- compiled weld


def _float_rows(mesh: Mesh) -> bool:
    data = mesh.soup if mesh.soup is not None else mesh.vertices
    return data.dtype in (np.float32, np.float64)


class _CompiledWeld:
    """The state of a weld by :func:`meshprops.geometry.mesh_kernels.weld_rows`, fed block by block."""

    def __init__(self, row_count: int, dtype, index_type):
        self.kernels = kernels("mesh_kernels")
        self.unsigned = np.uint32 if np.dtype(dtype).itemsize == 4 else np.uint64
        self.dtype = np.dtype(dtype)
        self.ids = np.empty(row_count, dtype=index_type)
        # about one vertex a face on closed meshes (V ~ F / 2 = rows / 6): room for that, grown as needed
        expected = max(16, row_count // 4)
        self.table = np.full(1 << int(2 * expected - 1).bit_length(), -1, dtype=np.int32)
        self.vertex_bits = np.empty((expected, 3), dtype=self.unsigned)
        self.count = 0

    def add(self, first_row: int, rows: np.ndarray) -> None:
        """Weld ``rows`` (k, 3) of the float type, -0.0 already made +0.0."""
        bits = np.ascontiguousarray(rows).view(self.unsigned)
        self.table, self.vertex_bits, self.count = self.kernels.weld_rows(
            bits, self.ids, first_row, self.table, self.vertex_bits, self.count
        )

    def positions(self) -> np.ndarray:
        """(V, 3) coordinates of each vertex id, in the rows' float type."""
        return self.vertex_bits[: self.count].view(self.dtype)


def weld_compiled(positions: np.ndarray, *, index_type=None) -> Topology:
    """:func:`weld_positions` by the compiled kernel, as a Topology of faces ``(N / 3, 3)`` of the rows.

    ``positions`` (N, 3) float32/float64, N a multiple of 3 (each three rows a face's corners).
    Ids are numbered in order of first appearance; rows share an id if and only if their
    coordinates are equal (-0.0 equal to +0.0).
    """
    data = _coordinate_rows(positions)
    weld = _CompiledWeld(data.shape[0], data.dtype, index_type or index_dtype(data.shape[0]))
    for start in range(0, data.shape[0], 3 * BLOCK_FACES):
        weld.add(start, data[start : start + 3 * BLOCK_FACES])
    return Topology(weld.ids.reshape(-1, 3), weld.count, weld.count, weld.positions())


def _weld_compiled_mesh(mesh: Mesh) -> tuple[Topology, np.ndarray]:
    """The compiled weld of a soup (block by block out of the file) or of a mesh's vertex rows."""
    if mesh.soup is None:
        data = _coordinate_rows(mesh.vertices)
        weld = _CompiledWeld(data.shape[0], data.dtype, index_dtype(data.shape[0]))
        weld.add(0, data)
        positions = weld.positions()
        topology = Topology(weld.ids[mesh.faces], weld.count, weld.count, positions)
        return topology, mesh_bounding_box(mesh, mesh.vertices)
    weld = _CompiledWeld(3 * mesh.face_count, mesh.soup.dtype, index_dtype(3 * mesh.face_count))
    buffer = np.empty((BLOCK_FACES, 3, 3), dtype=mesh.soup.dtype)
    for start, corners in _soup_corner_blocks(mesh, buffer):
        weld.add(start, corners)
    positions = weld.positions()
    topology = Topology(weld.ids.reshape(-1, 3), weld.count, weld.count, positions)
    return topology, mesh_bounding_box(mesh, positions)
