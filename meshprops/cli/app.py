"""The ``meshprops`` typer app and its console entry point: every error becomes one stderr line
and an exit code, here and only here.

Exit codes: 0 ok; 1 a mesh failed validation (or a check failed); 2 bad usage or
unreadable input. Errors are one line on stderr, never a traceback.
"""

from __future__ import annotations

import functools
import sys
from typing import Annotated

import typer

from ..errors import EXIT_OK, EXIT_USAGE, MeshpropsError

app = typer.Typer(
    name="meshprops",
    help="Exact mass properties (mass, centre of mass, inertia, principal axes, spin) from closed triangle meshes.",
    add_completion=False,
    no_args_is_help=True,
    pretty_exceptions_enable=False,
    rich_markup_mode=None,
    context_settings={"help_option_names": ["-h", "--help"]},
)


def _print_version(value: bool) -> None:
    if value:
        from ..version import __version__

        print(f"meshprops {__version__}")
        raise typer.Exit(EXIT_OK)


@app.callback()
def _root(
    version: Annotated[bool, typer.Option("--version", help="Print the version and exit.", callback=_print_version,
                                          is_eager=True)] = False,
) -> None:
    """Exact mass properties from closed triangle meshes. SI output; see README for conventions."""


#: The metavar of the FILES argument of every command (typer would print ``{files}``).
FILES_METAVAR = "FILES..."


class Command(typer.core.TyperCommand):
    """A command whose usage line names required arguments plainly (``FILES...``, not ``{FILES...}``).

    Use it as ``@app.command(cls=Command)``.
    """

    def collect_usage_pieces(self, ctx):
        pieces = super().collect_usage_pieces(ctx)
        return [piece[1:-1] if piece.startswith("{") and piece.endswith("}") else piece for piece in pieces]


def say(message: str) -> None:
    print(f"meshprops: {message}", file=sys.stderr)


def announce_first_compile() -> None:
    """Have a first compile of the self-intersection kernels announced on stderr when it starts (once, then cached)."""
    from ..geometry.compiled import on_first_compile

    on_first_compile(say)


def write_report(text: str, output) -> None:
    """The report to ``output`` (atomically: never half-written), or to stdout."""
    from ..io.atomic import write_atomically

    if output is not None:
        write_atomically(str(output), text)
    else:
        sys.stdout.write(text)


def one_line_errors(function):
    """Decorate every command with this: a MeshpropsError becomes one stderr line and its exit code.

    Done per command (not only in :func:`main`) so that typer's CliRunner sees the same behaviour.
    """

    @functools.wraps(function)
    def wrapper(*args, **kwargs):
        try:
            return function(*args, **kwargs)
        except MeshpropsError as error:
            say(f"error: {error}")
            raise typer.Exit(error.exit_code) from None

    return wrapper


def main(argv: list[str] | None = None) -> None:
    """Console entry point: run the app and turn every error into one line and an exit code.

    ``argv`` None (the console script, ``python -m meshprops``): the process's own arguments,
    and the process ends here (see :func:`leave`). With ``argv`` (tests, embedding) it raises
    :class:`SystemExit` as usual.
    """
    leave(_run(argv), fast=argv is None)


def _run(argv: list[str] | None) -> int:
    """The exit code of one command line."""
    command = typer.main.get_command(app)
    try:
        # Without standalone mode the parser returns the command's exit code instead of exiting.
        status = command.main(args=argv if argv is not None else sys.argv[1:], prog_name="meshprops", standalone_mode=False)
    except MeshpropsError as error:
        say(f"error: {error}")
        return error.exit_code
    except typer.Exit as done:
        return done.exit_code
    except typer.Abort:
        say("aborted")
        return EXIT_USAGE
    except typer.TyperException as error:  # usage errors of the command-line parser
        if type(error).__name__ == "NoArgsIsHelpError":
            print(error.format_message())
        else:
            say(f"error: {error.format_message()}")
        return EXIT_USAGE
    except MemoryError:
        say("error: out of memory")
        return EXIT_USAGE
    except BrokenPipeError:
        return EXIT_OK
    return status if isinstance(status, int) else EXIT_OK


def leave(code: int, *, fast: bool) -> None:
    """End with exit code ``code``.

    Once numba's kernels are loaded, the interpreter's ordinary shutdown takes ~0.35 s (the
    finalizers of numba's compiler and of its OpenMP threads), a sixth of measuring a 2M-face
    part. With ``fast`` the process then runs its exit handlers (:mod:`atexit`: pools joined,
    temporary folders removed), flushes the standard streams and ends at once; every file
    meshprops writes is complete and closed before this point.
    """
    from ..geometry.compiled import kernels_loaded  # the standard library only: no numpy, no numba

    if fast and kernels_loaded():
        import atexit
        import os

        atexit._run_exitfuncs()
        for stream in (sys.stdout, sys.stderr):
            try:
                stream.flush()
            except (BrokenPipeError, OSError, ValueError):
                pass  # a closed pipe or stream: nothing more can reach its reader
        os._exit(code)
    sys.exit(code)
