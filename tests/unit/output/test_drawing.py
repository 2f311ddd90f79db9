"""Pictures (meshprops.output.drawing, raster): projection, markers, ellipsoid, decimation,
highlights and palette, checked against trimesh's mass properties and handbook formulas.
"""

from __future__ import annotations

import itertools
import xml.etree.ElementTree as ElementTree
from io import BytesIO

import numpy as np
import pytest
import trimesh

from meshprops.output import drawing
from meshprops.output.drawing import (
    VIEWS,
    BodyPicture,
    Highlight,
    InertiaPicture,
    Picture,
    decimate_for_drawing,
    draw_view,
    draw_views,
    scene_to_svg,
)


def _picture_of(mesh: trimesh.Trimesh, highlights=()) -> Picture:
    """A picture whose inertia comes from trimesh (the reference library), not from meshprops."""
    mesh.density = 1.0
    moments, axes = trimesh.inertia.principal_axis(mesh.moment_inertia)
    order = np.argsort(moments)
    axes = axes[order]
    if np.linalg.det(axes) < 0:
        axes[2] = -axes[2]
    inertia = InertiaPicture(float(mesh.mass), np.asarray(mesh.center_mass), moments[order], axes)
    body = BodyPicture("part", np.asarray(mesh.triangles), np.asarray(mesh.center_mass))
    return Picture((body,), inertia, tuple(highlights))


def _cone() -> trimesh.Trimesh:
    # A cone with its base at z = 0.02 m, shifted off the origin so nothing is centred by accident.
    cone = trimesh.creation.cone(radius=0.03, height=0.08, sections=48)
    cone.apply_translation([0.05, -0.02, 0.02])
    return cone


def _svg_root(svg: str) -> ElementTree.Element:
    return ElementTree.fromstring(svg)


def _face_points(root: ElementTree.Element) -> np.ndarray:
    points = []
    for group in root.iter("g"):
        if group.get("class") == "faces":
            for polygon in group.iter("polygon"):
                points += [[float(v) for v in pair.split(",")] for pair in polygon.get("points").split()]
    return np.array(points)


@pytest.mark.parametrize("view", VIEWS, ids=lambda v: v.key)
def test_centre_of_mass_marker_is_at_the_projected_centre_within_a_pixel(view):
    mesh = _cone()
    # Handbook: a solid cone's centre of mass lies a quarter of the height above the base (common practice).
    assert np.allclose(mesh.center_mass, [0.05, -0.02, 0.02 + 0.08 / 4], atol=1e-4)
    scene = draw_view(_picture_of(mesh), view)
    root = _svg_root(scene_to_svg(scene))
    marker = root.find(f".//g[@id='com-total-{view.key}']")
    marker_xy = np.array([float(marker.get("data-x")), float(marker.get("data-y"))])
    circle = marker.find("circle")
    assert np.allclose([float(circle.get("cx")), float(circle.get("cy"))], marker_xy, atol=1e-3)
    # Independent of the projection the page states: map trimesh's centre of mass through the
    # pixel box the drawn faces span and the mesh's own extent along the view's screen axes.
    right, up = view.rows[0], view.rows[1]
    pixels = _face_points(root)
    u, v = mesh.vertices @ right, mesh.vertices @ up
    com_u, com_v = mesh.center_mass @ right, mesh.center_mass @ up
    expected_x = pixels[:, 0].min() + (com_u - u.min()) / np.ptp(u) * np.ptp(pixels[:, 0])
    expected_y = pixels[:, 1].max() - (com_v - v.min()) / np.ptp(v) * np.ptp(pixels[:, 1])
    assert abs(marker_xy[0] - expected_x) < 1.0 and abs(marker_xy[1] - expected_y) < 1.0, (marker_xy, expected_x, expected_y)
    # The projection the SVG states reproduces the marker too.
    stated_right = np.array([float(x) for x in root.get("data-right").split()])
    stated_up = np.array([float(x) for x in root.get("data-up").split()])
    scale = float(root.get("data-scale"))
    origin = np.array([float(x) for x in root.get("data-origin").split()])
    stated = origin + scale * np.array([mesh.center_mass @ stated_right, -(mesh.center_mass @ stated_up)])
    assert np.allclose(stated, marker_xy, atol=1e-3)


def test_views_are_proper_rotations_with_z_up_on_the_side_views():
    for view in VIEWS:
        assert np.allclose(view.rows @ view.rows.T, np.eye(3), atol=1e-12)
        assert np.linalg.det(view.rows) == pytest.approx(1.0)
        if view.key != "above":
            assert view.rows[1][2] > 0  # +z points up the screen


def test_equivalent_ellipsoid_of_a_box_and_its_outline():
    # Handbook: a uniform box a x b x c has I_x = m (b² + c²) / 12, so the uniform ellipsoid with the
    # same mass and moments has semi-axes sqrt(5/12) a, sqrt(5/12) b, sqrt(5/12) c (common practice).
    box = trimesh.creation.box(extents=[0.12, 0.06, 0.02])
    picture = _picture_of(box)
    semi = np.sort(picture.inertia.ellipsoid_semi_axes)
    assert np.allclose(semi, np.sqrt(5.0 / 12.0) * np.array([0.02, 0.06, 0.12]), rtol=1e-9)
    scene = draw_view(picture, VIEWS[0])  # from above: the outline's extent is 2 a along x and 2 b along y
    outline = scene.groups[[g.element_id for g in scene.groups].index("ellipsoid-above")].items[1].points
    assert np.ptp(outline[:, 0]) / scene.projection.scale == pytest.approx(2 * np.sqrt(5 / 12) * 0.12, rel=2e-3)
    assert np.ptp(outline[:, 1]) / scene.projection.scale == pytest.approx(2 * np.sqrt(5 / 12) * 0.06, rel=2e-3)


def test_principal_axis_arrows_have_the_ratio_of_the_moments():
    box = trimesh.creation.box(extents=[0.12, 0.06, 0.02])
    picture = _picture_of(box)
    scene = draw_view(picture, VIEWS[0])
    by_id = {g.element_id: g for g in scene.groups if g.element_id}
    lengths = np.array([float(by_id[f"axis-e{k}-above"].data["length-m"]) for k in (1, 2, 3)])
    moments = picture.inertia.principal_moments
    assert np.allclose(lengths / lengths[2], moments / moments[2], rtol=1e-12)
    # e1 (along x) and e2 (along y) lie in the screen plane from above: their drawn lengths in pixels
    # are the stated lengths times the scale.
    for k in (1, 2):
        line = by_id[f"axis-e{k}-above"].items[1].points
        assert np.linalg.norm(line[1] - line[0]) == pytest.approx(lengths[k - 1] * scene.projection.scale, rel=1e-9)


def test_decimation_keeps_the_shape_within_the_budget():
    sphere = trimesh.creation.uv_sphere(radius=0.05, count=[96, 96])
    assert len(sphere.faces) > 15000
    drawn = decimate_for_drawing(np.asarray(sphere.triangles), 2000)
    assert 200 < len(drawn) <= 2000
    radii = np.linalg.norm(drawn.reshape(-1, 3), axis=1)
    assert radii.max() <= 0.05 + 1e-12 and radii.min() > 0.05 * 0.9  # still a sphere of radius 0.05
    small = np.asarray(trimesh.creation.box().triangles)
    assert decimate_for_drawing(small, 2000) is not small or len(small) <= 2000


def test_large_mesh_is_drawn_within_the_budget_and_stated_numbers_are_the_callers():
    sphere = trimesh.creation.icosphere(subdivisions=5, radius=0.05)  # 20480 faces
    picture = _picture_of(sphere)
    scene = draw_view(picture, VIEWS[3], face_budget=1500)
    polygons = sum(len(g.items) for g in scene.groups if g.css_class == "faces")
    assert polygons <= 1500
    ellipsoid = [g for g in scene.groups if g.css_class == "ellipsoid"][0]
    stated = [float(x) for x in ellipsoid.data["semi-axes"].split()]
    # Handbook: a uniform ball has I = 2/5 m r², so its equivalent ellipsoid is the ball itself (common practice).
    assert np.allclose(stated, 0.05, rtol=2e-3)


def test_open_edge_faces_are_highlighted_with_their_numbers():
    mesh = trimesh.creation.box(extents=[0.04, 0.03, 0.02])
    mesh.update_faces(np.arange(len(mesh.faces)) != 5)  # remove one face: the mesh is open
    # trimesh finds the faces beside the open edges (edges used by one face only).
    edges = mesh.edges_sorted
    groups = trimesh.grouping.group_rows(edges, require_count=1)
    open_faces = np.unique(mesh.edges_face[groups])
    assert len(open_faces) == 3
    body = BodyPicture("open box", np.asarray(mesh.triangles), None, closed=False)
    picture = Picture((body,), None, (Highlight("open_edges", "error", 0, open_faces),))
    for scene in draw_views(picture):
        root = _svg_root(scene_to_svg(scene))
        group = root.find(f".//g[@id='finding-0-{scene.view.key}']")
        assert group.get("data-code") == "open_edges"
        assert sorted(int(f) for f in group.get("data-faces").split()) == sorted(open_faces.tolist())
        assert len(group.findall("polygon")) == 3
        assert all(p.get("fill") == drawing.FINDING_FILL for p in group.findall("polygon"))
        assert root.find(f".//g[@id='com-total-{scene.view.key}']") is None  # withheld numbers: no marker


def test_svg_has_a_legend_on_every_view_and_no_url():
    scenes = draw_views(_picture_of(_cone()))
    for scene in scenes:
        svg = scene_to_svg(scene)
        assert 'class="legend"' in svg and "Key" in svg
        assert "http" not in svg and "href" not in svg
    assert 'xmlns="http://www.w3.org/2000/svg"' in scene_to_svg(scenes[0], standalone=True)


# Machado, Oliveira and Fernandes (2009) simulation matrices for full protanopia, deuteranopia
# and tritanopia in linear RGB (from memory), and the sRGB → CIELAB conversion (common practice).
_DEFICIENCIES = {
    "normal": np.eye(3),
    "protanopia": np.array([[0.152286, 1.052583, -0.204868], [0.114503, 0.786281, 0.099216], [-0.003882, -0.048116, 1.051998]]),
    "deuteranopia": np.array([[0.367322, 0.860646, -0.227968], [0.280085, 0.672501, 0.047413], [-0.011820, 0.042940, 0.968881]]),
    "tritanopia": np.array([[1.255528, -0.076749, -0.178779], [-0.078411, 0.930809, 0.147602], [0.004733, 0.691367, 0.303900]]),
}


def _lab(colour: str, matrix: np.ndarray) -> np.ndarray:
    srgb = np.array([int(colour[k : k + 2], 16) for k in (1, 3, 5)]) / 255.0
    linear = np.where(srgb <= 0.04045, srgb / 12.92, ((srgb + 0.055) / 1.055) ** 2.4)
    linear = np.clip(matrix @ linear, 0.0, 1.0)
    xyz = np.array([[0.4124, 0.3576, 0.1805], [0.2126, 0.7152, 0.0722], [0.0193, 0.1192, 0.9505]]) @ linear
    t = xyz / np.array([0.95047, 1.0, 1.08883])
    f = np.where(t > 0.008856, np.cbrt(t), 7.787 * t + 16.0 / 116.0)
    return np.array([116.0 * f[1] - 16.0, 500.0 * (f[0] - f[1]), 200.0 * (f[1] - f[2])])


@pytest.mark.parametrize("deficiency", sorted(_DEFICIENCIES))
def test_palette_stays_apart_for_colour_blind_readers(deficiency):
    colours = list(drawing.BODY_COLOURS) + [drawing.FINDING_FILL, drawing.BACKGROUND, drawing.INK]
    matrix = _DEFICIENCIES[deficiency]
    labs = {c: _lab(c, matrix) for c in colours}
    nearest = min(np.linalg.norm(labs[a] - labs[b]) for a, b in itertools.combinations(colours, 2))
    assert nearest > 15.0, f"two colours nearly alike under {deficiency}: delta E {nearest:.1f}"


def test_png_of_a_view_has_the_scene_size_and_the_marker_where_the_svg_says():
    pytest.importorskip("matplotlib")
    from PIL import Image

    from meshprops.output.raster import scene_to_png_bytes

    scene = draw_view(_picture_of(_cone()), VIEWS[1])
    with Image.open(BytesIO(scene_to_png_bytes(scene))) as image:
        pixels = np.asarray(image.convert("RGB")).astype(int)
    assert pixels.shape == (scene.height, scene.width, 3)
    marker = [g for g in scene.groups if g.element_id == "com-total-front"][0]
    x, y = float(marker.data["x"]), float(marker.data["y"])
    core = pixels[int(y), int(x)]
    assert core.min() > 200  # the white core of the target
    hair = pixels[int(round(y)) + 11, int(x)]  # the cross hair below the ring (ring radius 7.5 px, hair 12.5 px)
    assert hair.max() < 120, hair
    body_colour = np.array([int(drawing.BODY_COLOURS[0][k : k + 2], 16) for k in (1, 3, 5)])
    assert len(np.unique(pixels.reshape(-1, 3), axis=0)) > 50
    assert np.min(np.abs(pixels.reshape(-1, 3) - body_colour).sum(axis=1)) < 90  # the body is painted
