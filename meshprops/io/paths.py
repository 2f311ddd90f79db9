"""Never write a report over an input file.

An output path is compared with every input after both are resolved to their
real location (relative paths against the working directory, ``..`` removed,
symbolic links followed), and, where both exist, by device and inode (hard
links). The check runs before anything is read or written.
"""

from __future__ import annotations

import os
from collections.abc import Iterable

from ..errors import OutputFileError


def same_file(first: str | os.PathLike, second: str | os.PathLike) -> bool:
    """True when the two paths name one file: same real path, or same device and inode."""
    if os.path.realpath(first) == os.path.realpath(second):
        return True
    try:
        return os.path.samefile(first, second)
    except OSError:  # one of them does not exist (yet): the real paths decided
        return False


def refuse_output_over_inputs(output: str | os.PathLike | None, inputs: Iterable[str | os.PathLike]) -> None:
    """Raise :class:`OutputFileError` if ``output`` resolves to any of ``inputs``; do nothing for ``None``.

    Parameters
    ----------
    output : the ``--output`` path (``None`` when the report goes to stdout)
    inputs : every file the command reads: mesh files, the manifest, every mesh it lists
    """
    if output is None:
        return
    for path in inputs:
        if same_file(output, path):
            shown = os.fspath(path)
            reason = (
                f"it is the input file {shown}" if os.fspath(output) == shown
                else f"it resolves to the input file {shown}"
            )
            raise OutputFileError(os.fspath(output), f"{reason}; choose another path (nothing was read or written)")
