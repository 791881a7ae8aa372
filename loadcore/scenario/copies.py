"""Copy the same days of an earlier year into a window ("last July's weather, next July").

:func:`copy_same_days` finds the most recent earlier year whose same calendar days lie wholly
inside the history and copies their temperatures into the window, aligned either by date
(1 July onto 1 July) or by weekday (the nearest day with the same weekday, at most 3 days away,
so that weekends fall on weekends). The planner's choice is a typed value, :class:`Alignment`.
"""

from __future__ import annotations

from enum import Enum
from typing import Any

import pandas as pd

from ..errors import ScenarioError
from .paths import _history_temperature, copy_period
from .values import check_days, iso, parse_date


class Alignment(Enum):
    """How copied days line up with the window's days."""

    #: Each window day gets the same calendar date's temperature.
    BY_DATE = "by date"
    #: Each window day gets the temperature of the nearest day with the same weekday (the
    #: copied period moves by at most 3 days).
    BY_WEEKDAY = "by weekday"


def _same_date(day: pd.Timestamp, years_back: int) -> pd.Timestamp:
    """``day`` moved back by whole years (29 February becomes 28 February)."""
    return pd.Timestamp(day - pd.DateOffset(years=years_back))


def _weekday_shift(source: pd.Timestamp, target: pd.Timestamp) -> int:
    """Days (-3..3) to move ``source`` so it falls on ``target``'s weekday."""
    d = (target.day_of_week - source.day_of_week) % 7
    return d - 7 if d > 3 else d


def same_days_source(
    history: Any, start: Any, days: int, alignment: Alignment = Alignment.BY_DATE
) -> pd.Timestamp:
    """First day of the past period :func:`copy_same_days` copies.

    Parameters
    ----------
    history : History, pd.DataFrame or pd.Series
        The demand history (its ``temperature_c``, °C).
    start : date-like
        First day of the window.
    days : int
        Window length, days.
    alignment : Alignment
        By date or by weekday.

    Returns
    -------
    pandas.Timestamp
        The start of the most recent period, at least one year before the window, whose days
        all have a temperature in the history.

    Raises
    ------
    ScenarioError
        When no earlier year of the history holds the whole period.
    """
    if not isinstance(alignment, Alignment):
        raise ScenarioError(
            f"The alignment must be Alignment.BY_DATE or Alignment.BY_WEEKDAY, got {alignment!r}",
            where="copy of the same days",
            fix="Choose by date or by weekday",
        )
    first = parse_date(start, "start date")
    n = check_days(days)
    temps = _history_temperature(history)
    if temps.empty:
        raise ScenarioError("The history has no temperatures", where="history", fix="Load one")
    have = pd.DatetimeIndex(temps.index)
    lo, hi = have.min(), have.max()
    years = 1
    while True:
        source = _same_date(first, years)
        if alignment is Alignment.BY_WEEKDAY:
            source = source + pd.Timedelta(days=_weekday_shift(source, first))
        if source < lo:
            break
        wanted = pd.date_range(source, periods=n, freq="D")
        if wanted[-1] <= hi and wanted.isin(have).all():
            return source
        years += 1
    raise ScenarioError(
        f"No earlier year of the history holds all {n} days from {first:%d %B} on",
        where=f"history {iso(lo)} to {iso(hi)}",
        fix="Choose a window whose days the history has in an earlier year, or copy a period "
        "by its dates",
    )


def copy_same_days(
    history: Any, start: Any, days: int, alignment: Alignment = Alignment.BY_DATE
) -> pd.Series:
    """The window's temperatures copied from the same days of the most recent earlier year.

    Parameters
    ----------
    history : History, pd.DataFrame or pd.Series
        The demand history (its ``temperature_c``, °C).
    start : date-like
        First day of the window.
    days : int
        Window length, days.
    alignment : Alignment
        ``Alignment.BY_DATE``: 1 July 2027 gets 1 July 2026's temperature (or that of the latest
        earlier year the history holds). ``Alignment.BY_WEEKDAY``: the copied period moves by at
        most 3 days so that each window day gets a day of the same weekday. The copy is of
        consecutive days, so a window crossing 29 February drifts by one day against a common
        year.

    Returns
    -------
    pd.Series
        temperature_c (°C) on the window's days.
    """
    source = same_days_source(history, start, days, alignment)
    return copy_period(history, source, start, days)
