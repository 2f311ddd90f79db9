"""Content hashes of files: what the cache and the baseline key results by.

The hash is SHA-256 of the file's bytes, read in blocks (a large export never sits in memory
twice), written ``sha256:<hex>``.

A hash can be remembered beside the file's :class:`FileStamp` (device, inode, size,
modification and change times in nanoseconds), as version-control tools do: while the stamp
is unchanged, so are the bytes, so the file need not be read again. Every write to a file
moves its change time (which no ordinary tool can set back), so a changed file never keeps
its stamp. A stamp is only worth remembering once the file has been still for
:data:`SETTLED_NANOSECONDS` before it was read: a file system that keeps coarse times could
otherwise give a write just after the read the same stamp.
"""

from __future__ import annotations

import hashlib
import os
import time
from dataclasses import dataclass

from .reading import file_errors

_BLOCK_BYTES = 1 << 20

#: A file's stamp is remembered only when its last change is at least this long before it was read.
SETTLED_NANOSECONDS = 2_000_000_000


def file_sha256(path: str | os.PathLike) -> str:
    """``"sha256:<64 hex digits>"`` of the file's content."""
    return hash_and_stamp(path)[0]


@dataclass(frozen=True, slots=True)
class FileStamp:
    """What the file system says of a file without reading it (``os.stat``), integers throughout.

    Attributes
    ----------
    device, inode : which file it is
    size : bytes
    mtime_ns, ctime_ns : last modification and last change (of content or metadata), ns since the epoch
    """

    device: int
    inode: int
    size: int
    mtime_ns: int
    ctime_ns: int

    @classmethod
    def of(cls, status: os.stat_result) -> FileStamp:
        return cls(status.st_dev, status.st_ino, status.st_size, status.st_mtime_ns, status.st_ctime_ns)

    def text(self) -> str:
        """The stamp as one line of text (inodes and devices may not fit a signed 64-bit integer)."""
        return f"{self.device}:{self.inode}:{self.size}:{self.mtime_ns}:{self.ctime_ns}"


def stamp_of(path: str | os.PathLike) -> FileStamp | None:
    """The file's current stamp, or ``None`` when it cannot be had (reading it then reports why)."""
    try:
        return FileStamp.of(os.stat(path))
    except (OSError, ValueError):
        return None


def hash_and_stamp(path: str | os.PathLike) -> tuple[str, FileStamp | None]:
    """The file's ``"sha256:<hex>"`` and the stamp it may be remembered by: ``None`` when the
    file changed while it was read, had not been still for :data:`SETTLED_NANOSECONDS`, or its
    file system keeps no times.

    Raises :class:`~meshprops.errors.MeshFileError` for a file that cannot be read.
    """
    digest = hashlib.sha256()
    source = os.fspath(path)
    started_ns = time.time_ns()
    with file_errors(source), open(source, "rb") as handle:
        before = FileStamp.of(os.fstat(handle.fileno()))
        for block in iter(lambda: handle.read(_BLOCK_BYTES), b""):
            digest.update(block)
        after = FileStamp.of(os.fstat(handle.fileno()))
    settled = (
        before == after
        and min(before.mtime_ns, before.ctime_ns) > 0  # a file system that keeps no times: never remembered
        and started_ns - max(before.mtime_ns, before.ctime_ns) >= SETTLED_NANOSECONDS
    )
    return "sha256:" + digest.hexdigest(), (before if settled else None)
