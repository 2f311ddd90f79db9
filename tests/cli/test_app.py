"""The typer app and its entry point: every MeshpropsError becomes one stderr line
(``meshprops: error: ...``) and its exit code (0 ok, 1 invalid, 2 usage or unreadable input),
never a traceback; reports go to stdout or, atomically, to a file."""

from __future__ import annotations

import os

import pytest
import typer

from meshprops.cli.app import main, one_line_errors, say, write_report
from meshprops.errors import (
    EXIT_INVALID,
    EXIT_USAGE,
    InputValueError,
    InvalidMeshError,
    MeshFileError,
)
from meshprops.geometry import shapes
from meshprops.io.writers import write_obj


def run_main(capsys, *argv):
    with pytest.raises(SystemExit) as done:
        main(list(map(str, argv)))
    captured = capsys.readouterr()
    return done.value.code, captured.out, captured.err


def assert_one_error_line(err: str, *needles: str) -> None:
    lines = [line for line in err.splitlines() if line.strip()]
    assert len(lines) == 1, err
    assert lines[0].startswith("meshprops: error: ") and "Traceback" not in err
    for needle in needles:
        assert needle in lines[0]


def test_an_unreadable_file_is_one_line_and_exit_2(capsys, tmp_path):
    missing = tmp_path / "missing.stl"
    code, out, err = run_main(capsys, "measure", missing)
    assert code == EXIT_USAGE == 2
    assert str(missing) in out and "unreadable" in out  # the report still lists the file (issue 9)
    assert_one_error_line(err, str(missing), "no such file")


def test_a_usage_error_of_the_parser_is_one_line_and_exit_2(capsys):
    code, out, err = run_main(capsys, "measure", "--no-such-option", "x.stl")
    assert code == 2 and out == ""
    assert_one_error_line(err, "--no-such-option")


def test_an_unknown_command_is_one_line_and_exit_2(capsys):
    code, _, err = run_main(capsys, "weigh", "x.stl")
    assert code == 2
    assert_one_error_line(err, "weigh")


def test_no_arguments_prints_the_help_and_exits_2(capsys):
    code, out, err = run_main(capsys)
    assert code == 2 and "Usage" in out and "measure" in out and err == ""


def test_a_valid_measurement_exits_0(capsys, tmp_path):
    write_obj(tmp_path / "cube.obj", *shapes.box((10.0, 10.0, 10.0)))
    code, out, err = run_main(capsys, "measure", tmp_path / "cube.obj", "--density", "1000", "--json")
    assert code == 0 and '"mass": 0.001' in out and "error" not in err


def test_an_invalid_mesh_exits_1(capsys, tmp_path):
    vertices, faces = shapes.box((10.0, 10.0, 10.0))
    write_obj(tmp_path / "open.obj", vertices, faces[:-1])
    code, out, err = run_main(capsys, "measure", tmp_path / "open.obj", "--density", "1000")
    assert code == EXIT_INVALID == 1
    assert "open_edges" in err and "Traceback" not in err


@pytest.mark.parametrize(
    ("error", "code"),
    [
        (MeshFileError("part.stl", "truncated", offset=84), EXIT_USAGE),
        (InputValueError("--density", "a number", "heavy"), EXIT_USAGE),
        (InvalidMeshError("part.stl", "invalid mesh: open_edges: 3 open edges"), EXIT_INVALID),
    ],
    ids=["file", "input", "invalid"],
)
def test_one_line_errors_turns_an_error_into_its_exit_code_and_one_line(capsys, error, code):
    @one_line_errors
    def command():
        raise error

    with pytest.raises(typer.Exit) as done:
        command()
    assert done.value.exit_code == code
    assert capsys.readouterr().err == f"meshprops: error: {error}\n"


def test_one_line_errors_lets_results_and_other_exceptions_through():
    @one_line_errors
    def command(value, *, twice=False):
        if value is None:
            raise KeyError("a bug, not an input error")
        return value * (2 if twice else 1)

    assert command(21, twice=True) == 42 and command.__name__ == "command"
    with pytest.raises(KeyError):
        command(None)


def test_say_prefixes_the_program_name_on_stderr(capsys):
    say("warning: assumed 1000 kg/m^3")
    captured = capsys.readouterr()
    assert captured.err == "meshprops: warning: assumed 1000 kg/m^3\n" and captured.out == ""


def test_write_report_goes_to_stdout_or_to_the_file(capsys, tmp_path):
    write_report("to the terminal\n", None)
    assert capsys.readouterr().out == "to the terminal\n"
    target = tmp_path / "report.txt"
    write_report("to the file\n", target)
    assert target.read_text(encoding="utf-8") == "to the file\n" and capsys.readouterr().out == ""
    assert os.listdir(tmp_path) == ["report.txt"]


def test_every_command_usage_line_names_its_arguments_plainly():
    """No ``{files}``-style usage: every command uses the app's Command class and a metavar."""
    import typer
    from typer.testing import CliRunner

    from meshprops.cli import app

    group = typer.main.get_command(app)
    for name in group.list_commands(None):
        usage = CliRunner().invoke(app, [name, "--help"]).stdout.splitlines()[0]
        assert usage.startswith(f"Usage: meshprops {name} [OPTIONS]"), usage
        assert "{" not in usage and all(word == word.upper() for word in usage.split()[3:] if word != "[OPTIONS]"), usage


_FAST_EXIT_SCRIPT = """
import atexit, sys
from pathlib import Path
from meshprops.geometry.compiled import kernels
kernels("mesh_kernels")  # the kernels are loaded: the process ends through os._exit
marker = Path(sys.argv[1])
atexit.register(lambda: marker.write_text("exit handlers ran"))
sys.argv = ["meshprops", *sys.argv[2:]]
from meshprops.cli.app import main
main()
print("never reached")
"""


@pytest.mark.parametrize("mesh, expected_code", [("cube", 0), ("open", EXIT_INVALID)])
def test_the_console_entry_ends_fast_with_every_line_written_and_the_exit_handlers_run(tmp_path, mesh, expected_code):
    import json
    import subprocess
    import sys

    vertices, faces = shapes.box((10.0, 20.0, 30.0))
    write_obj(tmp_path / "cube.obj", vertices, faces)
    write_obj(tmp_path / "open.obj", vertices, faces[1:])
    marker = tmp_path / "marker.txt"
    done = subprocess.run(
        [sys.executable, "-c", _FAST_EXIT_SCRIPT, str(marker), "measure", str(tmp_path / f"{mesh}.obj"), "--density", "1000", "--json"],
        capture_output=True, text=True, timeout=120,
    )  # fmt: skip
    assert done.returncode == expected_code, done.stderr
    assert "never reached" not in done.stdout
    document = json.loads(done.stdout)  # the whole document arrived
    assert document["bodies"][0]["valid"] is (expected_code == 0)
    assert marker.read_text() == "exit handlers ran"
    if expected_code:
        assert "open_edges" in done.stderr
