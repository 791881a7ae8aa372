"""Parsing the raw columns: dates (format detected or forced) and numbers.

Dates: every layout in :data:`DATE_LAYOUTS` (with any of the time layouts) and ISO 8601 is tried;
when several read every date, the one giving the most regularly spaced dates wins and the report
says so. A trailing UTC offset is dropped so each reading stays on its local day. Numbers: plain
numbers, decimal commas and thousands separators; missing-value tokens such as ``n/a`` are blanks.
"""

from __future__ import annotations

import logging
import re
from functools import lru_cache

import numpy as np
import pandas as pd

from loadcore.errors import clip, quote
from loadcore.history import numbers as layout
from loadcore.history.reading import RawColumns
from loadcore.history.report import Collector, iso_date
from loadcore.history.settings import HistorySettings

logger = logging.getLogger(__name__)

# Dates outside this span are taken as misread rather than as history.
EARLIEST = "1900-01-01"
LATEST = "2199-12-31"
_MISSING_TOKENS = {"", "na", "n/a", "nan", "null", "none", "-", "--", "?", "#n/a"}

DATE_LAYOUTS = (
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


def _utc_days_if_shifted(values: pd.Series, column: str, issues: Collector) -> pd.Series:
    """Time-zone-aware dates are read as local wall-clock times, except when every one falls at
    midnight UTC but not at local midnight: those are UTC days shown in a local zone (UTC
    midnights in a US zone fall in the evening of the day before), and are read as UTC days."""
    if not isinstance(values.dtype, pd.DatetimeTZDtype):
        return values
    filled = values.dropna()
    if filled.empty:
        return values
    local = filled.dt.tz_localize(None)
    utc = filled.dt.tz_convert("UTC").dt.tz_localize(None)
    if (local != local.dt.normalize()).any() and (utc == utc.dt.normalize()).all():
        issues.add(
            "warning",
            f"The dates are in the time zone {values.dt.tz} but every one is midnight UTC "
            f"(e.g. {filled.iloc[0]:%Y-%m-%d %H:%M} there is {utc.iloc[0]:%Y-%m-%d} UTC); "
            "they were read as UTC days",
            column=column,
            fix="If the days are local days, give the dates at local midnight",
        )
        return values.dt.tz_convert("UTC")
    return values


def parse_dates(raw: RawColumns, settings: HistorySettings, issues: Collector) -> pd.Series:
    """Timestamps (NaT where blank or unparseable), with issues added."""
    values = raw.date
    column = raw.names[0]
    if pd.api.types.is_datetime64_any_dtype(values):
        values = _utc_days_if_shifted(pd.Series(values), column, issues)
        stamps = pd.Series(_to_ns(pd.Series(values)), index=values.index)
        blank_mask = values.isna().to_numpy()
        bad_mask = stamps.isna().to_numpy() & ~blank_mask
        _report_bad_dates(raw, blank_mask, bad_mask, column, issues, text=values.astype(str))
        return stamps
    text = values.astype(str)
    blank = text.str.strip().eq("")
    # Sub-daily files with an hour column repeat every date many times: each distinct text is
    # parsed once and the result spread back to its rows.
    codes, distinct = pd.factorize(text[~blank])
    filled = pd.Series(np.asarray(distinct, dtype=object), dtype=object)
    chosen: str
    if settings.date_format:
        try:
            stamps_f = pd.to_datetime(filled, format=settings.date_format, errors="coerce")
        except (ValueError, TypeError) as exc:
            issues.add(
                "error",
                f"The date format {quote(settings.date_format)} is not a valid pattern ({clip(exc)})",
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
        for part in (*DATE_LAYOUTS, "ISO8601"):
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
                    fix=f"If that is wrong, set date_format, e.g. {quote(scored[1][0])}",
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
    stamps.loc[~blank] = parsed_filled.to_numpy(dtype="datetime64[ns]")[codes]
    bad = (~blank & stamps.isna()).to_numpy()
    _report_bad_dates(raw, blank.to_numpy(), bad, column, issues, text=text, chosen=chosen)
    if chosen and not bad.all():
        logger.debug("date format chosen: %s", chosen)
    return stamps


def _report_bad_dates(
    raw: RawColumns,
    blank: np.ndarray,
    bad: np.ndarray,
    column: str,
    issues: Collector,
    *,
    text: pd.Series,
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
                f"The date {quote(text.iloc[bad_pos[i]])} cannot be read as {layout}",
                {"row": int(raw.rows[bad_pos[i]])},
            ),
            len(bad_pos),
            kind="unreadable dates",
            fix="Write every date in one format, e.g. YYYY-MM-DD, or set date_format to the "
            "file's pattern",
            column=column,
            rows=[int(raw.rows[p]) for p in bad_pos],
        )


def _table_numbers(
    values: pd.Series,
    raw: RawColumns,
    stamps: pd.Series,
    column: str,
    label: str,
    issues: Collector,
) -> np.ndarray:
    """A numeric column of a DataFrame: true/false values and infinities are errors, as a file's
    text would be."""
    if pd.api.types.is_bool_dtype(values):
        issues.add(
            "error",
            f"The {label} column holds true/false values, not numbers",
            column=column,
            fix=f"Give the {label} as numbers",
        )
        return np.full(len(values), np.nan)
    numbers = np.array(pd.to_numeric(values, errors="coerce"), dtype=float)
    infinite = np.flatnonzero(np.isinf(numbers))
    if len(infinite):
        issues.many(
            "error",
            lambda i: (
                f"The {label} is {numbers[infinite[i]]:g}, not a finite number",
                {"row": int(raw.rows[infinite[i]]), "date": iso_date(stamps.iloc[infinite[i]])},
            ),
            len(infinite),
            kind=f"infinite {label} values",
            fix="Give finite numbers; leave the value missing (NaN) if it is not known",
            column=column,
            rows=[int(raw.rows[p]) for p in infinite],
        )
        numbers[infinite] = np.nan
    return numbers


def parse_numbers(
    values: pd.Series,
    raw: RawColumns,
    stamps: pd.Series,
    column: str,
    label: str,
    issues: Collector,
    *,
    decimal: str | None = None,
    other: pd.Series | None = None,
) -> np.ndarray:
    """Floats, NaN for blanks and bad cells (each bad cell an error naming row, date, column).

    Text cells are read in one layout for the whole column (:mod:`loadcore.history.numbers`):
    ``decimal`` (``"."`` or ``","``) when given, else decided from the column's values and, when
    they do not tell, from ``other`` (the file's other number column).
    """
    if pd.api.types.is_numeric_dtype(values):
        return _table_numbers(values, raw, stamps, column, label, issues)
    if decimal != ",":
        try:  # fastest path: every cell is a plain finite number (most clean files)
            plain = np.asarray(values.to_numpy(dtype=object), dtype=float)
            if np.isfinite(plain).all():
                return plain
        except (ValueError, TypeError):
            pass
    text = pd.Series([str(v).strip() for v in values], index=values.index, dtype=object)
    blank = np.fromiter((v.lower() in _MISSING_TOKENS for v in text), dtype=bool, count=len(text))
    cells = text[~blank].map(layout.clean)
    own = layout.evidence(cells)
    seen = None
    if decimal is None and own.either and own.decimal is None and other is not None:
        other_text = other.astype(str).str.strip()
        seen = layout.evidence(
            other_text[~other_text.str.lower().isin(_MISSING_TOKENS)].map(layout.clean)
        )
    decision = layout.decide(own, seen, label, decimal)
    if decision.problem:
        issues.add("error", decision.problem, column=column, fix=decision.fix)
        return np.full(len(text), np.nan)
    if decision.note:
        issues.add(
            "info",
            decision.note,
            column=column,
            fix="If that is wrong, set decimal to '.' or ',' (CLI --decimal)",
        )
    numbers = np.full(len(text), np.nan)
    numbers[~blank] = layout.to_numbers(cells, decision.decimal)
    infinite = ~np.isnan(numbers) & ~np.isfinite(numbers)
    numbers[infinite] = np.nan
    bad = ~blank & np.isnan(numbers)
    bad_pos = np.flatnonzero(bad)
    if len(bad_pos):
        issues.many(
            "error",
            lambda i: (
                f"The {label} {quote(text.iloc[bad_pos[i]])} is not a number",
                {"row": int(raw.rows[bad_pos[i]]), "date": iso_date(stamps.iloc[bad_pos[i]])},
            ),
            len(bad_pos),
            kind=f"non-numeric {label} values",
            fix="Write plain numbers such as 1450.5 (no units or text); leave the cell blank if "
            "the value is missing",
            column=column,
            rows=[int(raw.rows[p]) for p in bad_pos],
        )
    return numbers
