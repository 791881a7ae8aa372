"""The library file: its schema, the migrations between versions, and how it is opened.

Every write is one transaction (``BEGIN IMMEDIATE`` ... ``COMMIT``) in WAL journal mode with full
synchronisation, so a writer that dies mid-save leaves every earlier save intact. The file's
schema version lives in ``PRAGMA user_version`` and the :data:`MIGRATIONS` are applied in order
when a library is opened. Each call opens its own short-lived connection, so one library may be
shared by the threads of an app and several processes may use the same file at once.
"""

from __future__ import annotations

import logging
import os
import sqlite3
import stat
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass
from pathlib import Path

from loadcore.errors import InputError

log = logging.getLogger(__name__)

# Marks the file as a loadcore library in the SQLite header (the ASCII bytes "LCLB").
APPLICATION_ID = 0x4C434C42

# How long a writer waits for another writer to finish before giving up, milliseconds.
BUSY_TIMEOUT_MS = 10_000


@dataclass(frozen=True)
class Migration:
    """One step of the library schema: the SQL that takes a file from ``version - 1`` to ``version``."""

    version: int
    description: str
    statements: tuple[str, ...]


MIGRATIONS: tuple[Migration, ...] = (
    Migration(
        1,
        "scenario table",
        (
            f"PRAGMA application_id = {APPLICATION_ID}",
            """
            CREATE TABLE scenarios (
                id INTEGER PRIMARY KEY,
                name TEXT NOT NULL UNIQUE COLLATE NOCASE,
                note TEXT NOT NULL DEFAULT '',
                created_utc TEXT NOT NULL,
                changed_utc TEXT NOT NULL,
                version INTEGER NOT NULL CHECK (version >= 1),
                first_date TEXT NOT NULL,
                last_date TEXT NOT NULL,
                days INTEGER NOT NULL,
                definition TEXT NOT NULL,
                model_fingerprint TEXT NOT NULL,
                model_settings TEXT NOT NULL,
                forecast TEXT NOT NULL,
                context TEXT NOT NULL DEFAULT '{}'
            )
            """,
        ),
    ),
    Migration(
        2,
        "author column",
        ("ALTER TABLE scenarios ADD COLUMN author TEXT NOT NULL DEFAULT ''",),
    ),
)
SCHEMA_VERSION = MIGRATIONS[-1].version

#: The columns of one saved scenario, in the order every query reads them.
COLUMNS = (
    "name, note, author, created_utc, changed_utc, version, first_date, last_date, days, "
    "definition, model_fingerprint, model_settings, forecast, context"
)
#: The columns of the list (everything but the heavy JSON).
LIST_COLUMNS = (
    "name, note, author, created_utc, changed_utc, version, first_date, last_date, days, "
    "model_fingerprint"
)


def where(path: Path) -> str:
    """The place named in messages about the library file."""
    return f"library {path}"


def translate(exc: sqlite3.Error | UnicodeDecodeError, path: Path) -> InputError:
    """An SQLite failure in the planner's words."""
    if isinstance(exc, UnicodeDecodeError):  # SQLite's message quotes damaged bytes
        return InputError(
            "This file is not a loadcore scenario library or it is damaged",
            where=where(path),
            fix="Choose another library file, or restore this one from a backup",
        )
    text = str(exc)
    if isinstance(exc, sqlite3.OperationalError) and "locked" in text:
        return InputError(
            "The scenario library is busy with another save",
            where=where(path),
            fix="Try again in a moment",
        )
    if "not a database" in text or "malformed" in text or "file is encrypted" in text:
        return InputError(
            "This file is not a loadcore scenario library or it is damaged",
            where=where(path),
            fix="Choose another library file, or restore this one from a backup",
        )
    if "readonly" in text or ("unable to open" in text and _read_only_mount(path)):
        return InputError(
            "The scenario library is on a read-only disk or folder, so it cannot be changed",
            where=where(path),
            fix="Listing and exporting work there; to save, copy the library somewhere writable",
        )
    return InputError(
        f"The scenario library cannot be used: {text}",
        where=where(path),
        fix="Check the file and folder permissions and the free disk space",
    )


def _read_only_mount(path: Path) -> bool:
    try:
        return bool(os.statvfs(Path(path).parent).f_flag & os.ST_RDONLY)
    except OSError:
        return False


def connect(path: Path, read_only: bool = False) -> sqlite3.Connection:
    """A new connection: for writing in WAL mode with full synchronisation and the busy timeout;
    for reading only (``read_only``) opened read-only, changing nothing in the file or its
    folder, so that a library on a read-only mount can be read."""
    try:
        if read_only:
            conn = _connect_read_only(path)
        else:
            conn = sqlite3.connect(path, timeout=BUSY_TIMEOUT_MS / 1000, isolation_level=None)
        # A damaged file may hold bytes that are not UTF-8: show them replaced, never crash.
        conn.text_factory = lambda raw: raw.decode("utf-8", errors="replace")
        conn.execute(f"PRAGMA busy_timeout = {BUSY_TIMEOUT_MS}")
        if not read_only:
            mode = conn.execute("PRAGMA journal_mode = WAL").fetchone()[0]
            if str(mode).lower() != "wal":
                log.warning("library %s: WAL journal mode unavailable (%s)", path, mode)
            conn.execute("PRAGMA synchronous = FULL")
            conn.execute("PRAGMA foreign_keys = ON")
    except (sqlite3.Error, UnicodeDecodeError) as exc:
        raise translate(exc, path) from None
    return conn


def _connect_read_only(path: Path) -> sqlite3.Connection:
    """A read-only connection. On a read-only mount SQLite cannot create the shared-memory file
    a WAL library needs; the file is then opened as immutable (nobody can write it there)."""
    uri = Path(path).resolve().as_uri()
    conn = sqlite3.connect(
        f"{uri}?mode=ro", uri=True, timeout=BUSY_TIMEOUT_MS / 1000, isolation_level=None
    )
    try:
        conn.execute("PRAGMA user_version").fetchone()
        return conn
    except sqlite3.OperationalError as exc:
        conn.close()
        if "unable to open" not in str(exc) and "readonly" not in str(exc):
            raise
    log.info("library %s: read-only mount, opened as immutable", path)
    return sqlite3.connect(f"{uri}?mode=ro&immutable=1", uri=True, isolation_level=None)


@contextmanager
def reading(path: Path, read_only: bool = False) -> Iterator[sqlite3.Connection]:
    """A connection for reads, closed afterwards; SQLite failures become InputError."""
    conn = connect(path, read_only)
    try:
        yield conn
    except (sqlite3.Error, UnicodeDecodeError) as exc:
        raise translate(exc, path) from None
    finally:
        conn.close()


def check_regular(path: Path) -> None:
    """Refuse a library path that is a folder, a device, a pipe or a socket (SQLite would wait
    on a pipe for ever)."""
    try:
        info = path.stat()
    except FileNotFoundError:
        return
    except OSError as exc:
        raise InputError(
            f"The scenario library cannot be opened ({exc.strerror or exc})",
            where=where(path),
            fix="Check the path and its permissions",
        ) from None
    if stat.S_ISDIR(info.st_mode):
        raise InputError(
            "The scenario library path is a folder",
            where=where(path),
            fix="Give a file name such as scenarios.sqlite",
        )
    if not stat.S_ISREG(info.st_mode):
        raise InputError(
            "The scenario library path is not a regular file (it is a device, a pipe or a socket)",
            where=where(path),
            fix="Give the name of an ordinary file such as scenarios.sqlite",
        )


def check_readable(path: Path) -> None:
    """Check, without changing anything, that a file can be read as a library of this schema.

    Raises
    ------
    InputError
        When the file is not a loadcore library, is newer than this loadcore, or is older and
        needs an upgrade that only a writable library can get.
    """
    with reading(path, read_only=True) as conn:
        current, app_id, tables = _identity(conn)
    _check_identity(path, current, app_id, tables)
    if tables and current < SCHEMA_VERSION:
        raise InputError(
            f"The library has schema {current} and needs an upgrade to {SCHEMA_VERSION}, which "
            "a library opened for reading cannot get",
            where=where(path),
            fix="Open it once where it can be written (for example with 'loadcore scenarios save')",
        )


def _identity(conn: sqlite3.Connection) -> tuple[int, int, set[str]]:
    current = conn.execute("PRAGMA user_version").fetchone()[0]
    app_id = conn.execute("PRAGMA application_id").fetchone()[0]
    tables = {
        r[0]
        for r in conn.execute(
            "SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite_%'"
        )
    }
    return current, app_id, tables


def _check_identity(path: Path, current: int, app_id: int, tables: set[str]) -> None:
    if app_id not in (0, APPLICATION_ID) or (current == 0 and tables):
        raise InputError(
            "This file is an SQLite database but not a loadcore scenario library",
            where=where(path),
            fix="Choose another file name for the library",
        )
    if current > SCHEMA_VERSION:
        raise InputError(
            f"The library was written by a newer loadcore (schema {current}, this one knows "
            f"up to {SCHEMA_VERSION})",
            where=where(path),
            fix="Update loadcore before opening this library",
        )


@contextmanager
def writing(path: Path) -> Iterator[sqlite3.Connection]:
    """One write transaction: committed whole or not at all."""
    conn = connect(path)
    try:
        conn.execute("BEGIN IMMEDIATE")
        yield conn
        conn.execute("COMMIT")
    except BaseException as exc:
        if conn.in_transaction:
            try:
                conn.execute("ROLLBACK")
            except (sqlite3.Error, UnicodeDecodeError):
                log.exception("library %s: rollback failed", path)
        if isinstance(exc, sqlite3.IntegrityError):
            raise InputError(
                "A saved scenario with this name already exists",
                where=where(path),
                fix="Choose another name (names ignore upper and lower case)",
            ) from None
        if isinstance(exc, (sqlite3.Error, UnicodeDecodeError)):
            raise translate(exc, path) from None
        raise
    finally:
        conn.close()


def schema_version(path: Path) -> int:
    """The schema version of the file (``PRAGMA user_version``)."""
    with reading(path) as conn:
        return int(conn.execute("PRAGMA user_version").fetchone()[0])


def migrate(path: Path) -> None:
    """Bring the file to :data:`SCHEMA_VERSION`, one migration per transaction.

    Raises
    ------
    InputError
        When the file is an SQLite database of something else, or was written by a newer
        loadcore.
    """
    with reading(path) as conn:
        current, app_id, tables = _identity(conn)
    _check_identity(path, current, app_id, tables)
    for step in MIGRATIONS:
        if step.version <= current:
            continue
        with writing(path) as conn:
            now = conn.execute("PRAGMA user_version").fetchone()[0]
            if now >= step.version:  # another process migrated in the meantime
                current = now
                continue
            for statement in step.statements:
                conn.execute(statement)
            conn.execute(f"PRAGMA user_version = {step.version}")
            log.info("library %s: schema %d (%s)", path, step.version, step.description)
            current = step.version
