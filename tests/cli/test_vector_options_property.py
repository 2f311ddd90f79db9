"""Property: any finite floats in any vector option give a clean result or one clean error line.

Hypothesis feeds arbitrary finite floats (subnormals and values near the float64 limit included)
to --about, --spin, --velocity and --axis/--rpm through the console entry point
(:func:`meshprops.cli.main`, in process for speed; the subprocess tests in
``test_cli_hardening.py`` run the installed script). Asserted: no exception escapes (no
traceback), the exit code is 0, 1 or 2, and no output holds a non-finite token.
"""

from __future__ import annotations

import contextlib
import io
import re

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from meshprops.cli import main
from meshprops.geometry import shapes
from meshprops.io import writers

NON_FINITE = re.compile(r"\b(inf|nan|infinity)\b", re.IGNORECASE)
finite = st.floats(allow_nan=False, allow_infinity=False)
vector = st.tuples(finite, finite, finite).map(lambda v: ",".join(repr(x) for x in v))


@pytest.fixture(scope="module")
def box_path(tmp_path_factory):
    path = tmp_path_factory.mktemp("vector") / "box.stl"
    writers.write_binary_stl(path, shapes.triangles_of(*shapes.box((40.0, 20.0, 10.0))))
    return str(path)


def run_main(args):
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        with pytest.raises(SystemExit) as done:
            main(list(args))
    return done.value.code, out.getvalue(), err.getvalue()


def check_clean(args):
    code, out, err = run_main(args)
    assert code in (0, 1, 2), (args, code, err)
    assert not NON_FINITE.search(out), (args, out)
    assert not NON_FINITE.search(err.replace("not finite", "")), (args, err)
    if code == 2:
        assert err.startswith("meshprops: error: "), err


SETTINGS = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])


@SETTINGS
@given(about=vector, output=st.sampled_from(["--json", "--format=table"]))
def test_about(box_path, about, output):
    check_clean(["measure", box_path, "--density", "1000", f"--about={about}", output])


@SETTINGS
@given(spin=vector, output=st.sampled_from(["--json", "--format=table"]))
def test_spin(box_path, spin, output):
    check_clean(["measure", box_path, "--density", "1000", f"--spin={spin}", output])


@SETTINGS
@given(spin=vector, velocity=vector, about=vector)
def test_velocity_with_spin_about_a_point(box_path, spin, velocity, about):
    check_clean(["measure", box_path, "--density", "1000", f"--spin={spin}", f"--velocity={velocity}",
                 f"--about={about}", "--json"])


@SETTINGS
@given(axis=vector, rpm=finite)
def test_axis_and_rpm(box_path, axis, rpm):
    check_clean(["measure", box_path, "--density", "1000", f"--axis={axis}", f"--rpm={rpm!r}", "--json"])
