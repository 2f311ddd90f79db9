"""Golden outputs: every sample and example mesh, through every renderer, byte for byte.

The files in ``tests/golden/outputs`` were recorded before the package was restructured
(issue 7: no behaviour change). An intended change of output regenerates them with
``python tests/golden/cases.py`` in the same commit, which says why.
"""

from __future__ import annotations

import pytest
from golden.cases import GOLDEN, cases, run_case

CASES = cases()


def test_every_case_has_a_golden_file():
    recorded = {path.name[: -len(".txt")] for path in GOLDEN.glob("*.txt")}
    assert recorded == set(CASES)


@pytest.mark.parametrize("name", sorted(CASES))
def test_output_matches_golden_file(name):
    expected = (GOLDEN / f"{name}.txt").read_text(encoding="utf-8")
    assert run_case(CASES[name]) == expected
