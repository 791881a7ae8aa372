"""Scenarios: future dates, a temperature path and (optionally) day types.

A scenario is what the planner asks "what if" about: the next days after the end of the history,
with a daily maximum temperature for each day (°C inside loadcore) and, where the planner wants to
override the calendar, a day type. The path builders below make the usual shapes (constant, seasonal
normal, heat wave, cold snap, a copy of a past period, a shifted path) as ``pd.Series`` of
``temperature_c`` on a daily ``DatetimeIndex``; :func:`make_scenario` validates a path and turns it
into a :class:`Scenario`, and :func:`read_scenario_csv` reads one from a file.

Temperatures in °F appear only at the edges (:func:`read_scenario_csv` with ``temp_unit="F"`` and the
helpers of :mod:`loadcore.units`).
"""

from __future__ import annotations

import io
import json
import logging
import math
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from loadcore import files, units
from loadcore.calendar import normalise_type_name
from loadcore.errors import InputError, ScenarioError

log = logging.getLogger(__name__)

# Plausibility limits for a daily maximum air temperature, °C: beyond these a value is almost surely
# a unit or typing mistake (common practice, no source; the recorded extremes lie inside them).
PLAUSIBLE_MIN_C = -60.0
PLAUSIBLE_MAX_C = 60.0

# Longest scenario horizon the tool will forecast, days.
MAX_DAYS = 90

# Half-width of the day-of-year smoothing window used for seasonal normals, days (+/-7 days, a
# 15-day centred window; common practice, no source).
NORMAL_WINDOW_HALF_DAYS = 7

# Identifies a scenario definition file written by :meth:`Scenario.to_dict`.
DEFINITION_KIND = "loadcore scenario"
DEFINITION_VERSION = 1

# ---------------------------------------------------------------------------------------------------
# The Scenario type


def _iso(ts: pd.Timestamp) -> str:
    return pd.Timestamp(ts).strftime("%Y-%m-%d")


@dataclass(frozen=True, eq=False)
class Scenario:
    """A forecast question: dates, daily maximum temperatures and optional day types.

    Parameters
    ----------
    name : str
        A label for the scenario, shown in tables, charts and exports.
    dates : pd.DatetimeIndex
        Consecutive days (normalised to midnight), first day the day after the model's history.
    temperature_c : np.ndarray
        Daily maximum temperature for each date, °C.
    day_types : tuple of str, optional
        A day type for each date, or None to take every day type from the model's calendar. An
        empty string for a single date means "from the calendar" for that date only.

    Notes
    -----
    Build scenarios with :func:`make_scenario`, which checks everything; the constructor only checks
    the shape of what it is given.
    """

    name: str
    dates: pd.DatetimeIndex
    temperature_c: np.ndarray
    day_types: tuple[str, ...] | None = None

    def __post_init__(self) -> None:
        dates = pd.DatetimeIndex(self.dates).normalize()
        dates.name = "date"
        temps = np.array(self.temperature_c, dtype=float).reshape(-1)
        temps.setflags(write=False)
        if len(dates) != len(temps):
            raise ScenarioError(
                f"The scenario has {len(dates)} dates but {len(temps)} temperatures",
                where=f"scenario {self.name!r}",
                fix="Give exactly one temperature for each date",
            )
        day_types = self.day_types
        if day_types is not None:
            day_types = tuple("" if d is None else str(d) for d in day_types)
            if len(day_types) != len(dates):
                raise ScenarioError(
                    f"The scenario has {len(dates)} dates but {len(day_types)} day types",
                    where=f"scenario {self.name!r}",
                    fix="Give one day type for each date, or none at all to use the calendar",
                )
            if not any(day_types):
                day_types = None
        object.__setattr__(self, "name", str(self.name))
        object.__setattr__(self, "dates", dates)
        object.__setattr__(self, "temperature_c", temps)
        object.__setattr__(self, "day_types", day_types)

    @property
    def horizon(self) -> int:
        """Number of days in the scenario."""
        return len(self.dates)

    @property
    def start(self) -> pd.Timestamp:
        """First date of the scenario."""
        return self.dates[0]

    @property
    def end(self) -> pd.Timestamp:
        """Last date of the scenario."""
        return self.dates[-1]

    def path(self) -> pd.Series:
        """The temperature path as a ``pd.Series`` of temperature_c on the scenario dates."""
        return pd.Series(self.temperature_c.copy(), index=self.dates, name="temperature_c")

    def fill_day_types(self, calendar_types: Sequence[str]) -> Scenario:
        """Return a copy whose blank day types are taken from ``calendar_types``.

        Parameters
        ----------
        calendar_types : sequence of str
            The calendar's day type for each scenario date (for example from
            ``FittedModel.calendar_types(scenario.dates)``).

        Returns
        -------
        Scenario
            Same name, dates and temperatures; every day has a day type.
        """
        given = list(calendar_types)
        if len(given) != self.horizon:
            raise ScenarioError(
                f"{len(given)} calendar day types were given for {self.horizon} scenario dates",
                where=f"scenario {self.name!r}",
                fix="Give one calendar day type for each scenario date",
            )
        own = self.day_types or ("",) * self.horizon
        filled = tuple(mine if mine else str(cal) for mine, cal in zip(own, given, strict=True))
        return Scenario(self.name, self.dates, self.temperature_c, filled)

    def to_frame(self) -> pd.DataFrame:
        """One row per day: ``date``, ``temperature_c`` (°C), ``day_type`` ("" = from the calendar)."""
        return pd.DataFrame(
            {
                "date": self.dates,
                "temperature_c": self.temperature_c.copy(),
                "day_type": list(self.day_types) if self.day_types else [""] * self.horizon,
            }
        )

    def to_dict(self) -> dict[str, Any]:
        """A JSON-friendly scenario definition (see :meth:`from_dict`).

        Returns
        -------
        dict
            ``kind``, ``version``, ``name`` and ``days``: a list of ``{"date": "YYYY-MM-DD",
            "temperature_c": float, "day_type": str | None}``, None meaning "from the calendar".
        """
        types = self.day_types or ("",) * self.horizon
        days = [
            {
                "date": _iso(d),
                "temperature_c": float(t),
                "day_type": dt if dt else None,
            }
            for d, t, dt in zip(self.dates, self.temperature_c, types, strict=True)
        ]
        return {
            "kind": DEFINITION_KIND,
            "version": DEFINITION_VERSION,
            "name": self.name,
            "days": days,
        }

    def to_json(self) -> str:
        """The scenario definition (:meth:`to_dict`) as JSON text."""
        return json.dumps(self.to_dict(), indent=2)

    @classmethod
    def from_dict(
        cls, data: dict[str, Any], *, model_end: Any = None, max_days: int = MAX_DAYS
    ) -> Scenario:
        """Rebuild a scenario from :meth:`to_dict` output, checking it like :func:`make_scenario`.

        Parameters
        ----------
        data : dict
            A scenario definition.
        model_end : date-like, optional
            Last day of the model's history; the scenario must start the day after.
        max_days : int
            Longest allowed horizon, days.

        Raises
        ------
        ScenarioError
            When the definition is not one loadcore wrote, or its contents fail the checks.
        """
        where = "scenario definition"
        if not isinstance(data, dict) or data.get("kind") != DEFINITION_KIND:
            raise ScenarioError(
                "This is not a loadcore scenario definition",
                where=where,
                fix="Upload a file saved from loadcore's scenario download",
            )
        version = data.get("version")
        if version != DEFINITION_VERSION:
            raise ScenarioError(
                f"Scenario definition version {version!r} is not supported",
                where=where,
                fix=f"Save the scenario again with this loadcore (version {DEFINITION_VERSION})",
            )
        days = data.get("days")
        if not isinstance(days, list) or not days:
            raise ScenarioError(
                "The scenario definition has no days", where=where, fix="Add at least one day"
            )
        dates, temps, types = [], [], []
        for i, day in enumerate(days, start=1):
            if not isinstance(day, dict) or "date" not in day or "temperature_c" not in day:
                raise ScenarioError(
                    "A day entry needs a date and a temperature_c",
                    where=f"{where}, day {i}",
                    fix="Give each day as {'date': 'YYYY-MM-DD', 'temperature_c': number}",
                )
            dates.append(_parse_one_date(day["date"], f"{where}, day {i}"))
            temps.append(day["temperature_c"])
            types.append(day.get("day_type"))
        path = pd.Series(temps, index=pd.DatetimeIndex(dates), dtype=object)
        return make_scenario(
            str(data.get("name") or "scenario"),
            path,
            types,
            model_end=model_end,
            max_days=max_days,
        )

    @classmethod
    def from_json(cls, text: str | bytes, **kwargs: Any) -> Scenario:
        """Rebuild a scenario from :meth:`to_json` text; keyword arguments as :meth:`from_dict`."""
        try:
            data = json.loads(text)
        except (ValueError, UnicodeDecodeError) as exc:
            raise ScenarioError(
                f"The scenario definition is not valid JSON: {exc}",
                where="scenario definition",
                fix="Upload a file saved from loadcore's scenario download",
            ) from None
        return cls.from_dict(data, **kwargs)

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, Scenario):
            return NotImplemented
        return (
            self.name == other.name
            and self.dates.equals(other.dates)
            and np.array_equal(self.temperature_c, other.temperature_c)
            and self.day_types == other.day_types
        )

    __hash__ = None  # type: ignore[assignment]


# ---------------------------------------------------------------------------------------------------
# Helpers


def _cap(text: str) -> str:
    return text[:1].upper() + text[1:]


def _parse_one_date(value: Any, where: str) -> pd.Timestamp:
    try:
        ts = pd.Timestamp(value)
    except (ValueError, TypeError):
        ts = pd.NaT
    if ts is pd.NaT or pd.isna(ts):
        raise ScenarioError(
            f"{value!r} is not a date",
            where=where,
            fix="Write dates as YYYY-MM-DD",
        )
    return ts.normalize()


def _as_day(value: Any, what: str) -> pd.Timestamp:
    return _parse_one_date(value, what)


def _check_days(days: Any, what: str = "days") -> int:
    try:
        n = int(days)
    except (TypeError, ValueError):
        n = -1
    if n != days or n < 1:
        raise ScenarioError(
            f"{_cap(what)} must be a whole number of at least 1, got {days!r}",
            where=what,
            fix="Give a positive whole number of days",
        )
    return n


def _check_temp(value: Any, what: str) -> float:
    try:
        t = float(value)
    except (TypeError, ValueError):
        t = math.nan
    if not math.isfinite(t):
        raise ScenarioError(
            f"{_cap(what)} must be a number, got {value!r}",
            where=what,
            fix="Give a temperature in °C",
        )
    return t


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
                f"{_cap(what)} day {pos} is outside the path's {len(path)} days",
                where=what,
                fix=f"Give a day between 0 and {len(path) - 1} (0 is the first day)",
            )
        return pos
    day = _as_day(start_day, what)
    matches = np.flatnonzero(path.index == day)
    if len(matches) == 0:
        raise ScenarioError(
            f"{_cap(what)} date {_iso(day)} is not in the path",
            where=what,
            fix=f"Give a date from {_iso(path.index[0])} to {_iso(path.index[-1])}",
        )
    return int(matches[0])


def _event_weights(n: int, pos: int, length_days: int, ramp_days: int, what: str) -> np.ndarray:
    """Weights in [0, 1] for an event: linear ramp up, days at full strength, linear ramp down."""
    length = _check_days(length_days, f"{what} length")
    try:
        ramp = int(ramp_days)
    except (TypeError, ValueError):
        ramp = -1
    if ramp != ramp_days or ramp < 0:
        raise ScenarioError(
            f"{_cap(what)} ramp must be a whole number of days of at least 0, got {ramp_days!r}",
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
    first = _as_day(start, "start date")
    n = _check_days(days)
    t = _check_temp(temperature_c, "temperature")
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
    first = _as_day(start, "start date")
    n = _check_days(days)
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
            where=f"date {_iso(missing)}",
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
    target = _check_temp(target_c, f"{what} {'peak' if hotter else 'lowest'} temperature")
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
    src = _as_day(source_start, "copied period start")
    first = _as_day(start, "start date")
    n = _check_days(days)
    temps = _history_temperature(history)
    wanted = _daily_index(src, n)
    missing = wanted.difference(temps.index)
    if len(missing):
        lo, hi = temps.index.min(), temps.index.max()
        span = f"{_iso(lo)} to {_iso(hi)}" if len(temps) else "no dates"
        raise ScenarioError(
            f"The history has no temperature for {len(missing)} of the {n} days to copy",
            where=f"date {_iso(missing[0])}",
            fix=f"Pick a period inside the history ({span})",
        )
    return _series(_daily_index(first, n), temps.loc[wanted].to_numpy())


def shift_path(path: pd.Series, delta_c: float) -> pd.Series:
    """Add ``delta_c`` (°C, may be negative) to every day of a path; returns a new path."""
    base = _check_path(path)
    delta = _check_temp(delta_c, "temperature shift")
    return _series(pd.DatetimeIndex(base.index, name="date"), base.to_numpy() + delta)


# ---------------------------------------------------------------------------------------------------
# Validation


def _clean_day_types(day_types: Any, index: pd.DatetimeIndex) -> tuple[str, ...] | None:
    if day_types is None:
        return None
    if isinstance(day_types, str):
        raise ScenarioError(
            "Day types must be one per date, not a single text",
            where="day types",
            fix="Give a list with one day type per date, or none to use the calendar",
        )
    if isinstance(day_types, pd.Series) and isinstance(day_types.index, pd.DatetimeIndex):
        aligned = day_types.copy()
        aligned.index = aligned.index.normalize()
        if not aligned.index.equals(index):
            raise ScenarioError(
                "The day types are on different dates from the temperatures",
                where="day types",
                fix="Give day types on the same dates as the temperature path",
            )
        values = list(aligned.to_numpy())
    else:
        values = list(day_types)
    if len(values) != len(index):
        raise ScenarioError(
            f"{len(values)} day types were given for {len(index)} dates",
            where="day types",
            fix="Give one day type per date (blank = from the calendar)",
        )
    out = []
    for day, v in zip(index, values, strict=True):
        if _is_blank(v):
            out.append("")
            continue
        try:
            out.append(normalise_type_name(str(v)))
        except InputError:
            raise ScenarioError(
                f"The day type {v!r} has no letters or digits",
                where=f"day types, date {_iso(day)}",
                fix="Leave it blank to use the calendar, or give a name such as holiday",
            ) from None
    return tuple(out) if any(out) else None


def make_scenario(
    name: str,
    path: pd.Series,
    day_types: Any = None,
    *,
    model_end: Any = None,
    max_days: int = MAX_DAYS,
) -> Scenario:
    """Check a temperature path (and day types) and make a :class:`Scenario`.

    Parameters
    ----------
    name : str
        Scenario label (not blank).
    path : pd.Series
        Daily maximum temperature, °C, indexed by consecutive dates. Values may be text as read
        from a file; anything that is not a finite number is refused with the date named.
    day_types : sequence of str or pd.Series, optional
        One day type per date; None, "" or NaN means "from the model's calendar" for that date.
    model_end : date-like, optional
        Last date of the model's history. When given the scenario must start the day after.
    max_days : int
        Longest allowed horizon, days (90 unless told otherwise).

    Returns
    -------
    Scenario

    Raises
    ------
    ScenarioError
        For a blank name, dates that are not consecutive days, a wrong start date, too few or too
        many days, a temperature that is not a number, or one outside -60..60 °C.
    """
    label = "" if name is None else str(name).strip()
    if not label:
        raise ScenarioError("The scenario has no name", where="scenario name", fix="Give it a name")
    where_name = f"scenario {label!r}"
    if not isinstance(path, pd.Series):
        raise ScenarioError(
            f"The temperature path must be a pandas Series, got {type(path).__name__}",
            where=where_name,
            fix="Build it with one of the path builders, e.g. constant_path",
        )
    n = len(path)
    limit = int(max_days)
    if n < 1:
        raise ScenarioError("The scenario has no days", where=where_name, fix="Give at least 1 day")
    if n > limit:
        raise ScenarioError(
            f"The scenario has {n} days, more than the {limit} allowed",
            where=where_name,
            fix=f"Shorten it to at most {limit} days",
        )
    try:
        index = pd.DatetimeIndex(path.index)
    except (TypeError, ValueError):
        raise ScenarioError(
            "The temperature path is not indexed by dates",
            where=where_name,
            fix="Index the path by date (YYYY-MM-DD)",
        ) from None
    if index.hasnans:
        raise ScenarioError("A date is missing", where=where_name, fix="Give a date for every day")
    if index.tz is not None:
        index = index.tz_localize(None)
    index = index.normalize().rename("date")
    steps = index[1:] - index[:-1]
    bad = np.flatnonzero(np.asarray(steps != pd.Timedelta(days=1)))
    if len(bad):
        i = int(bad[0])
        prev, this = index[i], index[i + 1]
        if this == prev:
            problem = f"Date {_iso(this)} appears twice"
        elif this < prev:
            problem = f"Date {_iso(this)} comes after {_iso(prev)}; dates must run forward"
        else:
            problem = f"Days are missing between {_iso(prev)} and {_iso(this)}"
        raise ScenarioError(
            problem,
            where=f"{where_name}, date {_iso(this)}",
            fix="Give consecutive days in date order, one row per day",
        )
    if model_end is not None:
        end = _as_day(model_end, "model end")
        expected = end + pd.Timedelta(days=1)
        if index[0] != expected:
            raise ScenarioError(
                f"The scenario starts on {_iso(index[0])} but the model's history ends on "
                f"{_iso(end)}",
                where=f"{where_name}, first date",
                fix=f"Start the scenario on {_iso(expected)}",
            )
    raw = path.to_numpy(dtype=object)
    temps = np.empty(n, dtype=float)
    for i, value in enumerate(raw):
        t = _number(value)
        if t is None:
            shown = "blank" if _is_blank(value) else repr(value)
            raise ScenarioError(
                f"The temperature is {shown}, not a number",
                where=f"{where_name}, date {_iso(index[i])}",
                fix="Give a daily maximum temperature for every day",
            )
        if not PLAUSIBLE_MIN_C <= t <= PLAUSIBLE_MAX_C:
            raise ScenarioError(
                f"The temperature {t:g} °C is outside the plausible range "
                f"{PLAUSIBLE_MIN_C:g} to {PLAUSIBLE_MAX_C:g} °C",
                where=f"{where_name}, date {_iso(index[i])}",
                fix="Check the value and the unit (°F values must be read with unit F)",
            )
        temps[i] = t
    types = _clean_day_types(day_types, index)
    return Scenario(label, index, temps, types)


def _is_blank(value: Any) -> bool:
    if value is None:
        return True
    if isinstance(value, str):
        return not value.strip()
    try:
        return bool(pd.isna(value))
    except (TypeError, ValueError):
        return False


def _number(value: Any) -> float | None:
    if _is_blank(value) or isinstance(value, bool):
        return None
    try:
        t = float(str(value).strip()) if isinstance(value, str) else float(value)
    except (TypeError, ValueError):
        return None
    return t if math.isfinite(t) else None


# ---------------------------------------------------------------------------------------------------
# Files


def read_scenario_csv(
    source: Any,
    *,
    temp_unit: str = "C",
    date_col: str = "date",
    temp_col: str = "temperature",
    day_type_col: str = "day_type",
    name: str | None = None,
    model_end: Any = None,
    max_days: int = MAX_DAYS,
) -> Scenario:
    """Read a scenario from a CSV file.

    The file has one row per day: a date column, a temperature column (daily maximum, in
    ``temp_unit``) and optionally a day-type column, where a blank cell means "from the calendar".

    Parameters
    ----------
    source : path, file-like, bytes or str of CSV text
        The file. A ``str`` is taken as a path unless it contains a line break.
    temp_unit : {"C", "F"}
        Unit of the temperature column; °F is converted to °C on reading.
    date_col, temp_col, day_type_col : str
        Column names (case and surrounding spaces are ignored).
    name : str, optional
        Scenario name; by default the file name without its extension, or "scenario".
    model_end : date-like, optional
        Last date of the model's history; the scenario must start the day after.
    max_days : int
        Longest allowed horizon, days.

    Returns
    -------
    Scenario

    Raises
    ------
    InputError
        When the file cannot be read.
    ScenarioError
        When a column is missing or a row fails the checks (the row number is named).
    """
    unit = units.parse_unit(temp_unit)
    read = files.read_text(source, what="scenario file")
    text, label = read.text, Path(read.label).name if read.label else ""
    where_file = f"file {label}" if label else "scenario file"
    try:
        frame = pd.read_csv(
            io.StringIO(text), dtype=str, keep_default_na=False, skipinitialspace=True
        )
    except (pd.errors.ParserError, pd.errors.EmptyDataError, ValueError) as exc:
        raise ScenarioError(
            f"The scenario file cannot be read as CSV: {str(exc).splitlines()[0] if str(exc) else exc}",
            where=where_file,
            fix="Save it as comma-separated text with a header row",
        ) from None
    columns = {str(c).strip().lower(): c for c in frame.columns}

    def find(col: str, required: bool) -> str | None:
        key = str(col).strip().lower()
        if key in columns:
            return columns[key]
        if required:
            found = ", ".join(str(c) for c in frame.columns) or "none"
            raise ScenarioError(
                f"The scenario file has no {col!r} column (columns found: {found})",
                where=where_file,
                fix=f"Name the column {col!r} or say which column to use",
            )
        return None

    dcol = find(date_col, True)
    tcol = find(temp_col, True)
    ycol = find(day_type_col, False)
    if frame.empty:
        raise ScenarioError(
            "The scenario file has no rows", where=where_file, fix="Add one row per day"
        )
    dates = []
    temps: list[Any] = []
    for row, (d, t) in enumerate(zip(frame[dcol], frame[tcol], strict=True), start=1):
        dates.append(_parse_one_date(str(d).strip(), f"{where_file}, row {row}, column {dcol}"))
        value = _number(t)
        if value is None:
            shown = "blank" if _is_blank(t) else repr(t)
            raise ScenarioError(
                f"The temperature is {shown}, not a number",
                where=f"{where_file}, row {row}, date {_iso(dates[-1])}",
                fix="Give a daily maximum temperature for every day",
            )
        temps.append(units.from_unit(value, unit))
    types = list(frame[ycol]) if ycol is not None else None
    path = pd.Series(temps, index=pd.DatetimeIndex(dates), dtype=float)
    scenario_name = name or (Path(label).stem if label else "") or "scenario"
    return make_scenario(scenario_name, path, types, model_end=model_end, max_days=max_days)


def write_scenario_csv(scenario: Scenario, *, temp_unit: str = "C") -> str:
    """The scenario as CSV text that :func:`read_scenario_csv` reads back.

    Parameters
    ----------
    scenario : Scenario
    temp_unit : {"C", "F"}
        Unit for the ``temperature`` column.

    Returns
    -------
    str
        Columns ``date``, ``temperature``, ``day_type`` (blank = from the calendar).
    """
    unit = units.parse_unit(temp_unit)
    temps = units.to_unit(np.asarray(scenario.temperature_c, dtype=float), unit)
    frame = pd.DataFrame(
        {
            "date": [_iso(d) for d in scenario.dates],
            "temperature": np.round(np.asarray(temps, dtype=float), 4),
            "day_type": list(scenario.day_types) if scenario.day_types else [""] * scenario.horizon,
        }
    )
    return frame.to_csv(index=False, lineterminator="\n")
