"""Every invalid example mesh (tests/meshes/invalid, ``CODE__name.ext``) gets a report that
says why (exit 1, no number printed) and draws the finding named by the file on every view,
so adding an example file adds a test here too."""

from __future__ import annotations

import re

import pytest
from paths import TESTS
from typer.testing import CliRunner

from meshprops.cli import app

INVALID = sorted(p for p in (TESTS / "meshes" / "invalid").glob("*") if p.suffix in (".stl", ".obj", ".ply"))
runner = CliRunner()


@pytest.mark.parametrize("path", INVALID, ids=lambda p: p.name)
def test_invalid_example_report_shows_the_finding_where_it_is(tmp_path, path):
    code = path.name.split("__")[0]
    page_path = tmp_path / "report.html"
    result = runner.invoke(app, ["report", str(path), "--units", "mm", "-o", str(page_path)])
    assert result.exit_code == 1, result.output
    page = page_path.read_text(encoding="utf-8")
    assert "Numbers withheld" in page
    assert "data-path=" not in page  # no number from a mesh that failed validation
    assert re.search(rf"<tr class='finding-row' data-code='{code}'>.*?<td>highlighted</td>", page)
    drawn = re.findall(rf'<g id="finding-\d+-(\w+)" class="finding" data-code="{code}" data-severity="error"[^>]*data-faces="([\d ]+)"', page)
    assert sorted(view for view, _ in drawn) == ["above", "front", "oblique", "right"]
    assert all(faces.split() for _, faces in drawn)
