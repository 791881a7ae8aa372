"""Tests for loadcore.library.schema: the file, its migrations, and no data loss on a kill."""

from __future__ import annotations

import json
import os
import signal
import sqlite3
import subprocess
import sys
import textwrap

import pandas as pd
import pytest
from library_support import (
    REPO_ROOT,
    make_entry,
)

from loadcore import library as lib
from loadcore.errors import InputError
from loadcore.library import (
    MIGRATIONS,
    SCHEMA_VERSION,
    ScenarioLibrary,
    rows,
)


@pytest.fixture()
def library(tmp_path) -> ScenarioLibrary:
    return ScenarioLibrary(tmp_path / "lib.sqlite")


def test_file_uses_wal_and_current_schema(library):
    library.save(make_entry())
    conn = sqlite3.connect(library.path)
    try:
        assert conn.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
        assert conn.execute("PRAGMA user_version").fetchone()[0] == SCHEMA_VERSION
        assert conn.execute("PRAGMA application_id").fetchone()[0] == lib.APPLICATION_ID
    finally:
        conn.close()
    assert library.schema_version == SCHEMA_VERSION == MIGRATIONS[-1].version
    assert library.integrity_ok()


def test_not_a_library_file(tmp_path):
    junk = tmp_path / "junk.sqlite"
    junk.write_bytes(os.urandom(4096))
    with pytest.raises(InputError, match="not a loadcore scenario library"):
        ScenarioLibrary(junk)
    other = tmp_path / "other.sqlite"
    conn = sqlite3.connect(other)
    conn.execute("CREATE TABLE something (x)")
    conn.commit()
    conn.close()
    with pytest.raises(InputError, match="not a loadcore scenario library"):
        ScenarioLibrary(other)
    with pytest.raises(InputError, match="folder"):
        ScenarioLibrary(tmp_path)


def test_newer_schema_is_refused(tmp_path):
    path = tmp_path / "future.sqlite"
    ScenarioLibrary(path)
    conn = sqlite3.connect(path)
    conn.execute(f"PRAGMA user_version = {SCHEMA_VERSION + 1}")
    conn.commit()
    conn.close()
    with pytest.raises(InputError, match="newer loadcore"):
        ScenarioLibrary(path)


def test_migration_from_v1_file(tmp_path):
    """A file made with only the version 1 schema (no author column) is upgraded on open."""
    path = tmp_path / "v1.sqlite"
    conn = sqlite3.connect(path, isolation_level=None)
    conn.execute("PRAGMA journal_mode = WAL")
    conn.execute("BEGIN")
    for statement in MIGRATIONS[0].statements:
        conn.execute(statement)
    conn.execute("PRAGMA user_version = 1")
    entry = make_entry("Made by v1")
    conn.execute(
        "INSERT INTO scenarios (name, note, created_utc, changed_utc, version, first_date, "
        "last_date, days, definition, model_fingerprint, model_settings, forecast, context) "
        "VALUES (?, ?, ?, ?, 4, ?, ?, ?, ?, ?, ?, ?, ?)",
        (
            entry.name,
            "old note",
            "2030-01-01T00:00:00.000Z",
            "2030-02-01T00:00:00.000Z",
            "2031-07-01",
            "2031-07-14",
            14,
            json.dumps(entry.definition),
            entry.model_fingerprint,
            json.dumps(entry.model_settings),
            rows.frame_to_json(entry.forecast, "test"),
            "{}",
        ),
    )
    conn.execute("COMMIT")
    columns = [r[1] for r in conn.execute("PRAGMA table_info(scenarios)")]
    conn.close()
    assert "author" not in columns

    library = ScenarioLibrary(path)
    assert library.schema_version == 2
    conn = sqlite3.connect(path)
    columns = [r[1] for r in conn.execute("PRAGMA table_info(scenarios)")]
    conn.close()
    assert "author" in columns
    old = library.get("Made by v1")
    assert (old.author, old.note, old.version) == ("", "old note", 4)
    assert old.changed_utc == "2030-02-01T00:00:00.000Z"
    pd.testing.assert_frame_equal(old.forecast, entry.forecast, check_dtype=False)
    updated = library.update("Made by v1", expected_version=4, author="migrated")
    assert updated.author == "migrated" and updated.version == 5
    # opening again does not migrate twice
    assert ScenarioLibrary(path).schema_version == 2


# ---------------------------------------------------------------------------------------------
# a writer killed mid-save


WRITER = textwrap.dedent(
    """
    import sys
    sys.path.insert(0, {root!r})
    sys.path.insert(0, {tests!r})
    from library_support import make_entry
    from loadcore.library import ScenarioLibrary

    library = ScenarioLibrary(sys.argv[1])
    for i in range(100000):
        name = f"run {{i:05d}}"
        library.save(make_entry(name, days=90, seed=i))
        sys.stdout.write(name + "\\n")
        sys.stdout.flush()
    """
)


@pytest.mark.slow
def test_writer_killed_mid_save_leaves_earlier_saves_intact(tmp_path):
    path = tmp_path / "killed.sqlite"
    ScenarioLibrary(path).save(make_entry("before the writer"))
    script = tmp_path / "writer.py"
    script.write_text(WRITER.format(root=str(REPO_ROOT), tests=str(REPO_ROOT / "tests")))
    proc = subprocess.Popen(
        [sys.executable, str(script), str(path)],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
    )
    reported: list[str] = []
    try:
        assert proc.stdout is not None
        while len(reported) < 40:
            line = proc.stdout.readline()
            if not line:
                break
            reported.append(line.strip())
    finally:
        os.kill(proc.pid, signal.SIGKILL)
        proc.wait(timeout=30)
    # collect anything printed between our last read and the kill
    rest = proc.stdout.read() if proc.stdout else ""
    reported += [x.strip() for x in rest.splitlines() if x.strip()]
    assert proc.returncode == -signal.SIGKILL
    assert len(reported) >= 40, proc.stderr.read() if proc.stderr else ""

    conn = sqlite3.connect(path)
    try:
        assert conn.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
    finally:
        conn.close()
    library = ScenarioLibrary(path)
    assert library.integrity_ok()
    stored = set(library.names())
    missing = [name for name in reported if name not in stored]
    assert missing == []
    assert "before the writer" in stored
    # every stored save reads back whole
    for name in reported[-5:]:
        assert len(library.get(name).forecast) == 90
    # the library still takes new saves
    library.save(make_entry("after the kill"))
    assert "after the kill" in library
