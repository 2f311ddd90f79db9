"""meshprops: exact mass properties from closed triangle meshes.

Pure library core (numpy in, frozen dataclasses out); the ``meshprops`` command
is a thin layer over it. All quantities are SI (m, kg, s) in the input frame.

The package is laid out as the data flows (see DEVELOPERS.md): ``io`` (files -> Mesh),
``geometry``, ``physics`` (moments -> mass properties -> views), ``validation``,
``measure`` (bodies and assemblies), ``batch``, ``output`` and ``cli``. The names below are
the public API; nothing inside the package imports this module.
"""

from .errors import (
    InputValueError,
    InvalidMeshError,
    MeshFileError,
    MeshpropsError,
    PhysicsError,
    UnitError,
)
from .io import Mesh, load_mesh, mesh_from_arrays, mesh_from_triangles
from .measure.body import BodyMeasurement, measure_file, measure_mesh
from .measure.options import MeasureOptions
from .physics.mass import MassProperties, combine, rotate_tensor
from .physics.moments import Moments, integrate_chunks, integrate_triangles
from .physics.principal import PrincipalFrame, principal_frame
from .physics.spin import SpinState, spin
from .validation.checks import validate
from .validation.findings import Finding, ValidationReport
from .validation.solid import Solid, SolidOptions, resolve_solid
from .version import __version__

_LAZY = {
    "load_manifest": "measure.manifest",
    "measure_manifest": "measure.assembly",
    "measure_assembly": "measure.assembly",
    "measure_files": "batch.runner",
}


def __getattr__(name: str):
    """Assembly and batch functions load on first use, so that measuring one mesh does not import them."""
    if name in _LAZY:
        import importlib

        return getattr(importlib.import_module(f".{_LAZY[name]}", __name__), name)
    raise AttributeError(f"module 'meshprops' has no attribute {name!r}")


__all__ = [
    "BodyMeasurement", "Finding", "InputValueError", "InvalidMeshError", "MassProperties", "MeasureOptions",
    "Mesh", "MeshFileError", "MeshpropsError", "Moments", "PhysicsError", "PrincipalFrame", "SpinState",
    "UnitError", "ValidationReport", "__version__", "combine", "integrate_chunks", "integrate_triangles",
    "load_mesh", "measure_file", "measure_mesh", "mesh_from_arrays", "mesh_from_triangles", "principal_frame",
    "rotate_tensor", "spin", "validate", "Solid", "SolidOptions", "resolve_solid", "load_manifest", "measure_manifest", "measure_assembly", "measure_files",
]  # fmt: skip
