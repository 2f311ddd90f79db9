"""One home for meshprops' exceptions.

Every error is a :class:`MeshpropsError` and also a built-in type, carries the
values it complains about as fields, and renders as one line naming the file
(or option) and the problem. Every error pickles to an equal error (message, exit
code and fields), so a worker process or a cluster returns it intact. The CLI turns them into one stderr line and an exit
code in one place (:func:`meshprops.cli.main`).
"""

from __future__ import annotations

# Exit codes of the command-line tool (documented in the README).
EXIT_OK = 0
EXIT_INVALID = 1  # a check or validity failure: the mesh was read but is not sound
EXIT_USAGE = 2  # bad usage or unreadable input


def _rebuild(cls: type, message: str, fields: dict) -> MeshpropsError:
    """Unpickle an error without calling its ``__init__`` (whose arguments differ by class)."""
    error = cls.__new__(cls)
    Exception.__init__(error, message)
    error.__dict__.update(fields)
    return error


class MeshpropsError(Exception):
    """Base class of every error meshprops raises on purpose."""

    exit_code = EXIT_USAGE

    def __init__(self, message: str, *, source: str | None = None) -> None:
        self.source = source
        self.problem = message
        super().__init__(f"{source}: {message}" if source else message)

    def __reduce__(self):
        # The default reduction calls cls(*self.args), which fails for every subclass whose
        # __init__ takes other arguments: a worker's error would come back as a TypeError.
        return (_rebuild, (type(self), str(self), dict(self.__dict__)))


class MeshFileError(MeshpropsError, ValueError):
    """A mesh file is missing, unreadable, truncated or malformed.

    ``line`` (text formats) or ``offset`` (binary formats) locates the problem
    when known.
    """

    def __init__(
        self,
        source: str,
        message: str,
        *,
        line: int | None = None,
        offset: int | None = None,
    ) -> None:
        self.line = line
        self.offset = offset
        where = f"line {line}: " if line is not None else (f"byte {offset}: " if offset is not None else "")
        super().__init__(where + message, source=source)


class UnitError(MeshpropsError, ValueError):
    """A length or mass unit that meshprops does not know."""

    def __init__(self, unit: str, known: tuple[str, ...], *, source: str | None = None) -> None:
        self.unit = unit
        self.known = known
        what = "an empty unit" if not str(unit).strip() else f"unknown unit {unit!r}"
        super().__init__(f"{what}; expected one of {', '.join(known)}", source=source)


class InputValueError(MeshpropsError, ValueError):
    """A numeric input (density, point, spin vector, ...) with a bad value."""

    def __init__(self, name: str, expected: str, found: object, *, source: str | None = None) -> None:
        self.name = name
        self.expected = expected
        self.found = found
        super().__init__(f"{name}: expected {expected}, got {found!r}", source=source)


class InvalidMeshError(MeshpropsError, ValueError):
    """The mesh was read but failed validation; its numbers would not be sound.

    ``findings`` holds the validation findings (see :mod:`meshprops.validation.findings`).
    """

    exit_code = EXIT_INVALID

    def __init__(self, source: str, message: str, findings: tuple = ()) -> None:
        self.findings = findings
        super().__init__(message, source=source)


class OutputFileError(MeshpropsError, OSError):
    """A report file (``--output``) that cannot be written; nothing was left half-written."""

    def __init__(self, path: str, reason: str) -> None:
        self.path = path
        super().__init__(f"cannot write output: {reason}", source=path)


class PhysicsError(MeshpropsError, ValueError):
    """Mass properties that no physical body can have (for example a negative
    principal moment or a violated triangle inequality)."""

    exit_code = EXIT_INVALID


class NonFiniteResultError(MeshpropsError, OverflowError):
    """A computed number overflowed double precision (``inf`` or ``NaN``): the body is refused.

    ``quantity`` names the first number that is not finite (``mass``, ``spin.kinetic_energy``).
    Bad input in practice (a unit or density slip, or an absurd spin), hence the usage exit code.
    """

    def __init__(self, quantity: str, message: str, *, source: str | None = None) -> None:
        self.quantity = quantity
        super().__init__(message, source=source)


class ManifestError(MeshpropsError, ValueError):
    """An assembly manifest with a syntax error, an unknown key, a missing mesh or a bad value.

    ``key`` is the dotted path of the offending key (``body[2].material``;
    indices count from 0 in file order), ``line`` the 1-based line where it was
    found in the manifest text (best effort: TOML parsers do not report key
    positions, so the line is searched for), ``None`` when not found.
    """

    def __init__(self, manifest: str, key: str | None, message: str, *, line: int | None = None) -> None:
        self.manifest = manifest
        self.key = key
        self.line = line
        where = f"line {line}: " if line is not None else ""
        super().__init__(where + (f"{key}: " if key else "") + message, source=manifest)


class SimulatorExportError(MeshpropsError, ValueError):
    """Mass properties that a simulator would reject (not positive definite, triangle
    inequality violated, or a body without numbers); nothing is printed."""

    exit_code = EXIT_INVALID


class ModelFileError(MeshpropsError, ValueError):
    """A robot or simulator model (URDF, SDFormat, MJCF) that is unreadable, malformed, points
    at a mesh that is not there, or uses a construct meshprops does not follow.

    ``line`` is the 1-based line of the element concerned, when known.
    """

    def __init__(self, source: str, message: str, *, line: int | None = None) -> None:
        self.line = line
        super().__init__((f"line {line}: " if line is not None else "") + message, source=source)
class MissingExtraError(MeshpropsError, ImportError):
    """An optional part of meshprops whose libraries are not installed (``extra`` names the
    pip extra that brings them, ``feature`` what needs it)."""

    def __init__(self, feature: str, extra: str) -> None:
        self.feature = feature
        self.extra = extra
        super().__init__(f'{feature}: install the extra with pip install "meshprops[{extra}]"')


class BatchRunError(MeshpropsError, RuntimeError):
    """A batch run failed as a whole (a worker process died, the cluster cannot be reached),
    not because of one file."""


class UnsentError(MeshpropsError):
    """Stands in for a file's error that cannot be pickled back from a worker: the same
    one line and the same exit code (every error here pickles; this keeps a run alive
    and identical in every backend should one ever not)."""

    def __init__(self, message: str, exit_code: int) -> None:
        super().__init__(message)
        self.exit_code = exit_code


class ConfigError(MeshpropsError, ValueError):
    """A gate configuration (``meshprops.toml`` or ``[tool.meshprops]``) with a syntax error,
    an unknown key or a bad value.

    ``key`` is the dotted path of the offending key (``rule[0].expected_mass``; in a
    ``pyproject.toml`` it starts with ``tool.meshprops.``), ``line`` its 1-based line
    in the file (best effort, ``None`` when not found).
    """

    def __init__(self, config: str, key: str | None, message: str, *, line: int | None = None) -> None:
        self.config = config
        self.key = key
        self.line = line
        where = f"line {line}: " if line is not None else ""
        super().__init__(where + (f"{key}: " if key else "") + message, source=config)


class BaselineError(MeshpropsError, ValueError):
    """A baseline file (``meshprops-baseline.json``) that cannot be read or is not a meshprops baseline."""

    def __init__(self, path: str, message: str) -> None:
        self.path = path
        super().__init__(message, source=path)
