"""Suggested scenario windows: the quick choices a planner starts from.

:func:`suggested_windows` names the windows a planner asks about most, each starting after the
history ends: right after the history, the coming hottest and coldest calendar months of the
history (by the mean daily maximum temperature of each calendar month), and the coming year-end
period. Where a window may lie at all (from the day after the history to 24 months later) is the
scenario rules' business (:mod:`loadcore.scenario.values`); these only suggest.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import pandas as pd

from .values import parse_date

# The year-end period: 20 December to 3 January, 15 days (common practice, no source: the
# weeks around the holidays when commercial and industrial demand is low).
YEAR_END_START = (12, 20)
YEAR_END_DAYS = 15
# Days of the window right after the history (two weeks, the usual short-range question).
NEXT_DAYS = 14


@dataclass(frozen=True)
class SuggestedWindow:
    """One quick choice of window.

    Attributes
    ----------
    key : {"next", "hottest", "coldest", "year_end"}
        What it is.
    label : str
        In words, e.g. "the coming hottest month (July 2027)".
    start : pandas.Timestamp
        First day.
    days : int
        Length, days.
    """

    key: str
    label: str
    start: pd.Timestamp
    days: int


def _first_after(month: int, day: int, end: pd.Timestamp) -> pd.Timestamp:
    """The first ``month``/``day`` after ``end``."""
    candidate = pd.Timestamp(year=end.year, month=month, day=day)
    return candidate if candidate > end else pd.Timestamp(year=end.year + 1, month=month, day=day)


def _monthly_means_c(history: Any) -> pd.Series:
    frame = getattr(history, "frame", history)
    temps = pd.to_numeric(frame["temperature_c"], errors="coerce").dropna()
    temps.index = pd.DatetimeIndex(temps.index)
    return temps.groupby(temps.index.month).mean()


def suggested_windows(history: Any) -> tuple[SuggestedWindow, ...]:
    """The quick choices for a scenario window after ``history`` (a History or its frame).

    Parameters
    ----------
    history : History or pandas.DataFrame
        The model's history: a daily frame with ``temperature_c`` (°C) on a date index.

    Returns
    -------
    tuple of SuggestedWindow
        "next" (the day after the history, 14 days), "hottest" and "coldest" (the first whole
        calendar month after the history with the highest / lowest mean daily maximum in the
        history, the month's length in days), "year_end" (20 December to 3 January, the first
        after the history). The hottest and coldest months are left out when the history does
        not cover every calendar month.
    """
    frame = getattr(history, "frame", history)
    end = parse_date(pd.DatetimeIndex(frame.index).max(), "history end")
    out = [
        SuggestedWindow(
            "next",
            f"right after the history (from {end + pd.Timedelta(days=1):%a %d %b %Y})",
            end + pd.Timedelta(days=1),
            NEXT_DAYS,
        )
    ]
    means = _monthly_means_c(history)
    if len(means) == 12:
        for key, month, word in (
            ("hottest", int(means.idxmax()), "hottest"),
            ("coldest", int(means.idxmin()), "coldest"),
        ):
            start = _first_after(month, 1, end)
            out.append(
                SuggestedWindow(
                    key,
                    f"the coming {word} month ({start:%B %Y})",
                    start,
                    int(start.days_in_month),
                )
            )
    start = _first_after(*YEAR_END_START, end)
    out.append(
        SuggestedWindow(
            "year_end",
            f"the coming year-end period ({start:%d %b %Y} to "
            f"{start + pd.Timedelta(days=YEAR_END_DAYS - 1):%d %b %Y})",
            start,
            YEAR_END_DAYS,
        )
    )
    return tuple(out)
