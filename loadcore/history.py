"""Read, check and tidy a demand history into a complete daily table.

The reader accepts a CSV file (comma, semicolon, tab or pipe delimited; most common date formats,
with or without times), a file-like object, raw bytes or a DataFrame. Sub-daily data (hourly,
half-hourly, ...) is aggregated to daily values. Every change made to the data, and every row that
is ignored, is listed in the :class:`HistoryReport`; nothing is dropped silently.

Inside loadcore temperatures are in °C; a file in °F is converted here, at the edge.
"""

from __future__ import annotations

import csv
import hashlib
import io
import logging
import os
import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from functools import lru_cache
from typing import Any

import numpy as np
import pandas as pd

from loadcore import files
from loadcore.errors import HistoryError, InputError

__all__ = [
    "History",
    "HistoryReport",
    "HistorySettings",
    "Issue",
    "check_history",
    "history_from_frame",
    "read_history",
]

logger = logging.getLogger(__name__)

# How many issues of one kind are listed one by one before the rest are summarised in a count.
MAX_LISTED = 20
# A year of daily history is needed to see the temperature response across all seasons
# (common practice, no source).
MIN_DAYS = 365
# Physical plausibility bounds for a daily temperature at a populated place, °C
# (common practice, no source; the recorded extremes lie inside them).
TEMP_MIN_C = -60.0
TEMP_MAX_C = 60.0
# Dates outside this span are taken as misread rather than as history.
EARLIEST = "1900-01-01"
LATEST = "2199-12-31"
DELIMITERS = (",", ";", "\t", "|")
_MISSING_TOKENS = {"", "na", "n/a", "nan", "null", "none", "-", "--", "?", "#n/a"}

_DATE_PARTS = (
    "%Y-%m-%d",
    "%Y/%m/%d",
    "%Y.%m.%d",
    "%d/%m/%Y",
    "%m/%d/%Y",
    "%d.%m.%Y",
    "%d-%m-%Y",
    "%m-%d-%Y",
    "%Y%m%d",
)
_TIME_PARTS = ("", " %H:%M", " %H:%M:%S", "T%H:%M", "T%H:%M:%S", " %H:%M:%S.%f", "T%H:%M:%S.%f")
_READABLE = {
    "%Y-%m-%d": "YYYY-MM-DD",
    "%Y/%m/%d": "YYYY/MM/DD",
    "%Y.%m.%d": "YYYY.MM.DD",
    "%d/%m/%Y": "DD/MM/YYYY (day first)",
    "%m/%d/%Y": "MM/DD/YYYY (month first)",
    "%d.%m.%Y": "DD.MM.YYYY",
    "%d-%m-%Y": "DD-MM-YYYY (day first)",
    "%m-%d-%Y": "MM-DD-YYYY (month first)",
    "%Y%m%d": "YYYYMMDD",
    "ISO8601": "ISO 8601",
}


# --------------------------------------------------------------------------------------------
# Public types
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class HistorySettings:
    """How to read a history file.

    Parameters
    ----------
    date_col, demand_col, temp_col : str
        Column names in the file (matched ignoring case and surrounding spaces).
    temp_unit : {"C", "F"}
        Unit of the temperature column; °F is converted to °C on reading.
    temp_kind : {"max", "mean"}
        Whether the temperature is a daily maximum or mean (a label; sub-daily readings are
        aggregated to the daily maximum or mean accordingly).
    demand_unit : str
        Label for the demand unit, e.g. ``"MW"``.
    subdaily_demand : {"peak", "total"}
        For sub-daily data: daily demand is the peak (max) or the total (sum) of the intervals.
    date_format : str or None
        A strftime pattern such as ``"%d/%m/%Y"`` to force; ``None`` detects the format.
    max_temp_gap_days : int
        Temperature gaps up to this many days are filled by linear interpolation; longer gaps
        are errors.
    max_demand_gap_days : int
        Demand gaps up to this many days are kept as missing values; longer gaps are errors.
    """

    date_col: str = "date"
    demand_col: str = "demand"
    temp_col: str = "temperature"
    temp_unit: str = "C"
    temp_kind: str = "max"
    demand_unit: str = "MW"
    subdaily_demand: str = "peak"
    date_format: str | None = None
    max_temp_gap_days: int = 3
    max_demand_gap_days: int = 31

    def __post_init__(self) -> None:
        unit = str(self.temp_unit).strip().upper().lstrip("°")
        if unit not in ("C", "F"):
            raise HistoryError(
                f"Unknown temperature unit {self.temp_unit!r}",
                where="history settings: temp_unit",
                fix="Use 'C' for degrees Celsius or 'F' for degrees Fahrenheit",
            )
        object.__setattr__(self, "temp_unit", unit)
        if self.temp_kind not in ("max", "mean"):
            raise HistoryError(
                f"Unknown temperature kind {self.temp_kind!r}",
                where="history settings: temp_kind",
                fix="Use 'max' for daily maximum or 'mean' for daily mean temperature",
            )
        if self.subdaily_demand not in ("peak", "total"):
            raise HistoryError(
                f"Unknown sub-daily aggregation {self.subdaily_demand!r}",
                where="history settings: subdaily_demand",
                fix="Use 'peak' (daily maximum) or 'total' (daily sum)",
            )
        for name in ("max_temp_gap_days", "max_demand_gap_days"):
            value = getattr(self, name)
            if not isinstance(value, (int, np.integer)) or value < 0:
                raise HistoryError(
                    f"{name} must be a whole number of days, 0 or more (got {value!r})",
                    where=f"history settings: {name}",
                    fix="Give a number such as 3",
                )
        for name in ("date_col", "demand_col", "temp_col"):
            if not str(getattr(self, name)).strip():
                raise HistoryError(
                    f"The {name} setting is empty",
                    where=f"history settings: {name}",
                    fix="Give the column's name as it appears in the file's header",
                )


@dataclass(frozen=True)
class Issue:
    """One finding of the history check.

    Parameters
    ----------
    severity : {"error", "warning", "info"}
        Errors stop the history being used; warnings and infos describe changes made.
    message : str
        What was found.
    row : int or None
        1-based data row of the file (the first line after the header is row 1).
    date : str or None
        ISO date concerned.
    column : str or None
        Column concerned, as named in the file.
    fix : str
        What the user can do.
    """

    severity: str
    message: str
    row: int | None = None
    date: str | None = None
    column: str | None = None
    fix: str = ""

    def where(self) -> str:
        """The place as plain text, e.g. ``"row 12, date 2024-01-05, column demand"``."""
        parts = []
        if self.row is not None:
            parts.append(f"row {self.row}")
        if self.date is not None:
            parts.append(f"date {self.date}")
        if self.column is not None:
            parts.append(f"column {self.column}")
        return ", ".join(parts)


@dataclass(frozen=True)
class HistoryReport:
    """Everything the check found, in the order found."""

    issues: tuple[Issue, ...] = ()

    @property
    def ok(self) -> bool:
        """True when there are no errors."""
        return not self.errors

    @property
    def errors(self) -> tuple[Issue, ...]:
        return tuple(i for i in self.issues if i.severity == "error")

    @property
    def warnings(self) -> tuple[Issue, ...]:
        return tuple(i for i in self.issues if i.severity == "warning")

    @property
    def infos(self) -> tuple[Issue, ...]:
        return tuple(i for i in self.issues if i.severity == "info")

    def to_frame(self) -> pd.DataFrame:
        """One row per issue: severity, row, date, column, message, fix."""
        columns = ["severity", "row", "date", "column", "message", "fix"]
        rows = [
            {
                "severity": i.severity,
                "row": i.row,
                "date": i.date,
                "column": i.column,
                "message": i.message,
                "fix": i.fix,
            }
            for i in self.issues
        ]
        frame = pd.DataFrame(rows, columns=columns)
        frame["row"] = frame["row"].astype("Int64")
        return frame

    def to_text(self) -> str:
        """A readable plain-text report, errors first."""
        counts = (len(self.errors), len(self.warnings), len(self.infos))
        lines = [
            f"History check: {counts[0]} error(s), {counts[1]} warning(s), {counts[2]} note(s)"
        ]
        for severity, label in (("error", "ERROR"), ("warning", "WARNING"), ("info", "NOTE")):
            for issue in self.issues:
                if issue.severity != severity:
                    continue
                where = issue.where()
                text = f"{label:<8}{issue.message}"
                if where:
                    text += f" [{where}]"
                if issue.fix:
                    text += f" -> {issue.fix}"
                lines.append(text)
        return "\n".join(lines)


@dataclass(frozen=True, eq=False)
class History:
    """A validated, complete daily history.

    Attributes
    ----------
    frame : pandas.DataFrame
        Indexed by a complete daily ``DatetimeIndex`` named ``date``; columns ``demand``
        (float, in ``settings.demand_unit``, NaN on missing days), ``temperature_c`` (float, °C,
        no NaN) and ``temperature_filled`` (bool, True where interpolated).
    settings : HistorySettings
    report : HistoryReport
    fingerprint : str
        sha256 hex digest of the daily dates and values (stable across runs).
    """

    frame: pd.DataFrame
    settings: HistorySettings = field(default_factory=HistorySettings)
    report: HistoryReport = field(default_factory=HistoryReport)
    fingerprint: str = ""

    def __post_init__(self) -> None:
        if not self.fingerprint:
            object.__setattr__(self, "fingerprint", _fingerprint(self.frame))

    @property
    def start(self) -> pd.Timestamp:
        """First date."""
        return self.frame.index[0]

    @property
    def end(self) -> pd.Timestamp:
        """Last date."""
        return self.frame.index[-1]

    @property
    def days(self) -> int:
        """Number of days covered."""
        return len(self.frame)

    @property
    def temperature_range_c(self) -> tuple[float, float]:
        """(lowest, highest) daily temperature in °C."""
        temps = self.frame["temperature_c"]
        return float(temps.min()), float(temps.max())


# --------------------------------------------------------------------------------------------
# Issue collection
# --------------------------------------------------------------------------------------------


class _Collector:
    """Gathers issues; repeated issues of one kind are listed up to MAX_LISTED then counted."""

    def __init__(self) -> None:
        self.issues: list[Issue] = []

    def add(self, severity: str, message: str, *, fix: str = "", **where: Any) -> None:
        self.issues.append(Issue(severity, message, fix=fix, **where))

    def many(
        self,
        severity: str,
        make: Callable[[int], tuple[str, dict[str, Any]]],
        count: int,
        *,
        kind: str,
        fix: str,
        column: str | None = None,
        rows: Sequence[int] | None = None,
    ) -> None:
        """Add ``make(i)`` for the first MAX_LISTED of ``count`` cases and a summary of the rest."""
        for i in range(min(count, MAX_LISTED)):
            message, where = make(i)
            self.issues.append(Issue(severity, message, fix=fix, column=column, **where))
        if count > MAX_LISTED:
            rest = count - MAX_LISTED
            span = ""
            if rows is not None and len(rows) == count:
                span = f" (rows {rows[MAX_LISTED]} to {rows[-1]})"
            self.issues.append(
                Issue(
                    severity,
                    f"... and {rest} more {kind}{span}; {count} in all",
                    column=column,
                    fix=fix,
                )
            )

    @property
    def has_errors(self) -> bool:
        return any(i.severity == "error" for i in self.issues)

    def report(self) -> HistoryReport:
        return HistoryReport(tuple(self.issues))


# --------------------------------------------------------------------------------------------
# Reading raw text into string columns
# --------------------------------------------------------------------------------------------


@dataclass
class _Raw:
    """The three wanted columns as read, before parsing, with their file row numbers."""

    rows: np.ndarray  # 1-based data row numbers
    date: pd.Series  # str or datetime64
    demand: pd.Series  # str or numeric
    temperature: pd.Series  # str or numeric
    names: tuple[str, str, str]  # column names as found in the file
    delimiter: str | None = None


def _source_label(source: Any) -> str:
    if isinstance(source, (str, os.PathLike)):
        return str(source)
    return getattr(source, "name", None) or type(source).__name__


def _read_text(source: Any, issues: _Collector) -> str | None:
    """Text of a path, bytes or file-like object; None (with an error) if it cannot be read.

    The one file policy of :mod:`loadcore.files` applies: regular files only, a size cap checked
    before reading, spreadsheets and binary data recognised, one list of encodings.
    """
    label = _source_label(source)
    if isinstance(source, str) and ("\n" in source or "\r" in source):
        return source
    try:
        data, _ = files.read_bytes(source, what="history file")
        if isinstance(data, str):  # pragma: no cover - read_bytes returns bytes
            return data
        decoded = files.decode(data, what="history file", label=label)
    except InputError as exc:
        issues.add(
            "error", exc.problem + (f" ({exc.where})" if exc.where else ""), fix=exc.fix or ""
        )
        return None
    if decoded.fallback:
        issues.add(
            "info",
            f"The file {label!r} is not UTF-8; it was read as {decoded.encoding}",
            fix="Save the file as UTF-8 to avoid misread characters",
        )
    return decoded.text


def _norm(name: str) -> str:
    return str(name).strip().strip("\ufeff").strip('"').strip().lower()


def _detect_delimiter(lines: list[str], wanted: Sequence[str]) -> str:
    """Pick the delimiter whose split of an early line holds the wanted columns, else sniff."""
    wanted_n = [_norm(w) for w in wanted]
    for line in lines[:30]:
        for delim in DELIMITERS:
            cells = [_norm(c) for c in line.split(delim)]
            if all(w in cells for w in wanted_n):
                return delim
    sample = "\n".join(lines[:50])
    try:
        return csv.Sniffer().sniff(sample, delimiters="".join(DELIMITERS)).delimiter
    except csv.Error:
        counts = {d: sum(line.count(d) for line in lines[:50]) for d in DELIMITERS}
        return max(counts, key=lambda d: counts[d]) if max(counts.values()) > 0 else ","


def _raw_from_text(text: str, settings: HistorySettings, issues: _Collector) -> _Raw | None:
    lines = text.splitlines()
    wanted = (settings.date_col, settings.demand_col, settings.temp_col)
    if not any(line.strip() for line in lines):
        issues.add(
            "error", "The history file is empty", fix="Choose a file with a header and data rows"
        )
        return None
    delim = _detect_delimiter(lines, wanted)
    try:
        records = list(csv.reader(io.StringIO(text, newline=""), delimiter=delim))
    except csv.Error as exc:
        issues.add(
            "error",
            f"The file cannot be read as a table ({exc})",
            fix="Save the history as a plain CSV file with one row per line",
        )
        return None
    wanted_n = [_norm(w) for w in wanted]
    header_at = None
    for i, rec in enumerate(records[:30]):
        cells = [_norm(c) for c in rec]
        if all(w in cells for w in wanted_n):
            header_at = i
            break
    if header_at is None:
        first = next((rec for rec in records if any(c.strip() for c in rec)), [])
        found = ", ".join(repr(c.strip()) for c in first) or "none"
        missing = [
            w for w, n in zip(wanted, wanted_n, strict=True) if n not in [_norm(c) for c in first]
        ]
        setting_of = {
            settings.date_col: "date_col",
            settings.demand_col: "demand_col",
            settings.temp_col: "temp_col",
        }
        for name in missing:
            issues.add(
                "error",
                f"The column {name!r} is not in the file; the columns found are {found}",
                column=name,
                fix=f"Set the {setting_of[name]} setting to the name of that column in the file",
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
    names = tuple(records[header_at][p].strip().strip("\ufeff") for p in positions)
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
    return _Raw(
        rows=keep_rows,
        date=columns[0],
        demand=columns[1],
        temperature=columns[2],
        names=names,  # type: ignore[arg-type]
        delimiter=delim,
    )


def _raw_from_frame(
    frame: pd.DataFrame, settings: HistorySettings, issues: _Collector
) -> _Raw | None:
    frame = frame.copy()
    lookup = {_norm(c): c for c in frame.columns}
    if _norm(settings.date_col) not in lookup and isinstance(frame.index, pd.DatetimeIndex):
        frame = frame.reset_index(names=settings.date_col)
        lookup = {_norm(c): c for c in frame.columns}
    wanted = (settings.date_col, settings.demand_col, settings.temp_col)
    missing = [w for w in wanted if _norm(w) not in lookup]
    if missing:
        found = ", ".join(repr(str(c)) for c in frame.columns) or "none"
        for name in missing:
            issues.add(
                "error",
                f"The column {name!r} is not in the table; the columns found are {found}",
                column=name,
                fix="Rename the column or change the column-name setting to match",
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

    return _Raw(
        rows=np.arange(1, len(frame) + 1, dtype=np.int64),
        date=prepared(frame[cols[0]]),
        demand=prepared(frame[cols[1]]),
        temperature=prepared(frame[cols[2]]),
        names=tuple(str(c) for c in cols),  # type: ignore[arg-type]
    )


# --------------------------------------------------------------------------------------------
# Parsing dates and numbers
# --------------------------------------------------------------------------------------------


_PATTERN_PIECES = {
    "%Y": r"\d{4}",
    "%m": r"\d{1,2}",
    "%d": r"\d{1,2}",
    "%H": r"\d{1,2}",
    "%M": r"\d{1,2}",
    "%S": r"\d{1,2}",
    "%f": r"\d{1,9}",
}


@lru_cache(maxsize=256)
def _shape(pattern: str) -> re.Pattern[str]:
    """A regular expression for the shape of a strftime pattern (digits only, no range checks)."""
    pieces = re.split(r"(%[A-Za-z])", pattern)
    return re.compile("".join(_PATTERN_PIECES.get(p, re.escape(p)) for p in pieces))


def _probe(value: str, pattern: str) -> bool:
    return _shape(pattern).fullmatch(value) is not None


def _parse_family(values: pd.Series, date_part: str) -> pd.Series:
    """Parse with one date layout, accepting any of the time layouts row by row.

    A time layout is tried on the whole remaining column only once a probe of one of the first
    few remaining values says it fits, so wrong layouts cost next to nothing.
    """
    text = values.to_numpy(dtype=object)
    out = np.full(len(text), np.datetime64("NaT"), dtype="datetime64[ns]")
    todo = np.arange(len(text))
    untried = list(_TIME_PARTS)
    while len(todo) and untried:
        chosen = None
        for pos in todo[:20]:
            chosen = next((t for t in untried if _probe(str(text[pos]), date_part + t)), None)
            if chosen is not None:
                break
        if chosen is None:
            break
        untried.remove(chosen)
        parsed = _to_ns(
            pd.to_datetime(pd.Series(text[todo]), format=date_part + chosen, errors="coerce")
        )
        got = ~np.isnat(parsed)
        out[todo[got]] = parsed[got]
        todo = todo[~got]
    return pd.Series(out, index=values.index)


def _to_ns(parsed: pd.Series) -> np.ndarray:
    """datetime64[ns] values; dates outside EARLIEST..LATEST become NaT (unreadable)."""
    if isinstance(parsed.dtype, pd.DatetimeTZDtype):
        parsed = parsed.dt.tz_localize(None)
    values = parsed.to_numpy(dtype="datetime64[us]")
    outside = (values < np.datetime64(EARLIEST, "us")) | (values > np.datetime64(LATEST, "us"))
    values = values.copy()
    values[outside] = np.datetime64("NaT")
    return values.astype("datetime64[ns]")


_UTC_OFFSET = re.compile(r"(?:Z|[+-]\d{2}:?\d{2})$")


def _parse_iso8601(values: pd.Series) -> pd.Series:
    # Keep the local wall-clock time: a trailing UTC offset (which changes with daylight saving)
    # is dropped, so each reading stays on its local day.
    local = values.astype(str).str.replace(_UTC_OFFSET, "", regex=True)
    try:
        parsed = pd.to_datetime(local, format="ISO8601", errors="coerce")
        return pd.Series(_to_ns(parsed), index=values.index)
    except (ValueError, TypeError, OverflowError):
        return pd.Series(pd.NaT, index=values.index, dtype="datetime64[ns]")


def _regularity(stamps: pd.Series) -> tuple[int, int]:
    """Higher is more regular: (diffs equal to the most common diff, minus distinct diffs)."""
    diffs = stamps.diff().dropna()
    diffs = diffs[diffs != pd.Timedelta(0)]
    if diffs.empty:
        return 0, 0
    counts = diffs.value_counts()
    return int(counts.iloc[0]), -len(counts)


def _parse_dates(raw: _Raw, settings: HistorySettings, issues: _Collector) -> pd.Series:
    """Timestamps (NaT where blank or unparseable), with issues added."""
    values = raw.date
    column = raw.names[0]
    if pd.api.types.is_datetime64_any_dtype(values):
        stamps = pd.Series(_to_ns(pd.Series(values)), index=values.index)
        blank_mask = values.isna().to_numpy()
        bad_mask = stamps.isna().to_numpy() & ~blank_mask
        _report_bad_dates(raw, blank_mask, bad_mask, column, issues, text=values.astype(str))
        return stamps
    text = values.astype(str)
    blank = text.str.strip().eq("")
    filled = text[~blank]
    chosen: str
    if settings.date_format:
        try:
            stamps_f = pd.to_datetime(filled, format=settings.date_format, errors="coerce")
        except (ValueError, TypeError) as exc:
            issues.add(
                "error",
                f"The date format {settings.date_format!r} is not a valid pattern ({exc})",
                column=column,
                fix="Use a strftime pattern such as %Y-%m-%d or %d/%m/%Y %H:%M",
            )
            return pd.Series(pd.NaT, index=values.index, dtype="datetime64[ns]")
        chosen = settings.date_format
        parsed_filled = pd.Series(_to_ns(stamps_f), index=filled.index)
    else:
        sample = pd.concat([filled.head(200), filled.tail(200)]).reset_index(drop=True)
        candidates: list[tuple[str, pd.Series]] = []
        best_partial: tuple[int, str, pd.Series] | None = None
        for part in (*_DATE_PARTS, "ISO8601"):
            if part == "ISO8601" and candidates:
                break
            parse = _parse_iso8601 if part == "ISO8601" else lambda v, p=part: _parse_family(v, p)
            if len(sample) and parse(sample).notna().mean() < 0.5:
                continue
            full = parse(filled)
            good = int(full.notna().sum())
            if good == len(filled):
                candidates.append((part, full))
            elif best_partial is None or good > best_partial[0]:
                best_partial = (good, part, full)
        if candidates:
            if len(candidates) > 1:
                scored = sorted(candidates, key=lambda c: _regularity(c[1]), reverse=True)
                chosen, parsed_filled = scored[0]
                others = ", ".join(_READABLE.get(c[0], c[0]) for c in scored[1:])
                issues.add(
                    "info",
                    f"The dates could be read as {_READABLE.get(chosen, chosen)} or as {others}; "
                    f"{_READABLE.get(chosen, chosen)} was chosen because it gives the most "
                    "regularly spaced dates",
                    column=column,
                    fix=f"If that is wrong, set date_format, e.g. {scored[1][0]!r}",
                )
            else:
                chosen, parsed_filled = candidates[0]
        elif best_partial is not None:
            _, chosen, parsed_filled = best_partial
        else:
            chosen, parsed_filled = (
                "",
                pd.Series(pd.NaT, index=filled.index, dtype="datetime64[ns]"),
            )
    stamps = pd.Series(pd.NaT, index=values.index, dtype="datetime64[ns]")
    stamps.loc[parsed_filled.index] = parsed_filled
    bad = (~blank & stamps.isna()).to_numpy()
    _report_bad_dates(raw, blank.to_numpy(), bad, column, issues, text=text, chosen=chosen)
    if chosen and not bad.all():
        logger.debug("date format chosen: %s", chosen)
    return stamps


def _report_bad_dates(
    raw: _Raw,
    blank: np.ndarray,
    bad: np.ndarray,
    column: str,
    issues: _Collector,
    *,
    text: pd.Series | None = None,
    chosen: str = "",
) -> None:
    blank_pos = np.flatnonzero(blank)
    if len(blank_pos):
        issues.many(
            "error",
            lambda i: ("The date is blank", {"row": int(raw.rows[blank_pos[i]])}),
            len(blank_pos),
            kind="rows with a blank date",
            fix="Fill in the date or delete the row",
            column=column,
            rows=[int(raw.rows[p]) for p in blank_pos],
        )
    bad_pos = np.flatnonzero(bad)
    if len(bad_pos):
        layout = _READABLE.get(chosen, chosen) if chosen else "any known date format"
        issues.many(
            "error",
            lambda i: (
                f"The date {text.iloc[bad_pos[i]]!r} cannot be read as {layout}"
                if text is not None
                else "The date cannot be read",
                {"row": int(raw.rows[bad_pos[i]])},
            ),
            len(bad_pos),
            kind="unreadable dates",
            fix="Write every date in one format, e.g. YYYY-MM-DD, or set date_format to the "
            "file's pattern",
            column=column,
            rows=[int(raw.rows[p]) for p in bad_pos],
        )


_DECIMAL_COMMA = re.compile(r"^[+-]?\d+,\d+$")
_THOUSANDS = re.compile(r"^[+-]?\d{1,3}(,\d{3})+(\.\d+)?$")


def _parse_numbers(
    values: pd.Series,
    raw: _Raw,
    stamps: pd.Series,
    column: str,
    label: str,
    issues: _Collector,
) -> tuple[np.ndarray, np.ndarray]:
    """Floats (NaN for blanks and bad cells) and a mask of blank cells."""
    if pd.api.types.is_numeric_dtype(values):
        numbers = np.array(pd.to_numeric(values, errors="coerce"), dtype=float)
        return numbers, np.isnan(numbers)
    text = pd.Series([str(v).strip() for v in values], index=values.index, dtype=object)
    blank = np.fromiter((v.lower() in _MISSING_TOKENS for v in text), dtype=bool, count=len(text))
    try:  # fast path: every filled cell is a plain number
        numbers = np.array(np.where(blank, "nan", text.to_numpy()), dtype=float)
    except ValueError:
        numbers = np.array(pd.to_numeric(text.where(~blank, None), errors="coerce"), dtype=float)
    bad = ~blank & np.isnan(numbers)
    if bad.any():
        cleaned = text[bad].str.replace(r"[\s_]", "", regex=True)
        fixed = cleaned.map(
            lambda s: (
                s.replace(",", ".")
                if _DECIMAL_COMMA.match(s)
                else (s.replace(",", "") if _THOUSANDS.match(s) else s)
            )
        )
        numbers[bad] = np.array(pd.to_numeric(fixed, errors="coerce"), dtype=float)
    infinite = ~np.isnan(numbers) & ~np.isfinite(numbers)
    numbers[infinite] = np.nan
    bad = ~blank & np.isnan(numbers)
    bad_pos = np.flatnonzero(bad)
    if len(bad_pos):
        issues.many(
            "error",
            lambda i: (
                f"The {label} {text.iloc[bad_pos[i]]!r} is not a number",
                {"row": int(raw.rows[bad_pos[i]]), "date": _iso(stamps.iloc[bad_pos[i]])},
            ),
            len(bad_pos),
            kind=f"non-numeric {label} values",
            fix="Write plain numbers such as 1450.5 (no units or text); leave the cell blank if "
            "the value is missing",
            column=column,
            rows=[int(raw.rows[p]) for p in bad_pos],
        )
    return numbers, blank


def _iso(stamp: Any) -> str | None:
    if stamp is None or pd.isna(stamp):
        return None
    return pd.Timestamp(stamp).strftime("%Y-%m-%d")


def _runs(mask: np.ndarray) -> list[tuple[int, int]]:
    """(start, end) inclusive positions of True runs."""
    if not mask.any():
        return []
    padded = np.concatenate([[False], mask, [False]]).astype(np.int8)
    change = np.diff(padded)
    starts = np.flatnonzero(change == 1)
    ends = np.flatnonzero(change == -1) - 1
    return list(zip(starts.tolist(), ends.tolist(), strict=True))


# --------------------------------------------------------------------------------------------
# The check itself
# --------------------------------------------------------------------------------------------


def _analyse(source: Any, settings: HistorySettings) -> tuple[HistoryReport, pd.DataFrame | None]:
    issues = _Collector()
    if isinstance(source, pd.DataFrame):
        raw = _raw_from_frame(source, settings, issues)
    else:
        text = _read_text(source, issues)
        raw = None if text is None else _raw_from_text(text, settings, issues)
    if raw is None:
        return issues.report(), None
    if len(raw.rows) == 0:
        issues.add(
            "error", "The history has a header but no data rows", fix="Choose a file with data"
        )
        return issues.report(), None
    date_name, demand_name, temp_name = raw.names

    stamps = _parse_dates(raw, settings, issues)
    demand, demand_blank = _parse_numbers(raw.demand, raw, stamps, demand_name, "demand", issues)
    temp, temp_blank = _parse_numbers(
        raw.temperature, raw, stamps, temp_name, "temperature", issues
    )

    # Units and plausibility (rows still in file order).
    if settings.temp_unit == "F":
        temp = (temp - 32.0) * 5.0 / 9.0
    implausible = np.flatnonzero(~np.isnan(temp) & ((temp < TEMP_MIN_C) | (temp > TEMP_MAX_C)))
    if len(implausible):
        hint = (
            " If the file is in °F, set temp_unit to 'F'"
            if settings.temp_unit == "C" and np.nanmax(temp) > TEMP_MAX_C
            else ""
        )
        issues.many(
            "error",
            lambda i: (
                f"The temperature {temp[implausible[i]]:.1f} °C is outside the plausible range "
                f"{TEMP_MIN_C:.0f} to {TEMP_MAX_C:.0f} °C",
                {"row": int(raw.rows[implausible[i]]), "date": _iso(stamps.iloc[implausible[i]])},
            ),
            len(implausible),
            kind="implausible temperatures",
            fix="Correct the value or leave the cell blank." + hint,
            column=temp_name,
            rows=[int(raw.rows[p]) for p in implausible],
        )
    nonpositive = np.flatnonzero(~np.isnan(demand) & (demand <= 0))
    if len(nonpositive):
        issues.many(
            "error",
            lambda i: (
                f"The demand is {demand[nonpositive[i]]:g}; it must be above zero because the "
                "model works with the logarithm of demand",
                {"row": int(raw.rows[nonpositive[i]]), "date": _iso(stamps.iloc[nonpositive[i]])},
            ),
            len(nonpositive),
            kind="zero or negative demand values",
            fix="Correct the value, or leave the cell blank to mark the day as missing",
            column=demand_name,
            rows=[int(raw.rows[p]) for p in nonpositive],
        )

    valid = stamps.notna().to_numpy()
    if not valid.any():
        return issues.report(), None
    rows = raw.rows[valid]
    stamps_v = stamps[valid].reset_index(drop=True)
    demand_v = demand[valid]
    temp_v = temp[valid]
    day = stamps_v.dt.normalize()

    # Daily or sub-daily?
    counts = day.value_counts()
    typical = int(counts.mode().iloc[0])
    if not stamps_v.is_monotonic_increasing:
        issues.add(
            "info",
            "The rows are not in date order; they were sorted by date",
            column=date_name,
            fix="Nothing to do",
        )
    has_time = bool((stamps_v != day).any())
    if typical > 1 and has_time:
        daily = _aggregate(
            day, stamps_v, rows, demand_v, temp_v, typical, settings, raw.names, issues
        )
    else:
        dup_days = counts[counts > 1]
        if len(dup_days):
            dup_list = sorted(dup_days.index)
            day_values = day.to_numpy()
            row_lists = [
                rows[day_values == np.datetime64(d, "ns")].tolist() for d in dup_list[:MAX_LISTED]
            ]
            issues.many(
                "error",
                lambda i: (
                    f"The date appears {len(row_lists[i])} times (rows "
                    f"{', '.join(map(str, row_lists[i]))})",
                    {"row": int(row_lists[i][0]), "date": _iso(dup_list[i])},
                ),
                len(dup_list),
                kind="duplicated dates",
                fix="Keep one row per date in daily data (delete or merge the duplicates)",
                column=date_name,
            )
        if has_time:
            issues.add(
                "info",
                "The dates carry a time of day; with one row per day the time was ignored",
                column=date_name,
                fix="Nothing to do",
            )
        daily = (
            pd.DataFrame({"date": day, "demand": demand_v, "temperature_c": temp_v})
            .groupby("date", sort=True)
            .first()
        )
    if issues.has_errors:
        return issues.report(), None

    frame = _complete_daily(daily, settings, raw.names, issues)
    if frame is None or issues.has_errors:
        return issues.report(), None
    return issues.report(), frame


def _aggregate(
    day: pd.Series,
    stamps: pd.Series,
    rows: np.ndarray,
    demand: np.ndarray,
    temp: np.ndarray,
    typical: int,
    settings: HistorySettings,
    names: tuple[str, str, str],
    issues: _Collector,
) -> pd.DataFrame:
    """Sub-daily rows to daily values, with the issues that go with it."""
    date_name, demand_name, temp_name = names
    table = pd.DataFrame({"date": day, "stamp": stamps, "demand": demand, "temperature_c": temp})
    dup = table["stamp"].duplicated(keep=False).to_numpy()
    if dup.any():
        dup_pos = np.flatnonzero(dup)
        issues.many(
            "warning",
            lambda i: (
                f"The time {stamps.iloc[dup_pos[i]]:%Y-%m-%d %H:%M} appears more than once; all "
                "its readings were used in the daily value",
                {"row": int(rows[dup_pos[i]]), "date": _iso(day.iloc[dup_pos[i]])},
            ),
            len(dup_pos),
            kind="repeated times",
            fix="Check for a daylight-saving change or duplicated rows",
            column=date_name,
            rows=[int(rows[p]) for p in dup_pos],
        )
    grouped = table.groupby("date", sort=True)
    if settings.subdaily_demand == "peak":
        demand_daily = grouped["demand"].max()
        how = "the daily peak (maximum)"
    else:
        demand_daily = grouped["demand"].sum(min_count=1)
        how = "the daily total (sum)"
    if settings.temp_kind == "max":
        temp_daily = grouped["temperature_c"].max()
        temp_how = "the daily maximum"
    else:
        temp_daily = grouped["temperature_c"].mean()
        temp_how = "the daily mean"
    issues.add(
        "info",
        f"The file has {typical} readings on a typical day; they were aggregated to one value per "
        f"day: demand as {how}, temperature as {temp_how}",
        fix="Set subdaily_demand to 'peak' or 'total' to choose how demand is aggregated",
    )
    present = grouped["demand"].count()
    short = present[present < typical]
    if len(short):
        short_days = list(short.index)
        issues.many(
            "warning",
            lambda i: (
                f"This day has {int(short.iloc[i])} demand readings instead of the usual {typical}; "
                "its daily value may be "
                + ("too low" if settings.subdaily_demand == "total" else "understated"),
                {"date": _iso(short_days[i])},
            ),
            len(short_days),
            kind="days with fewer readings than usual",
            fix="Check the source for missing intervals on these days",
            column=demand_name,
        )
    return pd.DataFrame({"demand": demand_daily, "temperature_c": temp_daily})


def _cut_advice(index: pd.DatetimeIndex, start: int, end: int) -> str:
    """Where to cut the history around the gap index[start..end] to keep the larger part."""
    before = start
    after = len(index) - end - 1
    if after >= before:
        first = index[end + 1] if end + 1 < len(index) else index[end]
        return f"start the history on {first:%Y-%m-%d} or later"
    last = index[start - 1]
    return f"end the history on {last:%Y-%m-%d} or earlier"


def _complete_daily(
    daily: pd.DataFrame,
    settings: HistorySettings,
    names: tuple[str, str, str],
    issues: _Collector,
) -> pd.DataFrame | None:
    date_name, demand_name, temp_name = names
    index = pd.date_range(daily.index.min(), daily.index.max(), freq="D", name="date")
    frame = daily.reindex(index)
    absent = ~index.isin(daily.index)

    # Trim leading and trailing days that lack demand or temperature.
    usable = (frame["demand"].notna() & frame["temperature_c"].notna()).to_numpy()
    if not usable.any():
        issues.add(
            "error",
            "No day has both a demand and a temperature",
            fix="Check that the demand and temperature columns hold numbers",
        )
        return None
    first, last = int(np.argmax(usable)), len(usable) - 1 - int(np.argmax(usable[::-1]))
    if first > 0 or last < len(usable) - 1:
        parts = []
        if first > 0:
            parts.append(
                f"{first} day(s) at the start ({index[0]:%Y-%m-%d} to {index[first - 1]:%Y-%m-%d})"
            )
        if last < len(usable) - 1:
            parts.append(
                f"{len(usable) - 1 - last} day(s) at the end ({index[last + 1]:%Y-%m-%d} to "
                f"{index[-1]:%Y-%m-%d})"
            )
        issues.add(
            "info",
            "Days without both demand and temperature were left out: " + " and ".join(parts),
            fix="Nothing to do; the history runs from the first to the last complete day",
        )
        frame = frame.iloc[first : last + 1]
        absent = absent[first : last + 1]
        index = frame.index

    # Length.
    if len(frame) < MIN_DAYS:
        issues.add(
            "error",
            f"The history covers {len(frame)} days ({index[0]:%Y-%m-%d} to {index[-1]:%Y-%m-%d}); "
            f"at least {MIN_DAYS} days are needed",
            fix="Use at least a full year of daily history so every season is seen",
        )

    # Demand gaps (whole days absent from the file or with a blank demand).
    demand_missing = frame["demand"].isna().to_numpy()
    for a, b in _runs(demand_missing):
        n = b - a + 1
        span = f"{index[a]:%Y-%m-%d}" if n == 1 else f"{index[a]:%Y-%m-%d} to {index[b]:%Y-%m-%d}"
        gap_absent = absent[a : b + 1]
        if gap_absent.all():
            cause = "absent from the file"
        elif not gap_absent.any():
            cause = "blank in the file"
        else:
            cause = "blank or absent"
        if n > settings.max_demand_gap_days:
            issues.add(
                "error",
                f"Demand is missing for {n} days in a row ({span}, {cause}), more than the "
                f"{settings.max_demand_gap_days} allowed",
                date=f"{index[a]:%Y-%m-%d}",
                column=demand_name,
                fix=f"To use this file, {_cut_advice(index, a, b)}; or fill the gap, or raise "
                "max_demand_gap_days",
            )
        else:
            issues.add(
                "warning",
                f"Demand is missing for {n} day(s) ({span}, {cause}); kept as missing values",
                date=f"{index[a]:%Y-%m-%d}",
                column=demand_name,
                fix="Nothing to do; the model skips missing days. Fill them in if you have the data",
            )

    # Temperature gaps: short ones interpolated linearly, long ones are errors.
    temp_missing = frame["temperature_c"].isna().to_numpy()
    for a, b in _runs(temp_missing):
        n = b - a + 1
        span = f"{index[a]:%Y-%m-%d}" if n == 1 else f"{index[a]:%Y-%m-%d} to {index[b]:%Y-%m-%d}"
        if n > settings.max_temp_gap_days:
            issues.add(
                "error",
                f"Temperature is missing for {n} days in a row ({span}), more than the "
                f"{settings.max_temp_gap_days} that can be filled",
                date=f"{index[a]:%Y-%m-%d}",
                column=temp_name,
                fix=f"Fill the gap from a nearby weather station, or {_cut_advice(index, a, b)}; "
                "or raise max_temp_gap_days",
            )
        else:
            issues.add(
                "warning",
                f"Temperature is missing for {n} day(s) ({span}); filled by straight-line "
                "interpolation between the neighbouring days",
                date=f"{index[a]:%Y-%m-%d}",
                column=temp_name,
                fix="Nothing to do; supply the observed values if you have them",
            )
    if issues.has_errors:
        return None
    frame = frame.copy()
    frame["temperature_filled"] = temp_missing
    if temp_missing.any():
        frame["temperature_c"] = frame["temperature_c"].interpolate(method="linear")
    frame["demand"] = frame["demand"].astype(float)
    frame["temperature_c"] = frame["temperature_c"].astype(float)
    frame.index = pd.DatetimeIndex(frame.index, freq="D", name="date")
    return frame[["demand", "temperature_c", "temperature_filled"]]


def _analyse_safely(
    source: Any, settings: HistorySettings
) -> tuple[HistoryReport, pd.DataFrame | None]:
    """:func:`_analyse`, with any unforeseen failure turned into an error in the report."""
    try:
        return _analyse(source, settings)
    except Exception as exc:  # noqa: BLE001 - the user must get a report, never a traceback
        logger.exception("unexpected failure while checking a history")
        issue = Issue(
            "error",
            f"The history could not be checked because of an unexpected problem ({exc})",
            fix="Check that the file is a plain CSV table; if it is, report this to the "
            "loadcore maintainers with the file",
        )
        return HistoryReport((issue,)), None


def _fingerprint(frame: pd.DataFrame) -> str:
    """sha256 over the day numbers and the float/bool values, independent of time resolution."""
    digest = hashlib.sha256()
    days = np.asarray(frame.index.values.astype("datetime64[D]").astype(np.int64), dtype="<i8")
    digest.update(days.tobytes())
    for name in ("demand", "temperature_c", "temperature_filled"):
        if name not in frame:
            continue
        digest.update(name.encode())
        values = frame[name].to_numpy()
        if name == "temperature_filled":
            digest.update(np.asarray(values, dtype=np.uint8).tobytes())
        else:
            arr = np.asarray(values, dtype="<f8").copy()
            arr[np.isnan(arr)] = np.nan  # one canonical NaN bit pattern
            digest.update(arr.tobytes())
    return digest.hexdigest()


# --------------------------------------------------------------------------------------------
# Public functions
# --------------------------------------------------------------------------------------------


def check_history(source: Any, settings: HistorySettings = HistorySettings()) -> HistoryReport:  # noqa: B008
    """Check a history without raising for problems in the data.

    Parameters
    ----------
    source : path, file-like, bytes or DataFrame
        The history.
    settings : HistorySettings
        Column names, units and limits.

    Returns
    -------
    HistoryReport
        Every error, warning and note found.
    """
    report, _ = _analyse_safely(source, settings)
    return report


def read_history(source: Any, settings: HistorySettings = HistorySettings()) -> History:  # noqa: B008
    """Read and validate a history into a complete daily table.

    Parameters
    ----------
    source : path, file-like, bytes or DataFrame
        CSV with a date column, a demand column (in ``settings.demand_unit``) and a temperature
        column (°C or °F per ``settings.temp_unit``); daily or sub-daily rows.
    settings : HistorySettings
        Column names, units and limits.

    Returns
    -------
    History
        The daily table, the settings, the report and the data's fingerprint.

    Raises
    ------
    HistoryError
        When the report has errors; ``err.report`` holds the full report.
    """
    report, frame = _analyse_safely(source, settings)
    if frame is None or not report.ok:
        errors = report.errors
        first = errors[0] if errors else Issue("error", "The history could not be read")
        more = (
            f" (and {len(errors) - 1} more problem(s); see the report)" if len(errors) > 1 else ""
        )
        raise HistoryError(
            first.message + more,
            report=report,
            where=first.where() or _source_label(source),
            fix=first.fix or None,
        )
    for issue in report.warnings:
        logger.info("history warning: %s", issue.message)
    return History(frame=frame, settings=settings, report=report)


def history_from_frame(
    frame: pd.DataFrame,
    settings: HistorySettings | None = None,
    report: HistoryReport | None = None,
) -> History:
    """Build a History from an already-daily frame.

    Parameters
    ----------
    frame : pandas.DataFrame
        Daily ``DatetimeIndex`` (or a ``date`` column) and columns ``demand`` (MW) and
        ``temperature_c`` (°C); optional ``temperature_filled`` (bool). Missing dates are added
        with NaN demand; temperature must be present on every day.
    settings, report : optional
        Kept on the History as given (defaults: ``HistorySettings()`` and an empty report).

    Raises
    ------
    HistoryError
        If columns are missing, dates repeat or are not daily, temperature is missing or demand
        is not positive.
    """
    settings = settings or HistorySettings()
    data = frame.copy()
    if "date" in data.columns:
        data = data.set_index("date")
    for name in ("demand", "temperature_c"):
        if name not in data.columns:
            raise HistoryError(
                f"The table has no {name!r} column",
                where="columns: " + ", ".join(map(str, data.columns)),
                fix="Give columns 'demand' (MW) and 'temperature_c' (°C) on a daily date index",
            )
    try:
        index = pd.DatetimeIndex(data.index)
    except (TypeError, ValueError) as exc:
        raise HistoryError(
            "The table's index is not made of dates",
            where="index",
            fix="Index the table by date (a DatetimeIndex)",
        ) from exc
    if index.hasnans or index.has_duplicates:
        raise HistoryError(
            "The table's dates have blanks or repeats",
            where="index",
            fix="Give one row per date",
        )
    if (index != index.normalize()).any():
        raise HistoryError(
            "The table's dates carry times of day", where="index", fix="Use whole dates"
        )
    data.index = index
    data = data.sort_index()
    full = pd.date_range(data.index[0], data.index[-1], freq="D", name="date")
    data = data.reindex(full)
    demand = pd.to_numeric(data["demand"], errors="coerce").astype(float)
    temp = pd.to_numeric(data["temperature_c"], errors="coerce").astype(float)
    missing_temp = temp.isna().to_numpy()
    for a, b in _runs(missing_temp):
        if a == 0 or b == len(temp) - 1 or b - a + 1 > settings.max_temp_gap_days:
            raise HistoryError(
                f"Temperature is missing for {b - a + 1} day(s) and cannot be filled",
                where=f"date {temp.index[a]:%Y-%m-%d}",
                fix=f"Give a temperature_c value on every day (gaps of up to "
                f"{settings.max_temp_gap_days} days inside the history are interpolated)",
            )
    if missing_temp.any():
        temp = temp.interpolate(method="linear")
    if (demand <= 0).any():
        bad = demand.index[(demand <= 0).to_numpy()][0]
        raise HistoryError(
            "Demand must be above zero",
            where=f"date {bad:%Y-%m-%d}",
            fix="Correct the value or set it to NaN to mark it missing",
        )
    filled = (
        data["temperature_filled"].fillna(False).astype(bool)
        if "temperature_filled" in data.columns
        else pd.Series(False, index=full)
    ) | missing_temp
    out = pd.DataFrame(
        {
            "demand": demand.to_numpy(),
            "temperature_c": temp.to_numpy(),
            "temperature_filled": filled.to_numpy(),
        },
        index=pd.DatetimeIndex(full, freq="D", name="date"),
    )
    return History(frame=out, settings=settings, report=report or HistoryReport())
