"""The history check as a short pipeline, and the two public entry points.

source -> raw columns (:mod:`~loadcore.history.reading`) -> dates and numbers
(:mod:`~loadcore.history.parsing`) -> °C and plausible values (here) -> one row per day and the
complete daily table (:mod:`~loadcore.history.daily`). Every stage adds what it finds to one
:class:`~loadcore.history.report.Collector`. :func:`check_history` returns the report and never
raises for problems in the data; :func:`read_history` returns a :class:`History` or raises
:class:`~loadcore.errors.HistoryError` carrying the report.
"""

from __future__ import annotations

import logging
from typing import Any

import numpy as np
import pandas as pd

from loadcore import units
from loadcore.errors import HistoryError, clip
from loadcore.history.daily import complete_daily, to_daily
from loadcore.history.hours import within_day
from loadcore.history.outliers import find_outliers
from loadcore.history.parsing import parse_dates, parse_numbers
from loadcore.history.reading import RawColumns, read_raw, source_label
from loadcore.history.report import Collector, HistoryReport, Issue, iso_date
from loadcore.history.settings import HistorySettings
from loadcore.history.table import History

logger = logging.getLogger(__name__)

# Physical plausibility bounds for a daily temperature, °C (loadcore.units owns them).
TEMP_MIN_C = units.PLAUSIBLE_MIN_C
TEMP_MAX_C = units.PLAUSIBLE_MAX_C


def _to_celsius(temp: np.ndarray, settings: HistorySettings) -> np.ndarray:
    """The file's temperatures in °C (:func:`loadcore.units.from_unit`)."""
    return units.from_unit(temp, settings.temp_unit)


def _check_values(
    raw: RawColumns,
    stamps: pd.Series,
    demand: np.ndarray,
    temps: list[tuple[np.ndarray, str]],
    settings: HistorySettings,
    issues: Collector,
) -> None:
    """Temperatures (°C) outside the plausible range and demand at or below zero are errors.

    ``temps`` holds each temperature column in °C with its name in the file.
    """
    demand_name = raw.names[1]
    for temp, temp_name in temps:
        _check_temperatures(raw, stamps, temp, temp_name, settings, issues)
    nonpositive = np.flatnonzero(~np.isnan(demand) & (demand <= 0))
    if len(nonpositive):
        issues.many(
            "error",
            lambda i: (
                f"The demand is {demand[nonpositive[i]]:g}; it must be above zero because the "
                "model works with the logarithm of demand",
                {
                    "row": int(raw.rows[nonpositive[i]]),
                    "date": iso_date(stamps.iloc[nonpositive[i]]),
                },
            ),
            len(nonpositive),
            kind="zero or negative demand values",
            fix="Correct the value, or leave the cell blank to mark the day as missing",
            column=demand_name,
            rows=[int(raw.rows[p]) for p in nonpositive],
        )


def _check_temperatures(
    raw: RawColumns,
    stamps: pd.Series,
    temp: np.ndarray,
    temp_name: str,
    settings: HistorySettings,
    issues: Collector,
) -> None:
    """Temperatures (°C) outside the plausible range are errors."""
    implausible = np.flatnonzero(~np.isnan(temp) & ((temp < TEMP_MIN_C) | (temp > TEMP_MAX_C)))
    if len(implausible):
        hint = (
            " If the file is in °F, set temp_unit to 'F'"
            if settings.temp_unit == "C" and np.nanmax(temp) > TEMP_MAX_C
            else ""
        )
        issues.many(
            "error",
            lambda i: (
                f"The temperature {temp[implausible[i]]:.1f} °C is outside the plausible range "
                f"{TEMP_MIN_C:.0f} to {TEMP_MAX_C:.0f} °C",
                {
                    "row": int(raw.rows[implausible[i]]),
                    "date": iso_date(stamps.iloc[implausible[i]]),
                },
            ),
            len(implausible),
            kind="implausible temperatures",
            fix="Correct the value or leave the cell blank." + hint,
            column=temp_name,
            rows=[int(raw.rows[p]) for p in implausible],
        )


def _check_minimum(
    raw: RawColumns,
    stamps: pd.Series,
    temp: np.ndarray,
    temp_min: np.ndarray,
    issues: Collector,
) -> None:
    """A minimum temperature above the row's temperature is an error (columns swapped?)."""
    # Half a degree allows for rounding in files that store whole degrees (our choice).
    above = np.flatnonzero(~np.isnan(temp) & ~np.isnan(temp_min) & (temp_min > temp + 0.5))
    if len(above):
        issues.many(
            "error",
            lambda i: (
                f"The minimum temperature {temp_min[above[i]]:.1f} °C is above the temperature "
                f"{temp[above[i]]:.1f} °C",
                {"row": int(raw.rows[above[i]]), "date": iso_date(stamps.iloc[above[i]])},
            ),
            len(above),
            kind="minimum temperatures above the temperature",
            fix="Check that the Minimum temperature column (--temp-min-col) holds the daily "
            "minima and the Temperature column (--temp-col) the maxima (or means)",
            column=raw.temp_min_name,
            rows=[int(raw.rows[p]) for p in above],
        )


def _place_in_day(
    raw: RawColumns, stamps: pd.Series, issues: Collector
) -> tuple[pd.Series, pd.Series]:
    """Timestamps from the date column and the hour column, and each row's date.

    The date column must then hold whole dates; an hour beyond the day (hour 25 of an autumn
    daylight-saving day) keeps the date its row gives.
    """
    dates = stamps
    timed = (dates.notna() & (dates != dates.dt.normalize())).to_numpy()
    if timed.any():
        issues.add(
            "error",
            "The date column already carries a time of day, and an hour column is named too",
            row=int(raw.rows[np.flatnonzero(timed)[0]]),
            column=raw.names[0],
            fix="Leave the Hour column empty (no --hour-col) when the dates carry their times",
        )
        return stamps, dates
    place = within_day(raw.hour, raw.rows, dates, raw.hour_name, issues)
    return dates + pd.to_timedelta(place.offset), dates


def _analyse(source: Any, settings: HistorySettings) -> tuple[HistoryReport, pd.DataFrame | None]:
    """The report and, when it has no errors, the complete daily table."""
    issues = Collector()
    raw = read_raw(source, settings, issues)
    if raw is None:
        return issues.report(), None
    if len(raw.rows) == 0:
        issues.add(
            "error", "The history has a header but no data rows", fix="Choose a file with data"
        )
        return issues.report(), None
    _, demand_name, temp_name = raw.names
    stamps = parse_dates(raw, settings, issues)
    day = None
    if raw.hour is not None:
        stamps, day = _place_in_day(raw, stamps, issues)
    layout = {"decimal": settings.decimal}
    demand = parse_numbers(
        raw.demand, raw, stamps, demand_name, "demand", issues, other=raw.temperature, **layout
    )
    temp = _to_celsius(
        parse_numbers(
            raw.temperature,
            raw,
            stamps,
            temp_name,
            "temperature",
            issues,
            other=raw.demand,
            **layout,
        ),
        settings,
    )
    temps = [(temp, temp_name)]
    temp_min = None
    if raw.temp_min is not None:
        label = "minimum temperature"
        temp_min = _to_celsius(
            parse_numbers(
                raw.temp_min,
                raw,
                stamps,
                raw.temp_min_name,
                label,
                issues,
                other=raw.temperature,
                **layout,
            ),
            settings,
        )
        temps.append((temp_min, raw.temp_min_name))
        _check_minimum(raw, stamps, temp, temp_min, issues)
    _check_values(raw, stamps, demand, temps, settings, issues)  # rows still in file order

    valid = stamps.notna().to_numpy()
    if not valid.any():
        return issues.report(), None
    daily = to_daily(
        stamps[valid].reset_index(drop=True),
        raw.rows[valid],
        demand[valid],
        temp[valid],
        settings,
        raw.names,
        issues,
        day=None if day is None else day[valid].reset_index(drop=True),
        temp_min=None if temp_min is None else temp_min[valid],
        other_columns=raw.unused,
    )
    if issues.has_errors:
        return issues.report(), None
    frame = complete_daily(daily, settings, raw.names, issues)
    if frame is not None:
        frame = _flag_outliers(frame, settings, raw.names[1], issues)
    return issues.report(), frame


def _amount(value: float) -> str:
    """A demand as a planner reads it: whole units with thousands separators, else 4 digits."""
    return f"{value:,.0f}" if abs(value) >= 1000 else f"{value:.4g}"


def _flag_outliers(
    frame: pd.DataFrame, settings: HistorySettings, demand_name: str, issues: Collector
) -> pd.DataFrame:
    """Report the days whose demand looks like a data error (:mod:`~loadcore.history.outliers`)
    with their date and value; with ``drop_outliers`` they become missing demand."""
    found = find_outliers(frame["demand"])
    unit = settings.demand_unit
    dropped = settings.drop_outliers

    def one(i: int) -> tuple[str, dict[str, Any]]:
        o = found[i]
        times = f"{o.ratio:,.3g} times" if o.ratio >= 1 else f"1/{1 / o.ratio:,.3g} of"
        tail = "; it was treated as missing" if dropped else "; it may be a data error"
        return (
            f"The demand {_amount(o.demand)} {unit} departs from the days around it and from the same "
            f"weekday in nearby weeks ({times} the usual {o.typical:,.0f} {unit}){tail}",
            {"date": iso_date(o.date)},
        )

    issues.many(
        "warning",
        one,
        len(found),
        kind="outlying demand values",
        fix="Nothing more to do; the day counts as missing"
        if dropped
        else "Check the value in the source; to leave such days out of the fit, use "
        "--drop-outliers (or the History page's outlier box)",
        column=demand_name,
    )
    if dropped and found:
        frame = frame.copy()
        frame.loc[[o.date for o in found], "demand"] = np.nan
    return frame


def _analyse_safely(
    source: Any, settings: HistorySettings
) -> tuple[HistoryReport, pd.DataFrame | None]:
    """:func:`_analyse`, with any unforeseen failure turned into an error in the report."""
    try:
        return _analyse(source, settings)
    except Exception as exc:  # noqa: BLE001 - the user must get a report, never a traceback
        logger.exception("unexpected failure while checking a history")
        issue = Issue(
            "error",
            f"The history could not be checked because of an unexpected problem ({clip(exc)})",
            fix="Check that the file is a plain CSV table; if it is, report this to the "
            "loadcore maintainers with the file",
        )
        return HistoryReport((issue,)), None


def check_history(source: Any, settings: HistorySettings = HistorySettings()) -> HistoryReport:  # noqa: B008
    """Check a history without raising for problems in the data.

    Parameters
    ----------
    source : path, file-like, bytes or DataFrame
        The history.
    settings : HistorySettings
        Column names, units and limits.

    Returns
    -------
    HistoryReport
        Every error, warning and note found.
    """
    report, _ = _analyse_safely(source, settings)
    return report


def _place(message: str, label: str) -> str | None:
    """The source's name for an error's place, unless the message already names it."""
    return None if label and f"({label})" in message else label


def read_history(source: Any, settings: HistorySettings = HistorySettings()) -> History:  # noqa: B008
    """Read and validate a history into a complete daily table.

    Parameters
    ----------
    source : path, file-like, bytes or DataFrame
        CSV with a date column, a demand column (in ``settings.demand_unit``) and a temperature
        column (°C or °F per ``settings.temp_unit``); daily or sub-daily rows.
    settings : HistorySettings
        Column names, units and limits.

    Returns
    -------
    History
        The daily table, the settings, the report and the data's fingerprint.

    Raises
    ------
    HistoryError
        When the report has errors; ``err.report`` holds the full report.
    """
    report, frame = _analyse_safely(source, settings)
    if frame is None or not report.ok:
        errors = report.errors
        first = errors[0] if errors else Issue("error", "The history could not be read")
        more = (
            f" (and {len(errors) - 1} more problem(s); see the report)" if len(errors) > 1 else ""
        )
        raise HistoryError(
            first.message + more,
            report=report,
            where=first.where() or _place(first.message, source_label(source)),
            fix=first.fix or None,
        )
    for issue in report.warnings:
        logger.info("history warning: %s", issue.message)
    return History(frame=frame, settings=settings, report=report)
