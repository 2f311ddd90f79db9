"""Shared fixtures: writing one mesh in every supported file format, comparing
tensors, random rotations.

Fixtures return plain functions so tests stay explicit about what they build.
The meshes themselves come from :mod:`meshprops.geometry.shapes` (closed, outward).
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

import numpy as np
import pytest

from meshprops.geometry import shapes
from meshprops.io import writers

# The fixture catalogue of broken and sound meshes lives in tests/meshes/catalogue.py
# (also run as a script to write the example folders): make it importable as meshes.catalogue.
sys.path.insert(0, str(Path(__file__).resolve().parent))

#: Every file format the loaders read, as written by :func:`write_mesh_file`.
MESH_FORMATS = ("stl-binary", "stl-ascii", "obj", "ply-ascii", "ply-binary", "ply-binary-big-endian")

_EXTENSION = {
    "stl-binary": ".stl",
    "stl-ascii": ".stl",
    "obj": ".obj",
    "ply-ascii": ".ply",
    "ply-binary": ".ply",
    "ply-binary-big-endian": ".ply",
}


def write_ply_big_endian(path: str | os.PathLike, vertices, faces) -> None:
    """Binary big-endian PLY (float64 x y z, uchar/int32 face lists); meshprops' writer only does little-endian."""
    vertices = np.asarray(vertices, dtype=np.float64)
    faces = np.asarray(faces, dtype=np.int64)
    header = (
        "ply\nformat binary_big_endian 1.0\n"
        f"element vertex {len(vertices)}\nproperty double x\nproperty double y\nproperty double z\n"
        f"element face {len(faces)}\nproperty list uchar int vertex_indices\nend_header\n"
    )
    table = np.zeros(len(faces), dtype=[("n", "u1"), ("i", ">i4", (3,))])
    table["n"] = 3
    table["i"] = faces
    with open(path, "wb") as handle:
        handle.write(header.encode("ascii"))
        handle.write(vertices.astype(">f8").tobytes())
        handle.write(table.tobytes())


def write_mesh_file(directory: str | os.PathLike, stem: str, vertices, faces, file_format: str) -> Path:
    """Write the indexed mesh ``(vertices, faces)`` as ``file_format`` into ``directory``; return the path."""
    path = Path(directory) / f"{stem}{_EXTENSION[file_format]}"
    if file_format == "stl-binary":
        writers.write_binary_stl(path, shapes.triangles_of(vertices, faces))
    elif file_format == "stl-ascii":
        writers.write_ascii_stl(path, shapes.triangles_of(vertices, faces))
    elif file_format == "obj":
        writers.write_obj(path, vertices, faces)
    elif file_format == "ply-ascii":
        writers.write_ply(path, vertices, faces, binary=False)
    elif file_format == "ply-binary":
        writers.write_ply(path, vertices, faces, binary=True)
    elif file_format == "ply-binary-big-endian":
        write_ply_big_endian(path, vertices, faces)
    else:  # pragma: no cover - a typo in a test
        raise ValueError(f"unknown test format {file_format!r}")
    return path


def assert_tensor_close(actual, expected, rtol: float, what: str = "") -> None:
    """Element-wise ``|actual - expected| <= rtol * max|expected|`` (zeros compared at that scale too)."""
    actual = np.asarray(actual, dtype=np.float64)
    expected = np.asarray(expected, dtype=np.float64)
    scale = max(float(np.abs(expected).max()), np.finfo(float).tiny)
    np.testing.assert_allclose(actual, expected, rtol=0.0, atol=rtol * scale, err_msg=what)


def rotation_from_quaternion(quaternion) -> np.ndarray:
    """Proper rotation matrix of a (not necessarily unit) quaternion ``(w, x, y, z)``."""
    w, x, y, z = np.asarray(quaternion, dtype=np.float64) / np.linalg.norm(quaternion)
    return np.array(
        [
            [1 - 2 * (y * y + z * z), 2 * (x * y - z * w), 2 * (x * z + y * w)],
            [2 * (x * y + z * w), 1 - 2 * (x * x + z * z), 2 * (y * z - x * w)],
            [2 * (x * z - y * w), 2 * (y * z + x * w), 1 - 2 * (x * x + y * y)],
        ]
    )


def asymmetric_part():
    """A closed, outward mesh with no symmetry: an L-shaped bracket plus an offset boss.

    Every coordinate is a multiple of 1/8, so float32 (binary STL) stores it
    exactly and every file format describes the very same solid.
    """
    bracket = shapes.extrusion([(1.0, 1.0), (1.0, 4.0), (0.0, 4.0), (0.0, 0.0), (3.0, 0.0), (3.0, 1.0)], 2.0, 0.5)
    boss = shapes.box((1.0, 0.75, 1.25), (5.0, 2.5, 1.125))
    return shapes.merge(bracket, boss)


@pytest.fixture
def write_mesh():
    """``write_mesh(directory, stem, vertices, faces, file_format) -> Path``."""
    return write_mesh_file


@pytest.fixture(params=MESH_FORMATS)
def mesh_format(request) -> str:
    """Each supported file format in turn."""
    return request.param


@pytest.fixture
def close():
    """``close(actual, expected, rtol, what="")``: tensor comparison relative to the largest expected entry."""
    return assert_tensor_close


@pytest.fixture
def rotation():
    """``rotation(quaternion) -> (3, 3)`` proper rotation matrix."""
    return rotation_from_quaternion


@pytest.fixture
def part():
    """``(vertices, faces)`` of :func:`asymmetric_part`."""
    return asymmetric_part()


# ---------------------------------------------------------------- batch backends
# The batch tests run once per backend: serial, a local process pool, and a real Dask
# LocalCluster of two worker processes on 127.0.0.1 (started once per session, stopped at the end).

BATCH_BACKENDS = ("serial", "processes", "dask")


@pytest.fixture(scope="session")
def dask_cluster():
    """A LocalCluster of two single-thread worker processes on the loopback interface."""
    distributed = pytest.importorskip("distributed", reason="the dask extra (meshprops[dask]) is not installed")
    cluster = distributed.LocalCluster(
        n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1", dashboard_address=":0", silence_logs=40
    )
    try:
        yield cluster
    finally:
        cluster.close()


@pytest.fixture(params=BATCH_BACKENDS)
def batch_backend(request):
    """Each backend object in turn, closed after the test (the cluster stays up for the session)."""
    from meshprops.batch.backends import DaskBackend, ProcessPoolBackend, SerialBackend

    if request.param == "serial":
        backend = SerialBackend()
    elif request.param == "processes":
        backend = ProcessPoolBackend(2)
    else:
        backend = DaskBackend(request.getfixturevalue("dask_cluster").scheduler_address)
    try:
        yield backend
    finally:
        backend.close()


@pytest.fixture(params=BATCH_BACKENDS)
def batch_options(request):
    """The command-line options that pick each backend in turn: ``--jobs 1``, ``--jobs 2``,
    ``--scheduler ADDRESS`` of the session's LocalCluster."""
    if request.param == "serial":
        return ["--jobs", "1"]
    if request.param == "processes":
        return ["--jobs", "2"]
    return ["--scheduler", request.getfixturevalue("dask_cluster").scheduler_address]


@pytest.fixture(scope="session", autouse=True)
def compiled_crossing_kernels():
    """Compile (once per machine; then loaded from numba's cache) the self-intersection kernels before
    any test, so that no command's output depends on whether this is the first run on a fresh clone."""
    from meshprops.geometry.warm_up import warm_up

    warm_up()
