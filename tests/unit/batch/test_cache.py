"""The SQLite result cache: hits, misses after content, settings and version changes,
corrupt files rebuilt (never trusted), and two processes writing at once."""

from __future__ import annotations

import hashlib
import json
import multiprocessing
import sqlite3
import time

import numpy as np
import pytest

from meshprops.batch.cache import CacheKey, ResultCache, settings_fingerprint

VERSION = "0.1.0"
CHECK_MM = settings_fingerprint("check", {"length_unit": "mm"})


def _key(content: bytes, settings_key: str = CHECK_MM) -> CacheKey:
    return CacheKey(hashlib.sha256(content).hexdigest(), settings_key)


def _result(name: str) -> str:
    return json.dumps({"source": name, "valid": True, "volume": 1e-6}, sort_keys=True)


def test_hit_returns_the_stored_text(tmp_path):
    path = tmp_path / "cache.sqlite"
    with ResultCache(path, tool_version=VERSION) as cache:
        assert cache.get(_key(b"solid a")) is None
        cache.put(_key(b"solid a"), _result("a.stl"))
    with ResultCache(path, tool_version=VERSION) as cache:  # a later run
        assert cache.get(_key(b"solid a")) == _result("a.stl")
        assert (cache.hits, cache.misses) == (1, 0)
        journal = sqlite3.connect(path).execute("PRAGMA journal_mode").fetchone()[0]
    assert journal == "wal"


def test_miss_after_a_content_change(tmp_path):
    with ResultCache(tmp_path / "c.sqlite", tool_version=VERSION) as cache:
        cache.put(_key(b"solid a\n"), _result("a.stl"))
        assert cache.get(_key(b"solid a \n")) is None  # one byte more: another hash
        assert cache.get(_key(b"solid a\n")) == _result("a.stl")


def test_miss_after_a_settings_change_and_only_there(tmp_path):
    in_metres = settings_fingerprint("check", {"length_unit": "m"})
    with ResultCache(tmp_path / "c.sqlite", tool_version=VERSION) as cache:
        cache.put(_key(b"a"), _result("a"))
        assert cache.get(_key(b"a", in_metres)) is None
        cache.put(_key(b"a", in_metres), _result("a in m"))
        # the first setting's row is still served: a change invalidates only what it affects
        assert cache.get_many([_key(b"a"), _key(b"a", in_metres)]) == [_result("a"), _result("a in m")]


def test_fingerprint_sees_every_setting_bit_for_bit():
    base = {"length_unit": "mm", "density": 2700.0, "about": np.array([0.0, 0.0, 0.1])}
    same = {"about": [0.0, 0.0, 0.1], "density": 2700.0, "length_unit": "mm"}  # order, arrays vs lists
    assert settings_fingerprint("measure", base) == settings_fingerprint("measure", same)
    assert settings_fingerprint("measure", base) != settings_fingerprint("check", base)
    nudged = dict(base, density=np.nextafter(2700.0, 3000.0))  # one unit in the last place
    assert settings_fingerprint("measure", base) != settings_fingerprint("measure", nudged)
    assert settings_fingerprint("measure", base) != settings_fingerprint("measure", dict(base, repair=True))


def test_another_tool_version_misses(tmp_path):
    path = tmp_path / "c.sqlite"
    with ResultCache(path, tool_version="0.1.0") as cache:
        cache.put(_key(b"a"), _result("a"))
    with ResultCache(path, tool_version="0.2.0") as cache:
        assert cache.get(_key(b"a")) is None


@pytest.mark.parametrize(
    "damage",
    ["not a database", "wrong tables", "torn pages"],
)
def test_a_corrupt_file_is_reported_and_rebuilt(tmp_path, damage):
    path = tmp_path / "c.sqlite"
    if damage == "not a database":
        path.write_bytes(b"this is a text file, not an SQLite database\n" * 100)
    elif damage == "wrong tables":
        other = sqlite3.connect(path)
        other.execute("CREATE TABLE parts (name TEXT)")
        other.commit()
        other.close()
    else:
        with ResultCache(path, tool_version=VERSION) as cache:
            cache.put_many((_key(f"part {index}".encode()), _result(str(index)) * 20) for index in range(300))
        sqlite3.connect(path).execute("PRAGMA wal_checkpoint(TRUNCATE)").close()
        data = bytearray(path.read_bytes())
        assert len(data) > 8192
        data[4096:8192] = b"\xa5" * 4096  # overwrite the second page with garbage
        path.write_bytes(bytes(data))
    with ResultCache(path, tool_version=VERSION) as cache:
        assert cache.count() == 0  # rebuilt empty: nothing of the damaged file is trusted
        cache.put(_key(b"a"), _result("a"))
        assert cache.get(_key(b"a")) == _result("a")
    assert len(cache.warnings) == 1
    assert cache.warnings[0].startswith(f"{path}: cache is corrupt (")
    assert cache.warnings[0].endswith("rebuilding it empty")
    with ResultCache(path, tool_version=VERSION) as cache:  # the rebuilt file is sound
        assert cache.get(_key(b"a")) == _result("a") and cache.warnings == []


def test_a_damaged_row_is_dropped_not_served(tmp_path):
    path = tmp_path / "c.sqlite"
    with ResultCache(path, tool_version=VERSION) as cache:
        cache.put(_key(b"a"), _result("a"))
        cache.put(_key(b"b"), _result("b"))
    raw = sqlite3.connect(path)
    raw.execute("UPDATE results SET result_json = replace(result_json, '1e-06', '2e-06')"
                " WHERE content_hash = ?", (_key(b"a").content_hash,))
    raw.commit()
    raw.close()
    with ResultCache(path, tool_version=VERSION) as cache:
        assert cache.get_many([_key(b"a"), _key(b"b")]) == [None, _result("b")]
        assert cache.count() == 1
    assert cache.warnings == [f"{path}: 1 damaged cache row(s) dropped; recomputing them"]


def _writer(path: str, writer: int, count: int, barrier, spans) -> None:
    with ResultCache(path, tool_version=VERSION) as cache:
        barrier.wait()  # both processes start writing at the same moment
        started = time.time()
        for index in range(count):  # many small transactions, interleaving with the other writer
            cache.put(_key(f"{writer}/{index}".encode()), _result(f"{writer}/{index}"))
            cache.get(_key(f"{1 - writer}/{index}".encode()))
        spans.put((writer, started, time.time()))


def test_two_concurrent_writers_lose_nothing(tmp_path):
    path = str(tmp_path / "shared.sqlite")
    ResultCache(path, tool_version=VERSION).close()  # both start on the same existing file
    context = multiprocessing.get_context("spawn")
    barrier, spans = context.Barrier(2), context.Queue()
    writers = [context.Process(target=_writer, args=(path, writer, 400, barrier, spans)) for writer in (0, 1)]
    for process in writers:
        process.start()
    for process in writers:
        process.join(timeout=120)
    assert [process.exitcode for process in writers] == [0, 0]
    (_, start_a, end_a), (_, start_b, end_b) = spans.get(timeout=5), spans.get(timeout=5)
    assert max(start_a, start_b) < min(end_a, end_b)  # the writes really overlapped in time
    with ResultCache(path, tool_version=VERSION) as cache:
        assert cache.count() == 800
        keys = [_key(f"{writer}/{index}".encode()) for writer in (0, 1) for index in range(400)]
        texts = cache.get_many(keys)
    assert texts == [_result(f"{writer}/{index}") for writer in (0, 1) for index in range(400)]
    assert sqlite3.connect(path).execute("PRAGMA integrity_check").fetchone()[0] == "ok"


def test_remembered_hashes_round_trip_and_a_damaged_row_is_not_trusted(tmp_path):
    path = tmp_path / "cache.sqlite"
    with ResultCache(path, tool_version=VERSION) as cache:
        assert cache.remembered_hashes(["/parts/a.stl"]) == {}
        cache.remember_hashes([("/parts/a.stl", "1:2:3:4:5", "sha256:aa"), ("/parts/b.stl", "1:9:3:4:5", "sha256:bb")])
        cache.remember_hashes([("/parts/a.stl", "1:2:3:4:6", "sha256:cc")])  # a later one wins
        assert cache.remembered_hashes(["/parts/a.stl", "/parts/b.stl", "/parts/c.stl"]) == {
            "/parts/a.stl": ("1:2:3:4:6", "sha256:cc"),
            "/parts/b.stl": ("1:9:3:4:5", "sha256:bb"),
        }
    raw = sqlite3.connect(path)
    raw.execute("UPDATE file_hashes SET content_hash = 'sha256:dd' WHERE path = '/parts/b.stl'")
    raw.commit()
    raw.close()
    with ResultCache(path, tool_version=VERSION) as cache:
        assert cache.remembered_hashes(["/parts/a.stl", "/parts/b.stl"]) == {"/parts/a.stl": ("1:2:3:4:6", "sha256:cc")}


def test_lookups_are_batched_beyond_one_statement(tmp_path):
    # More keys than one statement takes, two settings: every hit found, in the order asked.
    from meshprops.batch.cache import LOOKUP_CHUNK

    count = 2 * LOOKUP_CHUNK + 7
    other = settings_fingerprint("check", {"length_unit": "m"})
    keys = [_key(f"part {index}".encode(), CHECK_MM if index % 3 else other) for index in range(count)]
    with ResultCache(tmp_path / "cache.sqlite", tool_version=VERSION) as cache:
        cache.put_many((key, _result(str(index))) for index, key in enumerate(keys) if index % 2 == 0)
        found = cache.get_many(keys[::-1])
    assert found == [_result(str(index)) if index % 2 == 0 else None for index in range(count)][::-1]


def test_a_cache_of_the_older_layout_is_rebuilt(tmp_path):
    path = tmp_path / "cache.sqlite"
    with ResultCache(path, tool_version=VERSION) as cache:
        cache.put(_key(b"plate"), _result("plate"))
    raw = sqlite3.connect(path)
    raw.execute("DROP TABLE file_hashes")
    raw.execute("UPDATE meta SET value = '1' WHERE name = 'schema_version'")
    raw.commit()
    raw.close()
    warnings = []
    with ResultCache(path, tool_version=VERSION, on_warning=warnings.append) as cache:
        assert cache.get(_key(b"plate")) is None and cache.count() == 0
    assert warnings == [f"{path}: cache has an older layout (layout version 1, this meshprops writes 2); rebuilding it empty"]
