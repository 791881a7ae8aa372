"""The place of a reading within its day, from a separate hour or time-of-day column.

Many utility files give one row per hour with the date in one column and the hour in another.
Two numberings are in use (common practice, no source): *hour ending* 1-24, where hour 1 is
00:00-01:00 and hour 24 is the last hour of the same date, and *hour beginning* 0-23, where hour
0 is 00:00-01:00. Which one a file uses is read from its values: a 0 means hour beginning, a
number equal to the readings per day (24) means hour ending; both together is an error. Half-
and quarter-hour periods (1-48, 0-95, ...) follow the same rule. On the autumn daylight-saving
day an hour-ending file may have an hour 25 (an hour-beginning file an hour 24): one such day a
year is read as that extra hour of the same date.

A time-of-day column holds ``HH:MM`` or ``HH:MM:SS``; ``24:00`` without any ``00:00`` marks
times that end their interval.

Either way the result is an offset from midnight of the row's own date to the start of the
reading's interval, so every reading stays on the date its date column gives.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from loadcore.history.report import Collector, iso_date
from loadcore.history.settings import name_the_column

_NUMBER = r"^\s*(\d{1,3})(?:\.0*)?\s*$"
_TIME = r"^\s*(\d{1,2}):(\d{2})(?::(\d{2}))?\s*$"
_DAY_NS = 86_400 * 10**9
#: Readings per day that a period number may count up to: hours, half hours, quarter hours.
_SLOTS_PER_DAY = (24, 48, 96)


@dataclass(frozen=True)
class WithinDay:
    """Offsets from midnight of each row's date, and how the column was read.

    Attributes
    ----------
    offset : numpy.ndarray
        ``timedelta64[ns]`` from the row's date to the start of its interval; NaT where the
        cell could not be read (an error in the report).
    layout : str
        How the values were read, in words (for the report).
    """

    offset: np.ndarray
    layout: str


def _nat(n: int) -> np.ndarray:
    return np.full(n, np.timedelta64("NaT"), dtype="timedelta64[ns]")


def _report_bad(
    issues: Collector,
    bad: np.ndarray,
    rows: np.ndarray,
    days: pd.Series,
    text: pd.Series,
    column: str,
    expected: str,
) -> None:
    bad_pos = np.flatnonzero(bad)
    if not len(bad_pos):
        return
    issues.many(
        "error",
        lambda i: (
            f"The hour {text.iloc[bad_pos[i]]!r} cannot be read as {expected}"
            if text.iloc[bad_pos[i]]
            else "The hour is blank",
            {"row": int(rows[bad_pos[i]]), "date": iso_date(days.iloc[bad_pos[i]])},
        ),
        len(bad_pos),
        kind="unreadable hours",
        fix="Write every hour in one way: a whole number (1-24 or 0-23) or a time such as 13:00",
        column=column,
        rows=[int(rows[p]) for p in bad_pos],
    )


def _extra_hour_days(days: pd.Series, mask: np.ndarray) -> bool:
    """Whether the rows in ``mask`` fall on at most one date per calendar year (an extra hour on
    the autumn daylight-saving day, not a numbering)."""
    if not mask.any():
        return True
    dates = pd.DatetimeIndex(days[mask].unique())
    return bool(pd.Series(dates.year).value_counts().max() <= 1)


def _numbers(
    values: np.ndarray, days: pd.Series, column: str, issues: Collector
) -> tuple[np.ndarray, str] | None:
    """Offsets (ns) for period numbers, and the layout; None (an error added) if ambiguous."""
    top = int(values.max())
    slots = next((s for s in _SLOTS_PER_DAY if top <= s + 1), None)
    if slots is None:
        issues.add(
            "error",
            f"The hour column holds numbers up to {top}; hours run 1-24 or 0-23 (half hours "
            "1-48 or 0-47)",
            column=column,
            fix="Check that the column of hour numbers is the one named: "
            + name_the_column("hour_col"),
        )
        return None
    step = _DAY_NS // slots
    what = {24: "hour", 48: "half-hour period", 96: "quarter-hour period"}[slots]
    minutes = step // (60 * 10**9)
    first = f"00:00-{minutes // 60:02d}:{minutes % 60:02d}"
    has_zero = bool((values == 0).any())
    at_top = values == slots
    beyond = values == slots + 1
    if has_zero and beyond.any():
        issues.add(
            "error",
            f"The hour column holds both 0 and {slots + 1}",
            column=column,
            fix=f"Number the {what}s 1-{slots} (ending) or 0-{slots - 1} (beginning)",
        )
        return None
    if has_zero and at_top.any() and not _extra_hour_days(days, at_top):
        issues.add(
            "error",
            f"The hour column holds both 0 and {slots} on many dates, so it is neither "
            f"numbered 0-{slots - 1} (hour beginning) nor 1-{slots} (hour ending)",
            column=column,
            fix=f"Check the rows with {what} 0 or {slots}; each date should use one numbering",
        )
        return None
    if has_zero:
        layout = (
            f"{what} numbers 0-{slots - 1}, read as numbered by their start ({what} 0 is "
            f"{first}; hour beginning)"
        )
        offsets = values * step
    else:
        if beyond.any() and not _extra_hour_days(days, beyond):
            issues.add(
                "error",
                f"The hour column holds {what} {slots + 1} on more than one date a year",
                column=column,
                fix=f"Number the {what}s 1-{slots}; {slots + 1} is only read as the extra hour "
                "of the autumn daylight-saving day",
            )
            return None
        layout = (
            f"{what} numbers 1-{slots}, read as numbered by their end ({what} 1 is {first} and "
            f"{what} {slots} the last of the same date; hour ending)"
        )
        offsets = (values - 1) * step
    return offsets, layout


def _times(
    hours: np.ndarray, minutes: np.ndarray, seconds: np.ndarray, column: str, issues: Collector
) -> tuple[np.ndarray, str] | None:
    """Offsets (ns) for times of day, and the layout; None (an error added) if ambiguous."""
    ns = ((hours * 60 + minutes) * 60 + seconds) * 10**9
    has_midnight = bool((ns == 0).any())
    has_end = bool((ns == _DAY_NS).any())
    if has_midnight and has_end:
        issues.add(
            "error",
            "The time column holds both 00:00 and 24:00",
            column=column,
            fix="Write midnight one way: 00:00 for times that start their interval, 24:00 for "
            "times that end it",
        )
        return None
    if not has_end:
        return ns, "times of day, read as the start of each reading's interval"
    distinct = np.unique(ns)
    gaps = np.diff(distinct)
    step = int(np.min(gaps)) if len(gaps) else _DAY_NS
    return ns - step, "times of day running to 24:00, read as the end of each reading's interval"


def within_day(
    values: pd.Series, rows: np.ndarray, days: pd.Series, column: str, issues: Collector
) -> WithinDay:
    """Read an hour or time-of-day column into offsets from midnight of each row's date.

    Parameters
    ----------
    values : pandas.Series
        The column as read (text or numbers), one per row.
    rows : numpy.ndarray
        The rows' 1-based data row numbers (for messages).
    days : pandas.Series
        Each row's date (from the date column), for messages and the once-a-year extra hour.
    column : str
        The column's name in the file.
    issues : Collector
        Where the layout found and any unreadable cells are reported.

    Returns
    -------
    WithinDay
    """
    n = len(values)
    if pd.api.types.is_numeric_dtype(values):
        text = pd.Series(values).astype(str).str.replace(r"\.0+$", "", regex=True)
    else:
        text = pd.Series(values).astype(str)
    text = text.reset_index(drop=True)
    days = days.reset_index(drop=True)
    # An hour column has few distinct values: read each once (79,000 rows, about 100 values).
    codes, distinct = pd.factorize(text.str.strip() if len(text) else text)
    distinct = pd.Series(np.asarray(distinct, dtype=object), dtype=object).astype(str)
    number = pd.to_numeric(distinct.str.extract(_NUMBER)[0], errors="coerce").to_numpy()[codes]
    clock = distinct.str.extract(_TIME).apply(pd.to_numeric, errors="coerce").to_numpy()[codes]
    is_number = ~np.isnan(number)
    is_time = ~np.isnan(clock[:, 0])
    offsets = _nat(n)
    layout = ""
    if is_number.sum() >= is_time.sum():
        expected = "a whole hour number"
        ok = is_number
        if ok.any():
            read = _numbers(number[ok].astype(np.int64), days[ok], column, issues)
            if read is None:
                return WithinDay(offsets, "")
            offsets[ok] = read[0].astype("timedelta64[ns]")
            layout = read[1]
    else:
        expected = "a time of day such as 13:00 or 13:00:00"
        h, m, sec = clock[:, 0], clock[:, 1], np.nan_to_num(clock[:, 2])
        with np.errstate(invalid="ignore"):
            ok = is_time & (m < 60) & (sec < 60) & ((h < 24) | ((h == 24) & (m == 0) & (sec == 0)))
        read = _times(
            h[ok].astype(np.int64), m[ok].astype(np.int64), sec[ok].astype(np.int64), column, issues
        )
        if read is None:
            return WithinDay(offsets, "")
        offsets[ok] = read[0].astype("timedelta64[ns]")
        layout = read[1]
    _report_bad(issues, ~ok, rows, days, text, column, expected)
    if layout:
        issues.add(
            "info",
            f"The column {column!r} holds {layout}",
            column=column,
            fix="If the numbering is not what the file means, check the column with the "
            "utility's data description",
        )
    return WithinDay(offsets, layout)
