"""Content hashes of files: what the cache and the baseline key results by.

The hash is SHA-256 of the file's bytes, read in blocks (a large export never sits in memory
twice), written ``sha256:<hex>``.
"""

from __future__ import annotations

import hashlib
import os

from .reading import file_errors

_BLOCK_BYTES = 1 << 20


def file_sha256(path: str | os.PathLike) -> str:
    """``"sha256:<64 hex digits>"`` of the file's content."""
    digest = hashlib.sha256()
    source = os.fspath(path)
    with file_errors(source), open(source, "rb") as handle:
        for block in iter(lambda: handle.read(_BLOCK_BYTES), b""):
            digest.update(block)
    return "sha256:" + digest.hexdigest()
