"""The result cache of batch runs: one SQLite database (``--cache PATH``).

A row holds one file's result as JSON text, keyed by

- the sha256 of the file's bytes (``content_hash``),
- a fingerprint of every setting that changes the result (``settings_key``,
  from :func:`settings_fingerprint`: the command, the length unit, density,
  point, repair, ...), and
- the meshprops version that computed it (``tool_version``).

So an unchanged file under unchanged settings is not measured again, and a
changed setting or a new version misses exactly the rows it affects (rows of
other settings stay and keep serving runs with those settings).

A second table remembers each file's content hash beside its stamp (device, inode,
size, modification and change times: :class:`~meshprops.io.hashing.FileStamp`), so
that a re-run reads only the files that changed since; a file whose stamp moved is
hashed again, and a touched but unchanged file is still served by its content.

Safety:

- The database runs in WAL mode with a busy timeout, and every write is one
  ``BEGIN IMMEDIATE`` transaction, so two runs sharing a cache both finish and
  neither loses the other's rows.
- Each row also stores the sha256 of its JSON text (of its path, stamp and hash for
  the remembered hashes), checked on every read: a damaged row is dropped (a miss),
  never served.
- A file that is not a meshprops cache, or that fails SQLite's own integrity
  check, is reported (one warning, which the command line prints on stderr) and
  rebuilt empty.

The cache lives beside the client process (SQLite's WAL needs the database on a
local disk); cluster workers never open it.
"""

from __future__ import annotations

import hashlib
import json
import math
import os
import sqlite3
from collections.abc import Callable, Iterable, Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path

#: Version of the table layout below; a file of another layout is rebuilt.
#: (2: the ``file_hashes`` table.)
SCHEMA_VERSION = 2

#: Keys per SQL statement in batched lookups (well under SQLite's smallest variable limit, 999).
LOOKUP_CHUNK = 400

#: Seconds a writer waits for another run's transaction before giving up.
BUSY_TIMEOUT_SECONDS = 60.0

_CREATE = (
    "CREATE TABLE IF NOT EXISTS meta (name TEXT PRIMARY KEY, value TEXT NOT NULL)",
    "CREATE TABLE IF NOT EXISTS results ("
    " content_hash TEXT NOT NULL,"
    " settings_key TEXT NOT NULL,"
    " tool_version TEXT NOT NULL,"
    " result_json TEXT NOT NULL,"
    " result_sha256 TEXT NOT NULL,"
    " PRIMARY KEY (content_hash, settings_key, tool_version)"
    ") WITHOUT ROWID",
    "CREATE TABLE IF NOT EXISTS file_hashes ("
    " path TEXT PRIMARY KEY,"
    " stamp TEXT NOT NULL,"
    " content_hash TEXT NOT NULL,"
    " row_sha256 TEXT NOT NULL"
    ") WITHOUT ROWID",
)
_TABLES = {"meta", "results", "file_hashes"}


@dataclass(frozen=True, slots=True, eq=False)
class CacheKey:
    """The key of one cached result.

    Attributes
    ----------
    content_hash : sha256 hex digest of the file's bytes
    settings_key : :func:`settings_fingerprint` of the settings the result was computed with
    """

    content_hash: str
    settings_key: str


def _plain(value):
    """A JSON-ready copy of a settings value (arrays become lists; floats keep every bit)."""
    if isinstance(value, Mapping):
        return {str(key): _plain(item) for key, item in value.items()}
    if isinstance(value, (list, tuple)):
        return [_plain(item) for item in value]
    if hasattr(value, "tolist"):  # numpy arrays and scalars
        return _plain(value.tolist())
    if isinstance(value, float):
        # repr round-trips every float64 exactly; non-finite values have no JSON form
        return value if math.isfinite(value) else repr(value)
    if value is None or isinstance(value, (bool, int, str)):
        return value
    return repr(value)


def settings_fingerprint(command: str, settings: Mapping[str, object]) -> str:
    """sha256 hex digest of a command name and the settings that change its result.

    Parameters
    ----------
    command
        ``"check"``, ``"measure"``, ...: results of different commands never mix.
    settings
        Every option that changes a per-file result, by name (units as given,
        lengths in metres, densities in kg/m³). Key order does not matter;
        floats are compared bit for bit.
    """
    text = json.dumps({"command": command, "settings": _plain(settings)}, sort_keys=True, separators=(",", ":"))
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


class CorruptCacheError(Exception):
    """Internal: the database file cannot be trusted (never escapes :class:`ResultCache`)."""


class OlderLayoutError(CorruptCacheError):
    """Internal: a sound cache of an older table layout (written by an older meshprops)."""


class ResultCache:
    """Per-file results in an SQLite database, safe under concurrent runs.

    Parameters
    ----------
    path
        The database file; created (with its folder) when missing. A file that
        is not a sound meshprops cache is reported on stderr and rebuilt empty.
    tool_version
        The meshprops version: rows of other versions are never served.
    on_warning
        Called with each warning (a corrupt file rebuilt, damaged rows dropped, a
        database locked too long); by default they are collected in :attr:`warnings`.

    Use as a context manager, or call :meth:`close`.
    """

    def __init__(
        self, path: str | os.PathLike, *, tool_version: str, on_warning: Callable[[str], None] | None = None
    ) -> None:
        self.path = Path(path)
        self.tool_version = str(tool_version)
        self.hits = 0
        self.misses = 0
        self.warnings: list[str] = []
        self._on_warning = on_warning if on_warning is not None else self.warnings.append
        self._connection: sqlite3.Connection | None = None
        try:
            self._connection = self._open_checked()
        except OlderLayoutError as why:
            self._on_warning(f"{self.path}: cache has an older layout ({why}); rebuilding it empty")
            self._rebuild()
        except CorruptCacheError as why:
            self._on_warning(f"{self.path}: cache is corrupt ({why}); rebuilding it empty")
            self._rebuild()

    # -- opening, checking, rebuilding -------------------------------------------------------

    def _connect(self) -> sqlite3.Connection:
        self.path.parent.mkdir(parents=True, exist_ok=True)
        # isolation_level=None: transactions are begun explicitly (BEGIN IMMEDIATE) below.
        connection = sqlite3.connect(self.path, timeout=BUSY_TIMEOUT_SECONDS, isolation_level=None)
        connection.execute(f"PRAGMA busy_timeout = {int(BUSY_TIMEOUT_SECONDS * 1000)}")
        return connection

    def _open_checked(self) -> sqlite3.Connection:
        connection = None
        try:
            connection = self._connect()
            mode = connection.execute("PRAGMA journal_mode = WAL").fetchone()[0]
            if str(mode).lower() != "wal":
                raise CorruptCacheError(f"cannot switch to WAL mode (got {mode})")
            connection.execute("PRAGMA synchronous = NORMAL")
            verdict = connection.execute("PRAGMA quick_check").fetchone()[0]
            if verdict != "ok":
                raise CorruptCacheError(f"integrity check: {verdict}")
            tables = {row[0] for row in connection.execute("SELECT name FROM sqlite_master WHERE type = 'table'")}
            if not tables:
                self._create_tables(connection)
            elif tables == {"meta", "results"} and _layout_version(connection) == "1":
                raise OlderLayoutError(f"layout version 1, this meshprops writes {SCHEMA_VERSION}")
            elif tables != _TABLES:
                raise CorruptCacheError(f"unexpected tables {sorted(tables)}")
            else:
                row = connection.execute("SELECT value FROM meta WHERE name = 'schema_version'").fetchone()
                if row is None or row[0] != str(SCHEMA_VERSION):
                    raise CorruptCacheError(f"layout version {row[0] if row else 'missing'}, expected {SCHEMA_VERSION}")
            return connection
        except sqlite3.DatabaseError as error:  # "file is not a database", malformed pages, ...
            if connection is not None:
                connection.close()
            raise CorruptCacheError(str(error)) from None
        except CorruptCacheError:
            if connection is not None:
                connection.close()
            raise

    @staticmethod
    def _create_tables(connection: sqlite3.Connection) -> None:
        connection.execute("BEGIN IMMEDIATE")
        try:
            for statement in _CREATE:
                connection.execute(statement)
            connection.execute(
                "INSERT OR IGNORE INTO meta (name, value) VALUES ('schema_version', ?)", (str(SCHEMA_VERSION),)
            )
            connection.execute("COMMIT")
        except BaseException:
            connection.execute("ROLLBACK")
            raise

    def _rebuild(self) -> None:
        """Replace an untrusted database file by an empty cache (under a lock file, so two
        runs that both found it corrupt do not delete each other's new database)."""
        if self._connection is not None:
            self._connection.close()
            self._connection = None
        self.path.parent.mkdir(parents=True, exist_ok=True)
        with _ExclusiveLock(self.path.with_name(self.path.name + ".lock")):
            try:  # another run may have rebuilt it while this one waited for the lock
                self._connection = self._open_checked()
                return
            except CorruptCacheError:
                pass
            for suffix in ("", "-wal", "-shm", "-journal"):
                try:
                    os.remove(f"{self.path}{suffix}")
                except FileNotFoundError:
                    pass
            self._connection = self._open_checked()

    # -- reading and writing -----------------------------------------------------------------

    def get_many(self, keys: Sequence[CacheKey]) -> list[str | None]:
        """The cached JSON text of each key, ``None`` for a miss, in the order of ``keys``.

        One read transaction and a few batched queries for all the keys. A row whose stored
        checksum does not match its text is deleted and reported as a miss.
        """
        found: dict[tuple[str, str], str] = {}
        damaged: list[tuple[str, str]] = []
        by_settings: dict[str, list[str]] = {}
        for key in keys:
            by_settings.setdefault(key.settings_key, []).append(key.content_hash)
        try:
            self._connection.execute("BEGIN")  # one consistent snapshot for every lookup
            try:
                for settings_key, hashes in by_settings.items():
                    unique = sorted(set(hashes))
                    for start in range(0, len(unique), LOOKUP_CHUNK):
                        chunk = unique[start : start + LOOKUP_CHUNK]
                        rows = self._connection.execute(
                            "SELECT content_hash, result_json, result_sha256 FROM results"
                            " WHERE tool_version = ? AND settings_key = ?"
                            f" AND content_hash IN ({','.join('?' * len(chunk))})",
                            (self.tool_version, settings_key, *chunk),
                        ).fetchall()
                        for content_hash, text, checksum in rows:
                            if _sha256_text(text) == checksum:
                                found[(content_hash, settings_key)] = text
                            else:
                                damaged.append((content_hash, settings_key))
            finally:
                if self._connection.in_transaction:
                    self._connection.execute("COMMIT")
        except sqlite3.DatabaseError as error:
            self._recover(error)
            self.misses += len(keys)
            return [None] * len(keys)
        if damaged:
            self._on_warning(f"{self.path}: {len(damaged)} damaged cache row(s) dropped; recomputing them")
            self._delete(damaged)
        results = [found.get((key.content_hash, key.settings_key)) for key in keys]
        hits = sum(text is not None for text in results)
        self.hits += hits
        self.misses += len(results) - hits
        return results

    def remembered_hashes(self, paths: Sequence[str]) -> dict[str, tuple[str, str]]:
        """``path -> (stamp text, content hash)`` remembered for those of ``paths`` that have one.

        Paths are compared as given (the caller makes them absolute). A damaged row is left
        out (and so its file is hashed again and the row rewritten); a database that cannot
        be read remembers nothing.
        """
        remembered: dict[str, tuple[str, str]] = {}
        unique = sorted(set(paths))
        try:
            self._connection.execute("BEGIN")
            try:
                for start in range(0, len(unique), LOOKUP_CHUNK):
                    chunk = unique[start : start + LOOKUP_CHUNK]
                    rows = self._connection.execute(
                        "SELECT path, stamp, content_hash, row_sha256 FROM file_hashes"
                        f" WHERE path IN ({','.join('?' * len(chunk))})",
                        chunk,
                    ).fetchall()
                    for path, stamp, content_hash, checksum in rows:
                        if _hash_row_checksum(path, stamp, content_hash) == checksum:
                            remembered[path] = (stamp, content_hash)
            finally:
                if self._connection.in_transaction:
                    self._connection.execute("COMMIT")
        except sqlite3.DatabaseError as error:
            self._recover(error)
            return {}
        return remembered

    def remember_hashes(self, entries: Iterable[tuple[str, str, str]]) -> None:
        """Store ``(path, stamp text, content hash)`` triples in one transaction (a later one wins)."""
        rows = [(path, stamp, content_hash, _hash_row_checksum(path, stamp, content_hash)) for path, stamp, content_hash in entries]
        if not rows:
            return
        try:
            self._connection.execute("BEGIN IMMEDIATE")
            try:
                self._connection.executemany(
                    "INSERT OR REPLACE INTO file_hashes (path, stamp, content_hash, row_sha256) VALUES (?, ?, ?, ?)", rows
                )
                self._connection.execute("COMMIT")
            except BaseException:
                if self._connection.in_transaction:
                    self._connection.execute("ROLLBACK")
                raise
        except sqlite3.DatabaseError as error:
            self._recover(error)

    def get(self, key: CacheKey) -> str | None:
        """The cached JSON text for ``key``, or ``None``."""
        return self.get_many([key])[0]

    def put_many(self, entries: Iterable[tuple[CacheKey, str]]) -> None:
        """Store ``(key, json_text)`` pairs in one transaction (a later write of a key wins)."""
        rows = [
            (key.content_hash, key.settings_key, self.tool_version, text, _sha256_text(text)) for key, text in entries
        ]
        if not rows:
            return
        try:
            self._connection.execute("BEGIN IMMEDIATE")
            try:
                self._connection.executemany(
                    "INSERT OR REPLACE INTO results"
                    " (content_hash, settings_key, tool_version, result_json, result_sha256) VALUES (?, ?, ?, ?, ?)",
                    rows,
                )
                self._connection.execute("COMMIT")
            except BaseException:
                if self._connection.in_transaction:
                    self._connection.execute("ROLLBACK")
                raise
        except sqlite3.DatabaseError as error:
            self._recover(error)

    def put(self, key: CacheKey, text: str) -> None:
        """Store one result's JSON text."""
        self.put_many([(key, text)])

    def count(self) -> int:
        """Number of rows for this tool version."""
        return self._connection.execute(
            "SELECT count(*) FROM results WHERE tool_version = ?", (self.tool_version,)
        ).fetchone()[0]

    def _delete(self, pairs: list[tuple[str, str]]) -> None:
        try:
            self._connection.execute("BEGIN IMMEDIATE")
            self._connection.executemany(
                "DELETE FROM results WHERE content_hash = ? AND settings_key = ? AND tool_version = ?",
                [(content_hash, settings_key, self.tool_version) for content_hash, settings_key in pairs],
            )
            self._connection.execute("COMMIT")
        except sqlite3.DatabaseError as error:
            self._recover(error)

    def _recover(self, error: sqlite3.DatabaseError) -> None:
        """A database error in the middle of a run. A database that stayed locked by another
        run past the busy timeout is skipped for this call (a warning; the results are still
        computed, only not stored or served). Anything else means the file cannot be trusted,
        so it is rebuilt."""
        if isinstance(error, sqlite3.OperationalError) and "locked" in str(error):
            self._on_warning(f"{self.path}: cache stayed locked by another run; continuing without it for now")
            return
        self._on_warning(f"{self.path}: cache is corrupt ({error}); rebuilding it empty")
        self._rebuild()

    def close(self) -> None:
        if self._connection is not None:
            self._connection.close()
            self._connection = None

    def __enter__(self) -> ResultCache:
        return self

    def __exit__(self, *exception) -> None:
        self.close()


def _layout_version(connection: sqlite3.Connection) -> str | None:
    row = connection.execute("SELECT value FROM meta WHERE name = 'schema_version'").fetchone()
    return None if row is None else str(row[0])


def _sha256_text(text: str) -> str:
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def _hash_row_checksum(path: str, stamp: str, content_hash: str) -> str:
    return _sha256_text(f"{path}\n{stamp}\n{content_hash}")


class _ExclusiveLock:
    """An advisory lock on a side file (``fcntl.flock``; a no-op where fcntl is missing)."""

    def __init__(self, path: Path) -> None:
        self.path = path
        self._handle = None

    def __enter__(self) -> _ExclusiveLock:
        try:
            import fcntl
        except ImportError:  # not POSIX: rebuild unlocked
            return self
        self._handle = open(self.path, "a+b")
        fcntl.flock(self._handle.fileno(), fcntl.LOCK_EX)
        return self

    def __exit__(self, *exception) -> None:
        if self._handle is not None:
            import fcntl

            fcntl.flock(self._handle.fileno(), fcntl.LOCK_UN)
            self._handle.close()
