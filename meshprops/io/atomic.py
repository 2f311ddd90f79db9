"""Atomic file writing: a temporary file in the target's folder, then a rename, so that a
report is never left half-written.
"""

from __future__ import annotations

import contextlib
import os
import stat
import tempfile
from collections.abc import Callable, Iterator

from ..errors import OutputFileError


def _report_mode(path: str) -> int:
    """The permissions a plain ``open(path, "w")`` would leave: an existing file's own, else
    0o666 less the umask (``mkstemp`` creates 0o600, unreadable to the group of a shared folder)."""
    try:
        return stat.S_IMODE(os.stat(path).st_mode)
    except OSError:
        mask = os.umask(0o022)  # the only portable way to read the umask is to set it
        os.umask(mask)
        return 0o666 & ~mask


def write_atomically(path: str, text: str | bytes) -> None:
    """Write ``text`` (UTF-8; ``bytes`` as they are) to ``path`` via a temporary file and a rename: never half-written."""
    directory = os.path.dirname(os.path.abspath(path))
    try:
        handle, temporary = tempfile.mkstemp(prefix=".meshprops-", dir=directory)
    except OSError as exc:  # missing or read-only directory: one clear line, not a traceback
        raise OutputFileError(path, exc.strerror or str(exc)) from None
    try:
        with os.fdopen(handle, "wb") as stream:
            os.chmod(temporary, _report_mode(path))
            stream.write(text if isinstance(text, bytes) else text.encode("utf-8"))
        os.replace(temporary, path)
    except BaseException as exc:
        if os.path.exists(temporary):
            os.unlink(temporary)
        if isinstance(exc, OSError) and not isinstance(exc, OutputFileError):
            raise OutputFileError(path, exc.strerror or str(exc)) from None
        raise


@contextlib.contextmanager
def atomic_stream(path: str) -> Iterator[Callable[[str], None]]:
    """A writer of text pieces (UTF-8) whose whole replaces ``path`` when the block ends
    without an exception, via a temporary file and a rename; on an exception ``path`` is
    left as it was and the temporary file removed.

    For reports written piece by piece (``--json-lines -o FILE``), which need not be held in
    memory whole as :func:`write_atomically` needs them. A failed write raises
    :class:`~meshprops.errors.OutputFileError`.
    """
    directory = os.path.dirname(os.path.abspath(path))
    try:
        handle, temporary = tempfile.mkstemp(prefix=".meshprops-", dir=directory)
    except OSError as exc:  # missing or read-only directory: one clear line, not a traceback
        raise OutputFileError(path, exc.strerror or str(exc)) from None
    written = False  # the caller's block ended: an OSError after that is the writing's own
    try:
        with os.fdopen(handle, "wb") as stream:

            def write(text: str) -> None:
                try:
                    stream.write(text.encode("utf-8"))
                except OSError as exc:
                    raise OutputFileError(path, exc.strerror or str(exc)) from None

            try:
                os.chmod(temporary, _report_mode(path))
            except OSError as exc:
                raise OutputFileError(path, exc.strerror or str(exc)) from None
            yield write
            written = True
        os.replace(temporary, path)
    except BaseException as exc:
        if os.path.exists(temporary):
            os.unlink(temporary)
        if written and isinstance(exc, OSError) and not isinstance(exc, OutputFileError):
            raise OutputFileError(path, exc.strerror or str(exc)) from None
        raise
