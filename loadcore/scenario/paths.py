"""Path builders: the usual shapes of a scenario's temperature path.

Each returns a ``pd.Series`` of ``temperature_c`` (°C) on a daily ``DatetimeIndex`` named
``date``: constant, seasonal normal, heat wave, cold snap, a copy of a past period, a shifted
path. :func:`loadcore.scenario.make_scenario` turns a path into a scenario.
"""

from __future__ import annotations

import logging
from typing import Any

import numpy as np
import pandas as pd

from ..errors import InputError, ScenarioError, quote
from .values import cap, check_days, check_temperature, iso, parse_date

log = logging.getLogger(__name__)

# Half-width of the day-of-year smoothing window used for seasonal normals, days (+/-7 days, a
# 15-day centred window; common practice, no source).
NORMAL_WINDOW_HALF_DAYS = 7


def _daily_index(start: pd.Timestamp, days: int) -> pd.DatetimeIndex:
    return pd.date_range(start, periods=days, freq="D", name="date")


def _series(index: pd.DatetimeIndex, values: Any) -> pd.Series:
    return pd.Series(np.asarray(values, dtype=float), index=index, name="temperature_c")


def _check_path(path: pd.Series, what: str = "path") -> pd.Series:
    if not isinstance(path, pd.Series):
        raise ScenarioError(
            f"The {what} must be a pandas Series of temperature_c on dates, got {type(path).__name__}",
            where=what,
            fix="Build it with one of the path builders, e.g. constant_path",
        )
    if len(path) == 0:
        raise ScenarioError(f"The {what} is empty", where=what, fix="Give at least one day")
    try:
        index = pd.DatetimeIndex(path.index)
    except (TypeError, ValueError):
        raise ScenarioError(
            f"The {what} must be indexed by dates", where=what, fix="Index the Series by date"
        ) from None
    values = pd.to_numeric(path, errors="coerce").to_numpy(dtype=float)
    return pd.Series(values, index=index.normalize().rename("date"), name="temperature_c")


def _history_temperature(history: Any) -> pd.Series:
    """Daily temperature_c from a History, a DataFrame with temperature_c, or a Series."""
    frame = getattr(history, "frame", history)
    if isinstance(frame, pd.DataFrame):
        if "temperature_c" not in frame.columns:
            raise InputError(
                "The history has no temperature_c column",
                where="history",
                fix="Read the history with loadcore.history.read_history",
            )
        series = frame["temperature_c"]
    elif isinstance(frame, pd.Series):
        series = frame
    else:
        raise InputError(
            f"Expected a History, got {type(history).__name__}",
            where="history",
            fix="Read the history with loadcore.history.read_history",
        )
    series = pd.to_numeric(series, errors="coerce").astype(float)
    series.index = pd.DatetimeIndex(series.index).normalize()
    return series.dropna()


def _position(path: pd.Series, start_day: Any, what: str) -> int:
    """0-based position of ``start_day`` (an int offset or a date) in ``path``."""
    if isinstance(start_day, int | np.integer) and not isinstance(start_day, bool):
        pos = int(start_day)
        if not 0 <= pos < len(path):
            raise ScenarioError(
                f"{cap(what)} day {pos} is outside the path's {len(path)} days",
                where=what,
                fix=f"Give a day between 0 and {len(path) - 1} (0 is the first day)",
            )
        return pos
    day = parse_date(start_day, what)
    matches = np.flatnonzero(path.index == day)
    if len(matches) == 0:
        raise ScenarioError(
            f"{cap(what)} date {iso(day)} is not in the path",
            where=what,
            fix=f"Give a date from {iso(path.index[0])} to {iso(path.index[-1])}",
        )
    return int(matches[0])


def _event_weights(n: int, pos: int, length_days: int, ramp_days: int, what: str) -> np.ndarray:
    """Weights in [0, 1] for an event: linear ramp up, days at full strength, linear ramp down."""
    length = check_days(length_days, f"{what} length")
    try:
        ramp = int(ramp_days)
    except (TypeError, ValueError):
        ramp = -1
    if ramp != ramp_days or ramp < 0:
        raise ScenarioError(
            f"{cap(what)} ramp must be a whole number of days of at least 0, got {quote(ramp_days)}",
            where=f"{what} ramp",
            fix="Give 0 for a sudden change, or the number of days to build up and die away",
        )
    if 2 * ramp >= length:
        raise ScenarioError(
            f"A {length}-day {what} cannot have {ramp}-day ramps at both ends",
            where=f"{what} ramp",
            fix=f"Use ramps of at most {(length - 1) // 2} days or a longer event",
        )
    profile = np.ones(length)
    for k in range(ramp):
        w = (k + 1) / (ramp + 1)
        profile[k] = w
        profile[length - 1 - k] = w
    weights = np.zeros(n)
    stop = min(n, pos + length)
    weights[pos:stop] = profile[: stop - pos]
    if pos + length > n:
        log.info("%s runs past the end of the path; %d days kept", what, stop - pos)
    return weights


# ---------------------------------------------------------------------------------------------------
# Path builders


def constant_path(start: Any, days: int, temperature_c: float) -> pd.Series:
    """The same temperature every day.

    Parameters
    ----------
    start : date-like
        First date.
    days : int
        Number of days.
    temperature_c : float
        Daily maximum temperature, °C.

    Returns
    -------
    pd.Series
        temperature_c on a daily DatetimeIndex named ``date``.
    """
    first = parse_date(start, "start date")
    n = check_days(days)
    t = check_temperature(temperature_c, "temperature")
    return _series(_daily_index(first, n), np.full(n, t))


def _day_of_year_365(index: pd.DatetimeIndex) -> np.ndarray:
    """Day of year on a 365-day calendar (1..365); 29 February shares 28 February's day."""
    doy = np.asarray(index.day_of_year, dtype=int)
    after_feb = np.asarray(index.is_leap_year & (index.month > 2))
    feb29 = np.asarray(index.is_leap_year & (index.month == 2) & (index.day == 29))
    return doy - after_feb.astype(int) - feb29.astype(int)


def seasonal_normal_path(history: Any, start: Any, days: int) -> pd.Series:
    """The history's average temperature for each calendar day, smoothed over +/-7 days.

    For every day of the year the mean of the history's daily maximum temperatures on that
    calendar day is taken (29 February counts with 28 February); those means are then averaged
    over a centred window of +/-7 days of year, wrapping round the year end.

    Parameters
    ----------
    history : History, pd.DataFrame or pd.Series
        The demand history (its ``temperature_c``, °C).
    start : date-like
        First date of the path.
    days : int
        Number of days.

    Returns
    -------
    pd.Series
        temperature_c on a daily DatetimeIndex named ``date``.

    Raises
    ------
    ScenarioError
        When the history has no temperatures within 7 days of year of some path date.
    """
    first = parse_date(start, "start date")
    n = check_days(days)
    temps = _history_temperature(history)
    doy = _day_of_year_365(pd.DatetimeIndex(temps.index))
    sums = np.bincount(doy - 1, weights=temps.to_numpy(), minlength=365)[:365]
    counts = np.bincount(doy - 1, minlength=365)[:365]
    with np.errstate(invalid="ignore", divide="ignore"):
        daily_mean = np.where(counts > 0, sums / np.maximum(counts, 1), np.nan)
    half = NORMAL_WINDOW_HALF_DAYS
    padded = np.concatenate([daily_mean[-half:], daily_mean, daily_mean[:half]])
    smoothed = np.full(365, np.nan)
    for i in range(365):
        window = padded[i : i + 2 * half + 1]
        good = window[~np.isnan(window)]
        if len(good):
            smoothed[i] = good.mean()
    index = _daily_index(first, n)
    values = smoothed[_day_of_year_365(index) - 1]
    if np.isnan(values).any():
        missing = index[np.isnan(values)][0]
        raise ScenarioError(
            "The history has no temperatures near this calendar day, so there is no normal for it",
            where=f"date {iso(missing)}",
            fix="Use a history that covers at least one full year, or another kind of path",
        )
    return _series(index, values)


def heat_wave(
    path: pd.Series, peak_c: float, length_days: int, ramp_days: int, start_day: Any
) -> pd.Series:
    """Raise a path toward a peak temperature for a spell of days.

    The event lasts ``length_days`` days from ``start_day``: over the first ``ramp_days`` days each
    day moves a growing share of the way from its own temperature to the peak (linear ramp), the
    middle days reach the peak, and the last ``ramp_days`` days fall back the same way. A day already
    hotter than where the event would put it is left as it is.

    Parameters
    ----------
    path : pd.Series
        temperature_c on a daily index (°C).
    peak_c : float
        Peak daily maximum temperature, °C.
    length_days : int
        Days in the event, ramps included (at least one day at the peak).
    ramp_days : int
        Days of ramp at each end (0 for a sudden start and end).
    start_day : int or date-like
        First day of the event, as a 0-based position in the path or as a date.

    Returns
    -------
    pd.Series
        A new path; the input is not changed. Days after the path's end are dropped.
    """
    return _event(path, peak_c, length_days, ramp_days, start_day, "heat wave", hotter=True)


def cold_snap(
    path: pd.Series, trough_c: float, length_days: int, ramp_days: int, start_day: Any
) -> pd.Series:
    """Lower a path toward a trough temperature for a spell of days (mirror of :func:`heat_wave`).

    Parameters
    ----------
    path : pd.Series
        temperature_c on a daily index (°C).
    trough_c : float
        Lowest daily maximum temperature, °C.
    length_days : int
        Days in the event, ramps included (at least one day at the trough).
    ramp_days : int
        Days of ramp at each end (0 for a sudden start and end).
    start_day : int or date-like
        First day of the event, as a 0-based position in the path or as a date.

    Returns
    -------
    pd.Series
        A new path; a day already colder than where the event would put it is left as it is.
    """
    return _event(path, trough_c, length_days, ramp_days, start_day, "cold snap", hotter=False)


def _event(
    path: pd.Series,
    target_c: float,
    length_days: int,
    ramp_days: int,
    start_day: Any,
    what: str,
    *,
    hotter: bool,
) -> pd.Series:
    base = _check_path(path)
    target = check_temperature(target_c, f"{what} {'peak' if hotter else 'lowest'} temperature")
    pos = _position(base, start_day, f"{what} start")
    weights = _event_weights(len(base), pos, length_days, ramp_days, what)
    old = base.to_numpy()
    moved = old + weights * (target - old)
    new = np.maximum(old, moved) if hotter else np.minimum(old, moved)
    # Days outside the event keep their value exactly (no rounding through the arithmetic).
    new = np.where(weights > 0, new, old)
    return _series(pd.DatetimeIndex(base.index, name="date"), new)


def copy_period(history: Any, source_start: Any, start: Any, days: int) -> pd.Series:
    """Copy a past period's temperatures onto new dates.

    Parameters
    ----------
    history : History, pd.DataFrame or pd.Series
        The demand history (its ``temperature_c``, °C).
    source_start : date-like
        First date of the past period to copy.
    start : date-like
        First date of the new path.
    days : int
        Number of days.

    Returns
    -------
    pd.Series
        temperature_c on ``days`` days from ``start``: day k is the history's day k from
        ``source_start``.

    Raises
    ------
    ScenarioError
        When the past period is not fully inside the history.
    """
    src = parse_date(source_start, "copied period start")
    first = parse_date(start, "start date")
    n = check_days(days)
    temps = _history_temperature(history)
    wanted = _daily_index(src, n)
    missing = wanted.difference(temps.index)
    if len(missing):
        lo, hi = temps.index.min(), temps.index.max()
        span = f"{iso(lo)} to {iso(hi)}" if len(temps) else "no dates"
        raise ScenarioError(
            f"The history has no temperature for {len(missing)} of the {n} days to copy",
            where=f"date {iso(missing[0])}",
            fix=f"Pick a period inside the history ({span})",
        )
    return _series(_daily_index(first, n), temps.loc[wanted].to_numpy())


def shift_path(path: pd.Series, delta_c: float) -> pd.Series:
    """Add ``delta_c`` to every day of a path (a warmer or cooler version of it).

    Parameters
    ----------
    path : pandas.Series
        Daily temperatures, °C, on a daily index named ``date``.
    delta_c : float
        The shift, °C (a temperature difference; may be negative).

    Returns
    -------
    pandas.Series
        A new path on the same dates.
    """
    base = _check_path(path)
    delta = check_temperature(delta_c, "temperature shift")
    return _series(pd.DatetimeIndex(base.index, name="date"), base.to_numpy() + delta)
