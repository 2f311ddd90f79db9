"""PNG files of the report's views (``meshprops report --png DIR``).

The scene a view is drawn into (:mod:`meshprops.output.drawing`) is painted
with matplotlib's Agg backend, one figure pixel per scene pixel, so the PNG
shows exactly what the inline SVG shows. matplotlib is the optional extra
``report`` (``pip install "meshprops[report]"``): a static, headless raster
renderer from the registry with no display or browser needed. Without it,
``--png`` fails with one line saying what to install; the HTML report itself
needs no extra.
"""

from __future__ import annotations

import numpy as np

from ..errors import MissingExtraError
from .drawing import Circle, Polygon, Scene, Text

#: Pixels per inch of the figure; matplotlib sizes text in points (1/72 inch).
_DPI = 100.0
_FONT_POINTS_PER_PIXEL = 72.0 / _DPI


def _matplotlib():
    try:
        import matplotlib

        matplotlib.use("Agg", force=True)
        from matplotlib.figure import Figure
    except ImportError:
        raise MissingExtraError("PNG pictures (--png) need matplotlib", "report") from None
    return Figure


def _dashes(dash: str, width: float):
    if not dash:
        return "solid"
    lengths = [float(x) / max(width, 0.1) for x in dash.split()]
    return (0, tuple(lengths))


def scene_to_png_bytes(scene: Scene) -> bytes:
    """The scene as PNG bytes, ``scene.width`` × ``scene.height`` pixels."""
    Figure = _matplotlib()
    from io import BytesIO

    from matplotlib.collections import PolyCollection
    from matplotlib.patches import Circle as CirclePatch
    from matplotlib.patches import Polygon as PolygonPatch

    figure = Figure(figsize=(scene.width / _DPI, scene.height / _DPI), dpi=_DPI)
    axes = figure.add_axes((0.0, 0.0, 1.0, 1.0))
    axes.set_xlim(0, scene.width)
    axes.set_ylim(scene.height, 0)
    axes.set_axis_off()
    line_scale = _FONT_POINTS_PER_PIXEL  # stroke widths are given in pixels
    # matplotlib would draw lines above patches and text above both; the scene's order is the
    # painter's order, so every artist gets its position as its z-order.
    order = iter(range(1, 10**9))
    for group in scene.groups:
        faces = [item for item in group.items if isinstance(item, Polygon) and group.css_class == "faces"]
        if faces:  # one collection per run of faces keeps thousands of triangles fast
            collection = PolyCollection(
                [item.points for item in faces],
                facecolors=[item.fill for item in faces],
                edgecolors=[item.stroke or item.fill for item in faces],
                linewidths=[item.stroke_width * line_scale for item in faces],
                antialiaseds=True,
                zorder=next(order),
            )
            axes.add_collection(collection)
            continue
        for item in group.items:
            if isinstance(item, Polygon):
                if item.closed:
                    axes.add_patch(
                        PolygonPatch(
                            np.asarray(item.points),
                            closed=True,
                            facecolor=item.fill or "none",
                            edgecolor=item.stroke or "none",
                            linewidth=item.stroke_width * line_scale,
                            linestyle=_dashes(item.dash, item.stroke_width),
                            alpha=item.opacity if item.opacity != 1.0 else None,
                            joinstyle="round",
                            zorder=next(order),
                        )
                    )
                else:
                    points = np.asarray(item.points)
                    axes.plot(
                        points[:, 0],
                        points[:, 1],
                        color=item.stroke or "#000000",
                        linewidth=item.stroke_width * line_scale,
                        linestyle=_dashes(item.dash, item.stroke_width),
                        solid_capstyle="butt",
                        zorder=next(order),
                    )
            elif isinstance(item, Circle):
                axes.add_patch(
                    CirclePatch(
                        item.center,
                        item.radius,
                        facecolor=item.fill or "none",
                        edgecolor=item.stroke or "none",
                        linewidth=item.stroke_width * line_scale,
                        zorder=next(order),
                    )
                )
            elif isinstance(item, Text):
                axes.text(
                    item.position[0],
                    item.position[1],
                    item.text,
                    fontsize=item.size * _FONT_POINTS_PER_PIXEL,
                    color=item.colour,
                    ha={"start": "left", "middle": "center", "end": "right"}[item.anchor],
                    va="baseline",
                    fontweight="bold" if item.bold else "normal",
                    zorder=next(order),
                )
    buffer = BytesIO()
    figure.savefig(buffer, format="png", dpi=_DPI, facecolor="#ffffff")
    return buffer.getvalue()


def png_file_name(scene: Scene, prefix: str = "") -> str:
    return f"{prefix}{scene.view.key}.png"
