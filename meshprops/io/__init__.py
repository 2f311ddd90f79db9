"""Reading and writing mesh files: the :class:`Mesh` container, one module per format,
the loader table and atomic file writing. Coordinates stay in the file's unit and dtype;
the declared length unit is applied as triangles are read.
"""

from .loaders import load_mesh
from .mesh import Mesh, mesh_from_arrays, mesh_from_triangles

__all__ = ["Mesh", "load_mesh", "mesh_from_arrays", "mesh_from_triangles"]
