"""Reading and writing mesh files: the :class:`Mesh` container, one module per format,
the loader table and atomic file writing. Coordinates stay in the file's unit and dtype;
the declared length unit is applied as triangles are read.

``from meshprops.io import Mesh, load_mesh`` loads the readers (and numpy) on first use, so
that the light modules here (hashing, paths, atomic writing) can be imported without them.
"""

_LAZY = {"load_mesh": "loaders", "Mesh": "mesh", "mesh_from_arrays": "mesh", "mesh_from_triangles": "mesh"}


def __getattr__(name: str):
    if name in _LAZY:
        import importlib

        value = getattr(importlib.import_module(f".{_LAZY[name]}", __name__), name)
        globals()[name] = value
        return value
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(_LAZY))


__all__ = ["Mesh", "load_mesh", "mesh_from_arrays", "mesh_from_triangles"]
