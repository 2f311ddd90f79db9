"""The self-contained HTML report: pictures, values, findings, conventions, cautions.

Pure text assembly from plain data: the serialized bodies (the same dicts the
JSON output is made of) and the :class:`~meshprops.output.drawing.Scene` s of
the views. Nothing here measures anything.

The page makes no network request: the pictures are inline SVG, the style is
one inline ``<style>`` element, fonts are the reader's system fonts, and there
is no script. Every number printed in a values table carries the JSON path it
comes from and its exact value (``data-path``, ``data-value``), written in the
digits of the terminal table, so a test can compare the page with
``measure --json``.
"""

from __future__ import annotations

import html
from collections.abc import Callable, Sequence
from dataclasses import dataclass

from .drawing import Scene, scene_to_svg
from .numbers import format_number as _table_format  # the terminal table's digits


def table_number(value: float) -> str:
    """A value in the digits of the terminal table (its own formatter, without the sign's padding)."""
    return _table_format(value).strip()


_STYLE = """
:root { --paper: #f7f5ef; --ink: #1f2328; --faint: #6a6f78; --rule: #d9d4c7; --band: #2f4a6d;
        --good: #1d6b3a; --bad: #8a1c1c; --warn: #8a5a00; }
* { box-sizing: border-box; }
body { margin: 0; background: var(--paper); color: var(--ink);
       font: 15px/1.45 system-ui, -apple-system, "Segoe UI", Helvetica, Arial, sans-serif; }
header.band { background: var(--band); color: #fff; padding: 18px 28px 14px; }
header.band h1 { margin: 0 0 4px; font-size: 24px; font-weight: 650; letter-spacing: .01em; }
header.band p { margin: 0; opacity: .88; font-size: 13.5px; }
main { padding: 8px 28px 40px; max-width: 1400px; }
h2 { font-size: 18px; margin: 28px 0 8px; padding-bottom: 4px; border-bottom: 2px solid var(--rule); }
h3 { font-size: 15.5px; margin: 18px 0 6px; }
.verdict { display: inline-block; margin: 18px 0 4px; padding: 8px 14px; border-radius: 6px;
           font-weight: 650; border: 2px solid currentColor; background: #fff; }
.verdict.sound { color: var(--good); }
.verdict.withheld { color: var(--bad); }
.why { margin: 6px 0 0; color: var(--bad); }
.views { display: grid; grid-template-columns: repeat(auto-fill, minmax(640px, 1fr)); gap: 14px; }
.views figure { margin: 0; background: #fff; border: 1px solid var(--rule); border-radius: 4px; padding: 4px; }
.views svg { display: block; max-width: 100%; height: auto; }
table { border-collapse: collapse; margin: 6px 0 12px; background: #fff; }
th, td { padding: 3px 10px; border-bottom: 1px solid var(--rule); text-align: left; vertical-align: top; }
td.number { text-align: right; font-variant-numeric: tabular-nums; font-family: ui-monospace, Menlo, Consolas, monospace; }
th { font-weight: 600; background: #efebe1; }
.unit { color: var(--faint); }
.severity-error { color: var(--bad); font-weight: 650; }
.severity-warning { color: var(--warn); font-weight: 650; }
.note { color: var(--faint); font-size: 13.5px; }
details { margin: 6px 0; }
summary { cursor: pointer; font-weight: 600; }
ul.cautions li { margin-bottom: 4px; }
dl.conventions dt { font-weight: 600; margin-top: 6px; }
dl.conventions dd { margin: 0 0 0 18px; }
td.thumb svg { width: 240px; height: auto; display: block; }
footer { color: var(--faint); font-size: 12.5px; padding: 0 28px 24px; }
"""


def _e(text) -> str:
    return html.escape(str(text), quote=True)


@dataclass(frozen=True, slots=True, eq=False)
class FindingRow:
    """One finding in the findings list.

    Attributes
    ----------
    item : the body (or file) it belongs to
    finding : the serialized finding (code, severity, count, message, where)
    drawn : true when the pictures show it
    """

    item: str
    finding: dict
    drawn: bool


def _number_cell(path: str, value, number_text: Callable[[float], str]) -> str:
    if value is None:
        return '<td class="number">–</td>'
    return f'<td class="number" data-path="{_e(path)}" data-value="{float(value)!r}">{_e(number_text(float(value)))}</td>'


def _vector_row(label: str, path: str, values, unit: str, number_text) -> str:
    cells = "".join(_number_cell(f"{path}.{k}", v, number_text) for k, v in enumerate(values))
    cells += '<td class="number"></td>' * (3 - len(values))
    return f"<tr><th>{_e(label)}</th>{cells}<td class='unit'>{_e(unit)}</td></tr>"


def _scalar_row(label: str, path: str, value, unit: str, number_text) -> str:
    cells = _number_cell(path, value, number_text) + '<td class="number"></td>' * 2
    return f"<tr><th>{_e(label)}</th>{cells}<td class='unit'>{_e(unit)}</td></tr>"


def values_table(item: dict, path: str, *, number_text: Callable[[float], str] = table_number) -> str:
    """The values of one serialized body (or total) as an HTML table; ``path`` is its JSON path."""
    if item.get("mass") is None:
        return '<p class="why">No numbers: the mesh failed validation, so its values would not be sound.</p>'
    rows = ['<table class="values"><tr><th>quantity</th><th>x / 1</th><th>y / 2</th><th>z / 3</th><th>unit</th></tr>']
    if item.get("density") is not None:
        assumed = " (assumed: none given)" if item.get("density_assumed") else ""
        rows.append(_scalar_row("density" + assumed, f"{path}.density", item["density"], "kg/m³", number_text))
    if item.get("volume") is not None:
        rows.append(_scalar_row("volume", f"{path}.volume", item["volume"], "m³", number_text))
    rows.append(_scalar_row("mass", f"{path}.mass", item["mass"], "kg", number_text))
    rows.append(_vector_row("centre of mass", f"{path}.center_of_mass", item["center_of_mass"], "m", number_text))
    for k, row in enumerate(item["inertia_about_com"]):
        label = "inertia tensor about the centre of mass" if k == 0 else ""
        rows.append(_vector_row(label, f"{path}.inertia_about_com.{k}", row, "kg·m²" if k == 0 else "", number_text))
    products = item.get("products_of_inertia")
    if products:
        cells = "".join(_number_cell(f"{path}.products_of_inertia.{key}", products[key], number_text) for key in ("xy", "xz", "yz"))
        rows.append(f"<tr><th>products of inertia P<sub>xy</sub> P<sub>xz</sub> P<sub>yz</sub></th>{cells}<td class='unit'>kg·m²</td></tr>")
    if item.get("radii_of_gyration"):
        rows.append(_vector_row("radii of gyration", f"{path}.radii_of_gyration", item["radii_of_gyration"], "m", number_text))
    rows.append(_vector_row("principal moments I1 ≤ I2 ≤ I3", f"{path}.principal_moments", item["principal_moments"], "kg·m²", number_text))
    for k, axis in enumerate(item["principal_axes"]):
        rows.append(_vector_row(f"principal axis e{k + 1}", f"{path}.principal_axes.{k}", axis, "", number_text))
    symmetry = item.get("principal_symmetry")
    if symmetry and symmetry != "asymmetric":
        rows.append(f"<tr><th>symmetry</th><td colspan='4'>{_e(symmetry)}: the axes are not unique where moments coincide</td></tr>")
    about = item.get("inertia_about_point")
    if about:
        rows.append(_vector_row("inertia about the point", f"{path}.inertia_about_point.point", about["point"], "m", number_text))
        for k, row in enumerate(about["tensor"]):
            rows.append(_vector_row("", f"{path}.inertia_about_point.tensor.{k}", row, "kg·m²" if k == 0 else "", number_text))
    rows.append("</table>")
    return "\n".join(rows)


def _findings_section(rows: Sequence[FindingRow]) -> str:
    if not rows:
        return "<p>Validation found nothing to report.</p>"
    lines = [
        '<table class="findings"><tr><th>item</th><th>severity</th><th>code</th><th>count</th>'
        "<th>first faces</th><th>in the pictures</th><th>what it means</th></tr>"
    ]
    for row in rows:
        finding = row.finding
        faces = ", ".join(str(place["face"]) for place in finding.get("where", []) if "face" in place) or "–"
        shown = "highlighted" if row.drawn else "not drawn (no place)"
        lines.append(
            f"<tr class='finding-row' data-code='{_e(finding['code'])}'><td>{_e(row.item)}</td>"
            f"<td class='severity-{_e(finding['severity'])}'>{_e(finding['severity'])}</td>"
            f"<td><code>{_e(finding['code'])}</code></td><td class='number'>{int(finding['count'])}</td>"
            f"<td>{_e(faces)}</td><td>{shown}</td><td>{_e(finding['message'])}</td></tr>"
        )
    lines.append("</table>")
    return "\n".join(lines)


def _conventions_section(conventions: dict, notes: Sequence[str]) -> str:
    items = "".join(f"<dt>{_e(key.replace('_', ' '))}</dt><dd>{_e(text)}</dd>" for key, text in conventions.items())
    extra = "".join(f"<p class='note'>{_e(note)}</p>" for note in notes)
    return f'<dl class="conventions">{items}</dl>{extra}'


def _cautions_section(cautions: Sequence[str]) -> str:
    return '<ul class="cautions">' + "".join(f"<li>{_e(text)}</li>" for text in cautions) + "</ul>"


PICTURE_NOTES = (
    "Views are orthographic, in the axes of the input (assemblies: the assembly's axes). "
    "The scale bar gives the length of the drawing on each view.",
    "Principal axes are drawn from the centre of mass with lengths in the ratio of the principal moments "
    "(the largest moment is half the bounding-box diagonal long). Their signs follow the stated sign rule.",
    "The dash-dot outline is the uniform solid ellipsoid with the same mass and principal moments "
    "(semi-axes a_k = sqrt(5 (I_i + I_j - I_k) / (2 m))), centred on the centre of mass along e1, e2, e3.",
    "Findings are drawn on top of the part in yellow with a black edge, even where the faces are hidden.",
)


def _page(title: str, subtitle: str, body: str, footer: str) -> str:
    return (
        "<!DOCTYPE html>\n<html lang='en'>\n<head>\n<meta charset='utf-8'>\n"
        f"<meta name='viewport' content='width=device-width, initial-scale=1'>\n<title>{_e(title)}</title>\n"
        f"<style>{_STYLE}</style>\n</head>\n<body>\n"
        f"<header class='band'><h1>{_e(title)}</h1><p>{_e(subtitle)}</p></header>\n"
        f"<main>\n{body}\n</main>\n<footer>{_e(footer)}</footer>\n</body>\n</html>\n"
    )


def render_report(
    *,
    title: str,
    subtitle: str,
    valid: bool,
    reasons: Sequence[str],
    scenes: Sequence[Scene],
    items: Sequence[tuple[str, str, dict]],
    findings: Sequence[FindingRow],
    conventions: dict,
    cautions: Sequence[str],
    footer: str,
    summary_table: str = "",
    number_text: Callable[[float], str] = table_number,
    sound_text: str = "Sound: the surface passed validation and the numbers are given",
) -> str:
    """The report page of one part or one assembly.

    Parameters
    ----------
    title, subtitle : the heading band
    valid : false when numbers were withheld; ``reasons`` then say why (one line each)
    scenes : the views to show, in order
    items : ``(heading, json_path, serialized_body)`` for each values table, in order
        (the whole first: a single body, or an assembly's total)
    findings : the findings list
    conventions : key → sentence, as in the JSON document
    cautions : sentences shown under "Before relying on these numbers"
    footer : one line (program version, inputs)
    summary_table : optional HTML placed before the per-item tables (an assembly's bodies)
    number_text : how a value is written (the terminal table's digits)
    """
    parts = []
    if valid:
        parts.append(f'<div class="verdict sound">✓ {_e(sound_text)}</div>')
    else:
        parts.append('<div class="verdict withheld">✗ Numbers withheld: validation found errors</div>')
        parts.extend(f'<p class="why">{_e(reason)}</p>' for reason in reasons)
    parts.append("<h2>Pictures</h2>")
    parts.append('<div class="views">')
    parts.extend(f"<figure>{scene_to_svg(scene)}</figure>" for scene in scenes)
    parts.append("</div>")
    parts.extend(f'<p class="note">{_e(note)}</p>' for note in PICTURE_NOTES)
    parts.append("<h2>Numbers</h2>")
    parts.append('<p class="note">SI units, six significant digits as in the terminal table; '
                 "the exact values are in <code>measure --json</code>.</p>")
    if summary_table:
        parts.append(summary_table)
    for heading, path, item in items:
        parts.append(f"<h3>{_e(heading)}</h3>")
        parts.append(values_table(item, path, number_text=number_text))
    parts.append("<h2>Findings</h2>")
    parts.append(_findings_section(findings))
    parts.append("<h2>Conventions</h2>")
    parts.append(_conventions_section(conventions, ()))
    parts.append("<h2>Before relying on these numbers</h2>")
    parts.append(_cautions_section(cautions))
    return _page(title, subtitle, "\n".join(parts), footer)


@dataclass(frozen=True, slots=True, eq=False)
class CheckRow:
    """One checked file on the folder report.

    Attributes
    ----------
    source : the file
    valid : its verdict
    errors, warnings : how many findings of each severity
    faces : face count as read
    findings : serialized findings
    thumbnail : a :class:`Scene` (small oblique view), or ``None``
    """

    source: str
    valid: bool
    errors: int
    warnings: int
    faces: int | None
    findings: tuple[dict, ...]
    thumbnail: Scene | None


def render_check_report(*, title: str, subtitle: str, rows: Sequence[CheckRow], cautions: Sequence[str], footer: str) -> str:
    """The folder report of ``meshprops check``: a row per file, a thumbnail and its verdict."""
    sound = sum(1 for row in rows if row.valid)
    parts = [
        f'<div class="verdict {"sound" if sound == len(rows) else "withheld"}">'
        f"{sound} of {len(rows)} file(s) sound</div>",
        "<h2>Files</h2>",
        '<table class="files"><tr><th>file</th><th>picture</th><th>verdict</th><th>faces</th><th>findings</th></tr>',
    ]
    for number, row in enumerate(rows):
        verdict = (
            '<span class="verdict-text" style="color: var(--good)">✓ sound</span>'
            if row.valid
            else '<span class="verdict-text" style="color: var(--bad)">✗ invalid</span>'
        )
        listed = "".join(
            f"<div><span class='severity-{_e(f['severity'])}'>{_e(f['severity'])}</span> "
            f"<code>{_e(f['code'])}</code> ({int(f['count'])}): {_e(f['message'])}</div>"
            for f in row.findings
        ) or "none"
        thumb = scene_to_svg(row.thumbnail, id_prefix=f"file-{number}-") if row.thumbnail is not None else "–"
        parts.append(
            f"<tr class='file-row' data-source='{_e(row.source)}' data-valid='{str(row.valid).lower()}'>"
            f"<td>{_e(row.source)}</td><td class='thumb'>{thumb}</td><td>{verdict}<br>"
            f"<span class='note'>{row.errors} error(s), {row.warnings} warning(s)</span></td>"
            f"<td class='number'>{row.faces if row.faces is not None else '–'}</td><td>{listed}</td></tr>"
        )
    parts.append("</table>")
    parts.append('<p class="note">Thumbnails: oblique view; findings in yellow with a black edge.</p>')
    parts.append("<h2>Before relying on these numbers</h2>")
    parts.append(_cautions_section(cautions))
    return _page(title, subtitle, "\n".join(parts), footer)
