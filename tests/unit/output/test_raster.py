"""PNG pictures of a view (the ``report`` extra): a real PNG of the scene's size, one file per view."""

from __future__ import annotations

import struct

import numpy as np
import pytest

from meshprops.geometry import shapes
from meshprops.output.drawing import (
    VIEWS,
    BodyPicture,
    InertiaPicture,
    Picture,
    draw_view,
)

pytest.importorskip("matplotlib")

from meshprops.output.raster import png_file_name, scene_to_png_bytes  # noqa: E402


def _box_scene(view):
    size = np.array([0.04, 0.02, 0.01])
    triangles = shapes.triangles_of(*shapes.box(tuple(size)))
    mass = 1.0
    # Uniform box about its centre: I_x = m (b^2 + c^2) / 12, ... (handbook).
    moments = mass / 12.0 * np.array([size[1] ** 2 + size[2] ** 2, size[0] ** 2 + size[2] ** 2, size[0] ** 2 + size[1] ** 2])
    order = np.argsort(moments)
    axes = np.eye(3)[order]
    if np.linalg.det(axes) < 0:
        axes[2] = -axes[2]
    picture = Picture((BodyPicture("box", triangles, np.zeros(3)),), InertiaPicture(mass, np.zeros(3), moments[order], axes), ())
    return draw_view(picture, view)


@pytest.mark.parametrize("view", VIEWS, ids=lambda v: v.key)
def test_png_has_the_signature_and_the_scene_size(view):
    scene = _box_scene(view)
    data = scene_to_png_bytes(scene)
    assert data[:8] == b"\x89PNG\r\n\x1a\n"  # the PNG signature (PNG specification, ISO/IEC 15948)
    width, height = struct.unpack(">II", data[16:24])  # IHDR: width and height, big-endian
    assert (width, height) == (scene.width, scene.height)


def test_each_view_gets_its_own_file_name():
    names = {png_file_name(_box_scene(view), "part-") for view in VIEWS}
    assert len(names) == len(VIEWS) and all(name.startswith("part-") and name.endswith(".png") for name in names)
