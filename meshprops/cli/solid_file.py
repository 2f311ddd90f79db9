"""``--write-solid PATH``: the surface a measurement actually integrated, as a mesh file.

Binary STL, or binary PLY when PATH ends in ``.ply``; coordinates in the mesh file's own
length unit, so it opens beside the input. Written through a temporary file and a rename,
never half-written, and never over an input file.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

import numpy as np

from ..errors import InputValueError, OutputFileError
from ..geometry.faces import face_corners
from ..io import load_mesh
from ..io.writers import write_binary_stl, write_ply
from ..measure.body import BodyMeasurement


def check_solid_target(target: Path, inputs: list[Path]) -> None:
    """Refuse a target that is one of the inputs, or a second input (one body per file)."""
    if len(inputs) != 1:
        raise InputValueError("--write-solid", "one mesh file to measure", f"{len(inputs)} files")
    if target.suffix.lower() not in (".stl", ".ply"):
        raise InputValueError("--write-solid", "a file name ending in .stl or .ply", str(target))
    for path in inputs:
        same = os.path.abspath(target) == os.path.abspath(path)
        if not same and target.exists() and path.exists():
            same = os.path.samefile(target, path)
        if same:
            raise InputValueError("--write-solid", "a file other than the input", str(target))


def write_integrated_solid(target: Path, body: BodyMeasurement) -> None:
    """Write the surface ``body`` integrated (the input itself when nothing was recovered)."""
    solid = body.solid
    if solid is not None and solid.changed:
        vertices = solid.integrated_vertices + solid.integrated_offset
        faces = solid.integrated_faces
    else:
        mesh = load_mesh(body.source, body.length_unit)
        corners = face_corners(mesh, np.arange(mesh.face_count))
        vertices, faces = corners.reshape(-1, 3), np.arange(3 * mesh.face_count).reshape(-1, 3)
    directory = os.path.dirname(os.path.abspath(target))
    try:
        handle, temporary = tempfile.mkstemp(prefix=".meshprops-", suffix=target.suffix, dir=directory)
    except OSError as exc:
        raise OutputFileError(str(target), exc.strerror or str(exc)) from None
    os.close(handle)
    try:
        if target.suffix.lower() == ".ply":
            write_ply(temporary, vertices, faces, binary=True)
        else:
            write_binary_stl(temporary, vertices[faces], header=b"meshprops: the solid integrated")
        os.replace(temporary, target)
    except OSError as exc:
        if os.path.exists(temporary):
            os.unlink(temporary)
        raise OutputFileError(str(target), exc.strerror or str(exc)) from None
