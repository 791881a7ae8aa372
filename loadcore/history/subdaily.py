"""Sub-daily readings to daily values: the aggregation, the daylight-saving days, and the error
for a sub-daily file whose time of day sits in a column not yet named.

Demand becomes the daily peak or total and temperature the daily maximum or mean (per
:class:`HistorySettings`), with the daily minimum kept beside it. A day with one hour of
readings fewer or more than usual, at most one of each a calendar year, is a day the clocks
change: it is aggregated from the readings it has and noted, not warned about.
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd

from loadcore.history.report import Collector, iso_date
from loadcore.history.settings import HistorySettings, name_the_column

#: Repeats per date that mark a sub-daily file (hours, half hours, ...), and the share of dates
#: that must have the typical count (daylight-saving days have one hour more or fewer).
_SUBDAILY_REPEATS = 12
_SUBDAILY_SHARE = 0.9
#: Words in a column name that suggest it holds the hour (for the hint; common practice).
_HOUR_WORDS = ("hour", "time", "he", "hb", "hr", "period", "interval", "clock")


def repeats_like_subdaily(counts: pd.Series, typical: int) -> bool:
    """Whether nearly every date repeats the same, sub-daily number of times."""
    return typical >= _SUBDAILY_REPEATS and float((counts == typical).mean()) >= _SUBDAILY_SHARE


def _looks_like_hour(name: str) -> bool:
    words = [w for w in re.split(r"[^a-z]+", name.lower()) if w]
    return any(w in _HOUR_WORDS or w.startswith(("hour", "time")) for w in words)


def subdaily_without_time(
    typical: int, date_name: str, other_columns: tuple[str, ...], issues: Collector
) -> None:
    """The one error for a sub-daily file whose time of day is in a column not yet named."""
    guesses = [c for c in other_columns if _looks_like_hour(c)]
    hint = f" (perhaps {', '.join(repr(g) for g in guesses[:3])})" if guesses else ""
    issues.add(
        "error",
        f"Every date appears {typical} times and the dates carry no time of day: the file "
        "looks like one row per reading with the hour in a column of its own",
        column=date_name,
        fix=f"Name the column that holds the hour or time of day{hint}: "
        + name_the_column("hour_col"),
    )


def _daylight_saving_days(readings: pd.Series, typical: int) -> pd.DatetimeIndex:
    """Days with exactly one hour of readings more or fewer than usual, at most one of each a
    calendar year: the days the clocks change (common practice, no source)."""
    if typical % 24:
        return pd.DatetimeIndex([])
    per_hour = typical // 24
    found = []
    for delta in (-per_hour, per_hour):
        days = pd.DatetimeIndex(readings.index[(readings == typical + delta).to_numpy()])
        per_year = pd.Series(days.year).value_counts()
        found.extend(d for d in days if per_year[d.year] == 1)
    return pd.DatetimeIndex(sorted(found))


def _note_daylight_saving(
    changes: pd.DatetimeIndex, readings: pd.Series, settings: HistorySettings, issues: Collector
) -> None:
    if not len(changes):
        return
    listed = ", ".join(f"{d:%Y-%m-%d} ({int(readings[d])})" for d in changes[:4])
    more = f" and {len(changes) - 4} more" if len(changes) > 4 else ""
    effect = (
        "; their daily totals cover one hour less or more than other days"
        if settings.subdaily_demand == "total"
        else ""
    )
    issues.add(
        "info",
        f"{len(changes)} day(s) have one hour of readings fewer or more than usual, as on the "
        f"days the clocks change for daylight saving: {listed}{more}. Each was aggregated from "
        f"the readings it has{effect}",
        fix="Nothing to do if the file is in local time",
    )


def aggregate(
    table: pd.DataFrame,
    stamps: pd.Series,
    rows: np.ndarray,
    typical: int,
    settings: HistorySettings,
    names: tuple[str, str, str],
    issues: Collector,
) -> pd.DataFrame:
    """Sub-daily rows (``date``, ``demand``, ``temperature_c``, optional ``temperature_min_c``)
    to daily values, with the issues that go with it."""
    date_name, demand_name, temp_name = names
    day = table["date"]
    dup = stamps.duplicated(keep=False).to_numpy()
    if dup.any():
        dup_pos = np.flatnonzero(dup)
        issues.many(
            "warning",
            lambda i: (
                f"The time {stamps.iloc[dup_pos[i]]:%Y-%m-%d %H:%M} appears more than once; all "
                "its readings were used in the daily value",
                {"row": int(rows[dup_pos[i]]), "date": iso_date(day.iloc[dup_pos[i]])},
            ),
            len(dup_pos),
            kind="repeated times",
            fix="Check for a daylight-saving change or duplicated rows",
            column=date_name,
            rows=[int(rows[p]) for p in dup_pos],
        )
    if "temperature_min_c" not in table:
        table = table.assign(temperature_min_c=table["temperature_c"])
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
        f"day: demand as {how}, temperature as {temp_how} (and the daily minimum kept beside it)",
        fix="Set subdaily_demand to 'peak' or 'total' to choose how demand is aggregated",
    )
    readings = grouped.size()
    changes = _daylight_saving_days(readings, typical)
    _note_daylight_saving(changes, readings, settings, issues)
    present = grouped["demand"].count()
    complete_change = present.index.isin(changes) & (present == readings).to_numpy()
    short = present[(present < typical).to_numpy() & ~complete_change]
    if len(short):
        short_days = list(short.index)
        issues.many(
            "warning",
            lambda i: (
                f"This day has {int(short.iloc[i])} demand readings instead of the usual {typical}; "
                "its daily value may be "
                + ("too low" if settings.subdaily_demand == "total" else "understated"),
                {"date": iso_date(short_days[i])},
            ),
            len(short_days),
            kind="days with fewer readings than usual",
            fix="Check the source for missing intervals on these days",
            column=demand_name,
        )
    return pd.DataFrame(
        {
            "demand": demand_daily,
            "temperature_c": temp_daily,
            "temperature_min_c": grouped["temperature_min_c"].min(),
        }
    )
