"""Scenario windows: where a scenario may lie, and quick choices of its start.

A window is 1 to :data:`~loadcore.scenario.values.MAX_DAYS` consecutive days starting on any
day from the day after the history ends to
:data:`~loadcore.scenario.values.MAX_LEAD_MONTHS` months after it (both limits are owned by
:mod:`loadcore.scenario.values`). :func:`window_limits` gives the first and last allowed start
for a date picker; :func:`window_starts` offers the quick choices a planner usually wants: right
after the history, the coming hottest and coldest calendar months of the history, and the
coming year-end period.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from ..errors import InputError
from .values import MAX_DAYS, earliest_start, latest_start

#: Suggested length of a window right after the history, days (two weeks, the usual short-term
#: planning look-ahead; common practice, no source).
NEXT_DAYS = 14

#: The year-end period: 20 December to 6 January (18 days), the weeks of low load around the
#: Christmas and New Year holidays (common practice, no source).
YEAR_END_MONTH_DAY = (12, 20)
YEAR_END_DAYS = 18

#: A calendar month counts for the hottest/coldest choice only with at least this many history
#: days in it (two weeks; our choice), so one stray day cannot make a month the hottest.
MIN_MONTH_DAYS = 14

WINDOW_KINDS = ("next", "hottest_month", "coldest_month", "year_end")


@dataclass(frozen=True)
class WindowChoice:
    """A quick choice of scenario window.

    Parameters
    ----------
    kind : str
        One of :data:`WINDOW_KINDS`: ``next`` (right after the history), ``hottest_month``,
        ``coldest_month``, ``year_end``.
    label : str
        Plain words for a picker, e.g. "Hottest month of the history: July 2027".
    start : pandas.Timestamp
        First day of the window (midnight).
    days : int
        Suggested length, days (1 to :data:`MAX_DAYS`).
    """

    kind: str
    label: str
    start: pd.Timestamp
    days: int

    @property
    def end(self) -> pd.Timestamp:
        """Last day of the suggested window."""
        return self.start + pd.Timedelta(days=self.days - 1)


def window_limits(history_end: Any) -> tuple[pd.Timestamp, pd.Timestamp]:
    """The first and last day a scenario window may start on, for a history ending on
    ``history_end``: the day after it, and :data:`MAX_LEAD_MONTHS` months after it."""
    return earliest_start(history_end), latest_start(history_end)


def _history_end_and_temps(history: Any) -> tuple[pd.Timestamp, pd.Series]:
    frame = getattr(history, "frame", history)
    if not isinstance(frame, pd.DataFrame) or "temperature_c" not in frame.columns:
        raise InputError(
            f"Expected a History, got {type(history).__name__}",
            where="window choices",
            fix="Read the history with loadcore.read_history",
        )
    index = pd.DatetimeIndex(frame.index)
    if len(index) == 0:
        raise InputError("The history is empty", where="window choices", fix="Load a history")
    temps = pd.Series(frame["temperature_c"].to_numpy(float), index=index).dropna()
    return pd.Timestamp(index.max()).normalize(), temps


def _day(ts: pd.Timestamp) -> str:
    """``1 December 2026`` (no leading zero)."""
    return f"{ts.day} {ts:%B %Y}"


def _coming(month: int, day: int, first: pd.Timestamp) -> pd.Timestamp:
    """The first ``month``/``day`` on or after ``first``."""
    candidate = pd.Timestamp(year=first.year, month=month, day=day)
    if candidate < first:
        candidate = pd.Timestamp(year=first.year + 1, month=month, day=day)
    return candidate


def _month_choice(kind: str, month: int, first: pd.Timestamp) -> WindowChoice:
    start = _coming(month, 1, first)
    words = "Hottest" if kind == "hottest_month" else "Coldest"
    return WindowChoice(
        kind=kind,
        label=f"{words} month of the history: {start:%B %Y}",
        start=start,
        days=min(int(start.days_in_month), MAX_DAYS),
    )


def window_starts(history: Any) -> tuple[WindowChoice, ...]:
    """Quick choices of a scenario window for a history (the app's window picker).

    Parameters
    ----------
    history : History
        The model's history (its ``frame`` with ``temperature_c``, °C, on daily dates).

    Returns
    -------
    tuple of WindowChoice
        In this order: right after the history (:data:`NEXT_DAYS` days); the coming hottest
        calendar month of the history by mean daily maximum temperature (the whole month);
        the coming coldest month (the whole month); the coming year-end period (20 December,
        :data:`YEAR_END_DAYS` days). "Coming" means the first such month or period starting
        after the history's last day, so every choice lies inside :func:`window_limits`. The
        month choices are left out when no calendar month has :data:`MIN_MONTH_DAYS` days of
        temperatures.
    """
    end, temps = _history_end_and_temps(history)
    first = earliest_start(end)
    choices = [
        WindowChoice(
            kind="next",
            label=f"Right after the history: from {_day(first)}",
            start=first,
            days=NEXT_DAYS,
        )
    ]
    by_month = temps.groupby(np.asarray(temps.index.month)).agg(["mean", "count"])
    by_month = by_month[by_month["count"] >= MIN_MONTH_DAYS]
    if len(by_month):
        means = by_month["mean"]
        choices.append(_month_choice("hottest_month", int(means.idxmax()), first))
        choices.append(_month_choice("coldest_month", int(means.idxmin()), first))
    year_end = _coming(*YEAR_END_MONTH_DAY, first)
    last = year_end + pd.Timedelta(days=YEAR_END_DAYS - 1)
    choices.append(
        WindowChoice(
            kind="year_end",
            label=f"Year-end period: {_day(year_end)} to {_day(last)}",
            start=year_end,
            days=YEAR_END_DAYS,
        )
    )
    return tuple(choices)
