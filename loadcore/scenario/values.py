"""The scenario rules, each in one place: days, dates, temperatures, day types, the start.

Everything that decides whether a scenario is acceptable without a model is here, used by the
:class:`~loadcore.scenario.Scenario` constructor (which checks every scenario once), by the path
builders and by the file readers. The one rule that needs a model, where the scenario may start
relative to the history's end, is :func:`check_start`, which the model calls.

The window limits have one owner each, here: :data:`MAX_DAYS` (its length) and
:data:`MAX_LEAD_MONTHS` (how far after the history's end it may start).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import numpy as np
import pandas as pd

from .. import units
from ..calendar import normalise_type_name
from ..errors import InputError, ScenarioError, quote

#: Plausibility limits for a daily maximum air temperature, °C (loadcore.units owns them).
PLAUSIBLE_MIN_C = units.PLAUSIBLE_MIN_C
PLAUSIBLE_MAX_C = units.PLAUSIBLE_MAX_C

#: Longest scenario, days (product specification: a full quarter of 92 days at most): the one
#: length limit of scenarios and forecasts.
MAX_DAYS = 92

#: Latest start of a scenario window, months after the history's last day (product
#: specification: any window of the coming two years).
MAX_LEAD_MONTHS = 24

#: A minimum may exceed the day's maximum by this much, °C (rounding of the two readings; the
#: tolerance the history check allows, our choice there).
MINIMUM_ABOVE_MAXIMUM_C = 0.5


def iso(ts: Any) -> str:
    return pd.Timestamp(ts).strftime("%Y-%m-%d")


def cap(text: str) -> str:
    return text[:1].upper() + text[1:]


def is_blank(value: Any) -> bool:
    """None, an empty or all-space text, NaN or a missing marker of pandas."""
    if value is None:
        return True
    if isinstance(value, str):
        return not value.strip()
    try:
        return bool(pd.isna(value))
    except (TypeError, ValueError):
        return False


def number(value: Any) -> float | None:
    """A finite number from a number or a text, or None."""
    if is_blank(value) or isinstance(value, bool):
        return None
    try:
        t = float(str(value).strip()) if isinstance(value, str) else float(value)
    except (TypeError, ValueError, OverflowError):
        return None
    return t if math.isfinite(t) else None


def not_a_number(value: Any, where: str) -> ScenarioError:
    """The one message for a temperature that is not a number."""
    shown = "blank" if is_blank(value) else quote(value)
    return ScenarioError(
        f"The temperature is {shown}: missing or not a number",
        where=where,
        fix="Give a daily maximum temperature for every day",
    )


def parse_date(value: Any, where: str) -> pd.Timestamp:
    """One date (midnight), or a ScenarioError naming ``where``."""
    try:
        ts = pd.Timestamp(value)
    except (ValueError, TypeError, OverflowError):
        ts = pd.NaT
    if ts is pd.NaT or pd.isna(ts):
        raise ScenarioError(
            f"{quote(value)} is not a date", where=where, fix="Write dates as YYYY-MM-DD"
        )
    if ts.tz is not None:
        ts = ts.tz_localize(None)
    return ts.normalize()


def scenario_name(name: Any) -> str:
    """A scenario's label: not blank, surrounding spaces dropped."""
    label = "" if name is None else str(name).strip()
    if not label:
        raise ScenarioError("The scenario has no name", where="scenario name", fix="Give it a name")
    return label


def check_days(days: Any, what: str = "days") -> int:
    """A whole number of days of at least 1."""
    try:
        n = int(days)
    except (TypeError, ValueError, OverflowError):
        n = -1
    if n != days or n < 1:
        raise ScenarioError(
            f"{cap(what)} must be a whole number of at least 1, got {quote(days)}",
            where=what,
            fix="Give a positive whole number of days",
        )
    return n


def check_length(n: int, where: str, limit: int = MAX_DAYS) -> None:
    """1 to ``limit`` (at most :data:`MAX_DAYS`) days."""
    if n < 1:
        raise ScenarioError("The scenario has no days", where=where, fix="Give at least 1 day")
    limit = min(int(limit), MAX_DAYS)
    if n > limit:
        raise ScenarioError(
            f"The scenario has {n} days, more than the {limit} allowed",
            where=where,
            fix=f"Shorten it to at most {limit} days or split it",
        )


def check_temperature(value: Any, what: str) -> float:
    """A finite temperature argument of a path builder, °C."""
    try:
        t = float(value)
    except (TypeError, ValueError, OverflowError):
        t = math.nan
    if not math.isfinite(t):
        raise ScenarioError(
            f"{cap(what)} must be a number, got {quote(value)}",
            where=what,
            fix="Give a temperature in °C",
        )
    return t


def daily_dates(values: Any, where: str) -> pd.DatetimeIndex:
    """Consecutive days in order (midnight, no time zone), named ``date``."""
    try:
        index = pd.DatetimeIndex(values)
    except (TypeError, ValueError, OverflowError):
        raise ScenarioError(
            "The scenario dates are not dates",
            where=where,
            fix="Index the path by date (YYYY-MM-DD)",
        ) from None
    if index.hasnans:
        raise ScenarioError("A date is missing", where=where, fix="Give a date for every day")
    if index.tz is not None:
        index = index.tz_localize(None)
    index = index.normalize().rename("date")
    steps = index[1:] - index[:-1]
    bad = np.flatnonzero(np.asarray(steps != pd.Timedelta(days=1)))
    if len(bad):
        i = int(bad[0])
        prev, this = index[i], index[i + 1]
        if this == prev:
            problem = f"Date {iso(this)} appears twice"
        elif this < prev:
            problem = f"Date {iso(this)} comes after {iso(prev)}; dates must run forward"
        else:
            problem = f"Days are missing between {iso(prev)} and {iso(this)}"
        raise ScenarioError(
            problem,
            where=f"{where}, date {iso(this)}",
            fix="Give consecutive days in date order, one row per day",
        )
    return index


def temperatures(values: Any, dates: pd.DatetimeIndex, where: str) -> np.ndarray:
    """One finite, plausible daily maximum temperature (°C) per date, read-only float array."""
    raw = np.asarray(values)
    if raw.ndim != 1:
        raw = raw.reshape(-1)
    if len(raw) != len(dates):
        raise ScenarioError(
            f"The scenario has {len(dates)} dates but {len(raw)} temperatures",
            where=where,
            fix="Give exactly one temperature for each date",
        )
    if raw.dtype.kind in "fiu":
        temps = raw.astype(float)
        bad = np.flatnonzero(~np.isfinite(temps))
        if len(bad):
            raise not_a_number(raw[bad[0]], f"{where}, date {iso(dates[bad[0]])}")
    else:
        temps = np.empty(len(raw), dtype=float)
        for i, value in enumerate(raw):
            t = number(value)
            if t is None:
                raise not_a_number(value, f"{where}, date {iso(dates[i])}")
            temps[i] = t
    outside = np.flatnonzero((temps < PLAUSIBLE_MIN_C) | (temps > PLAUSIBLE_MAX_C))
    if len(outside):
        i = int(outside[0])
        raise ScenarioError(
            f"The temperature {temps[i]:g} °C is outside the plausible range "
            f"{PLAUSIBLE_MIN_C:g} to {PLAUSIBLE_MAX_C:g} °C",
            where=f"{where}, date {iso(dates[i])}",
            fix="Check the value and the unit (°F values must be read with unit F)",
        )
    temps.setflags(write=False)
    return temps


def minimum_temperatures(
    values: Any, maxima_c: np.ndarray, dates: pd.DatetimeIndex, where: str
) -> np.ndarray | None:
    """Daily minimum temperatures (°C) for a scenario, or None when none is given.

    Blank days (None, "", NaN) are allowed and stay NaN ("from the history's typical spread");
    a given minimum must be a plausible number and not above the day's maximum (by more than
    :data:`MINIMUM_ABOVE_MAXIMUM_C`). Read-only float array.
    """
    if values is None:
        return None
    raw = np.asarray(values, dtype=object).reshape(-1)
    if len(raw) != len(dates):
        raise ScenarioError(
            f"The scenario has {len(dates)} dates but {len(raw)} minimum temperatures",
            where=where,
            fix="Give one minimum temperature (or a blank) for each date",
        )
    out = np.full(len(raw), np.nan)
    for i, value in enumerate(raw):
        if is_blank(value):
            continue
        t = number(value)
        at = f"{where}, date {iso(dates[i])}"
        if t is None:
            raise ScenarioError(
                f"The minimum temperature is {quote(value)}: not a number",
                where=at,
                fix="Give a number or leave it blank (blank: from the history's typical spread)",
            )
        if not PLAUSIBLE_MIN_C <= t <= PLAUSIBLE_MAX_C:
            raise ScenarioError(
                f"The minimum temperature {t:g} °C is outside the plausible range "
                f"{PLAUSIBLE_MIN_C:g} to {PLAUSIBLE_MAX_C:g} °C",
                where=at,
                fix="Check the value and the unit (°F values must be read with unit F)",
            )
        if t > maxima_c[i] + MINIMUM_ABOVE_MAXIMUM_C:
            raise ScenarioError(
                f"The minimum temperature {t:g} °C is above the day's maximum {maxima_c[i]:g} °C",
                where=at,
                fix="Check that the minimum and maximum columns are not swapped",
            )
        out[i] = t
    if np.isnan(out).all():
        return None
    out.setflags(write=False)
    return out


def day_types(values: Any, dates: pd.DatetimeIndex, where: str) -> tuple[str, ...] | None:
    """Day types in lower_snake_case, "" for "from the calendar"; None when all are blank."""
    if values is None:
        return None
    if isinstance(values, str):
        raise ScenarioError(
            "Day types must be one per date, not a single text",
            where=f"{where}, day types",
            fix="Give a list with one day type per date, or none to use the calendar",
        )
    values = list(values)
    if len(values) != len(dates):
        raise ScenarioError(
            f"The scenario has {len(dates)} dates but {len(values)} day types",
            where=where,
            fix="Give one day type for each date (blank = from the calendar), or none at all",
        )
    out = []
    for day, v in zip(dates, values, strict=True):
        if is_blank(v):
            out.append("")
            continue
        try:
            out.append(normalise_type_name(str(v)))
        except InputError:
            raise ScenarioError(
                f"The day type {quote(v)} has no letters or digits",
                where=f"{where}, day types, date {iso(day)}",
                fix="Leave it blank to use the calendar, or give a name such as holiday",
            ) from None
    return tuple(out) if any(out) else None


def fill_blank_day_types(
    given: Sequence[Any] | None, calendar_types: Sequence[Any], where: str = "day types"
) -> tuple[str, ...]:
    """The one rule "a blank day type means the calendar's": ``given`` (None, or one per day,
    blank = from the calendar) completed from ``calendar_types`` (one per day)."""
    calendar = [str(t) for t in calendar_types]
    if given is None:
        return tuple(calendar)
    given = list(given)
    if len(given) != len(calendar):
        raise ScenarioError(
            f"{len(calendar)} calendar day types were given for {len(given)} days",
            where=where,
            fix="Give one calendar day type for each day",
        )
    return tuple(
        cal if is_blank(mine) else str(mine).strip()
        for mine, cal in zip(given, calendar, strict=True)
    )


def earliest_start(history_end: Any) -> pd.Timestamp:
    """The first day a scenario may start: the day after the history's last day."""
    return parse_date(history_end, "model end") + pd.Timedelta(days=1)


def latest_start(history_end: Any) -> pd.Timestamp:
    """The last day a scenario may start: :data:`MAX_LEAD_MONTHS` months after the history's
    last day (the same day of the month, or the month's last day when it has no such day)."""
    end = parse_date(history_end, "model end")
    return pd.Timestamp(end + pd.DateOffset(months=MAX_LEAD_MONTHS))


def gap_days(start: Any, history_end: Any) -> int:
    """Days between the history's last day and a window starting on ``start`` (0 when the
    window starts the day after the history ends)."""
    first = parse_date(start, "window start")
    return int((first - earliest_start(history_end)).days)


def check_start(start: Any, history_end: Any, where: str) -> None:
    """The scenario must start between the day after the model's history ends and
    :data:`MAX_LEAD_MONTHS` months after it (the one rule of the window's position; it needs
    the model's history end, so the model calls it)."""
    end = parse_date(history_end, "model end")
    first, last = earliest_start(end), latest_start(end)
    start = parse_date(start, where)
    if start < first:
        raise ScenarioError(
            f"The scenario starts on {iso(start)}, but the model's history runs to {iso(end)}",
            where=f"{where}, first date",
            fix=f"Start the scenario on a day from {iso(first)} to {iso(last)} "
            f"(at most {MAX_LEAD_MONTHS} months after the history)",
        )
    if start > last:
        raise ScenarioError(
            f"The scenario starts on {iso(start)}, more than {MAX_LEAD_MONTHS} months after "
            f"the model's history ends on {iso(end)}",
            where=f"{where}, first date",
            fix=f"Start the scenario on a day from {iso(first)} to {iso(last)}, or refit the "
            "model on a newer history",
        )
