"""meshprops: exact mass properties from closed triangle meshes.

Pure library core (numpy in, frozen dataclasses out); the ``meshprops`` command
is a thin layer over it. All quantities are SI (m, kg, s) in the input frame.
"""

__version__ = "0.1.0"

from .body import BodyMeasurement, measure_file, measure_mesh  # noqa: E402
from .checks import Finding, ValidationReport, validate  # noqa: E402
from .errors import (  # noqa: E402
    InputValueError,
    InvalidMeshError,
    MeshFileError,
    MeshpropsError,
    PhysicsError,
    UnitError,
)
from .io import Mesh, load_mesh, mesh_from_arrays, mesh_from_triangles  # noqa: E402
from .mass import MassProperties, combine, rotate_tensor  # noqa: E402
from .moments import Moments, integrate_chunks, integrate_triangles  # noqa: E402
from .principal import PrincipalFrame, principal_frame  # noqa: E402
from .spin import SpinState, spin  # noqa: E402

_LAZY = {"load_manifest": "assembly", "measure_manifest": "assembly", "measure_assembly": "assembly"}


def __getattr__(name: str):
    """Assembly functions load on first use, so that measuring one mesh does not import them."""
    if name in _LAZY:
        import importlib

        return getattr(importlib.import_module(f".{_LAZY[name]}", __name__), name)
    raise AttributeError(f"module 'meshprops' has no attribute {name!r}")


__all__ = [
    "BodyMeasurement", "Finding", "InputValueError", "InvalidMeshError", "MassProperties", "Mesh",
    "MeshFileError", "MeshpropsError", "Moments", "PhysicsError", "PrincipalFrame", "SpinState",
    "UnitError", "ValidationReport", "combine", "integrate_chunks", "integrate_triangles", "load_mesh",
    "measure_file", "measure_mesh", "mesh_from_arrays", "mesh_from_triangles", "principal_frame",
    "rotate_tensor", "spin", "validate", "load_manifest", "measure_manifest", "measure_assembly",
]  # fmt: skip
