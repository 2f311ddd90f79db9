"""The recorded baseline (``meshprops-baseline.json``) and comparisons against it.

For every recorded mesh the baseline keeps the SHA-256 of the file's bytes
(:func:`meshprops.io.hashing.file_sha256`, written ``sha256:<hex>``), the
settings it was measured with (length unit, density) and its mass properties
(SI). A later check of a file whose bytes and settings are unchanged needs no
measurement at all; a changed file is measured and compared with its entry
under :class:`Tolerances`.

The JSON document (format ``meshprops.baseline``, version 1) has a stable key
order: fixed keys in a fixed order, files sorted by path, floats written with
full precision (shortest repr that round-trips), so re-recording unchanged
parts gives the same bytes and a diff shows only what changed::

    {
      "format": "meshprops.baseline",
      "format_version": 1,
      "units": {"length": "m", "volume": "m^3", "mass": "kg", "density": "kg/m^3", "inertia": "kg*m^2"},
      "files": {
        "exports/chassis_plate.stl": {
          "content_hash": "sha256:9f2c...",
          "length_unit": "mm",
          "density": 2700.0,
          "volume": 6.37e-05,
          "mass": 0.172,
          "center_of_mass": [0.0, 0.0, 0.002],
          "size": 0.215,
          "principal_moments": [0.00041, 0.00058, 0.00099],
          "warnings": []
        }
      }
    }

Paths are relative to the folder holding the baseline, in POSIX form; ``size``
is the bounding-box diagonal (m), the length the centre-of-mass tolerance is a
fraction of; ``warnings`` lists the warning findings the file had when recorded
(``{code, count, message}``), so that a check that skips the unchanged file still
reports them (and ``fail_on = "warning"`` still fails it).
"""

from __future__ import annotations

import json
import math
import os
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..errors import BaselineError
from ..io.atomic import write_atomically
from .discovery import BASELINE_FILE_NAME  # noqa: F401  (part of this module's API)
from .rules import FAIL, PASS, RULE_BASELINE, Verdict

BASELINE_FORMAT = "meshprops.baseline"
BASELINE_FORMAT_VERSION = 1
BASELINE_UNITS = {"length": "m", "volume": "m^3", "mass": "kg", "density": "kg/m^3", "inertia": "kg*m^2"}
ENTRY_KEYS = (
    "content_hash", "length_unit", "density", "volume", "mass", "center_of_mass", "size", "principal_moments", "warnings",
)  # fmt: skip


@dataclass(frozen=True, slots=True)
class Tolerances:
    """Tolerances of a baseline comparison (all dimensionless).

    Attributes
    ----------
    mass, volume : largest allowed relative change, ``|new - old| / |old|``
    center_of_mass : largest allowed movement of the centre of mass as a fraction
        of the part's size (its recorded bounding-box diagonal)
    principal_moments : largest allowed relative change of each principal moment
    """

    mass: float = 1e-3
    volume: float = 1e-3
    center_of_mass: float = 1e-3
    principal_moments: float = 1e-3


DEFAULT_TOLERANCES = Tolerances()
_CONTENT_HASH = re.compile(r"^sha256:[0-9a-f]{64}\Z")


@dataclass(frozen=True, slots=True, eq=False)
class BaselineEntry:
    """One recorded mesh.

    Attributes
    ----------
    path : relative to the baseline's folder, POSIX form
    content_hash : ``sha256:<hex>`` of the file's bytes
    length_unit : unit its coordinates were read in
    density : kg/m³ used for ``mass``
    volume : m³
    mass : kg
    center_of_mass : (3,) m, mesh axes
    size : m, bounding-box diagonal
    principal_moments : (3,) kg·m², ascending
    warnings : the warning findings at recording time, each ``{"code", "count", "message"}``
    """

    path: str
    content_hash: str
    length_unit: str
    density: float
    volume: float
    mass: float
    center_of_mass: np.ndarray
    size: float
    principal_moments: np.ndarray
    warnings: tuple = ()

    def same_input(self, content_hash: str, length_unit: str, density: float) -> bool:
        """Whether a file with these bytes and settings would measure exactly as recorded."""
        return self.content_hash == content_hash and self.length_unit == length_unit and self.density == float(density)


@dataclass(frozen=True, slots=True, eq=False)
class Baseline:
    """A set of recorded entries, by relative path; ``root`` is the folder paths are relative to."""

    root: str
    entries: dict

    def key(self, path: str | os.PathLike) -> str:
        """The entry key of ``path``: relative to :attr:`root`, POSIX form (``..`` kept when outside)."""
        return Path(os.path.relpath(os.path.abspath(os.fspath(path)), self.root)).as_posix()

    def get(self, path: str | os.PathLike) -> BaselineEntry | None:
        return self.entries.get(self.key(path))

    def updated(self, entries) -> Baseline:
        """A new baseline with ``entries`` added or replacing those of the same path."""
        merged = dict(self.entries)
        merged.update({entry.path: entry for entry in entries})
        return Baseline(self.root, merged)


def empty_baseline(root: str | os.PathLike) -> Baseline:
    return Baseline(os.path.abspath(os.fspath(root)), {})


def entry_to_dict(entry: BaselineEntry) -> dict:
    """One entry as plain JSON data, keys in :data:`ENTRY_KEYS` order."""
    return {
        "content_hash": entry.content_hash,
        "length_unit": entry.length_unit,
        "density": float(entry.density),
        "volume": float(entry.volume),
        "mass": float(entry.mass),
        "center_of_mass": [float(v) for v in entry.center_of_mass],
        "size": float(entry.size),
        "principal_moments": [float(v) for v in entry.principal_moments],
        "warnings": [{"code": w["code"], "count": int(w["count"]), "message": w["message"]} for w in entry.warnings],
    }


def baseline_to_dict(baseline: Baseline) -> dict:
    """The whole document, files sorted by path."""
    return {
        "format": BASELINE_FORMAT,
        "format_version": BASELINE_FORMAT_VERSION,
        "units": dict(BASELINE_UNITS),
        "files": {path: entry_to_dict(baseline.entries[path]) for path in sorted(baseline.entries)},
    }


def baseline_to_json(baseline: Baseline) -> str:
    return json.dumps(baseline_to_dict(baseline), indent=2, allow_nan=False) + "\n"


def write_baseline(path: str | os.PathLike, baseline: Baseline) -> None:
    """Write ``baseline`` to ``path`` through a temporary file and a rename (never half-written)."""
    write_atomically(os.fspath(path), baseline_to_json(baseline))


def read_baseline(path: str | os.PathLike) -> Baseline:
    """Read a baseline file; its entries' paths are relative to the file's folder.

    Raises
    ------
    BaselineError
        Unreadable, not JSON, another format or version, or an entry with a
        missing or malformed value (named by its path and key).
    """
    path = os.path.abspath(os.fspath(path))
    try:
        with open(path, encoding="utf-8") as handle:
            doc = json.load(handle)
    except FileNotFoundError:
        raise BaselineError(path, "no such baseline file") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise BaselineError(path, f"cannot read: {getattr(exc, 'strerror', None) or exc}") from None
    except json.JSONDecodeError as exc:
        raise BaselineError(path, f"line {exc.lineno}: not JSON: {exc.msg}") from None
    if not isinstance(doc, dict) or doc.get("format") != BASELINE_FORMAT:
        raise BaselineError(path, f"not a meshprops baseline (expected \"format\": \"{BASELINE_FORMAT}\")")
    if doc.get("format_version") != BASELINE_FORMAT_VERSION:
        raise BaselineError(path, f"format_version: expected {BASELINE_FORMAT_VERSION}, got {doc.get('format_version')!r}")
    files = doc.get("files")
    if not isinstance(files, dict):
        raise BaselineError(path, "files: expected an object of entries by path")
    entries = {}
    for name, raw in files.items():
        entries[name] = _entry(path, name, raw)
    return Baseline(os.path.dirname(path), entries)


def _entry(path: str, name: str, raw) -> BaselineEntry:
    def bad(key: str, expected: str, found) -> BaselineError:
        return BaselineError(path, f"files[{name!r}].{key}: expected {expected}, got {found!r}")

    if not isinstance(raw, dict):
        raise BaselineError(path, f"files[{name!r}]: expected an object, got {raw!r}")
    missing = [key for key in ENTRY_KEYS if key not in raw]
    if missing:
        raise BaselineError(path, f"files[{name!r}]: missing {', '.join(missing)}")

    def number(key: str) -> float:
        value = raw[key]
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
            raise bad(key, "a finite number", value)
        return float(value)

    def vector(key: str) -> np.ndarray:
        value = raw[key]
        if not isinstance(value, list) or len(value) != 3:
            raise bad(key, "3 numbers", value)
        if not all(not isinstance(v, bool) and isinstance(v, (int, float)) and math.isfinite(v) for v in value):
            raise bad(key, "3 finite numbers", value)
        return np.array(value, dtype=float)

    content_hash = raw["content_hash"]
    if not isinstance(content_hash, str) or not _CONTENT_HASH.match(content_hash):
        raise bad("content_hash", "'sha256:' and 64 lower-case hex digits", content_hash)
    if not isinstance(raw["length_unit"], str):
        raise bad("length_unit", "a unit name", raw["length_unit"])
    warnings = raw["warnings"]
    if not isinstance(warnings, list) or not all(
        isinstance(w, dict) and isinstance(w.get("code"), str) and isinstance(w.get("message"), str)
        and isinstance(w.get("count"), int) and not isinstance(w.get("count"), bool)
        for w in warnings
    ):  # fmt: skip
        raise bad("warnings", "a list of {code, count, message}", warnings)
    return BaselineEntry(
        name, content_hash, raw["length_unit"], number("density"), number("volume"), number("mass"),
        vector("center_of_mass"), number("size"), vector("principal_moments"),
        tuple({"code": w["code"], "count": w["count"], "message": w["message"]} for w in warnings),
    )  # fmt: skip


def relative_change(old: float, new: float) -> float:
    """``(new - old) / |old|``; infinite when ``old`` is 0 and ``new`` is not."""
    if old == 0.0:
        return 0.0 if new == 0.0 else math.copysign(math.inf, new)
    return (new - old) / abs(old)


def _relative_verdict(source, quantity, old, new, tolerance, unit) -> Verdict:
    change = new - old
    ratio = relative_change(old, new)
    passed = abs(ratio) <= tolerance
    message = (
        f"{quantity} changed from {old:.6g} {unit} to {new:.6g} {unit} "
        f"({change:+.3g} {unit}, {ratio * 100:+.3g} %; tolerance {tolerance:g} relative)"
    )
    return Verdict(
        RULE_BASELINE, quantity, (-tolerance, tolerance), ratio, "1", PASS if passed else FAIL,
        source=source, old=old, new=new, change=change, message=message,
    )  # fmt: skip


def compare_with_entry(
    entry: BaselineEntry,
    *,
    volume: float,
    mass: float,
    center_of_mass,
    principal_moments,
    tolerances: Tolerances = DEFAULT_TOLERANCES,
    source: str | None = None,
) -> list[Verdict]:
    """Compare a new measurement of a part with its recorded entry.

    Parameters
    ----------
    entry : BaselineEntry
    volume : float
        m³.
    mass : float
        kg.
    center_of_mass : (3,) array_like
        m, mesh axes.
    principal_moments : (3,) array_like
        kg·m², ascending.
    tolerances : Tolerances
    source : str, optional
        The file named in each verdict (default: the entry's path).

    Returns
    -------
    list of Verdict
        ``mass``, ``volume`` (value: relative change, limit ``±tolerance``),
        ``center_of_mass_shift`` (value: distance moved in m, limit
        ``tolerance × size``), ``principal_moment_1..3`` (relative change);
        each with ``old``, ``new`` and ``change``.
    """
    source = source if source is not None else entry.path
    verdicts = [
        _relative_verdict(source, "mass", entry.mass, float(mass), tolerances.mass, "kg"),
        _relative_verdict(source, "volume", entry.volume, float(volume), tolerances.volume, "m^3"),
    ]
    new_center = np.asarray(center_of_mass, dtype=float)
    shift = float(np.linalg.norm(new_center - entry.center_of_mass))
    allowed = tolerances.center_of_mass * entry.size
    passed = shift <= allowed
    verdicts.append(
        Verdict(
            RULE_BASELINE, "center_of_mass_shift", (None, allowed), shift, "m", PASS if passed else FAIL,
            source=source, old=entry.center_of_mass, new=new_center, change=shift,
            message=(
                f"center_of_mass moved {shift:.3g} m, from {_vector_text(entry.center_of_mass)} to {_vector_text(new_center)} m "
                f"(tolerance {tolerances.center_of_mass:g} of the part's size {entry.size:.4g} m = {allowed:.3g} m)"
            ),
        )
    )  # fmt: skip
    new_moments = np.asarray(principal_moments, dtype=float)
    for index in range(3):
        verdicts.append(
            _relative_verdict(
                source, f"principal_moment_{index + 1}", float(entry.principal_moments[index]), float(new_moments[index]),
                tolerances.principal_moments, "kg*m^2",
            )
        )  # fmt: skip
    return verdicts


def _vector_text(vector) -> str:
    return "[" + ", ".join(f"{float(v):.6g}" for v in vector) + "]"
