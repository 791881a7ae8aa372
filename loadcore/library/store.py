"""The scenario library store: saved scenarios with their forecasts, in one SQLite file.

Each saved scenario keeps its name (unique, ignoring ASCII case), a note, an author, created and
changed times (UTC, ISO 8601), a version number that starts at 1 and goes up with every edit, the
scenario definition (:meth:`loadcore.scenario.Scenario.to_dict`), the fingerprint and settings of
the model it was forecast with, and the forecast table itself.

No data loss is the rule: every write is one transaction (:mod:`loadcore.library.schema`), and
edits carry the version the editor opened (optimistic concurrency): an edit against a version
that someone else has changed in the meantime is refused, never silently overwritten.

The file location is an argument, else the ``LOADCORE_LIBRARY`` environment variable, else
``~/.loadcore/scenarios.sqlite``.
"""

from __future__ import annotations

import difflib
import logging
import os
import sqlite3
import unicodedata
from pathlib import Path
from typing import Any

from loadcore.errors import InputError, quote
from loadcore.library import rows, schema
from loadcore.library.entries import (
    DamagedRow,
    LibraryListing,
    SavedScenario,
    ScenarioEntry,
    ScenarioListing,
)

log = logging.getLogger(__name__)

ENV_VAR = "LOADCORE_LIBRARY"
DEFAULT_PATH = Path("~/.loadcore/scenarios.sqlite")

STALE_FIX = "Reopen it and apply your edit again"


def default_library_path() -> Path:
    """The library file when none is given: ``$LOADCORE_LIBRARY`` or ``~/.loadcore/scenarios.sqlite``."""
    env = os.environ.get(ENV_VAR, "").strip()
    return Path(env).expanduser() if env else DEFAULT_PATH.expanduser()


class ScenarioLibrary:
    """Saved scenarios in one SQLite file.

    Parameters
    ----------
    path : str or Path, optional
        The library file; created (with its folder) if missing. Default: :func:`default_library_path`.
    read_only : bool
        Open for reading only: nothing in the file or its folder is changed (no migration, no
        journal files), so a library on a read-only mount can be listed and exported; saves and
        edits are refused. The file must exist.

    Raises
    ------
    InputError
        When the file is not a loadcore library, was written by a newer loadcore, or cannot be
        opened.

    Notes
    -----
    Each call opens its own short-lived connection, so one ``ScenarioLibrary`` may be shared by the
    threads of an app, and several processes may use the same file at once.
    """

    def __init__(self, path: str | os.PathLike[str] | None = None, *, read_only: bool = False):
        self.path = Path(path).expanduser() if path is not None else default_library_path()
        self.read_only = bool(read_only)
        schema.check_regular(self.path)
        if self.read_only:
            if not self.path.exists():
                raise InputError(
                    "There is no scenario library at this path",
                    where=f"library {self.path}",
                    fix="Save a scenario first, or give the library's path",
                )
            schema.check_readable(self.path)
            return
        try:
            self.path.parent.mkdir(parents=True, exist_ok=True)
        except OSError as exc:
            raise InputError(
                f"The library folder cannot be created: {exc.strerror or exc}",
                where=f"library {self.path}",
                fix="Choose a folder you can write to",
            ) from None
        schema.migrate(self.path)

    # ---- connections ------------------------------------------------------------------------

    @property
    def _where(self) -> str:
        return schema.where(self.path)

    def _read(self):
        return schema.reading(self.path, self.read_only)

    def _write(self):
        if self.read_only:
            raise InputError(
                "The scenario library was opened for reading only",
                where=self._where,
                fix="Open it without read_only to save or change scenarios",
            )
        return schema.writing(self.path)

    @property
    def schema_version(self) -> int:
        """The schema version of the file (``PRAGMA user_version``)."""
        return schema.schema_version(self.path)

    # ---- reads ------------------------------------------------------------------------------

    def _row(self, conn: sqlite3.Connection, name: str) -> tuple | None:
        return conn.execute(
            f"SELECT {schema.COLUMNS} FROM scenarios WHERE name = ?", (name,)
        ).fetchone()

    def _not_found(self, name: str, conn: sqlite3.Connection) -> InputError:
        names = [
            r[0]
            for r in conn.execute("SELECT name FROM scenarios ORDER BY name")
            if isinstance(r[0], str)
        ]
        close = difflib.get_close_matches(name, names, n=3)
        fix = (
            f"Check the spelling; close names: {', '.join(repr(c) for c in close)}"
            if close
            else "Pick a name from the library's list"
        )
        return InputError(f"No saved scenario is named {quote(name)}", where=self._where, fix=fix)

    def _saved(self, row: tuple) -> SavedScenario:
        return rows.saved_from_row(row, self._where)

    def get(self, name: str) -> SavedScenario:
        """The saved scenario called ``name`` (ignoring ASCII case).

        Raises
        ------
        InputError
            When there is none; the message suggests close names.
        """
        key = rows.clean_name(name)
        with self._read() as conn:
            row = self._row(conn, key)
            if row is None:
                raise self._not_found(key, conn)
        return self._saved(row)

    def scan(self, search: str | None = None) -> LibraryListing:
        """Saved scenarios by name, and the rows too damaged to list (skipped, with the reason).

        ``search`` keeps those whose name, note or author contains it, ignoring case (full
        Unicode case folding) and surrounding spaces.
        """
        with self._read() as conn:
            found = conn.execute(
                f"SELECT {schema.LIST_COLUMNS} FROM scenarios ORDER BY name COLLATE NOCASE, id"
            ).fetchall()
        listings: list[ScenarioListing] = []
        damaged: list[DamagedRow] = []
        for position, r in enumerate(found, start=1):
            try:
                listings.append(rows.listing_from_row(r))
            except InputError as exc:
                label = r[0] if isinstance(r[0], str) else f"row {position}"
                damaged.append(DamagedRow(label, exc.problem))
                log.warning("library %s: row %r skipped: %s", self.path, label, exc.problem)
        if search is not None and str(search).strip():
            needle = unicodedata.normalize("NFC", str(search)).strip().casefold()
            listings = [
                item
                for item in listings
                if needle in item.name.casefold()
                or needle in item.note.casefold()
                or needle in item.author.casefold()
            ]
        return LibraryListing(tuple(listings), tuple(damaged))

    def list(self, search: str | None = None) -> list[ScenarioListing]:
        """Saved scenarios, by name; ``search`` keeps those whose name, note or author contains it.

        The search ignores case (full Unicode case folding) and surrounding spaces. Rows too
        damaged to list are left out (see :meth:`scan`, which names them).
        """
        return list(self.scan(search).items)

    def names(self) -> list[str]:
        """Names of all saved scenarios, sorted."""
        return [item.name for item in self.list()]

    def __contains__(self, name: object) -> bool:
        if not isinstance(name, str) or not name.strip():
            return False
        with self._read() as conn:
            row = conn.execute(
                "SELECT 1 FROM scenarios WHERE name = ?",
                (unicodedata.normalize("NFC", name).strip(),),
            ).fetchone()
        return row is not None

    def __len__(self) -> int:
        with self._read() as conn:
            return int(conn.execute("SELECT COUNT(*) FROM scenarios").fetchone()[0])

    # ---- writes -----------------------------------------------------------------------------

    def save(self, entry: ScenarioEntry) -> SavedScenario:
        """Store a new scenario at version 1.

        Raises
        ------
        InputError
            When the name is taken (ignoring ASCII case) or the entry is not storable.
        """
        if not isinstance(entry, ScenarioEntry):
            raise InputError(
                f"Expected a ScenarioEntry to save, got {type(entry).__name__}",
                fix="Build one with loadcore.library.entry_from_forecast",
            )
        name = rows.clean_name(entry.name)
        where = f"scenario {quote(name)}"
        note = rows.clean_note(entry.note)
        author = rows.clean_author(entry.author)
        content = rows.entry_content(entry, where)
        content["definition"] = rows.rename_definition(content["definition"], name)
        now = rows.utc_now()
        with self._write() as conn:
            if conn.execute("SELECT 1 FROM scenarios WHERE name = ?", (name,)).fetchone():
                raise InputError(
                    f"A saved scenario named {quote(name)} already exists",
                    where=self._where,
                    fix="Choose another name, or open the saved one and edit it",
                )
            conn.execute(
                f"INSERT INTO scenarios ({schema.COLUMNS}) VALUES "
                "(?, ?, ?, ?, ?, 1, ?, ?, ?, ?, ?, ?, ?, ?)",
                (
                    name,
                    note,
                    author,
                    now,
                    now,
                    content["first_date"],
                    content["last_date"],
                    content["days"],
                    content["definition"],
                    content["model_fingerprint"],
                    content["model_settings"],
                    content["forecast"],
                    content["context"],
                ),
            )
            row = self._row(conn, name)
        log.info("library %s: saved %r", self.path, name)
        return self._saved(row)

    def _stale_or_missing(self, conn: sqlite3.Connection, name: str, expected: int) -> InputError:
        row = conn.execute("SELECT version FROM scenarios WHERE name = ?", (name,)).fetchone()
        if row is None:
            return self._not_found(name, conn)
        return InputError(
            f"The saved scenario {quote(name)} was changed by someone else since you opened it "
            f"(you opened version {expected}, the library holds version {row[0]})",
            where=self._where,
            fix=STALE_FIX,
        )

    def update(
        self,
        name: str,
        *,
        expected_version: int,
        note: str | None = None,
        author: str | None = None,
        entry: ScenarioEntry | None = None,
    ) -> SavedScenario:
        """Edit a saved scenario; refused if it changed since version ``expected_version``.

        Parameters
        ----------
        name : str
            The saved scenario.
        expected_version : int
            The version the editor opened (``SavedScenario.version``).
        note, author : str, optional
            New texts; None keeps the stored ones.
        entry : ScenarioEntry, optional
            New content (definition, model fingerprint and settings, forecast, context), e.g.
            after a re-forecast; its ``name``, ``note`` and ``author`` are not used.

        Returns
        -------
        SavedScenario
            The new version (``expected_version + 1``).

        Raises
        ------
        InputError
            "changed by someone else since you opened it" when the stored version differs; also
            when the name is unknown or the new values are not storable.
        """
        key = rows.clean_name(name)
        expected = rows.check_version(expected_version)
        sets: dict[str, Any] = {}
        if note is not None:
            sets["note"] = rows.clean_note(note)
        if author is not None:
            sets["author"] = rows.clean_author(author)
        if entry is not None:
            content = rows.entry_content(entry, f"scenario {quote(key)}")
            sets.update(content)
        return self._edit(key, expected, sets)

    def _edit(self, key: str, expected: int, sets: dict[str, Any]) -> SavedScenario:
        with self._write() as conn:
            current = self._row(conn, key)
            if current is None:
                raise self._not_found(key, conn)
            stored_name = current[0]
            if "definition" in sets:
                sets["definition"] = rows.rename_definition(
                    sets["definition"], sets.get("name", stored_name)
                )
            elif "name" in sets:
                sets["definition"] = rows.rename_definition(current[9], sets["name"])
            sets["changed_utc"] = rows.utc_now()
            assignments = ", ".join(f"{column} = ?" for column in sets)
            cursor = conn.execute(
                f"UPDATE scenarios SET {assignments}, version = version + 1 "
                "WHERE name = ? AND version = ?",
                (*sets.values(), key, expected),
            )
            if cursor.rowcount == 0:
                raise self._stale_or_missing(conn, key, expected)
            row = self._row(conn, sets.get("name", stored_name))
        log.info("library %s: edited %r to version %d", self.path, key, expected + 1)
        return self._saved(row)

    def rename(self, name: str, new: str, expected_version: int) -> SavedScenario:
        """Rename a saved scenario (its version goes up by one).

        Raises
        ------
        InputError
            When the new name is taken, the old one unknown, or the version stale.
        """
        key = rows.clean_name(name)
        new_name = rows.clean_name(new, "new scenario name")
        expected = rows.check_version(expected_version)
        with self._read() as conn:
            clash = conn.execute(
                "SELECT name FROM scenarios WHERE name = ? AND name <> ? COLLATE BINARY",
                (new_name, key),
            ).fetchone()
        if clash is not None and clash[0].casefold() != key.casefold():
            raise InputError(
                f"A saved scenario named {quote(clash[0])} already exists",
                where=self._where,
                fix="Choose another name",
            )
        return self._edit(key, expected, {"name": new_name})

    def duplicate(self, name: str, new: str) -> SavedScenario:
        """Copy a saved scenario under a new name, at version 1 with fresh times."""
        key = rows.clean_name(name)
        new_name = rows.clean_name(new, "new scenario name")
        now = rows.utc_now()
        with self._write() as conn:
            row = self._row(conn, key)
            if row is None:
                raise self._not_found(key, conn)
            if conn.execute("SELECT 1 FROM scenarios WHERE name = ?", (new_name,)).fetchone():
                raise InputError(
                    f"A saved scenario named {quote(new_name)} already exists",
                    where=self._where,
                    fix="Choose another name for the copy",
                )
            values = list(row)
            values[0] = new_name
            values[3] = now
            values[4] = now
            values[5] = 1
            values[9] = rows.rename_definition(values[9], new_name)
            conn.execute(
                f"INSERT INTO scenarios ({schema.COLUMNS}) VALUES ({', '.join('?' * len(values))})",
                values,
            )
            copied = self._row(conn, new_name)
        log.info("library %s: copied %r to %r", self.path, key, new_name)
        return self._saved(copied)

    def delete(self, name: str, expected_version: int) -> None:
        """Delete a saved scenario; refused if it changed since version ``expected_version``."""
        key = rows.clean_name(name)
        expected = rows.check_version(expected_version)
        with self._write() as conn:
            cursor = conn.execute(
                "DELETE FROM scenarios WHERE name = ? AND version = ?", (key, expected)
            )
            if cursor.rowcount == 0:
                raise self._stale_or_missing(conn, key, expected)
        log.info("library %s: deleted %r", self.path, key)

    def integrity_ok(self) -> bool:
        """True when SQLite's own ``PRAGMA integrity_check`` finds nothing wrong with the file."""
        with self._read() as conn:
            return conn.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
