"""Findings: what validation found, as data (never log lines). Severity is ``error`` when
the numbers would be wrong and ``warning`` otherwise; a report is valid exactly when it has no
error.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..geometry.faces import face_centroids
from ..io import Mesh

ERROR = "error"


WARNING = "warning"


#: How many example locations a finding carries.
WHERE_LIMIT = 5


@dataclass(frozen=True, slots=True, eq=False)
class Finding:
    """One thing validation found.

    Attributes
    ----------
    code : a stable name (see the README's table of finding codes)
    severity : ``"error"`` (numbers would be wrong) or ``"warning"``
    count : how many faces, edges, vertices or shells are affected (the message says which)
    message : one sentence for a person
    where : a few examples, each ``{"face": int, "point": [x, y, z]}`` (face index in the
        file as read, centroid in m, input axes)
    volume_change : m³, the volume a recovery changed (the solid integrated minus the plain
        sum of the shells; for ``crossing_bounded`` the bound), or ``None``
    """

    code: str
    severity: str
    count: int
    message: str
    where: tuple[dict, ...] = ()
    volume_change: float | None = None


@dataclass(frozen=True, slots=True, eq=False)
class ValidationReport:
    """What validation found about one mesh.

    ``valid`` is true when no finding is an error. ``extra`` holds mesh
    statistics: ``shells`` (connected pieces), ``voids`` (correctly inward
    shells inside another), ``holes`` (boundary loops), ``self_intersections_checked``.
    """

    findings: tuple[Finding, ...]
    face_count: int
    vertex_count: int
    edge_count: int
    extra: dict = field(default_factory=dict)

    @property
    def valid(self) -> bool:
        return not any(f.severity == ERROR for f in self.findings)

    @property
    def errors(self) -> tuple[Finding, ...]:
        return tuple(f for f in self.findings if f.severity == ERROR)

    @property
    def warnings(self) -> tuple[Finding, ...]:
        return tuple(f for f in self.findings if f.severity == WARNING)


#: The code of the one finding an unreadable file gets (missing, empty, truncated, malformed, a directory).
UNREADABLE = "unreadable"


def unreadable_report(error) -> ValidationReport:
    """The report of a file that could not be read: one ``unreadable`` error finding giving the reason.

    ``error`` is the :class:`~meshprops.errors.MeshpropsError` that stopped the reading; the
    mesh statistics are ``None`` (nothing was read).
    """
    reason = getattr(error, "problem", None) or str(error)
    return ValidationReport((Finding(UNREADABLE, ERROR, 1, f"cannot be read: {reason}"),), None, None, None, {})


def where(face_indices, mesh: Mesh, *, limit: int = WHERE_LIMIT) -> tuple[dict, ...]:
    """A few ``{"face": index, "point": centroid in m}`` locations (sorted face indices)."""
    chosen = np.unique(np.asarray(face_indices, dtype=np.int64))[:limit]
    if chosen.size == 0:
        return ()
    centroids = face_centroids(mesh, chosen)
    return tuple({"face": int(f), "point": [float(x) for x in c]} for f, c in zip(chosen, centroids))
