"""Small mesh files written by tests in any folder below tests/."""

from meshprops.geometry import shapes
from meshprops.io import writers


def write_box(path, size, unit_scale=1.0):
    """A closed box of edge lengths ``size`` with a corner at the origin, as a binary STL at ``path``
    (folders made as needed); coordinates times ``unit_scale``."""
    path.parent.mkdir(parents=True, exist_ok=True)
    vertices, faces = shapes.box(size, center=[s / 2 for s in size])
    writers.write_binary_stl(path, vertices[faces] * unit_scale)
