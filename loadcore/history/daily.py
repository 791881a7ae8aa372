"""From parsed rows to the complete daily table.

Sub-daily readings (hourly, half-hourly, ...) are aggregated to one value per day by
:mod:`loadcore.history.subdaily`. Daily rows keep one row per date; repeated dates are errors. The daily table is then completed:
leading and trailing days lacking demand or temperature are trimmed, missing days are added,
short temperature gaps are filled by straight-line interpolation, and gaps too long to use are
errors that say where to cut the history. A daily minimum temperature, when the source gives
one, is filled the same way over short gaps and left out (with a warning) over long ones.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from loadcore.history.report import MAX_LISTED, Collector, iso_date
from loadcore.history.settings import HistorySettings
from loadcore.history.subdaily import aggregate, repeats_like_subdaily, subdaily_without_time

# A year of daily history is needed to see the temperature response across all seasons
# (common practice, no source).
MIN_DAYS = 365


def runs(mask: np.ndarray) -> list[tuple[int, int]]:
    """(start, end) inclusive positions of True runs."""
    if not mask.any():
        return []
    padded = np.concatenate([[False], mask, [False]]).astype(np.int8)
    change = np.diff(padded)
    starts = np.flatnonzero(change == 1)
    ends = np.flatnonzero(change == -1) - 1
    return list(zip(starts.tolist(), ends.tolist(), strict=True))


def _clock(offset: pd.Timedelta) -> str:
    minutes = int(pd.Timedelta(offset).total_seconds() // 60)
    return f"{minutes // 60:02d}:{minutes % 60:02d}"


def to_daily(
    stamps: pd.Series,
    rows: np.ndarray,
    demand: np.ndarray,
    temp: np.ndarray,
    settings: HistorySettings,
    names: tuple[str, str, str],
    issues: Collector,
    *,
    day: pd.Series | None = None,
    temp_min: np.ndarray | None = None,
    other_columns: tuple[str, ...] = (),
) -> pd.DataFrame:
    """One row per date from the rows with a readable date, in file order.

    Parameters
    ----------
    stamps : pandas.Series
        Timestamps (no NaT) on a 0-based range index.
    rows : numpy.ndarray
        The rows' 1-based data row numbers in the file.
    demand, temp : numpy.ndarray
        Demand in the file's unit and temperature in °C (NaN where blank).
    day : pandas.Series, optional
        Each row's date when it comes from a date column beside an hour column (an extra hour
        of an autumn daylight-saving day may stamp the next midnight); else the stamp's date.
    temp_min : numpy.ndarray, optional
        A minimum-temperature column in °C.
    other_columns : tuple of str
        The file's unused columns (named in the hint when dates repeat without times).

    Returns
    -------
    pandas.DataFrame
        Indexed by date (sorted, possibly with missing days), columns ``demand``,
        ``temperature_c`` and, from sub-daily readings or a minimum column,
        ``temperature_min_c``. Check ``issues.has_errors`` before using it.
    """
    date_name = names[0]
    if day is None:
        day = stamps.dt.normalize()
    counts = day.value_counts()
    typical = int(counts.mode().iloc[0])
    if not stamps.is_monotonic_increasing:
        issues.add(
            "info",
            "The rows are not in date order; they were sorted by date",
            column=date_name,
            fix="Nothing to do",
        )
    has_time = bool((stamps != day).any())
    columns = {"date": day, "demand": demand, "temperature_c": temp}
    if temp_min is not None:
        columns["temperature_min_c"] = temp_min
    if typical > 1 and has_time:
        return aggregate(pd.DataFrame(columns), stamps, rows, typical, settings, names, issues)
    if not has_time and repeats_like_subdaily(counts, typical):
        subdaily_without_time(typical, date_name, other_columns, issues)
        return pd.DataFrame(columns={"demand": [], "temperature_c": []})
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
                {"row": int(row_lists[i][0]), "date": iso_date(dup_list[i])},
            ),
            len(dup_list),
            kind="duplicated dates",
            fix="Keep one row per date in daily data (delete or merge the duplicates)",
            column=date_name,
        )
    if has_time:
        times = (stamps - day).unique()
        if len(times) == 1:
            issues.add(
                "warning",
                f"Every date carries the same time of day ({_clock(times[0])}); each row was "
                "counted on the date it shows",
                column=date_name,
                fix="If the rows are days of another time zone (such as UTC midnights written "
                "in local time), give the dates of those days instead",
            )
        else:
            issues.add(
                "info",
                "The dates carry a time of day; with one row per day the time was ignored",
                column=date_name,
                fix="Nothing to do",
            )
    return pd.DataFrame(columns).groupby("date", sort=True).first()


def _cut_advice(index: pd.DatetimeIndex, start: int, end: int) -> str:
    """Where to cut the history around the gap index[start..end] to keep the larger part."""
    before = start
    after = len(index) - end - 1
    if after >= before:
        first = index[end + 1] if end + 1 < len(index) else index[end]
        return f"start the history on {first:%Y-%m-%d} or later"
    last = index[start - 1]
    return f"end the history on {last:%Y-%m-%d} or earlier"


def complete_daily(
    daily: pd.DataFrame,
    settings: HistorySettings,
    names: tuple[str, str, str],
    issues: Collector,
) -> pd.DataFrame | None:
    """The daily table on every date from the first to the last complete day.

    Returns
    -------
    pandas.DataFrame or None
        Columns ``demand``, ``temperature_c`` (interpolated over short gaps) and
        ``temperature_filled`` on a daily ``DatetimeIndex`` named ``date``; None when ``issues``
        holds errors (from this step or before).
    """
    _, demand_name, temp_name = names
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
    for a, b in runs(demand_missing):
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
    for a, b in runs(temp_missing):
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
    kept = ["demand", "temperature_c", "temperature_filled"]
    if "temperature_min_c" in frame and _fill_minimum(frame, settings, issues):
        kept.append("temperature_min_c")
    return frame[kept]


def _fill_minimum(frame: pd.DataFrame, settings: HistorySettings, issues: Collector) -> bool:
    """Fill short gaps of the daily minimum temperature in place; False (with a warning) when a
    gap is too long to fill, and the minimum is then not used."""
    minimum = frame["temperature_min_c"].astype(float)
    missing = minimum.isna().to_numpy()
    long_runs = [(a, b) for a, b in runs(missing) if b - a + 1 > settings.max_temp_gap_days]
    if long_runs or missing.all():
        a, b = long_runs[0] if long_runs else (0, len(missing) - 1)
        issues.add(
            "warning",
            f"The minimum temperature is missing for {b - a + 1} days in a row (from "
            f"{frame.index[a]:%Y-%m-%d}), more than the {settings.max_temp_gap_days} that can be "
            "filled; the history is used without its daily minimum",
            date=f"{frame.index[a]:%Y-%m-%d}",
            fix="Fill the gap if the model should use the daily minimum",
        )
        return False
    if missing.any():
        issues.add(
            "info",
            f"The minimum temperature is missing on {int(missing.sum())} day(s); filled by "
            "straight-line interpolation between the neighbouring days",
            fix="Nothing to do",
        )
        minimum = minimum.interpolate(method="linear", limit_direction="both")
    frame["temperature_min_c"] = np.minimum(minimum.to_numpy(), frame["temperature_c"].to_numpy())
    return True
