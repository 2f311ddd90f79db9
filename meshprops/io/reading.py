"""Opening input files: every operating-system error becomes one :class:`MeshFileError`
that names the file and the problem in words.
"""

from __future__ import annotations

import contextlib

from ..errors import MeshFileError


@contextlib.contextmanager
def file_errors(source: str):
    """Within this block, a missing, folder or unreadable ``source`` raises :class:`MeshFileError`."""
    try:
        yield
    except FileNotFoundError:
        raise MeshFileError(source, "no such file") from None
    except IsADirectoryError:
        raise MeshFileError(source, "is a directory, not a mesh file") from None
    except OSError as exc:
        raise MeshFileError(source, f"cannot read: {exc.strerror or exc}") from None
