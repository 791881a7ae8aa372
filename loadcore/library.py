"""The scenario library: saved scenarios with their forecasts, in one SQLite file.

Each saved scenario keeps its name (unique, ignoring ASCII case), a note, an author, created and
changed times (UTC, ISO 8601), a version number that starts at 1 and goes up with every edit, the
scenario definition (:meth:`loadcore.scenario.Scenario.to_dict`), the fingerprint and settings of the
model it was forecast with, and the forecast table itself.

No data loss is the rule:

- every write is one transaction (``BEGIN IMMEDIATE`` ... ``COMMIT``) in WAL journal mode with full
  synchronisation, so a writer that dies mid-save leaves every earlier save intact;
- edits carry the version the editor opened (optimistic concurrency): an edit against a version that
  someone else has changed in the meantime is refused, never silently overwritten;
- the file's schema version lives in ``PRAGMA user_version`` and the :data:`MIGRATIONS` are applied in
  order when a library is opened.

The file location is an argument, else the ``LOADCORE_LIBRARY`` environment variable, else
``~/.loadcore/scenarios.sqlite``.
"""

from __future__ import annotations

import difflib
import json
import logging
import math
import os
import sqlite3
import unicodedata
from collections.abc import Iterator, Mapping
from contextlib import contextmanager
from dataclasses import dataclass, field, fields
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from loadcore import levels as interval_levels
from loadcore import plainjson, texts
from loadcore.errors import InputError

log = logging.getLogger(__name__)

__all__ = [
    "ENV_VAR",
    "MIGRATIONS",
    "SCHEMA_VERSION",
    "Migration",
    "SavedScenario",
    "ScenarioEntry",
    "ScenarioLibrary",
    "ScenarioListing",
    "StoredForecast",
    "default_library_path",
    "entry_from_forecast",
    "is_current",
    "settings_to_dict",
]

ENV_VAR = "LOADCORE_LIBRARY"
DEFAULT_PATH = Path("~/.loadcore/scenarios.sqlite")

# Marks the file as a loadcore library in the SQLite header (the ASCII bytes "LCLB").
APPLICATION_ID = 0x4C434C42

MAX_NAME_CHARS = 120
MAX_NOTE_CHARS = 20_000
# Recorded demand kept with each save so a brief can be drawn without the model file, days.
HISTORY_TAIL_DAYS = 56
# How long a writer waits for another writer to finish before giving up, milliseconds.
BUSY_TIMEOUT_MS = 10_000

STALE_FIX = "Reopen it and apply your edit again"


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

_COLUMNS = (
    "name, note, author, created_utc, changed_utc, version, first_date, last_date, days, "
    "definition, model_fingerprint, model_settings, forecast, context"
)
_LIST_COLUMNS = (
    "name, note, author, created_utc, changed_utc, version, first_date, last_date, days, "
    "model_fingerprint"
)


# --------------------------------------------------------------------------------------------
# Value types
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True, eq=False)
class ScenarioEntry:
    """What a save writes: a scenario, the model it was forecast with, and the forecast.

    Parameters
    ----------
    name : str
        Library name (unique, ignoring ASCII case; at most 120 characters, no control characters).
    definition : dict
        The scenario definition, as :meth:`loadcore.scenario.Scenario.to_dict` writes it.
    model_fingerprint : str
        ``FittedModel.fingerprint`` of the model used.
    model_settings : dict
        The model's settings as plain JSON (:func:`settings_to_dict`).
    forecast : pandas.DataFrame
        The forecast table (``Forecast.frame``): ``date``, ``temperature_c`` (°C), ``day_type``,
        ``mean``, ``median``, ``lower_L``/``upper_L`` (demand unit), ``out_of_range``,
        ``out_of_range_by_c`` (°C) and any further columns of plain values.
    note, author : str
        Free text.
    context : dict
        Extra JSON kept for exports: ``levels``, ``model_summary``, ``history_tail``,
        ``demand_unit``, ``demand_kind``, ``warnings``, ``history_period``.
    """

    name: str
    definition: Mapping[str, Any]
    model_fingerprint: str
    model_settings: Mapping[str, Any]
    forecast: pd.DataFrame
    note: str = ""
    author: str = ""
    context: Mapping[str, Any] = field(default_factory=dict)


@dataclass(frozen=True, eq=False)
class StoredForecast:
    """A forecast reloaded from the library; reads like ``loadcore.model.Forecast`` for exports."""

    frame: pd.DataFrame
    levels: tuple[float, ...]
    scenario_name: str
    note: str
    warning_texts: tuple[str, ...] = ()

    temperature_range_c: tuple[float, float] | None = None

    def warnings(self, temp_unit: str = "C") -> list[str]:
        """The forecast's warnings in ``temp_unit``; the texts saved with it when the saved
        forecast does not record the fitted temperature range (older libraries)."""
        if self.temperature_range_c is None or "temperature_c" not in self.frame:
            return list(self.warning_texts)
        return texts.forecast_warnings(self.frame, self.temperature_range_c, temp_unit)


@dataclass(frozen=True)
class ScenarioListing:
    """One line of the library's list: everything but the heavy JSON."""

    name: str
    note: str
    author: str
    created_utc: str
    changed_utc: str
    version: int
    first_date: str
    last_date: str
    days: int
    model_fingerprint: str

    def to_dict(self) -> dict[str, Any]:
        """Plain JSON-friendly fields."""
        return {f.name: getattr(self, f.name) for f in fields(self)}


@dataclass(frozen=True, eq=False)
class SavedScenario:
    """A scenario as stored in the library, at one version.

    ``version`` is what an edit must quote as ``expected_version``. Times are UTC ISO 8601 strings.
    """

    name: str
    note: str
    author: str
    created_utc: str
    changed_utc: str
    version: int
    definition: Mapping[str, Any]
    model_fingerprint: str
    model_settings: Mapping[str, Any]
    forecast: pd.DataFrame
    context: Mapping[str, Any]

    @property
    def levels(self) -> tuple[float, ...]:
        """Interval levels of the stored forecast, percent."""
        levels = self.context.get("levels")
        if levels:
            return interval_levels.parse_levels(levels, where="saved forecast levels")
        return interval_levels.levels_in_columns(self.forecast.columns)

    def to_forecast(self) -> StoredForecast:
        """The stored forecast in the shape export functions read."""
        return StoredForecast(
            frame=self.forecast.copy(),
            levels=self.levels,
            scenario_name=self.name,
            note=self.note,
            warning_texts=tuple(str(w) for w in self.context.get("warnings", ()) or ()),
            temperature_range_c=_range_or_none(self.context.get("temperature_range_c")),
        )

    def scenario(self):
        """Rebuild the :class:`loadcore.scenario.Scenario`, named as in the library."""
        from loadcore.scenario import Scenario

        definition = dict(self.definition)
        definition["name"] = self.name
        return Scenario.from_dict(definition)

    def history_tail(self) -> pd.DataFrame:
        """Recorded demand kept with the save: ``demand`` on a ``date`` index (may be empty)."""
        records = self.context.get("history_tail") or []
        frame = pd.DataFrame.from_records(records, columns=["date", "demand"])
        frame["date"] = pd.to_datetime(frame["date"])
        frame["demand"] = pd.to_numeric(frame["demand"], errors="coerce").astype(float)
        return frame.set_index("date")


def _range_or_none(value: Any) -> tuple[float, float] | None:
    try:
        low, high = (float(v) for v in value)
    except (TypeError, ValueError):
        return None
    return (low, high) if math.isfinite(low) and math.isfinite(high) else None


# --------------------------------------------------------------------------------------------
# JSON helpers
# --------------------------------------------------------------------------------------------


def _json_value(value: Any, where: str) -> Any:
    """A plain JSON value for one cell or setting; refuses infinities, maps NaN/NaT to null."""
    return plainjson.to_plain(value, nonfinite="error", where=where)


def settings_to_dict(settings: Any) -> dict[str, Any]:
    """Model settings as plain JSON (dataclasses become dicts, tuples lists, dates ISO strings).

    Parameters
    ----------
    settings : dataclass or mapping
        ``FittedModel.settings`` (a ``FitSettings``) or an already-plain dict.

    Returns
    -------
    dict
        A JSON round-trip of the settings, so that a stored copy compares equal to a fresh one.
    """
    to_dict = getattr(settings, "to_dict", None)
    if callable(to_dict) and not isinstance(settings, Mapping):
        settings = to_dict()
    plain = _json_value(settings, "model settings")
    if not isinstance(plain, dict):
        plain = {"value": plain}
    return json.loads(json.dumps(plain, sort_keys=True, allow_nan=False))


def _dumps(value: Any, where: str) -> str:
    try:
        return json.dumps(_json_value(value, where), allow_nan=False, ensure_ascii=False)
    except (TypeError, ValueError) as exc:
        raise InputError(
            f"This cannot be stored as JSON: {exc}", where=where, fix="Report this as a bug"
        ) from None


def _frame_to_json(frame: pd.DataFrame, where: str) -> str:
    if not isinstance(frame, pd.DataFrame):
        raise InputError(
            f"The forecast must be a table, got {type(frame).__name__}",
            where=where,
            fix="Pass Forecast.frame",
        )
    if "date" not in frame.columns and (
        frame.index.name == "date" or isinstance(frame.index, pd.DatetimeIndex)
    ):
        frame = frame.rename_axis("date").reset_index()
    columns = [str(c) for c in frame.columns]
    if len(set(columns)) != len(columns):
        raise InputError(
            "The forecast table has repeated column names", where=where, fix="Report this as a bug"
        )
    cells = {
        name: [_json_value(v, f"{where}, column {name}") for v in frame[col].tolist()]
        for name, col in zip(columns, frame.columns, strict=True)
    }
    records = [{name: cells[name][i] for name in columns} for i in range(len(frame))]
    return json.dumps({"columns": columns, "records": records}, allow_nan=False, ensure_ascii=False)


def _frame_from_json(text: str) -> pd.DataFrame:
    data = json.loads(text)
    columns = data.get("columns", [])
    frame = pd.DataFrame.from_records(data.get("records", []), columns=columns)
    if "date" in frame.columns:
        frame["date"] = pd.to_datetime(frame["date"])
    for column in ("out_of_range", "sparse_temperature"):
        if column in frame.columns:
            frame[column] = frame[column].fillna(False).astype(bool)
    return frame


def _utc_now() -> str:
    return datetime.now(UTC).isoformat(timespec="milliseconds").replace("+00:00", "Z")


# --------------------------------------------------------------------------------------------
# Text checks
# --------------------------------------------------------------------------------------------


def _bad_char(text: str, allowed: str = "") -> tuple[int, str] | None:
    for i, ch in enumerate(text):
        if ch in allowed:
            continue
        category = unicodedata.category(ch)
        if category in ("Cc", "Cs"):
            return i, ch
    return None


def _clean_name(name: Any, what: str = "scenario name") -> str:
    if not isinstance(name, str):
        raise InputError(
            f"The {what} must be text, got {type(name).__name__}",
            fix="Type a name for the scenario",
        )
    text = unicodedata.normalize("NFC", name).strip()
    if not text:
        raise InputError(f"The {what} is empty", fix="Type a name for the scenario")
    if len(text) > MAX_NAME_CHARS:
        raise InputError(
            f"The {what} has {len(text)} characters, more than {MAX_NAME_CHARS}",
            fix="Use a shorter name and put the detail in the note",
        )
    bad = _bad_char(text)
    if bad:
        raise InputError(
            f"The {what} contains a control character (U+{ord(bad[1]):04X}) at position {bad[0] + 1}",
            fix="Use letters, digits, spaces and punctuation only",
        )
    return text


def _clean_text(text: Any, what: str, limit: int, allowed: str) -> str:
    if text is None:
        return ""
    if not isinstance(text, str):
        raise InputError(f"The {what} must be text, got {type(text).__name__}", fix="Type text")
    if len(text) > limit:
        raise InputError(
            f"The {what} has {len(text)} characters, more than {limit:,}", fix="Shorten it"
        )
    bad = _bad_char(text, allowed)
    if bad:
        raise InputError(
            f"The {what} contains a control character (U+{ord(bad[1]):04X}) at position {bad[0] + 1}",
            fix="Remove it; line breaks and tabs are fine",
        )
    return text


def _check_version(expected_version: Any) -> int:
    if (
        isinstance(expected_version, bool)
        or not isinstance(expected_version, (int, np.integer))
        or expected_version < 1
    ):
        raise InputError(
            f"The expected version must be a whole number from 1, got {expected_version!r}",
            fix="Pass the version of the saved scenario you opened",
        )
    return int(expected_version)


def _definition_dates(definition: Mapping[str, Any], where: str) -> tuple[str, str, int]:
    days = definition.get("days") if isinstance(definition, Mapping) else None
    if not isinstance(days, list) or not days:
        raise InputError(
            "The scenario definition has no days",
            where=where,
            fix="Save a scenario built with loadcore.scenario (Scenario.to_dict())",
        )
    try:
        dates = [pd.Timestamp(d["date"]) for d in days]
    except (KeyError, TypeError, ValueError) as exc:
        raise InputError(
            f"The scenario definition has an unreadable date: {exc}",
            where=where,
            fix="Save a scenario built with loadcore.scenario (Scenario.to_dict())",
        ) from None
    return min(dates).strftime("%Y-%m-%d"), max(dates).strftime("%Y-%m-%d"), len(dates)


# --------------------------------------------------------------------------------------------
# The library
# --------------------------------------------------------------------------------------------


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

    def __init__(self, path: str | os.PathLike[str] | None = None):
        self.path = Path(path).expanduser() if path is not None else default_library_path()
        if self.path.is_dir():
            raise InputError(
                "The scenario library path is a folder",
                where=f"library {self.path}",
                fix="Give a file name such as scenarios.sqlite",
            )
        try:
            self.path.parent.mkdir(parents=True, exist_ok=True)
        except OSError as exc:
            raise InputError(
                f"The library folder cannot be created: {exc.strerror or exc}",
                where=f"library {self.path}",
                fix="Choose a folder you can write to",
            ) from None
        self._migrate()

    # ---- connections ------------------------------------------------------------------------

    @property
    def _where(self) -> str:
        return f"library {self.path}"

    def _translate(self, exc: sqlite3.Error | UnicodeDecodeError) -> InputError:
        if isinstance(exc, UnicodeDecodeError):  # SQLite's message quotes damaged bytes
            return InputError(
                "This file is not a loadcore scenario library or it is damaged",
                where=self._where,
                fix="Choose another library file, or restore this one from a backup",
            )
        text = str(exc)
        if isinstance(exc, sqlite3.OperationalError) and "locked" in text:
            return InputError(
                "The scenario library is busy with another save",
                where=self._where,
                fix="Try again in a moment",
            )
        if "not a database" in text or "malformed" in text or "file is encrypted" in text:
            return InputError(
                "This file is not a loadcore scenario library or it is damaged",
                where=self._where,
                fix="Choose another library file, or restore this one from a backup",
            )
        return InputError(
            f"The scenario library cannot be used: {text}",
            where=self._where,
            fix="Check the file and folder permissions and the free disk space",
        )

    def _connect(self) -> sqlite3.Connection:
        try:
            conn = sqlite3.connect(self.path, timeout=BUSY_TIMEOUT_MS / 1000, isolation_level=None)
            # A damaged file may hold bytes that are not UTF-8: show them replaced, never crash.
            conn.text_factory = lambda raw: raw.decode("utf-8", errors="replace")
            conn.execute(f"PRAGMA busy_timeout = {BUSY_TIMEOUT_MS}")
            mode = conn.execute("PRAGMA journal_mode = WAL").fetchone()[0]
            if str(mode).lower() != "wal":
                log.warning("library %s: WAL journal mode unavailable (%s)", self.path, mode)
            conn.execute("PRAGMA synchronous = FULL")
            conn.execute("PRAGMA foreign_keys = ON")
        except (sqlite3.Error, UnicodeDecodeError) as exc:
            raise self._translate(exc) from None
        return conn

    @contextmanager
    def _read(self) -> Iterator[sqlite3.Connection]:
        conn = self._connect()
        try:
            yield conn
        except (sqlite3.Error, UnicodeDecodeError) as exc:
            raise self._translate(exc) from None
        finally:
            conn.close()

    @contextmanager
    def _write(self) -> Iterator[sqlite3.Connection]:
        """One write transaction: committed whole or not at all."""
        conn = self._connect()
        try:
            conn.execute("BEGIN IMMEDIATE")
            yield conn
            conn.execute("COMMIT")
        except BaseException as exc:
            if conn.in_transaction:
                try:
                    conn.execute("ROLLBACK")
                except (sqlite3.Error, UnicodeDecodeError):
                    log.exception("library %s: rollback failed", self.path)
            if isinstance(exc, sqlite3.IntegrityError):
                raise InputError(
                    "A saved scenario with this name already exists",
                    where=self._where,
                    fix="Choose another name (names ignore upper and lower case)",
                ) from None
            if isinstance(exc, (sqlite3.Error, UnicodeDecodeError)):
                raise self._translate(exc) from None
            raise
        finally:
            conn.close()

    def _migrate(self) -> None:
        with self._read() as conn:
            current = conn.execute("PRAGMA user_version").fetchone()[0]
            app_id = conn.execute("PRAGMA application_id").fetchone()[0]
            tables = {
                r[0]
                for r in conn.execute(
                    "SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite_%'"
                )
            }
        if app_id not in (0, APPLICATION_ID) or (current == 0 and tables):
            raise InputError(
                "This file is an SQLite database but not a loadcore scenario library",
                where=self._where,
                fix="Choose another file name for the library",
            )
        if current > SCHEMA_VERSION:
            raise InputError(
                f"The library was written by a newer loadcore (schema {current}, this one knows "
                f"up to {SCHEMA_VERSION})",
                where=self._where,
                fix="Update loadcore before opening this library",
            )
        for step in MIGRATIONS:
            if step.version <= current:
                continue
            with self._write() as conn:
                now = conn.execute("PRAGMA user_version").fetchone()[0]
                if now >= step.version:  # another process migrated in the meantime
                    current = now
                    continue
                for statement in step.statements:
                    conn.execute(statement)
                conn.execute(f"PRAGMA user_version = {step.version}")
                log.info("library %s: schema %d (%s)", self.path, step.version, step.description)
                current = step.version

    @property
    def schema_version(self) -> int:
        """The schema version of the file (``PRAGMA user_version``)."""
        with self._read() as conn:
            return int(conn.execute("PRAGMA user_version").fetchone()[0])

    # ---- reads ------------------------------------------------------------------------------

    def _row(self, conn: sqlite3.Connection, name: str) -> tuple | None:
        return conn.execute(f"SELECT {_COLUMNS} FROM scenarios WHERE name = ?", (name,)).fetchone()

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
        return InputError(f"No saved scenario is named {name!r}", where=self._where, fix=fix)

    def _saved(self, row: tuple) -> SavedScenario:
        (
            name,
            note,
            author,
            created,
            changed,
            version,
            _first,
            _last,
            _days,
            definition,
            fingerprint,
            settings,
            forecast,
            context,
        ) = row
        try:
            if not all(isinstance(x, str) for x in (name, definition, settings, forecast, context)):
                raise TypeError("a stored field is missing")
            return SavedScenario(
                name=name,
                note=str(note or ""),
                author=str(author or ""),
                created_utc=str(created),
                changed_utc=str(changed),
                version=int(version),
                definition=json.loads(definition),
                model_fingerprint=fingerprint,
                model_settings=json.loads(settings),
                forecast=_frame_from_json(forecast),
                context=json.loads(context),
            )
        except (ValueError, TypeError, AttributeError, KeyError) as exc:
            raise InputError(
                f"The saved scenario {name!r} is damaged and cannot be read: {exc}",
                where=self._where,
                fix="Delete it and save it again, or restore the library from a backup",
            ) from None

    def get(self, name: str) -> SavedScenario:
        """The saved scenario called ``name`` (ignoring ASCII case).

        Raises
        ------
        InputError
            When there is none; the message suggests close names.
        """
        key = _clean_name(name)
        with self._read() as conn:
            row = self._row(conn, key)
            if row is None:
                raise self._not_found(key, conn)
        return self._saved(row)

    def list(self, search: str | None = None) -> list[ScenarioListing]:
        """Saved scenarios, by name; ``search`` keeps those whose name, note or author contains it.

        The search ignores case (full Unicode case folding) and surrounding spaces.
        """
        with self._read() as conn:
            rows = conn.execute(
                f"SELECT {_LIST_COLUMNS} FROM scenarios ORDER BY name COLLATE NOCASE, id"
            ).fetchall()
        try:
            listings = [
                ScenarioListing(
                    name=str(r[0]),
                    note=str(r[1] or ""),
                    author=str(r[2] or ""),
                    created_utc=str(r[3]),
                    changed_utc=str(r[4]),
                    version=int(r[5]),
                    first_date=str(r[6]),
                    last_date=str(r[7]),
                    days=int(r[8]),
                    model_fingerprint=str(r[9]),
                )
                for r in rows
            ]
        except (TypeError, ValueError) as exc:
            raise InputError(
                f"The scenario library is damaged and its list cannot be read: {exc}",
                where=self._where,
                fix="Restore the library from a backup",
            ) from None
        if search is None or not str(search).strip():
            return listings
        needle = unicodedata.normalize("NFC", str(search)).strip().casefold()
        return [
            item
            for item in listings
            if needle in item.name.casefold()
            or needle in item.note.casefold()
            or needle in item.author.casefold()
        ]

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

    def _content(self, entry: ScenarioEntry, where: str) -> dict[str, Any]:
        if not isinstance(entry, ScenarioEntry):
            raise InputError(
                f"Expected a ScenarioEntry to save, got {type(entry).__name__}",
                where=where,
                fix="Build one with loadcore.library.entry_from_forecast",
            )
        if not isinstance(entry.definition, Mapping):
            raise InputError(
                "The scenario definition must be a mapping",
                where=where,
                fix="Use Scenario.to_dict()",
            )
        first, last, days = _definition_dates(entry.definition, where)
        fingerprint = entry.model_fingerprint
        if not isinstance(fingerprint, str) or not fingerprint.strip():
            raise InputError(
                "The model fingerprint is missing",
                where=where,
                fix="Save forecasts made with a fitted model",
            )
        return {
            "first_date": first,
            "last_date": last,
            "days": days,
            "definition": _dumps(entry.definition, f"{where}, scenario definition"),
            "model_fingerprint": fingerprint,
            "model_settings": _dumps(
                settings_to_dict(entry.model_settings), f"{where}, model settings"
            ),
            "forecast": _frame_to_json(entry.forecast, f"{where}, forecast table"),
            "context": _dumps(dict(entry.context or {}), f"{where}, context"),
        }

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
        name = _clean_name(entry.name)
        where = f"scenario {name!r}"
        note = _clean_text(entry.note, "note", MAX_NOTE_CHARS, "\n\t\r")
        author = _clean_text(entry.author, "author", MAX_NAME_CHARS, "")
        content = self._content(entry, where)
        content["definition"] = _rename_definition(content["definition"], name)
        now = _utc_now()
        with self._write() as conn:
            if conn.execute("SELECT 1 FROM scenarios WHERE name = ?", (name,)).fetchone():
                raise InputError(
                    f"A saved scenario named {name!r} already exists",
                    where=self._where,
                    fix="Choose another name, or open the saved one and edit it",
                )
            conn.execute(
                f"INSERT INTO scenarios ({_COLUMNS}) VALUES "
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
            f"The saved scenario {name!r} was changed by someone else since you opened it "
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
        key = _clean_name(name)
        expected = _check_version(expected_version)
        sets: dict[str, Any] = {}
        if note is not None:
            sets["note"] = _clean_text(note, "note", MAX_NOTE_CHARS, "\n\t\r")
        if author is not None:
            sets["author"] = _clean_text(author, "author", MAX_NAME_CHARS, "")
        if entry is not None:
            content = self._content(entry, f"scenario {key!r}")
            sets.update(content)
        return self._edit(key, expected, sets)

    def _edit(self, key: str, expected: int, sets: dict[str, Any]) -> SavedScenario:
        with self._write() as conn:
            current = self._row(conn, key)
            if current is None:
                raise self._not_found(key, conn)
            stored_name = current[0]
            if "definition" in sets:
                sets["definition"] = _rename_definition(
                    sets["definition"], sets.get("name", stored_name)
                )
            elif "name" in sets:
                sets["definition"] = _rename_definition(current[9], sets["name"])
            sets["changed_utc"] = _utc_now()
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
        key = _clean_name(name)
        new_name = _clean_name(new, "new scenario name")
        expected = _check_version(expected_version)
        with self._read() as conn:
            clash = conn.execute(
                "SELECT name FROM scenarios WHERE name = ? AND name <> ? COLLATE BINARY",
                (new_name, key),
            ).fetchone()
        if clash is not None and clash[0].casefold() != key.casefold():
            raise InputError(
                f"A saved scenario named {clash[0]!r} already exists",
                where=self._where,
                fix="Choose another name",
            )
        return self._edit(key, expected, {"name": new_name})

    def duplicate(self, name: str, new: str) -> SavedScenario:
        """Copy a saved scenario under a new name, at version 1 with fresh times."""
        key = _clean_name(name)
        new_name = _clean_name(new, "new scenario name")
        now = _utc_now()
        with self._write() as conn:
            row = self._row(conn, key)
            if row is None:
                raise self._not_found(key, conn)
            if conn.execute("SELECT 1 FROM scenarios WHERE name = ?", (new_name,)).fetchone():
                raise InputError(
                    f"A saved scenario named {new_name!r} already exists",
                    where=self._where,
                    fix="Choose another name for the copy",
                )
            values = list(row)
            values[0] = new_name
            values[3] = now
            values[4] = now
            values[5] = 1
            values[9] = _rename_definition(values[9], new_name)
            conn.execute(
                f"INSERT INTO scenarios ({_COLUMNS}) VALUES ({', '.join('?' * len(values))})",
                values,
            )
            copied = self._row(conn, new_name)
        log.info("library %s: copied %r to %r", self.path, key, new_name)
        return self._saved(copied)

    def delete(self, name: str, expected_version: int) -> None:
        """Delete a saved scenario; refused if it changed since version ``expected_version``."""
        key = _clean_name(name)
        expected = _check_version(expected_version)
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


def _rename_definition(definition_json: str, name: str) -> str:
    data = json.loads(definition_json)
    if isinstance(data, dict):
        data["name"] = name
    return json.dumps(data, allow_nan=False, ensure_ascii=False)


# --------------------------------------------------------------------------------------------
# Building entries from model objects
# --------------------------------------------------------------------------------------------


def entry_from_forecast(
    forecast: Any,
    *,
    scenario: Any,
    model: Any,
    name: str | None = None,
    note: str | None = None,
    author: str = "",
    history_days: int = HISTORY_TAIL_DAYS,
) -> ScenarioEntry:
    """A :class:`ScenarioEntry` from a forecast, its scenario and the model that made it.

    Parameters
    ----------
    forecast : loadcore.model.Forecast
        The forecast to store (its ``frame``, ``levels`` and ``warnings()``).
    scenario : loadcore.scenario.Scenario
        The scenario forecast.
    model : loadcore.model.FittedModel
        The model used (its ``fingerprint``, ``settings`` and ``history``).
    name : str, optional
        Library name; default the scenario's name.
    note : str, optional
        Default the forecast's note.
    author : str
        Who saved it.
    history_days : int, default 56
        Days of recorded demand kept with the save for the meeting brief.
    """
    from loadcore.export import summarise_model

    history = getattr(model, "history", None)
    frame = getattr(history, "frame", None)
    tail: list[dict[str, Any]] = []
    period: list[str] = []
    if isinstance(frame, pd.DataFrame) and "demand" in frame.columns and len(frame):
        demand = frame["demand"].tail(max(int(history_days), 0))
        tail = [
            {"date": pd.Timestamp(d).strftime("%Y-%m-%d"), "demand": _json_value(v, "history")}
            for d, v in demand.items()
        ]
        period = [
            pd.Timestamp(frame.index.min()).strftime("%Y-%m-%d"),
            pd.Timestamp(frame.index.max()).strftime("%Y-%m-%d"),
        ]
    hist_settings = getattr(history, "settings", None)
    warnings_fn = getattr(forecast, "warnings", None)
    warnings = [str(w) for w in (warnings_fn() if callable(warnings_fn) else []) or []]
    context = {
        "levels": [float(x) for x in (getattr(forecast, "levels", ()) or ())],
        "model_summary": summarise_model(model),
        "history_tail": tail,
        "history_period": period,
        "demand_unit": str(
            getattr(forecast, "demand_unit", None) or getattr(hist_settings, "demand_unit", "MW")
        ),
        "demand_kind": str(getattr(hist_settings, "subdaily_demand", "peak")),
        "warnings": warnings,
        "temperature_range_c": list(getattr(forecast, "temperature_range_c", ()) or ()),
    }
    return ScenarioEntry(
        name=name if name is not None else str(getattr(scenario, "name", "")),
        definition=scenario.to_dict(),
        model_fingerprint=str(getattr(model, "fingerprint", "")),
        model_settings=settings_to_dict(getattr(model, "settings", {})),
        forecast=forecast.frame,
        note=str(getattr(forecast, "note", "") or "") if note is None else note,
        author=author,
        context=context,
    )


def is_current(saved: SavedScenario, model: Any) -> bool:
    """True when ``saved`` was forecast with this model (same fingerprint and settings).

    The app uses it to offer a re-forecast when the model has changed.
    """
    fingerprint = getattr(model, "fingerprint", None)
    if fingerprint is None or str(fingerprint) != saved.model_fingerprint:
        return False
    return settings_to_dict(getattr(model, "settings", {})) == settings_to_dict(
        saved.model_settings
    )
