"""Pictures of a body or an assembly, for the HTML report and its PNG files.

A picture is built in two steps. :func:`draw_view` projects the triangles
(metres, input or assembly axes) orthographically onto one of the four
:data:`VIEWS` and returns a :class:`Scene`: plain primitives (polygons, lines,
circles, text) in pixel coordinates, grouped, each group with an id and data
attributes. :func:`scene_to_svg` writes a scene as inline SVG;
:mod:`meshprops.output.raster` paints the same scene into a PNG. Both read
the same primitives, so the two forms cannot disagree.

What a view shows: the faces in painter's order (far faces first) with a flat
shade from a fixed light, each body in its own colour from :data:`BODY_COLOURS`;
the centre of mass (the total's and each body's); the principal axes drawn from
the centre of mass with lengths in the ratio of the principal moments; the
equivalent uniform ellipsoid (same mass and principal moments) as an outline;
the findings' faces and regions on top of everything, so hidden ones still
show; a legend, a scale bar and the directions of the axes on every view.

Drawing only: above ``face_budget`` faces in all (shared among the bodies in
proportion to their face counts) the bodies are decimated by vertex clustering
(:func:`decimate_for_drawing`, once for all views). Every number stated in a picture
comes from the caller, computed on the full mesh.

The projection is exposed on the SVG (``data-right``, ``data-up``,
``data-scale``, ``data-origin``) and each centre-of-mass marker carries its
pixel position (``data-x``, ``data-y``), so a test can read them back.
"""

from __future__ import annotations

import html
import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field

import numpy as np

# ----------------------------------------------------------------------------- palette
# Our own palette, chosen so that every pair (bodies, the findings' yellow, the page's
# background and ink) stays at least 19 CIELAB units apart for normal colour vision and
# under simulated protanopia, deuteranopia and tritanopia (tests/test_drawing.py checks
# it). Beyond eight bodies the colours repeat, so each body's centre of mass carries its
# number from the legend. Findings are yellow with a black edge; the axes and outlines
# differ in dash pattern as well as colour, so nothing is told by hue alone.
BODY_COLOURS = (
    "#3c6fb4",  # lake blue
    "#985020",  # rust
    "#7b3fc4",  # violet
    "#38b878",  # jade
    "#b08098",  # dusty mauve
    "#e08038",  # apricot
    "#98b0e0",  # pale cornflower
    "#b03850",  # raspberry
)
BACKGROUND = "#f7f5ef"
INK = "#1f2328"
FAINT_INK = "#6a6f78"
FINDING_FILL = "#ffd23f"
FINDING_EDGE = "#111111"
ELLIPSOID_COLOUR = "#34393f"
#: (colour, dash pattern in px or "" for solid) of the principal axes e1, e2, e3.
AXIS_STYLES = (("#b3341f", ""), ("#1d7a43", "7 4"), ("#26408b", "2 3"))
WORLD_AXIS_COLOURS = {"x": "#b3341f", "y": "#1d7a43", "z": "#26408b"}

#: Faces drawn per view, all bodies together; above it bodies are decimated for drawing only.
FACE_BUDGET = 8000
#: No body is decimated below this many faces.
BODY_FACE_FLOOR = 400
#: At most this many faces of one finding are drawn (the count is stated in the list).
HIGHLIGHT_FACE_LIMIT = 3000

_LIGHT = np.array([-0.35, 0.55, 0.76])
_LIGHT = _LIGHT / np.linalg.norm(_LIGHT)


# ----------------------------------------------------------------------------- views


@dataclass(frozen=True, slots=True, eq=False)
class View:
    """A direction to look from.

    Attributes
    ----------
    key : short identifier used in element ids and PNG file names
    title : heading printed on the view
    rows : (3, 3) proper rotation; rows are the screen's right, the screen's up
        and the direction toward the viewer, in the input axes
    """

    key: str
    title: str
    rows: np.ndarray


def view_from_angles(key: str, title: str, azimuth_deg: float, elevation_deg: float) -> View:
    """A view whose viewer sits at ``azimuth`` (from +x toward +y) and ``elevation`` above the x-y plane.

    The screen's up is the projection of +z.
    """
    azimuth, elevation = math.radians(azimuth_deg), math.radians(elevation_deg)
    toward = np.array(
        [math.cos(elevation) * math.cos(azimuth), math.cos(elevation) * math.sin(azimuth), math.sin(elevation)]
    )
    right = np.cross([0.0, 0.0, 1.0], toward)
    right /= np.linalg.norm(right)
    up = np.cross(toward, right)
    return View(key, title, np.array([right, up, toward]))


VIEWS = (
    View("above", "From above: looking down z", np.eye(3)),
    view_from_angles("front", "From the front: looking along +y", -90.0, 0.0),
    view_from_angles("right", "From the right: looking along -x", 0.0, 0.0),
    view_from_angles("oblique", "Oblique: from +x, -y, +z", -55.0, 30.0),
)


@dataclass(frozen=True, slots=True, eq=False)
class Projection:
    """Orthographic projection of one view into pixels.

    A point ``p`` (m) goes to ``x = origin[0] + scale * (right · p)`` and
    ``y = origin[1] - scale * (up · p)`` (SVG pixels, y down); its depth toward
    the viewer is ``toward · p``.
    """

    rows: np.ndarray
    scale: float
    origin: np.ndarray

    def to_pixels(self, points) -> np.ndarray:
        """(..., 3) m → (..., 2) px."""
        points = np.asarray(points, dtype=np.float64)
        u = points @ self.rows[0]
        v = points @ self.rows[1]
        return np.stack([self.origin[0] + self.scale * u, self.origin[1] - self.scale * v], axis=-1)

    def depth(self, points) -> np.ndarray:
        return np.asarray(points, dtype=np.float64) @ self.rows[2]


# ----------------------------------------------------------------------------- what to draw


@dataclass(frozen=True, slots=True, eq=False)
class BodyPicture:
    """One body to draw.

    Attributes
    ----------
    name : label for the legend
    triangles : (F, 3, 3) float64, m, in the picture's axes (empty for a point mass)
    center_of_mass : (3,) m, or ``None`` when not known (invalid mesh)
    closed : true when the surface passed validation (back faces are then not drawn)
    colour : ``#rrggbb``; ``None`` takes the palette colour of the body's position
    drawing : (G, 3, 3) m, the triangles actually drawn (decimated), or ``None`` to draw
        ``triangles``; findings always refer to ``triangles``
    bounds : (2, 3) m, low and high corner of ``triangles``, or ``None`` to compute it
    """

    name: str
    triangles: np.ndarray
    center_of_mass: np.ndarray | None = None
    closed: bool = True
    colour: str | None = None
    drawing: np.ndarray | None = None
    bounds: np.ndarray | None = None


@dataclass(frozen=True, slots=True, eq=False)
class Highlight:
    """A finding drawn where it is.

    Attributes
    ----------
    code, severity : of the finding
    body : index of the body in :attr:`Picture.bodies` whose faces are meant
    faces : (k,) int, face numbers in that body's triangles (all of them, not only examples)
    points : (j, 3) m, places to ring (face centroids, sample points)
    boxes : (b, 2, 3) m, regions drawn as box outlines (low and high corners)
    edges : (e, 2, 3) m, edges drawn as thick lines (open or non-manifold edges)
    """

    code: str
    severity: str
    body: int = 0
    faces: np.ndarray = field(default_factory=lambda: np.zeros(0, dtype=np.int64))
    points: np.ndarray = field(default_factory=lambda: np.zeros((0, 3)))
    boxes: np.ndarray = field(default_factory=lambda: np.zeros((0, 2, 3)))
    edges: np.ndarray = field(default_factory=lambda: np.zeros((0, 2, 3)))


@dataclass(frozen=True, slots=True, eq=False)
class InertiaPicture:
    """The inertia to draw about a centre of mass (full-mesh values).

    Attributes
    ----------
    mass : kg
    center_of_mass : (3,) m
    principal_moments : (3,) kg·m², ascending, about the centre of mass
    principal_axes : (3, 3), rows e1, e2, e3 in the picture's axes
    """

    mass: float
    center_of_mass: np.ndarray
    principal_moments: np.ndarray
    principal_axes: np.ndarray

    @property
    def ellipsoid_semi_axes(self) -> np.ndarray:
        """(3,) m: semi-axes of the uniform solid ellipsoid with this mass and these principal moments.

        A uniform ellipsoid with semi-axes a, b, c has I_a = m (b² + c²) / 5 (handbook
        formula, common practice), so ``a_k² = 5 (I_i + I_j − I_k) / (2 m)``, clipped at 0.
        """
        moments = np.asarray(self.principal_moments, dtype=np.float64)
        squared = 5.0 * (moments.sum() - 2.0 * moments) / (2.0 * self.mass)
        return np.sqrt(np.clip(squared, 0.0, None))


@dataclass(frozen=True, slots=True, eq=False)
class Picture:
    """Everything one report draws: bodies, the inertia of the whole, findings.

    Attributes
    ----------
    bodies : the bodies, in legend order
    inertia : the whole's inertia (the body's, or the assembly total's), or ``None``
        when the numbers were withheld
    highlights : findings to draw
    total_label : legend text of the whole's centre of mass
    numbers_withheld : true when validation failed (the legend says so)
    """

    bodies: tuple[BodyPicture, ...]
    inertia: InertiaPicture | None = None
    highlights: tuple[Highlight, ...] = ()
    total_label: str = "centre of mass"
    numbers_withheld: bool = False


# ----------------------------------------------------------------------------- scene primitives


@dataclass(frozen=True, slots=True, eq=False)
class Polygon:
    """A filled (or outlined, ``fill=None``) polygon; ``closed=False`` draws an open polyline."""

    points: np.ndarray  # (k, 2) px
    fill: str | None
    stroke: str | None = None
    stroke_width: float = 0.0
    opacity: float = 1.0
    dash: str = ""
    closed: bool = True


@dataclass(frozen=True, slots=True, eq=False)
class Circle:
    center: tuple[float, float]
    radius: float
    fill: str | None
    stroke: str | None = None
    stroke_width: float = 1.0


@dataclass(frozen=True, slots=True, eq=False)
class Text:
    position: tuple[float, float]
    text: str
    size: float = 12.0
    colour: str = INK
    anchor: str = "start"  # start | middle | end
    bold: bool = False


@dataclass(frozen=True, slots=True, eq=False)
class Group:
    """Primitives that belong together, with an optional id, class and data attributes."""

    items: tuple
    element_id: str | None = None
    css_class: str | None = None
    data: dict = field(default_factory=dict)


@dataclass(frozen=True, slots=True, eq=False)
class Scene:
    """One view, ready to render: pixel size, projection and groups of primitives."""

    view: View
    width: int
    height: int
    projection: Projection
    groups: tuple[Group, ...]


# ----------------------------------------------------------------------------- decimation


def decimate_for_drawing(triangles: np.ndarray, face_budget: int = FACE_BUDGET) -> np.ndarray:
    """At most ``face_budget`` triangles that look like ``triangles``: for drawing only.

    Vertex clustering: corners are snapped to a grid over the bounding box and each
    cell's corners replaced by their mean; faces that collapse are dropped, and
    repeated faces kept once. The grid is coarsened until the budget holds.

    Parameters
    ----------
    triangles : (F, 3, 3) float, m
    face_budget : int, the most faces returned

    Returns
    -------
    (G, 3, 3) float64, m, G <= face_budget (the input itself when F <= face_budget)
    """
    triangles = np.asarray(triangles, dtype=np.float64)
    if len(triangles) <= face_budget:
        return triangles
    corners = triangles.reshape(-1, 3)
    low = corners.min(axis=0)
    span = float(np.max(corners.max(axis=0) - low)) or 1.0
    cells = max(4, int(2.0 * math.sqrt(face_budget)))
    scaled = (corners - low) * (1.0 / span)
    while True:
        quantized = np.minimum((scaled * cells).astype(np.int64), cells - 1)
        keys = (quantized[:, 0] * cells + quantized[:, 1]) * cells + quantized[:, 2]
        unique, inverse = np.unique(keys, return_inverse=True)
        faces = inverse.reshape(-1, 3)
        keep = (faces[:, 0] != faces[:, 1]) & (faces[:, 1] != faces[:, 2]) & (faces[:, 2] != faces[:, 0])
        faces = faces[keep]
        if len(faces):  # repeated faces (one cell triple reached from many faces) are kept once
            order = np.sort(faces, axis=1)
            if len(unique) < 2_000_000:  # the three ids packed into one int64 key (faster than rows)
                _, first = np.unique((order[:, 0] * len(unique) + order[:, 1]) * len(unique) + order[:, 2], return_index=True)
            else:
                _, first = np.unique(order, axis=0, return_index=True)
            faces = faces[np.sort(first)]
        if len(faces) <= face_budget or cells <= 4:
            break
        cells = max(4, int(cells * min(0.85, math.sqrt(face_budget / len(faces)))))
    counts = np.bincount(inverse, minlength=len(unique)).astype(np.float64)
    means = np.stack([np.bincount(inverse, weights=corners[:, k], minlength=len(unique)) for k in range(3)], axis=1)
    means /= counts[:, None]
    return means[faces[:face_budget]]


# ----------------------------------------------------------------------------- drawing


def _hex_to_rgb(colour: str) -> np.ndarray:
    colour = colour.lstrip("#")
    return np.array([int(colour[k : k + 2], 16) for k in (0, 2, 4)], dtype=np.float64)


def _rgb_to_hex(rgb: np.ndarray) -> list[str]:
    rgb = np.clip(np.rint(rgb), 0, 255).astype(np.int64)
    return [f"#{r:02x}{g:02x}{b:02x}" for r, g, b in rgb]


def shade(colour: str, normals: np.ndarray, rows: np.ndarray) -> list[str]:
    """Flat shades of ``colour`` for faces with unit ``normals`` (F, 3), seen in ``rows``' view."""
    facing = (normals @ rows.T) @ _LIGHT
    front = (normals @ rows[2]) >= 0.0
    light = np.where(front, 0.55 + 0.45 * np.abs(facing), 0.32 + 0.18 * np.abs(facing))
    base = _hex_to_rgb(colour)
    rgb = base[None, :] * light[:, None] + 255.0 * 0.12 * (1.0 - light[:, None]) * front[:, None]
    return _rgb_to_hex(rgb)


def body_colour(picture: Picture, index: int) -> str:
    body = picture.bodies[index]
    return body.colour or BODY_COLOURS[index % len(BODY_COLOURS)]


def _outline_points(picture: Picture) -> np.ndarray:
    """3-D points that must fit in every view: mesh corners, centres, ellipsoid, axis tips."""
    parts = [(b.drawing if b.drawing is not None else b.triangles).reshape(-1, 3) for b in picture.bodies if len(b.triangles)]
    parts += [np.asarray(b.center_of_mass).reshape(1, 3) for b in picture.bodies if b.center_of_mass is not None]
    if picture.inertia is not None:
        parts.append(_ellipsoid_box(picture.inertia))
        parts.append(_axis_tips(picture.inertia, _axis_reach(picture)))
    for highlight in picture.highlights:
        parts.append(np.asarray(highlight.points, dtype=np.float64).reshape(-1, 3))
        parts.append(np.asarray(highlight.boxes, dtype=np.float64).reshape(-1, 3))
        parts.append(np.asarray(highlight.edges, dtype=np.float64).reshape(-1, 3))
    points = np.concatenate([p for p in parts if len(p)]) if any(len(p) for p in parts) else np.zeros((1, 3))
    return points


def _bounds(triangles: np.ndarray) -> np.ndarray:
    corners = np.asarray(triangles, dtype=np.float64).reshape(-1, 3)
    return np.array([corners.min(axis=0), corners.max(axis=0)])


def _extent(picture: Picture) -> tuple[np.ndarray, np.ndarray]:
    parts = [(b.bounds if b.bounds is not None else _bounds(b.triangles)) for b in picture.bodies if len(b.triangles)]
    parts += [np.asarray(b.center_of_mass).reshape(1, 3) for b in picture.bodies if b.center_of_mass is not None]
    if not parts:
        return np.zeros(3), np.zeros(3)
    points = np.concatenate(parts)
    return points.min(axis=0), points.max(axis=0)


def _axis_reach(picture: Picture) -> float:
    """Length (m) of the arrow of the largest principal moment: half the bounding-box diagonal."""
    low, high = _extent(picture)
    reach = 0.5 * float(np.linalg.norm(high - low))
    if reach == 0.0 and picture.inertia is not None:
        reach = float(picture.inertia.ellipsoid_semi_axes.max()) or 1.0
    return reach or 1.0


def axis_lengths(inertia: InertiaPicture, reach: float) -> np.ndarray:
    """(3,) m: arrow lengths of e1, e2, e3, in the ratio of the principal moments, the largest ``reach``."""
    moments = np.asarray(inertia.principal_moments, dtype=np.float64)
    largest = float(moments.max())
    if largest <= 0.0:
        return np.zeros(3)
    return reach * moments / largest


def _axis_tips(inertia: InertiaPicture, reach: float) -> np.ndarray:
    lengths = axis_lengths(inertia, reach)
    return np.asarray(inertia.center_of_mass) + lengths[:, None] * np.asarray(inertia.principal_axes)


def _ellipsoid_box(inertia: InertiaPicture) -> np.ndarray:
    semi = inertia.ellipsoid_semi_axes
    axes = np.asarray(inertia.principal_axes)
    signs = np.array([[i, j, k] for i in (-1, 1) for j in (-1, 1) for k in (-1, 1)], dtype=np.float64)
    return np.asarray(inertia.center_of_mass) + (signs * semi) @ axes


def ellipse_outline(inertia: InertiaPicture, projection: Projection, count: int = 96) -> np.ndarray:
    """(count, 2) px: the outline of the equivalent ellipsoid seen in ``projection``.

    The ellipsoid is ``{c + Aᵀ diag(a) s : |s| <= 1}``; its orthographic shadow is the
    ellipse ``P c + L t`` (|t| = 1) with ``L Lᵀ = P Aᵀ diag(a²) A Pᵀ``, ``P`` the screen rows.
    """
    semi = inertia.ellipsoid_semi_axes
    axes = np.asarray(inertia.principal_axes, dtype=np.float64)
    screen = projection.rows[:2]
    shape = screen @ axes.T @ np.diag(semi**2) @ axes @ screen.T
    values, vectors = np.linalg.eigh(shape)
    radii = np.sqrt(np.clip(values, 0.0, None))
    angles = np.linspace(0.0, 2.0 * math.pi, count, endpoint=False)
    circle = np.stack([np.cos(angles), np.sin(angles)], axis=1)
    offsets = (circle * radii) @ vectors.T  # metres along right, up
    center = projection.to_pixels(inertia.center_of_mass)
    return np.stack([center[0] + projection.scale * offsets[:, 0], center[1] - projection.scale * offsets[:, 1]], axis=1)


def _fit(picture: Picture, view: View, box: tuple[float, float, float, float]) -> Projection:
    """The projection that fits the picture in the pixel box (left, top, width, height)."""
    points = _outline_points(picture)
    u = points @ view.rows[0]
    v = points @ view.rows[1]
    left, top, width, height = box
    du, dv = float(np.ptp(u)), float(np.ptp(v))
    scale = min(width / du if du > 0 else math.inf, height / dv if dv > 0 else math.inf)
    if not math.isfinite(scale):
        scale = 1.0
    origin_x = left + 0.5 * width - scale * 0.5 * (u.min() + u.max())
    origin_y = top + 0.5 * height + scale * 0.5 * (v.min() + v.max())
    return Projection(view.rows, scale, np.array([origin_x, origin_y]))


def _face_groups(picture: Picture, projection: Projection, face_budget: int) -> list[Group]:
    """All bodies' faces, sorted far to near together (painter's order), one group per body."""
    polygons, depths, owners = [], [], []
    for index, body in enumerate(picture.bodies):
        if not len(body.triangles):
            continue
        drawn = body.drawing if body.drawing is not None else decimate_for_drawing(body.triangles, face_budget)
        normals = np.cross(drawn[:, 1] - drawn[:, 0], drawn[:, 2] - drawn[:, 0])
        lengths = np.linalg.norm(normals, axis=1)
        usable = lengths > 0
        drawn, normals = drawn[usable], normals[usable] / lengths[usable, None]
        if body.closed:
            front = normals @ projection.rows[2] > 0.0
            drawn, normals = drawn[front], normals[front]
        colours = shade(body_colour(picture, index), normals, projection.rows)
        polygons.append((projection.to_pixels(drawn), colours))
        depths.append(projection.depth(drawn).mean(axis=1))
        owners.append(np.full(len(drawn), index))
    if not polygons:
        return []
    all_pixels = np.concatenate([p for p, _ in polygons])
    all_colours = [c for _, colours in polygons for c in colours]
    order = np.argsort(np.concatenate(depths), kind="stable")
    owner = np.concatenate(owners)[order]
    # Consecutive faces of one body share a group; bodies interleave where they overlap in depth.
    groups = []
    run_start = 0
    for position in range(1, len(order) + 1):
        if position == len(order) or owner[position] != owner[run_start]:
            items = tuple(
                Polygon(all_pixels[k], all_colours[k], stroke=all_colours[k], stroke_width=0.6)
                for k in order[run_start:position]
            )
            groups.append(Group(items, css_class="faces", data={"body": str(int(owner[run_start]))}))
            run_start = position
    return groups


def _highlight_groups(picture: Picture, projection: Projection, view: View) -> list[Group]:
    groups = []
    for number, highlight in enumerate(picture.highlights):
        items: list = []
        faces = np.asarray(highlight.faces, dtype=np.int64).reshape(-1)
        body = picture.bodies[highlight.body] if picture.bodies else None
        if body is not None and len(faces) and len(body.triangles):
            faces = faces[(faces >= 0) & (faces < len(body.triangles))]
            shown = faces[:HIGHLIGHT_FACE_LIMIT]
            triangles = body.triangles[shown]
            order = np.argsort(projection.depth(triangles).mean(axis=1), kind="stable")
            for pixels in projection.to_pixels(triangles[order]):
                items.append(Polygon(pixels, FINDING_FILL, stroke=FINDING_EDGE, stroke_width=1.4, opacity=0.9))
        for segment in projection.to_pixels(np.asarray(highlight.edges, dtype=np.float64).reshape(-1, 2, 3)[:HIGHLIGHT_FACE_LIMIT]):
            items.append(Polygon(segment, None, stroke=FINDING_EDGE, stroke_width=4.2, closed=False))
            items.append(Polygon(segment, None, stroke=FINDING_FILL, stroke_width=2.0, closed=False))
        for low_high in np.asarray(highlight.boxes, dtype=np.float64).reshape(-1, 2, 3):
            items.extend(_box_outline(low_high, projection))
        for point in projection.to_pixels(np.asarray(highlight.points, dtype=np.float64).reshape(-1, 3)):
            items.append(Circle((float(point[0]), float(point[1])), 6.0, None, FINDING_EDGE, 2.2))
            items.append(Circle((float(point[0]), float(point[1])), 4.0, None, FINDING_FILL, 1.6))
        if items:
            groups.append(
                Group(
                    tuple(items),
                    element_id=f"finding-{number}-{view.key}",
                    css_class="finding",
                    data={
                        "code": highlight.code,
                        "severity": highlight.severity,
                        "body": str(highlight.body),
                        "faces": " ".join(str(int(f)) for f in faces),
                    },
                )
            )
    return groups


def _box_outline(low_high: np.ndarray, projection: Projection) -> list:
    low, high = low_high
    corners = np.array([[x, y, z] for x in (low[0], high[0]) for y in (low[1], high[1]) for z in (low[2], high[2])])
    pixels = projection.to_pixels(corners)
    hull = _convex_hull(pixels)
    items = [Polygon(hull, FINDING_FILL, stroke=FINDING_EDGE, stroke_width=1.6, opacity=0.45, dash="5 3")]
    for a in range(8):
        for b in range(a + 1, 8):
            if bin(a ^ b).count("1") == 1:
                items.append(Polygon(pixels[[a, b]], None, stroke=FINDING_EDGE, stroke_width=1.2, closed=False))
    return items


def _convex_hull(points: np.ndarray) -> np.ndarray:
    """Monotone-chain convex hull of (k, 2) points, counter-clockwise."""
    unique = sorted({(round(float(x), 4), round(float(y), 4)) for x, y in points})
    if len(unique) <= 2:
        return np.array(unique)

    def cross(o, a, b):
        return (a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0])

    lower, upper = [], []
    for p in unique:
        while len(lower) >= 2 and cross(lower[-2], lower[-1], p) <= 0:
            lower.pop()
        lower.append(p)
    for p in reversed(unique):
        while len(upper) >= 2 and cross(upper[-2], upper[-1], p) <= 0:
            upper.pop()
        upper.append(p)
    return np.array(lower[:-1] + upper[:-1])


def _marker_group(element_id: str, css_class: str, pixel: np.ndarray, colour: str, big: bool, label: str) -> Group:
    x, y = float(pixel[0]), float(pixel[1])
    radius = 7.5 if big else 4.5
    items: list = [Circle((x, y), radius + 1.5, "#ffffff", None, 0.0), Circle((x, y), radius, colour, INK, 1.6)]
    if big:  # a target: ring, cross hairs through it, a white core
        for dx, dy in ((1, 0), (0, 1)):
            items.append(
                Polygon(
                    np.array([[x - dx * (radius + 5), y - dy * (radius + 5)], [x + dx * (radius + 5), y + dy * (radius + 5)]]),
                    None,
                    stroke=INK,
                    stroke_width=1.6,
                    closed=False,
                )
            )
        items.append(Circle((x, y), 2.5, "#ffffff", INK, 1.0))
    return Group(tuple(items), element_id=element_id, css_class=css_class, data={"x": f"{x:.3f}", "y": f"{y:.3f}", "label": label})


def _round_length(value: float) -> float:
    """The largest 1, 2 or 5 times a power of ten not above ``value``."""
    if value <= 0:
        return 0.0
    power = 10.0 ** math.floor(math.log10(value))
    for step in (5.0, 2.0, 1.0):
        if step * power <= value:
            return step * power
    return power


def default_length_text(metres: float) -> str:
    return f"{metres + 0.0:.6g} m"


def draw_view(
    picture: Picture,
    view: View,
    *,
    width: int = 640,
    height: int = 420,
    legend_width: int = 200,
    face_budget: int = FACE_BUDGET,
    length_text: Callable[[float], str] = default_length_text,
    moment_text: Callable[[float], str] = lambda value: f"{value + 0.0:.6g} kg·m²",
) -> Scene:
    """Draw ``picture`` as seen from ``view``.

    Parameters
    ----------
    picture : what to draw (metres, the picture's axes)
    view : one of :data:`VIEWS` (or any :class:`View`)
    width, height : pixel size of the whole view, legend included
    legend_width : pixels on the right kept for the legend
    face_budget : faces drawn at most, all bodies together (decimated above it, for drawing only)
    length_text, moment_text : how lengths (m) and moments (kg·m²) are written in the legend

    Returns
    -------
    Scene, in pixels with y down
    """
    margin, title_height = 18, 30
    _, legend_bottom = _legend(picture, width, legend_width, height, length_text, moment_text)
    height = max(height, int(math.ceil(legend_bottom)) + 18)
    drawing_box = (margin, title_height + margin, width - legend_width - 2 * margin, height - title_height - 2 * margin - 16)
    projection = _fit(picture, view, drawing_box)
    groups: list[Group] = [
        Group(
            (
                Polygon(np.array([[0, 0], [width, 0], [width, height], [0, height]], float), BACKGROUND),
                Text((margin, 21), view.title, 14.0, INK, bold=True),
            ),
            css_class="frame",
        )
    ]
    picture = prepared_for_drawing(picture, face_budget)
    groups += _face_groups(picture, projection, face_budget)
    inertia = picture.inertia
    if inertia is not None:
        outline = ellipse_outline(inertia, projection)
        groups.append(
            Group(
                (
                    Polygon(outline, None, stroke="#ffffff", stroke_width=3.6),
                    Polygon(outline, None, stroke=ELLIPSOID_COLOUR, stroke_width=1.8, dash="9 3 2 3"),
                ),
                element_id=f"ellipsoid-{view.key}",
                css_class="ellipsoid",
                data={"semi-axes": " ".join(repr(float(a)) for a in inertia.ellipsoid_semi_axes)},
            )
        )
    groups += _highlight_groups(picture, projection, view)
    if inertia is not None:
        lengths = axis_lengths(inertia, _axis_reach(picture))
        start = projection.to_pixels(inertia.center_of_mass)
        for k in range(3):
            colour, dash = AXIS_STYLES[k]
            tip = projection.to_pixels(np.asarray(inertia.center_of_mass) + lengths[k] * np.asarray(inertia.principal_axes[k]))
            items = [
                Polygon(np.array([start, tip]), None, stroke="#ffffff", stroke_width=5.0, closed=False),
                Polygon(np.array([start, tip]), None, stroke=colour, stroke_width=2.6, dash=dash, closed=False),
            ]
            items += _arrow_head(start, tip, colour)
            if float(np.linalg.norm(tip - start)) > 6.0:
                items.append(Text((float(tip[0]) + 5, float(tip[1]) - 5), f"e{k + 1}", 12.0, colour, bold=True))
            groups.append(
                Group(tuple(items), element_id=f"axis-e{k + 1}-{view.key}", css_class="principal-axis", data={"length-m": repr(float(lengths[k]))})
            )
    for index, body in enumerate(picture.bodies):
        if body.center_of_mass is None or (len(picture.bodies) == 1 and inertia is not None):
            continue
        pixel = projection.to_pixels(body.center_of_mass)
        marker = _marker_group(f"com-body-{index}-{view.key}", "com-marker com-body", pixel, body_colour(picture, index), False, body.name)
        number = Text((float(pixel[0]) + 7, float(pixel[1]) - 6), str(index + 1), 10.5, INK, bold=True)
        groups.append(Group(marker.items + (number,), marker.element_id, marker.css_class, marker.data))
    if inertia is not None:
        groups.append(
            _marker_group(f"com-total-{view.key}", "com-marker com-total", projection.to_pixels(inertia.center_of_mass), "#ffffff", True, picture.total_label)
        )
    groups.append(_scale_bar(projection, drawing_box, height, length_text))
    groups.append(_world_axes(view, drawing_box))
    groups.append(_legend(picture, width, legend_width, height, length_text, moment_text)[0])
    return Scene(view, width, height, projection, tuple(groups))


def _arrow_head(start: np.ndarray, tip: np.ndarray, colour: str) -> list:
    direction = tip - start
    length = float(np.linalg.norm(direction))
    if length < 8.0:
        return []
    unit = direction / length
    normal = np.array([-unit[1], unit[0]])
    base = tip - 9.0 * unit
    return [Polygon(np.array([tip, base + 4.5 * normal, base - 4.5 * normal]), colour, stroke="#ffffff", stroke_width=0.8)]


def _scale_bar(projection: Projection, box, height: int, length_text) -> Group:
    left, _, width, _ = box
    metres = _round_length(0.3 * width / projection.scale)
    pixels = metres * projection.scale
    y = height - 14
    items = (
        Polygon(np.array([[left, y], [left + pixels, y]]), None, stroke=INK, stroke_width=2.0, closed=False),
        Polygon(np.array([[left, y - 4], [left, y + 4]]), None, stroke=INK, stroke_width=1.5, closed=False),
        Polygon(np.array([[left + pixels, y - 4], [left + pixels, y + 4]]), None, stroke=INK, stroke_width=1.5, closed=False),
        Text((left + pixels + 6, y + 4), length_text(metres), 11.0, FAINT_INK),
    )
    return Group(items, css_class="scale-bar", data={"length-m": repr(metres), "pixels": f"{pixels:.3f}"})


def _world_axes(view: View, box) -> Group:
    """A small triad: where +x, +y, +z point on this view (an axis along the line of sight is a dot)."""
    left, top, width, height = box
    center = np.array([left + width - 26.0, top + height - 10.0])
    items: list = []
    for k, name in enumerate("xyz"):
        direction = np.array([view.rows[0][k], -view.rows[1][k]])
        tip = center + 20.0 * direction
        colour = WORLD_AXIS_COLOURS[name]
        if float(np.linalg.norm(direction)) < 0.15:
            sign = "+" if view.rows[2][k] > 0 else "-"
            items.append(Circle((float(center[0]), float(center[1])), 3.0, colour, None, 0.0))
            text = f"+{name} toward you" if sign == "+" else f"+{name} away from you"
            items.append(Text((float(center[0]) + 20, float(center[1]) + 16), text, 10.0, colour, "end"))
            continue
        items.append(Polygon(np.array([center, tip]), None, stroke=colour, stroke_width=1.8, closed=False))
        items.append(Text((float(tip[0]) + 2 * direction[0], float(tip[1]) + 2 * direction[1] + 4), name, 11.0, colour, "middle", True))
    return Group(tuple(items), css_class="world-axes")


def _legend(picture: Picture, width: int, legend_width: int, height: int, length_text, moment_text) -> tuple[Group, float]:
    """The key of a view, and the lowest pixel row it uses."""
    left = width - legend_width + 4
    items: list = [
        Polygon(np.array([[left - 6, 8], [width - 8, 8], [width - 8, height - 8], [left - 6, height - 8]], float), "#ffffff", stroke="#c9c5ba", stroke_width=1.0),
        Text((left + 4, 28), "Key", 13.0, INK, bold=True),
    ]
    y = 48.0
    step = 17.0
    bodies = picture.bodies
    shown = bodies if len(bodies) <= 16 else bodies[:15]
    for index, body in enumerate(shown):
        colour = body_colour(picture, index)
        if len(body.triangles):
            items.append(Polygon(np.array([[left + 4, y - 9], [left + 16, y - 9], [left + 16, y + 1], [left + 4, y + 1]], float), colour, stroke=INK, stroke_width=0.6))
        else:
            items.append(Circle((left + 10, y - 4), 4.5, colour, INK, 1.4))
        label = f"{index + 1} {body.name}" if len(bodies) > 1 else body.name
        items.append(Text((left + 22, y), _shorten(label, 26), 11.0))
        y += step
    if len(bodies) > len(shown):
        items.append(Text((left + 22, y), f"+ {len(bodies) - len(shown)} more (see the table)", 11.0, FAINT_INK))
        y += step
    if len(bodies) > 1:
        items.append(Circle((left + 10, y - 4), 4.0, "#ffffff", INK, 1.4))
        items.append(Text((left + 22, y), "a body's centre of mass", 11.0))
        y += step
    if picture.inertia is not None:
        items.append(Circle((left + 10, y - 4), 6.0, "#ffffff", INK, 1.6))
        items.append(Circle((left + 10, y - 4), 2.0, "#ffffff", INK, 1.0))
        items.append(Text((left + 22, y), _shorten(picture.total_label, 24), 11.0))
        y += step + 4
        items.append(Text((left + 4, y), "principal axes, length ∝ moment:", 10.5, FAINT_INK))
        y += step - 2
        for k in range(3):
            colour, dash = AXIS_STYLES[k]
            items.append(Polygon(np.array([[left + 2, y - 4], [left + 20, y - 4]]), None, stroke=colour, stroke_width=2.6, dash=dash, closed=False))
            items.append(Text((left + 24, y), f"e{k + 1}  I{k + 1} = {moment_text(float(picture.inertia.principal_moments[k]))}", 10.5))
            y += step - 2
        y += 4
        items.append(Polygon(np.array([[left + 2, y - 4], [left + 20, y - 4]]), None, stroke=ELLIPSOID_COLOUR, stroke_width=1.8, dash="9 3 2 3", closed=False))
        items.append(Text((left + 24, y), "equivalent uniform ellipsoid", 10.5))
        y += step - 3
        items.append(Text((left + 24, y), "(same mass and moments),", 10.5, FAINT_INK))
        y += step - 3
        items.append(Text((left + 24, y), "semi-axes along e1, e2, e3:", 10.5, FAINT_INK))
        y += step - 3
        for k, semi in enumerate(picture.inertia.ellipsoid_semi_axes):
            items.append(Text((left + 30, y), f"a{k + 1} = {length_text(float(semi))}", 10.5))
            y += step - 3
        y += 3
    if picture.highlights:
        items.append(Polygon(np.array([[left + 4, y - 9], [left + 16, y - 9], [left + 16, y + 1], [left + 4, y + 1]], float), FINDING_FILL, stroke=FINDING_EDGE, stroke_width=1.4))
        codes = sorted({h.code for h in picture.highlights})
        items.append(Text((left + 22, y), "finding: " + _shorten(", ".join(codes), 20), 11.0))
        y += step
    if picture.numbers_withheld:
        items.append(Text((left + 4, y + 4), "numbers withheld:", 11.0, "#8a1c1c", bold=True))
        items.append(Text((left + 4, y + 4 + step), "the mesh failed validation", 11.0, "#8a1c1c"))
        y += 4 + step
    return Group(tuple(items), css_class="legend"), y


def _shorten(text: str, limit: int) -> str:
    return text if len(text) <= limit else text[: limit - 1] + "…"


def prepared_for_drawing(picture: Picture, face_budget: int = FACE_BUDGET) -> Picture:
    """``picture`` with each body's drawn triangles decimated to its share of ``face_budget``.

    The share is proportional to the body's face count, at least :data:`BODY_FACE_FLOOR`.
    Bodies already prepared are kept.
    """
    if all(body.drawing is not None and body.bounds is not None or not len(body.triangles) for body in picture.bodies):
        return picture
    total = sum(len(body.triangles) for body in picture.bodies) or 1
    bodies = []
    for body in picture.bodies:
        if body.drawing is None and len(body.triangles):
            share = max(BODY_FACE_FLOOR, int(face_budget * len(body.triangles) / total))
            body = BodyPicture(body.name, body.triangles, body.center_of_mass, body.closed, body.colour,
                               decimate_for_drawing(body.triangles, share), _bounds(body.triangles))
        bodies.append(body)
    return Picture(tuple(bodies), picture.inertia, picture.highlights, picture.total_label, picture.numbers_withheld)


def draw_views(picture: Picture, views: Sequence[View] = VIEWS, **options) -> tuple[Scene, ...]:
    """:func:`draw_view` for each of ``views`` (default: the three orthographic and the oblique).

    The bodies are decimated once for all views (see :func:`prepared_for_drawing`).
    """
    picture = prepared_for_drawing(picture, options.get("face_budget", FACE_BUDGET))
    return tuple(draw_view(picture, view, **options) for view in views)


# ----------------------------------------------------------------------------- SVG


def _attribute(value) -> str:
    return html.escape(str(value), quote=True)


def _points_text(points: np.ndarray) -> str:
    return " ".join(f"{x:.2f},{y:.2f}" for x, y in np.asarray(points, dtype=np.float64))


def _face_svg(item: Polygon) -> str:
    points = " ".join(f"{x:.1f},{y:.1f}" for x, y in np.asarray(item.points, dtype=np.float64))
    return f'<polygon points="{points}" fill="{item.fill}" stroke="{item.stroke or item.fill}"/>'


def _primitive_svg(item) -> str:
    if isinstance(item, Polygon):
        parts = [f'points="{_points_text(item.points)}"', f'fill="{item.fill or "none"}"']
        if item.stroke:
            parts.append(f'stroke="{item.stroke}" stroke-width="{item.stroke_width:g}" stroke-linejoin="round"')
        if item.dash:
            parts.append(f'stroke-dasharray="{item.dash}"')
        if item.opacity != 1.0:
            parts.append(f'opacity="{item.opacity:g}"')
        tag = "polygon" if item.closed else "polyline"
        return f"<{tag} {' '.join(parts)}/>"
    if isinstance(item, Circle):
        stroke = f' stroke="{item.stroke}" stroke-width="{item.stroke_width:g}"' if item.stroke else ""
        return f'<circle cx="{item.center[0]:.3f}" cy="{item.center[1]:.3f}" r="{item.radius:g}" fill="{item.fill or "none"}"{stroke}/>'
    if isinstance(item, Text):
        weight = ' font-weight="bold"' if item.bold else ""
        return (
            f'<text x="{item.position[0]:.2f}" y="{item.position[1]:.2f}" font-size="{item.size:g}" fill="{item.colour}" '
            f'text-anchor="{item.anchor}"{weight}>{html.escape(item.text)}</text>'
        )
    raise TypeError(f"expected a scene primitive, got {type(item).__name__}")


def scene_to_svg(scene: Scene, *, standalone: bool = False, id_prefix: str = "") -> str:
    """The scene as one ``<svg>`` element.

    Inline in HTML (the default) it needs no namespace declaration, so the page holds
    no URL at all; ``standalone=True`` adds the SVG namespace for a file of its own.
    ``id_prefix`` keeps element ids unique when several pictures share one page.
    """
    projection = scene.projection
    namespace = 'xmlns="http://www.w3.org/2000/svg" ' if standalone else ""
    lines = [
        f'<svg {namespace}class="view" id="{id_prefix}view-{scene.view.key}" '
        f'width="{scene.width}" height="{scene.height}" viewBox="0 0 {scene.width} {scene.height}" '
        f'font-family="system-ui, -apple-system, Segoe UI, Helvetica, Arial, sans-serif" '
        f'role="img" aria-label="{_attribute(scene.view.title)}" '
        f'data-view="{scene.view.key}" data-right="{_vector(projection.rows[0])}" data-up="{_vector(projection.rows[1])}" '
        f'data-toward="{_vector(projection.rows[2])}" data-scale="{projection.scale!r}" data-origin="{_vector(projection.origin)}">'
    ]
    for group in scene.groups:
        attributes = []
        if group.element_id:
            attributes.append(f'id="{_attribute(id_prefix + group.element_id)}"')
        if group.css_class:
            attributes.append(f'class="{_attribute(group.css_class)}"')
        attributes += [f'data-{key}="{_attribute(value)}"' for key, value in group.data.items()]
        if group.css_class == "faces":  # thousands of faces: their common stroke is set once
            width = group.items[0].stroke_width if group.items else 0.6
            attributes.append(f'stroke-width="{width:g}" stroke-linejoin="round"')
            lines.append(f"<g {' '.join(attributes)}>")
            lines.extend(_face_svg(item) for item in group.items)
        else:
            lines.append(f"<g {' '.join(attributes)}>" if attributes else "<g>")
            lines.extend(_primitive_svg(item) for item in group.items)
        lines.append("</g>")
    lines.append("</svg>")
    return "\n".join(lines)


def _vector(values) -> str:
    return " ".join(repr(float(x)) for x in np.asarray(values).reshape(-1))
