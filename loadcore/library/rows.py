"""One saved scenario as a database row: checks on what is written, JSON both ways.

Names, notes and authors are checked before anything is written (:func:`clean_name`,
:func:`clean_text`); the scenario definition, model settings, forecast table and context are
stored as JSON text through :mod:`loadcore.plainjson` (infinite numbers are refused, NaN and NaT
stored as null) and read back with its depth-capped reader.
"""

from __future__ import annotations

import unicodedata
from collections.abc import Mapping
from datetime import UTC, date, datetime
from typing import Any

import numpy as np
import pandas as pd

from loadcore import plainjson
from loadcore.errors import InputError, LoadcoreError, clip, quote
from loadcore.library.entries import (
    SavedScenario,
    ScenarioEntry,
    ScenarioListing,
    settings_to_dict,
)

MAX_NAME_CHARS = 120
MAX_NOTE_CHARS = 20_000
# Characters a note may hold beyond printable text (line breaks and tabs).
NOTE_CONTROLS = "\n\t\r"


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


def clean_name(name: Any, what: str = "scenario name") -> str:
    """A library name: NFC-normalised, stripped, 1 to 120 characters, no control characters."""
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


def clean_text(text: Any, what: str, limit: int, allowed: str) -> str:
    """Free text (a note, an author) of at most ``limit`` characters; None becomes ""."""
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


def clean_note(note: Any) -> str:
    """A note (up to 20,000 characters; line breaks and tabs allowed)."""
    return clean_text(note, "note", MAX_NOTE_CHARS, NOTE_CONTROLS)


def clean_author(author: Any) -> str:
    """An author (up to 120 characters, one line)."""
    return clean_text(author, "author", MAX_NAME_CHARS, "")


def check_version(expected_version: Any) -> int:
    """The version an editor quotes: a whole number from 1."""
    if (
        isinstance(expected_version, bool)
        or not isinstance(expected_version, (int, np.integer))
        or expected_version < 1
    ):
        raise InputError(
            f"The expected version must be a whole number from 1, got {quote(expected_version)}",
            fix="Pass the version of the saved scenario you opened",
        )
    return int(expected_version)


def utc_now() -> str:
    """The time now, UTC, ISO 8601 with milliseconds and a ``Z``."""
    return datetime.now(UTC).isoformat(timespec="milliseconds").replace("+00:00", "Z")


# --------------------------------------------------------------------------------------------
# JSON both ways
# --------------------------------------------------------------------------------------------


def dumps(value: Any, where: str) -> str:
    """Plain JSON text for a stored field; infinite numbers are refused naming ``where``."""
    try:
        return plainjson.dumps(value, nonfinite="error", where=where, ensure_ascii=False)
    except (TypeError, ValueError) as exc:
        raise InputError(
            f"This cannot be stored as JSON: {clip(exc)}", where=where, fix="Report this as a bug"
        ) from None


def frame_to_json(frame: pd.DataFrame, where: str) -> str:
    """A forecast table as ``{"columns": [...], "records": [{...}, ...]}`` JSON text."""
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
        name: plainjson.to_plain(
            frame[col].tolist(), nonfinite="error", where=f"{where}, column {name}"
        )
        for name, col in zip(columns, frame.columns, strict=True)
    }
    records = [{name: cells[name][i] for name in columns} for i in range(len(frame))]
    return dumps({"columns": columns, "records": records}, where)


def frame_from_json(text: str) -> pd.DataFrame:
    """Inverse of :func:`frame_to_json` (dates parsed, flag columns as bool)."""
    data = plainjson.loads(text, what="stored forecast")
    columns = data.get("columns", [])
    frame = pd.DataFrame.from_records(data.get("records", []), columns=columns)
    if "date" in frame.columns:
        frame["date"] = pd.to_datetime(frame["date"])
    for column in ("out_of_range", "sparse_temperature"):
        if column in frame.columns:
            frame[column] = frame[column].fillna(False).astype(bool)
    return frame


def rename_definition(definition_json: str, name: str) -> str:
    """The stored definition JSON with its ``name`` set to the library name."""
    data = plainjson.loads(definition_json, what="stored scenario definition")
    if isinstance(data, dict):
        data["name"] = name
    return dumps(data, "scenario definition")


def definition_dates(definition: Mapping[str, Any], where: str) -> tuple[str, str, int]:
    """First and last date (ISO) and the number of days of a scenario definition."""
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
            f"The scenario definition has an unreadable date: {clip(exc)}",
            where=where,
            fix="Save a scenario built with loadcore.scenario (Scenario.to_dict())",
        ) from None
    return min(dates).strftime("%Y-%m-%d"), max(dates).strftime("%Y-%m-%d"), len(dates)


def entry_content(entry: ScenarioEntry, where: str) -> dict[str, Any]:
    """The stored columns of an entry's content (dates, JSON fields, fingerprint), checked."""
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
    first, last, days = definition_dates(entry.definition, where)
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
        "definition": dumps(entry.definition, f"{where}, scenario definition"),
        "model_fingerprint": fingerprint,
        "model_settings": dumps(settings_to_dict(entry.model_settings), f"{where}, model settings"),
        "forecast": frame_to_json(entry.forecast, f"{where}, forecast table"),
        "context": dumps(dict(entry.context or {}), f"{where}, context"),
    }


def _iso_day(value: Any, what: str) -> str:
    if not isinstance(value, str):
        raise InputError(f"its {what} is not text")
    try:
        return date.fromisoformat(value).isoformat()
    except ValueError:
        raise InputError(f"its {what} {quote(value)} is not a date") from None


def _whole(value: Any, what: str) -> int:
    if isinstance(value, bool) or not isinstance(value, int) or value < 1:
        raise InputError(f"its {what} {quote(value)} is not a whole number from 1")
    return value


def listing_from_row(row: tuple) -> ScenarioListing:
    """One line of the list from a row of :data:`loadcore.library.schema.LIST_COLUMNS`.

    Raises
    ------
    InputError
        Saying what is damaged (the caller skips the row and reports it).
    """
    name, note, author, created, changed, version, first, last, days, fingerprint = row
    if not isinstance(name, str) or not name.strip():
        raise InputError("its name is missing or not text")
    for what, value in (("note", note), ("author", author), ("model fingerprint", fingerprint)):
        if value is not None and not isinstance(value, str):
            raise InputError(f"its {what} is not text")
    for what, value in (("creation time", created), ("change time", changed)):
        if not isinstance(value, str):
            raise InputError(f"its {what} is not text")
    return ScenarioListing(
        name=name,
        note=note or "",
        author=author or "",
        created_utc=created,
        changed_utc=changed,
        version=_whole(version, "version"),
        first_date=_iso_day(first, "first date"),
        last_date=_iso_day(last, "last date"),
        days=_whole(days, "number of days"),
        model_fingerprint=fingerprint or "",
    )


def _check_saved(saved: SavedScenario) -> None:
    """Read every stored piece a later call reads, so damage shows here, not in an export."""
    if not isinstance(saved.context, dict) or not isinstance(saved.definition, dict):
        raise TypeError("the stored context or definition is not a set of named values")
    if not isinstance(saved.model_settings, dict):
        raise TypeError("the stored model settings are not a set of named values")
    frame = saved.forecast
    for column in ("date", "mean", "median"):
        if column not in frame.columns:
            raise KeyError(f"the stored forecast has no {column} column")
    for column in frame.columns:
        if column not in ("date", "day_type", "scenario") and frame[column].dtype == object:
            pd.to_numeric(frame[column].dropna(), errors="raise")
    tail = saved.history_tail()
    if len(tail) and tail.index.hasnans:
        raise ValueError("a date of the kept history is missing")
    saved.to_forecast()


def saved_from_row(row: tuple, where: str) -> SavedScenario:
    """A :class:`SavedScenario` from a row of :data:`loadcore.library.schema.COLUMNS`.

    Raises
    ------
    InputError
        When the row is damaged (a field missing or not JSON).
    """
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
        saved = SavedScenario(
            name=name,
            note=str(note or ""),
            author=str(author or ""),
            created_utc=str(created),
            changed_utc=str(changed),
            version=int(version),
            definition=plainjson.loads(definition, what="stored scenario definition"),
            model_fingerprint=fingerprint,
            model_settings=plainjson.loads(settings, what="stored model settings"),
            forecast=frame_from_json(forecast),
            context=plainjson.loads(context, what="stored context"),
        )
        _check_saved(saved)
        return saved
    except (ValueError, TypeError, AttributeError, KeyError, OverflowError, LoadcoreError) as exc:
        raise InputError(
            f"The saved scenario {quote(name)} is damaged and cannot be read: {clip(exc)}",
            where=where,
            fix="Delete it and save it again, or restore the library from a backup",
        ) from None
