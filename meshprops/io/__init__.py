"""Reading and writing mesh files: the :class:`Mesh` container, one module per format,
the loader table and atomic file writing. Coordinates stay in the file's unit and dtype;
the declared length unit is applied as triangles are read.

``from meshprops.io import Mesh, load_mesh`` loads the readers (and numpy) on first use, so
that the light modules here (hashing, paths, atomic writing) can be imported without them.
"""

_LAZY = {"load_mesh": "loaders", "Mesh": "mesh", "mesh_from_arrays": "mesh", "mesh_from_triangles": "mesh"}


#: Modules that importing this package used to load, still reachable as attributes.
_SUBMODULES = frozenset({"loaders", "mesh", "stl", "obj", "ply", "reading"})


def __getattr__(name: str):
    import importlib

    if name in _LAZY:
        value = getattr(importlib.import_module(f".{_LAZY[name]}", __name__), name)
        globals()[name] = value
        return value
    if name in _SUBMODULES:
        return importlib.import_module(f".{name}", __name__)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(_LAZY) | _SUBMODULES)


__all__ = ["Mesh", "load_mesh", "mesh_from_arrays", "mesh_from_triangles"]
