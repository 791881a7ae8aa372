"""Reading a history source into its raw columns, before any parsing.

A source is a path, a file-like object, bytes, CSV text (a ``str`` holding a line break) or a
DataFrame. Files go through the one file policy of :mod:`loadcore.files` (regular files only, a
size cap before reading, one list of encodings, spreadsheets and binary data named); then the
delimiter (comma, semicolon, tab or pipe) and the header line are found and the date, demand and
temperature columns (and the hour and minimum-temperature columns when the settings name them)
picked out by name, ignoring case and surrounding spaces.
"""

from __future__ import annotations

import csv
import dataclasses
import io
import os
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from loadcore import files, tables
from loadcore.errors import InputError, clip, quote, quote_all
from loadcore.history.report import Collector
from loadcore.history.settings import HistorySettings, name_the_column

DELIMITERS = tables.DELIMITERS


@dataclass(frozen=True)
class RawColumns:
    """The wanted columns as read, before parsing, with their file row numbers.

    ``hour`` and ``temp_min`` are present only when :class:`HistorySettings` names them
    (``hour_col``, ``temp_min_col``); ``unused`` lists the file's other columns, for hints.
    """

    rows: np.ndarray  # 1-based data row numbers
    date: pd.Series  # str or datetime64
    demand: pd.Series  # str or numeric
    temperature: pd.Series  # str or numeric
    names: tuple[str, str, str]  # column names as found in the file
    hour: pd.Series | None = None  # str or numeric
    hour_name: str = ""
    temp_min: pd.Series | None = None  # str or numeric
    temp_min_name: str = ""
    unused: tuple[str, ...] = ()


def _raw_columns(
    rows: np.ndarray, columns: list[pd.Series], names: list[str], settings: HistorySettings
) -> RawColumns:
    """RawColumns from the columns of :meth:`HistorySettings.column_settings`, in that order."""
    by_setting = dict(
        zip(settings.column_settings(), zip(columns, names, strict=True), strict=True)
    )
    hour, hour_name = by_setting.get("hour_col", (None, ""))
    temp_min, temp_min_name = by_setting.get("temp_min_col", (None, ""))
    return RawColumns(
        rows=rows,
        date=columns[0],
        demand=columns[1],
        temperature=columns[2],
        names=(names[0], names[1], names[2]),
        hour=hour,
        hour_name=hour_name,
        temp_min=temp_min,
        temp_min_name=temp_min_name,
    )


def source_label(source: Any) -> str:
    """How a source is named in messages: its path, its ``name`` or its type."""
    if isinstance(source, (str, os.PathLike)):
        return str(source)
    return getattr(source, "name", None) or type(source).__name__


def _read_text(source: Any, issues: Collector) -> str | None:
    """Text of a path, bytes or file-like object; None (with an error) if it cannot be read.

    The one file policy of :mod:`loadcore.files` applies: regular files only, a size cap checked
    before reading, spreadsheets and binary data recognised, one list of encodings.
    """
    label = source_label(source)
    if isinstance(source, str) and ("\n" in source or "\r" in source):
        return source
    try:
        data, _ = files.read_bytes(source, what="history file")
        decoded = files.decode(data, what="history file", label=label)
    except InputError as exc:
        issues.add(
            "error", exc.problem + (f" ({exc.where})" if exc.where else ""), fix=exc.fix or ""
        )
        return None
    if decoded.fallback:
        issues.add(
            "info",
            f"The file {quote(label)} is not UTF-8; it was read as {decoded.encoding}",
            fix="Save the file as UTF-8 to avoid misread characters",
        )
    return decoded.text


_norm = tables.norm_name


def _raw_from_text(text: str, settings: HistorySettings, issues: Collector) -> RawColumns | None:
    lines = text.splitlines()
    setting_names = settings.column_settings()
    wanted = tuple(str(getattr(settings, n)) for n in setting_names)
    if not any(line.strip() for line in lines):
        issues.add(
            "error", "The history file is empty", fix="Choose a file with a header and data rows"
        )
        return None
    delim = tables.detect_delimiter(lines, wanted)
    try:
        records = list(csv.reader(io.StringIO(text, newline=""), delimiter=delim))
    except csv.Error as exc:
        issues.add(
            "error",
            f"The file cannot be read as a table ({clip(exc)})",
            fix="Save the history as a plain CSV file with one row per line",
        )
        return None
    wanted_n = [_norm(w) for w in wanted]
    header_at = tables.find_header(records, wanted)
    if header_at is None:
        first = next((rec for rec in records if any(c.strip() for c in rec)), [])
        found = quote_all(c.strip() for c in first)
        missing = [
            w for w, n in zip(wanted, wanted_n, strict=True) if n not in [_norm(c) for c in first]
        ]
        setting_of = dict(zip(wanted, setting_names, strict=True))
        for name in missing:
            issues.add(
                "error",
                f"The column {quote(name)} is not in the file; the columns found are {found}",
                column=name,
                fix="Find the column among those found and " + name_the_column(setting_of[name]),
            )
        return None
    if header_at > 0:
        issues.add(
            "info",
            f"The first {header_at} line(s) before the header were ignored",
            fix="Nothing to do if they are notes or titles",
        )
    header = [_norm(c) for c in records[header_at]]
    positions = [header.index(w) for w in wanted_n]
    names = [records[header_at][p].strip().strip("\ufeff") for p in positions]
    unused = [
        c.strip() for j, c in enumerate(records[header_at]) if j not in positions and c.strip()
    ]
    if unused:
        issues.add(
            "info",
            "These columns are not used: " + ", ".join(repr(u) for u in unused),
            fix="Nothing to do unless one of them is the demand or temperature you meant",
        )
    data = records[header_at + 1 :]
    needed = max(positions) + 1
    numbers = np.arange(1, len(data) + 1, dtype=np.int64)
    lengths = np.fromiter(map(len, data), dtype=np.int64, count=len(data))
    blank = np.fromiter((not "".join(rec).strip() for rec in data), dtype=bool, count=len(data))
    short = ~blank & (lengths < needed)
    keep = ~blank & ~short
    kept = [rec for rec, k in zip(data, keep.tolist(), strict=True) if k]
    columns = [pd.Series([rec[p].strip() for rec in kept], dtype=object) for p in positions]
    keep_rows = numbers[keep]
    blank_rows = numbers[blank].tolist()
    short_rows = list(zip(numbers[short].tolist(), lengths[short].tolist(), strict=True))
    if blank_rows:
        issues.many(
            "info",
            lambda i: ("This row is blank and was ignored", {"row": blank_rows[i]}),
            len(blank_rows),
            kind="blank rows ignored",
            fix="Nothing to do",
            rows=blank_rows,
        )
    if short_rows:
        issues.many(
            "error",
            lambda i: (
                f"This row has {short_rows[i][1]} field(s) but the header has {len(header)}",
                {"row": short_rows[i][0]},
            ),
            len(short_rows),
            kind="rows with too few fields",
            fix=f"Check the row for a missing {'tab' if delim == chr(9) else repr(delim)} separator",
            rows=[r for r, _ in short_rows],
        )
    raw = _raw_columns(keep_rows, columns, names, settings)
    return dataclasses.replace(raw, unused=tuple(unused))


def _raw_from_frame(
    frame: pd.DataFrame, settings: HistorySettings, issues: Collector
) -> RawColumns | None:
    """The wanted columns of a table; rows are numbered from 1, or by ``frame.attrs["file_rows"]``
    (one number per row) when the table was cut from a file (a zone of a zones file)."""
    file_rows = frame.attrs.get("file_rows", ())
    frame = frame.copy()
    lookup = {_norm(c): c for c in frame.columns}
    if _norm(settings.date_col) not in lookup and isinstance(frame.index, pd.DatetimeIndex):
        frame = frame.reset_index(names=settings.date_col)
        lookup = {_norm(c): c for c in frame.columns}
    wanted = tuple(str(getattr(settings, n)) for n in settings.column_settings())
    missing = [w for w in wanted if _norm(w) not in lookup]
    if missing:
        found = quote_all(str(c) for c in frame.columns)
        for name in missing:
            issues.add(
                "error",
                f"The column {quote(name)} is not in the table; the columns found are {found}",
                column=name,
                fix="Rename the column, or name it in the history settings (date_col, demand_col, "
                "temp_col)",
            )
        return None
    cols = [lookup[_norm(w)] for w in wanted]

    def prepared(series: pd.Series) -> pd.Series:
        series = series.reset_index(drop=True)
        if pd.api.types.is_datetime64_any_dtype(series) or pd.api.types.is_numeric_dtype(series):
            return series
        return series.map(
            lambda v: "" if v is None or (isinstance(v, float) and np.isnan(v)) else str(v).strip()
        )

    rows = np.asarray(file_rows, dtype=np.int64)
    if rows.shape != (len(frame),):  # a plain table: its own row numbers
        rows = np.arange(1, len(frame) + 1, dtype=np.int64)
    raw = _raw_columns(
        rows,
        [prepared(frame[c]) for c in cols],
        [str(c) for c in cols],
        settings,
    )
    unused = tuple(str(c) for c in frame.columns if c not in cols)
    return dataclasses.replace(raw, unused=unused)


def read_raw(source: Any, settings: HistorySettings, issues: Collector) -> RawColumns | None:
    """The wanted columns of ``source``; None (with the errors in ``issues``) if unreadable."""
    if isinstance(source, pd.DataFrame):
        return _raw_from_frame(source, settings, issues)
    text = _read_text(source, issues)
    return None if text is None else _raw_from_text(text, settings, issues)
