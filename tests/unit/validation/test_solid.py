"""resolve_solid: the verdict measure and check share, and the solid it integrates."""

from __future__ import annotations

import numpy as np
import pytest

from meshprops import mesh_from_arrays
from meshprops.errors import InputValueError
from meshprops.geometry import shapes
from meshprops.validation.solid import SolidOptions, resolve_solid


def test_overlap_integrates_the_union_and_keeps_the_plain_sum():
    # Cubes of side 2 at the origin and at (1, 1, 1): overlap 1 x 1 x 1 (inclusion–exclusion:
    # V = 8 + 8 − 1 = 15; the plain sum is 16).
    vertices, faces = shapes.merge(shapes.box((2, 2, 2)), shapes.box((2, 2, 2), (1, 1, 1)))
    solid = resolve_solid(mesh_from_arrays(vertices, faces, length_unit="m"))
    assert solid.report.valid and solid.changed
    assert solid.moments.volume == pytest.approx(15.0, rel=1e-12)
    assert solid.shell_sum.volume == pytest.approx(16.0, rel=1e-12)
    (finding,) = solid.report.findings
    assert finding.code == "shells_overlap" and finding.volume_change == pytest.approx(-1.0, rel=1e-12)
    # centre of mass by inclusion–exclusion: (8·0 + 8·(1,1,1) − 1·(0.5,0.5,0.5)) / 15
    centre = solid.moments.origin + solid.moments.first / solid.moments.volume
    np.testing.assert_allclose(centre, (8 * np.ones(3) - 0.5 * np.ones(3)) / 15, atol=1e-12)


def test_strict_gives_the_errors_and_no_moments():
    vertices, faces = shapes.merge(shapes.box((2, 2, 2)), shapes.box((2, 2, 2), (1, 1, 1)))
    solid = resolve_solid(mesh_from_arrays(vertices, faces, length_unit="m"), SolidOptions(strict=True))
    assert not solid.report.valid and solid.moments is None and not solid.changed
    assert {f.code for f in solid.report.findings} == {"self_intersection"}


def test_touching_cubes_are_not_changed():
    # Stacked face to face: the union has the same volume, so nothing is reported or replaced.
    vertices, faces = shapes.merge(shapes.box((2, 2, 2)), shapes.box((1, 1, 1), (0, 0, 1.5)))
    solid = resolve_solid(mesh_from_arrays(vertices, faces, length_unit="m"))
    assert solid.report.findings == () and not solid.changed
    assert solid.moments.volume == pytest.approx(9.0, rel=1e-12)


def test_bad_tolerances_are_refused():
    with pytest.raises(InputValueError):
        SolidOptions(weld_tolerance=-1.0)
    with pytest.raises(InputValueError):
        SolidOptions(volume_tolerance=float("nan"))
