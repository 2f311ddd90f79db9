"""Mesh writers: binary and ASCII STL, OBJ, PLY (ASCII and binary little-endian).

Used to build the bundled samples, test fixtures and benchmark files, and by
users who want a repaired mesh back. Coordinates are written as given (no unit
conversion); OBJ and ASCII formats use ``repr``-exact floats.
"""

from __future__ import annotations

import os

import numpy as np

from .mesh import STL_RECORD


def _triangles(vertices, faces) -> np.ndarray:
    return np.asarray(vertices, dtype=np.float64)[np.asarray(faces)]


def _unit_normals(triangles: np.ndarray) -> np.ndarray:
    normals = np.cross(triangles[:, 1] - triangles[:, 0], triangles[:, 2] - triangles[:, 0])
    lengths = np.linalg.norm(normals, axis=1, keepdims=True)
    return np.divide(normals, lengths, out=np.zeros_like(normals), where=lengths > 0)


def write_binary_stl(path: str | os.PathLike, triangles: np.ndarray, header: bytes = b"meshprops binary STL") -> None:
    """Write ``(F, 3, 3)`` corners as binary STL (float32, little endian)."""
    triangles = np.asarray(triangles, dtype=np.float64)
    records = np.zeros(len(triangles), dtype=STL_RECORD)
    records["normal"] = _unit_normals(triangles)
    records["vertices"] = triangles
    with open(path, "wb") as handle:
        handle.write(header[:80].ljust(80, b" "))
        handle.write(np.uint32(len(triangles)).tobytes())
        records.tofile(handle)


def write_ascii_stl(path: str | os.PathLike, triangles: np.ndarray, name: str = "part") -> None:
    """Write ``(F, 3, 3)`` corners as ASCII STL with exact (repr) coordinates."""
    triangles = np.asarray(triangles, dtype=np.float64)
    normals = _unit_normals(triangles)
    lines = [f"solid {name}"]
    for normal, corners in zip(normals, triangles):
        lines.append("  facet normal {!r} {!r} {!r}".format(*map(float, normal)))
        lines.append("    outer loop")
        for corner in corners:
            lines.append("      vertex {!r} {!r} {!r}".format(*map(float, corner)))
        lines.append("    endloop")
        lines.append("  endfacet")
    lines.append(f"endsolid {name}")
    with open(path, "w", encoding="ascii") as handle:
        handle.write("\n".join(lines) + "\n")


def write_obj(path: str | os.PathLike, vertices, faces, comment: str = "") -> None:
    """Write an indexed mesh as OBJ (1-based indices, exact coordinates)."""
    lines = [f"# {line}" for line in comment.splitlines()]
    lines += ["v {!r} {!r} {!r}".format(*map(float, v)) for v in np.asarray(vertices, dtype=np.float64)]
    lines += ["f {} {} {}".format(*(int(i) + 1 for i in f)) for f in np.asarray(faces)]
    with open(path, "w", encoding="utf-8") as handle:
        handle.write("\n".join(lines) + "\n")


def write_ply(path: str | os.PathLike, vertices, faces, *, binary: bool = True) -> None:
    """Write an indexed mesh as PLY with float64 vertices and int32 triangle lists."""
    vertices = np.asarray(vertices, dtype=np.float64)
    faces = np.asarray(faces, dtype=np.int64)
    encoding = "binary_little_endian" if binary else "ascii"
    header = (
        f"ply\nformat {encoding} 1.0\ncomment written by meshprops\n"
        f"element vertex {len(vertices)}\nproperty double x\nproperty double y\nproperty double z\n"
        f"element face {len(faces)}\nproperty list uchar int vertex_indices\nend_header\n"
    )
    with open(path, "wb") as handle:
        handle.write(header.encode("ascii"))
        if binary:
            handle.write(vertices.astype("<f8").tobytes())
            table = np.zeros(len(faces), dtype=[("n", "u1"), ("i", "<i4", (3,))])
            table["n"] = 3
            table["i"] = faces
            handle.write(table.tobytes())
        else:
            text = ["{!r} {!r} {!r}".format(*map(float, v)) for v in vertices]
            text += ["3 {} {} {}".format(*map(int, f)) for f in faces]
            handle.write(("\n".join(text) + "\n").encode("ascii"))


def copy_as_binary_stl(source: str | os.PathLike, target: str | os.PathLike) -> None:
    """Write the mesh file ``source`` (any format meshprops reads) as binary STL at ``target``.

    The coordinates are copied in the file's own unit (float32, as binary STL stores them),
    through a temporary file and a rename, so ``target`` is never half-written.
    """
    import tempfile

    from ..errors import OutputFileError
    from .loaders import load_mesh

    mesh = load_mesh(source, "m")  # "m": the chunks are then the file's own numbers
    triangles = np.concatenate(list(mesh.triangle_chunks())) if mesh.face_count else np.zeros((0, 3, 3))
    folder = os.path.dirname(os.path.abspath(target))
    try:
        handle, temporary = tempfile.mkstemp(prefix=".meshprops-", suffix=".stl", dir=folder)
    except OSError as exc:
        raise OutputFileError(str(target), exc.strerror or str(exc)) from None
    os.close(handle)
    try:
        write_binary_stl(temporary, triangles, header=b"meshprops binary STL copy of " + os.path.basename(source).encode("utf-8", "replace"))
        os.replace(temporary, target)
    except OSError as exc:
        if os.path.exists(temporary):
            os.unlink(temporary)
        raise OutputFileError(str(target), exc.strerror or str(exc)) from None
