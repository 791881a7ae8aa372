"""The Scenario type, validated once by its constructor, and :func:`make_scenario`.

A scenario is what the planner asks "what if" about: consecutive future days with a daily
maximum temperature for each (°C inside loadcore) and, where the planner wants to override the
calendar, a day type. ``Scenario(...)`` checks everything that needs no model (see
:mod:`loadcore.scenario.values`); a model checks only what needs it: where the scenario starts
relative to the history's end (:meth:`Scenario.check_start`) and the day types it knows.
"""

from __future__ import annotations

import json
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from ..errors import ScenarioError, quote
from . import definition as defn
from . import values
from .values import MAX_DAYS


@dataclass(frozen=True, eq=False)
class Scenario:
    """A forecast question: dates, daily maximum temperatures and optional day types.

    Parameters
    ----------
    name : str
        A label for the scenario, shown in tables, charts and exports (not blank; surrounding
        spaces are dropped).
    dates : DatetimeIndex or sequence of dates
        1 to :data:`MAX_DAYS` consecutive days in order (times and time zones are dropped).
    temperature_c : sequence of float
        Daily maximum temperature for each date, °C: finite, within -60..60 °C. Numbers written
        as text are accepted.
    day_types : sequence of str, optional
        A day type for each date, or None to take every day type from the model's calendar.
        A blank entry (None, "", NaN) means "from the calendar" for that date; names are
        normalised to lower_snake_case.
    temperature_min_c : sequence of float, optional
        Daily minimum temperature for each date, °C, for models that use it; a blank day (or
        None for all) takes the maximum less the history's typical spread for that calendar
        day (:mod:`loadcore.model.memory`).

    Raises
    ------
    ScenarioError
        For anything above that does not hold, naming the date.

    Notes
    -----
    After construction ``dates`` is a DatetimeIndex named ``date``, ``temperature_c`` a read-only
    float array, ``day_types`` None or a tuple of str with "" for "from the calendar" (None when
    every entry is blank), ``temperature_min_c`` None or a read-only float array with NaN for
    blank days. Scenarios compare by value.
    """

    name: str
    dates: pd.DatetimeIndex
    temperature_c: np.ndarray
    day_types: tuple[str, ...] | None = None
    temperature_min_c: np.ndarray | None = None

    def __post_init__(self) -> None:
        label = values.scenario_name(self.name)
        where = f"scenario {quote(label)}"
        dates = values.daily_dates(self.dates, where)
        values.check_length(len(dates), where)
        temps = values.temperatures(self.temperature_c, dates, where)
        types = values.day_types(self.day_types, dates, where)
        minima = values.minimum_temperatures(self.temperature_min_c, temps, dates, where)
        object.__setattr__(self, "temperature_min_c", minima)
        object.__setattr__(self, "name", label)
        object.__setattr__(self, "dates", dates)
        object.__setattr__(self, "temperature_c", temps)
        object.__setattr__(self, "day_types", types)

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

    def check_start(self, history_end: Any) -> None:
        """Raise ScenarioError unless the scenario starts between the day after
        ``history_end`` (the last day of a model's history) and
        :data:`~loadcore.scenario.values.MAX_LEAD_MONTHS` months after it."""
        values.check_start(self.start, history_end, f"scenario {quote(self.name)}")

    def day_types_with(self, calendar_types: Sequence[str]) -> tuple[str, ...]:
        """Every day's type: the scenario's own, or ``calendar_types`` (one per date, for
        example ``FittedModel.calendar_types(scenario.dates)``) where the scenario has none.

        This is the one place where "a blank day type means the calendar's" is decided.
        """
        return values.fill_blank_day_types(
            self.day_types, calendar_types, where=f"scenario {quote(self.name)}"
        )

    def fill_day_types(self, calendar_types: Sequence[str]) -> Scenario:
        """A copy whose blank day types are taken from ``calendar_types`` (see
        :meth:`day_types_with`): same name, dates and temperatures; every day has a type."""
        filled = self.day_types_with(calendar_types)
        return Scenario(self.name, self.dates, self.temperature_c, filled, self.temperature_min_c)

    def moved_to(self, start: Any) -> Scenario:
        """The same scenario on other dates: name, temperatures and own day types day by day,
        on consecutive days from ``start`` (for a window that no longer fits a newer model)."""
        first = values.parse_date(start, f"scenario {self.name!r}, new first date")
        dates = pd.date_range(first, periods=self.horizon, freq="D", name="date")
        return Scenario(
            self.name, dates, self.temperature_c.copy(), self.day_types, self.temperature_min_c
        )

    def to_frame(self) -> pd.DataFrame:
        """One row per day: ``date``, ``temperature_c`` (°C), ``day_type`` ("" = from the
        calendar), and ``temperature_min_c`` (°C, NaN = from the typical spread) when the
        scenario has minima."""
        frame = pd.DataFrame(
            {
                "date": self.dates,
                "temperature_c": self.temperature_c.copy(),
                "day_type": list(self._own_types()),
            }
        )
        if self.temperature_min_c is not None:
            frame["temperature_min_c"] = self.temperature_min_c.copy()
        return frame

    def _own_types(self) -> tuple[str, ...]:
        return self.day_types or ("",) * self.horizon

    def to_dict(self) -> dict[str, Any]:
        """A JSON-friendly scenario definition (:mod:`loadcore.scenario.definition`).

        Returns
        -------
        dict
            ``kind``, ``version``, ``name`` and ``days``: a list of ``{"date": "YYYY-MM-DD",
            "temperature_c": float, "day_type": str | None}``, None meaning "from the calendar",
            with ``"temperature_min_c": float | None`` on every day when the scenario has minima.
        """
        return defn.definition(
            self.name, self.dates, self.temperature_c, self._own_types(), self.temperature_min_c
        )

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
            Longest allowed horizon, days (at most :data:`MAX_DAYS`).

        Raises
        ------
        ScenarioError
            When the definition is not one loadcore wrote, or its contents fail the checks.
        """
        name, dates, temps, types, minima = defn.pieces(data)
        path = pd.Series(temps, index=pd.DatetimeIndex(dates), dtype=object)
        return make_scenario(
            name, path, types, model_end=model_end, max_days=max_days, temperature_min_c=minima
        )

    @classmethod
    def from_json(cls, text: str | bytes, **kwargs: Any) -> Scenario:
        """Rebuild a scenario from :meth:`to_json` text; keyword arguments as :meth:`from_dict`."""
        return cls.from_dict(defn.parse_json(text), **kwargs)

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, Scenario):
            return NotImplemented
        return (
            self.name == other.name
            and self.dates.equals(other.dates)
            and np.array_equal(self.temperature_c, other.temperature_c)
            and self.day_types == other.day_types
            and (
                (self.temperature_min_c is None and other.temperature_min_c is None)
                or (
                    self.temperature_min_c is not None
                    and other.temperature_min_c is not None
                    and np.array_equal(
                        self.temperature_min_c, other.temperature_min_c, equal_nan=True
                    )
                )
            )
        )

    __hash__ = None  # type: ignore[assignment]


def _aligned_day_types(day_types: Any, index: pd.DatetimeIndex, what: str = "day types") -> Any:
    """Day types (or minima) given as a Series on dates, put in the order of ``index``."""
    if not (isinstance(day_types, pd.Series) and isinstance(day_types.index, pd.DatetimeIndex)):
        return day_types
    aligned = day_types.copy()
    aligned.index = aligned.index.normalize()
    if not aligned.index.equals(index):
        raise ScenarioError(
            f"The {what} are on different dates from the temperatures",
            where=what,
            fix=f"Give {what} on the same dates as the temperature path",
        )
    return list(aligned.to_numpy())


def make_scenario(
    name: str,
    path: pd.Series,
    day_types: Any = None,
    *,
    model_end: Any = None,
    max_days: int = MAX_DAYS,
    temperature_min_c: Any = None,
) -> Scenario:
    """Make a :class:`Scenario` from a temperature path (and day types, and minima).

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
        Last date of the model's history. When given the scenario must start from the day
        after it to :data:`~loadcore.scenario.values.MAX_LEAD_MONTHS` months after it
        (:meth:`Scenario.check_start`, the check a model makes again before it forecasts).
    max_days : int
        Longest allowed horizon, days: :data:`MAX_DAYS` unless a caller wants fewer.
    temperature_min_c : sequence of float or pd.Series, optional
        Daily minimum temperatures, °C, one per date (blank = from the history's typical
        spread); a Series must be on the path's dates.

    Returns
    -------
    Scenario

    Raises
    ------
    ScenarioError
        For a blank name, dates that are not consecutive days, a wrong start date, too few or too
        many days, a temperature that is not a number, or one outside -60..60 °C.
    """
    label = values.scenario_name(name)
    where = f"scenario {quote(label)}"
    if not isinstance(path, pd.Series):
        raise ScenarioError(
            f"The temperature path must be a pandas Series, got {type(path).__name__}",
            where=where,
            fix="Build it with one of the path builders, e.g. constant_path",
        )
    values.check_length(len(path), where, max_days)
    index = values.daily_dates(path.index, where)
    scenario = Scenario(
        label,
        index,
        path.to_numpy(dtype=object),
        _aligned_day_types(day_types, index),
        _aligned_day_types(temperature_min_c, index, "minimum temperatures"),
    )
    if model_end is not None:
        scenario.check_start(model_end)
    return scenario


def same_days_after(start: Any, history_end: Any) -> pd.Timestamp:
    """The same calendar day as ``start`` in the first later year in which it falls after
    ``history_end`` (29 February becomes 28 February in a common year).

    Parameters
    ----------
    start : date-like
        First day of a window.
    history_end : date-like
        Last day of a model's history.

    Returns
    -------
    pandas.Timestamp
        ``start`` moved by whole years (at least one) to the first date after ``history_end``.
    """
    first = values.parse_date(start, "window start")
    end = values.parse_date(history_end, "model end")
    years = 1
    while first + pd.DateOffset(years=years) <= end:
        years += 1
    return pd.Timestamp(first + pd.DateOffset(years=years))
