"""meshprops: exact mass properties from closed triangle meshes.

Pure library core (numpy in, frozen dataclasses out); the ``meshprops`` command
is a thin layer over it. All quantities are SI (m, kg, s) in the input frame.

The package is laid out as the data flows (see DEVELOPERS.md): ``io`` (files -> Mesh),
``geometry``, ``physics`` (moments -> mass properties -> views), ``validation``,
``measure`` (bodies and assemblies), ``batch``, ``output`` and ``cli``. The names below are
the public API; nothing inside the package imports this module.
"""

#: public name -> the module (below this package) that defines it; each loads on first use,
#: so that ``python -m meshprops`` (which imports this package first) pays only for what the
#: command runs: a batch run served wholly from the cache never imports numpy.
_LAZY = {
    **dict.fromkeys(
        ("InputValueError", "InvalidMeshError", "MeshFileError", "MeshpropsError", "PhysicsError", "UnitError"),
        "errors",
    ),
    **dict.fromkeys(("Mesh", "load_mesh", "mesh_from_arrays", "mesh_from_triangles"), "io"),
    **dict.fromkeys(("BodyMeasurement", "measure_file", "measure_mesh"), "measure.body"),
    "MeasureOptions": "measure.options",
    **dict.fromkeys(("MassProperties", "combine", "rotate_tensor"), "physics.mass"),
    **dict.fromkeys(("Moments", "integrate_chunks", "integrate_triangles"), "physics.moments"),
    **dict.fromkeys(("PrincipalFrame", "principal_frame"), "physics.principal"),
    **dict.fromkeys(("SpinState", "spin"), "physics.spin"),
    "validate": "validation.checks",
    **dict.fromkeys(("Finding", "ValidationReport"), "validation.findings"),
    **dict.fromkeys(("Solid", "SolidOptions", "resolve_solid"), "validation.solid"),
    "__version__": "version",
    "load_manifest": "measure.manifest",
    "measure_manifest": "measure.assembly",
    "measure_assembly": "measure.assembly",
    "measure_files": "batch.runner",
}


#: Subpackages and ground modules, reachable as attributes (``meshprops.physics.mass``) as when
#: this package imported them all.
_SUBMODULES = frozenset(
    {"batch", "cli", "errors", "gate", "geometry", "io", "materials", "measure", "output", "physics", "units",
     "validation", "version"}
)  # fmt: skip


def __getattr__(name: str):
    """Every public name loads its module on first use (and is kept here after that)."""
    import importlib

    if name in _LAZY:
        value = getattr(importlib.import_module(f".{_LAZY[name]}", __name__), name)
        globals()[name] = value
        return value
    if name in _SUBMODULES:
        module = importlib.import_module(f".{name}", __name__)
        for inner in {path for path in _LAZY.values() if path.startswith(f"{name}.")}:
            importlib.import_module(f".{inner}", __name__)  # as reachable as when imported eagerly
        return module
    raise AttributeError(f"module 'meshprops' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(_LAZY) | _SUBMODULES)


__all__ = [
    "BodyMeasurement", "Finding", "InputValueError", "InvalidMeshError", "MassProperties", "MeasureOptions",
    "Mesh", "MeshFileError", "MeshpropsError", "Moments", "PhysicsError", "PrincipalFrame", "SpinState",
    "UnitError", "ValidationReport", "__version__", "combine", "integrate_chunks", "integrate_triangles",
    "load_mesh", "measure_file", "measure_mesh", "mesh_from_arrays", "mesh_from_triangles", "principal_frame",
    "rotate_tensor", "spin", "validate", "Solid", "SolidOptions", "resolve_solid", "load_manifest", "measure_manifest", "measure_assembly", "measure_files",
]  # fmt: skip
