"""STL readers: binary (a memory map of the 50-byte records) and ASCII.
"""

from __future__ import annotations

import numpy as np

from ..errors import MeshFileError
from .mesh import STL_HEADER_BYTES, STL_RECORD, Mesh


def read_binary_stl(source: str, size: int, unit: str, scale: float) -> Mesh:
    count = (size - STL_HEADER_BYTES) // 50
    if count == 0:
        raise MeshFileError(source, "binary STL holds no triangles")
    try:
        # Read-only and zero-copy. numpy maps the file from byte 0 (the 84-byte offset is
        # below the allocation granularity), which _release_pages relies on.
        records = np.memmap(source, dtype=STL_RECORD, mode="r", offset=STL_HEADER_BYTES, shape=(count,))
    except ValueError:  # the file shrank between sizing and mapping it
        raise MeshFileError(source, "binary STL changed size while being read") from None
    except OSError as exc:
        raise MeshFileError(source, f"cannot map binary STL: {exc.strerror or exc}") from None
    return Mesh(source, "stl-binary", unit, scale, soup=records["vertices"])


_FLOAT = r"([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?|[-+]?(?:nan|inf|infinity))"


def read_ascii_stl(source: str, data: bytes, unit: str, scale: float) -> Mesh:
    # latin-1 maps every byte: names after 'solid' may be UTF-8; a stray byte elsewhere
    # fails the keyword or number checks below with its line number.
    text = data.decode("latin-1")
    corners: list[str] = []
    state = "outside"  # outside → solid → facet → loop(0..3) → endloop → solid ...
    in_loop = 0
    line_number = 0
    for line_number, raw in enumerate(text.splitlines(), start=1):
        words = raw.split()
        if not words:
            continue
        keyword = words[0].lower()
        if state == "outside":
            if keyword != "solid":
                raise MeshFileError(source, f"expected 'solid', found {words[0]!r}", line=line_number)
            state = "solid"
        elif state == "solid":
            if keyword == "facet":
                if len(words) != 5 or words[1].lower() != "normal":
                    raise MeshFileError(source, "expected 'facet normal NX NY NZ'", line=line_number)
                state = "facet"
            elif keyword == "endsolid":
                state = "outside"
            else:
                raise MeshFileError(source, f"expected 'facet' or 'endsolid', found {words[0]!r}", line=line_number)
        elif state == "facet":
            if keyword != "outer" or len(words) != 2 or words[1].lower() != "loop":
                raise MeshFileError(source, "expected 'outer loop'", line=line_number)
            state, in_loop = "loop", 0
        elif state == "loop":
            if keyword == "vertex":
                if len(words) != 4:
                    raise MeshFileError(source, "expected 'vertex X Y Z'", line=line_number)
                if in_loop == 3:
                    raise MeshFileError(source, "facet has more than three vertices", line=line_number)
                corners.extend(words[1:])
                in_loop += 1
            elif keyword == "endloop":
                if in_loop != 3:
                    raise MeshFileError(source, f"facet has {in_loop} vertices, expected 3", line=line_number)
                state = "endloop"
            else:
                raise MeshFileError(source, f"expected 'vertex' or 'endloop', found {words[0]!r}", line=line_number)
        elif state == "endloop":
            if keyword != "endfacet":
                raise MeshFileError(source, f"expected 'endfacet', found {words[0]!r}", line=line_number)
            state = "solid"
    if state != "outside":
        raise MeshFileError(source, "file ends inside a solid (missing 'endsolid'); truncated?", line=line_number)
    soup = _parse_floats(source, corners, "vertex coordinate").reshape(-1, 3, 3)
    return Mesh(source, "stl-ascii", unit, scale, soup=soup)


def _parse_floats(source: str, words: list[str], what: str) -> np.ndarray:
    try:
        return np.array(words, dtype=np.float64)
    except ValueError:
        for word in words:
            try:
                float(word)
            except ValueError:
                raise MeshFileError(source, f"{what} {word!r} is not a number") from None
        raise
