"""Scenario CSV files: one row per day with a date, a temperature and optionally a day type.

Temperatures in °F appear only here, at the edge (``temp_unit="F"``, converted by
:mod:`loadcore.units`); inside loadcore a scenario is in °C.
"""

from __future__ import annotations

import io
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from .. import files, units
from ..errors import ScenarioError, quote, quote_all
from .core import Scenario, make_scenario
from .values import MAX_DAYS, iso, not_a_number, number, parse_date


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
            found = quote_all(str(c) for c in frame.columns)
            raise ScenarioError(
                f"The scenario file has no {quote(col)} column (columns found: {found})",
                where=where_file,
                fix=f"Name the column {quote(col)} or say which column to use",
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
        dates.append(parse_date(str(d).strip(), f"{where_file}, row {row}, column {dcol}"))
        value = number(t)
        if value is None:
            raise not_a_number(t, f"{where_file}, row {row}, date {iso(dates[-1])}")
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
            "date": [iso(d) for d in scenario.dates],
            "temperature": np.round(np.asarray(temps, dtype=float), 4),
            "day_type": list(scenario.day_types) if scenario.day_types else [""] * scenario.horizon,
        }
    )
    return frame.to_csv(index=False, lineterminator="\n")
