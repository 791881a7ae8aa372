"""Scenario CSV files: one row per day with a date, a temperature and optionally a day type.

Temperatures in °F appear only here, at the edge (``temp_unit="F"``, converted by
:mod:`loadcore.units`); inside loadcore a scenario is in °C.
"""

from __future__ import annotations

import csv
import io
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from .. import files, tables, units
from ..errors import ScenarioError, clip, quote, quote_all
from ..history import numbers as layout
from .core import Scenario, make_scenario
from .values import MAX_DAYS, iso, not_a_number, parse_date

#: Most of a scenario file that is read, bytes: ample for the longest scenario (one row per day)
#: with a few extra columns; a larger file is refused without reading the rest (our choice).
HEAD_BYTES = 2 * 1024 * 1024


def read_scenario_csv(
    source: Any,
    *,
    temp_unit: str = "C",
    date_col: str = "date",
    temp_col: str = "temperature",
    day_type_col: str = "day_type",
    temp_min_col: str = "temperature_min",
    name: str | None = None,
    model_end: Any = None,
    max_days: int = MAX_DAYS,
) -> Scenario:
    """Read a scenario from a CSV file.

    The file has one row per day: a date column, a temperature column (daily maximum, in
    ``temp_unit``) and optionally a day-type column, where a blank cell means "from the calendar".
    The delimiter (comma, semicolon, tab or pipe) and the header row are found as for histories
    (:mod:`loadcore.tables`), and so is the temperatures' decimal mark
    (:mod:`loadcore.history.numbers`); notes above the header are skipped. Reading stops at the first row
    past the day limit, so a long file is refused without being parsed whole.

    Parameters
    ----------
    source : path, file-like, bytes or str of CSV text
        The file. A ``str`` is taken as a path unless it contains a line break.
    temp_unit : {"C", "F"}
        Unit of the temperature column; °F is converted to °C on reading.
    date_col, temp_col, day_type_col : str
        Column names (case and surrounding spaces are ignored).
    temp_min_col : str
        Optional column of daily minimum temperatures (``temp_unit``), for models that use
        the daily minimum; a blank cell takes the history's typical max-min spread.
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
    limit = min(int(max_days), MAX_DAYS)
    read = files.read_head(source, what="scenario file", n_bytes=HEAD_BYTES)
    label = Path(read.label).name if read.label else ""
    where_file = f"file {label}" if label else "scenario file"
    header, rows = _records(read, (date_col, temp_col), limit, where_file)
    columns = {tables.norm_name(c): i for i, c in reversed(list(enumerate(header)))}

    def find(col: str, required: bool) -> int | None:
        key = tables.norm_name(col)
        if key in columns:
            return columns[key]
        if required:
            raise ScenarioError(
                f"The scenario file has no {quote(col)} column (columns found: "
                f"{quote_all(c.strip() for c in header)})",
                where=where_file,
                fix=f"Name the column {quote(col)} or say which column to use",
            )
        return None

    dcol, tcol, ycol = find(date_col, True), find(temp_col, True), find(day_type_col, False)
    mcol = find(temp_min_col, False)
    if not rows:
        raise ScenarioError(
            "The scenario file has no rows", where=where_file, fix="Add one row per day"
        )
    for row, record in enumerate(rows, start=1):
        if len(record) <= max(dcol, tcol):
            raise ScenarioError(
                f"This row has {len(record)} field(s) but the header has {len(header)}",
                where=f"{where_file}, row {row}",
                fix="Give every row a date and a temperature",
            )
    dates = [
        parse_date(r[dcol].strip(), f"{where_file}, row {i}, column {header[dcol].strip()}")
        for i, r in enumerate(rows, start=1)
    ]
    cells = pd.Series([layout.clean(r[tcol].strip()) for r in rows], dtype=object)
    decision = layout.decide(layout.evidence(cells), None, "temperature", None)
    if decision.problem:
        raise ScenarioError(decision.problem, where=where_file, fix=decision.fix)
    values = layout.to_numbers(cells, decision.decimal)
    temps = []
    for i, (value, record) in enumerate(zip(values, rows, strict=True)):
        if not np.isfinite(value):
            raise not_a_number(record[tcol], f"{where_file}, row {i + 1}, date {iso(dates[i])}")
        temps.append(units.from_unit(float(value), unit))
    types = [r[ycol] if ycol is not None and ycol < len(r) else "" for r in rows]
    path = pd.Series(temps, index=pd.DatetimeIndex(dates), dtype=float)
    scenario_name = name or (Path(label).stem if label else "") or "scenario"
    day_types = types if ycol is not None else None
    minima = None
    if mcol is not None:
        minima = _minima(
            rows, mcol, header[mcol].strip(), dates, unit, decision.decimal, where_file
        )
    return make_scenario(
        scenario_name,
        path,
        day_types,
        model_end=model_end,
        max_days=max_days,
        temperature_min_c=minima,
    )


def _minima(
    rows: list[list[str]],
    col: int,
    col_name: str,
    dates: list[pd.Timestamp],
    unit: units.Unit,
    decimal: str,
    where_file: str,
) -> list[float]:
    """The minimum column in °C, NaN for blank cells; text that is not a number is an error
    naming the row (the maxima's decimal mark is used)."""
    cells = pd.Series(
        [layout.clean(r[col].strip()) if col < len(r) else "" for r in rows], dtype=object
    )
    values = layout.to_numbers(cells, decimal)
    out = []
    for i, (cell, value) in enumerate(zip(cells, values, strict=True)):
        if not np.isfinite(value):
            if str(cell).strip():
                raise ScenarioError(
                    f"The minimum temperature {quote(cell)} is not a number",
                    where=f"{where_file}, row {i + 1}, date {iso(dates[i])}, column {col_name}",
                    fix="Give a number or leave the cell blank (blank: from the history's "
                    "typical max-min spread)",
                )
            out.append(float("nan"))
        else:
            out.append(units.from_unit(float(value), unit))
    return out


def _records(
    read: files.TextFile, wanted: tuple[str, str], limit: int, where_file: str
) -> tuple[list[str], list[list[str]]]:
    """The header and the data rows (blank rows left out), read only as far as the day limit:
    a row past ``limit`` stops the reading with an error, so a huge file is never parsed whole."""
    lines = read.text[: 64 * 1024].splitlines()
    delim = tables.detect_delimiter(lines, wanted)
    reader = csv.reader(io.StringIO(read.text, newline=""), delimiter=delim, skipinitialspace=True)
    head: list[list[str]] = []
    try:
        for record in reader:
            head.append(record)
            if len(head) >= tables.HEADER_SEARCH_LINES or tables.find_header([record], wanted) == 0:
                break
        at = tables.find_header(head, wanted)
        header = head[at] if at is not None else next((r for r in head if any(r)), [])
        rows: list[list[str]] = [] if at is not None else [r for r in head[1:] if any(r)]
        if at is not None:
            for record in reader:
                if not "".join(record).strip():
                    continue
                rows.append(record)
                if len(rows) > limit:
                    raise ScenarioError(
                        f"The scenario file has more than {limit} days (rows)",
                        where=where_file,
                        fix=f"Shorten it to at most {limit} days or split it",
                    )
    except csv.Error as exc:
        raise ScenarioError(
            f"The scenario file cannot be read as a table ({clip(exc)})",
            where=where_file,
            fix="Save it as comma-separated text with a header row",
        ) from None
    if not read.complete:
        raise ScenarioError(
            f"The scenario file is larger than {HEAD_BYTES // (1024 * 1024)} MB, far more than "
            f"{limit} days need",
            where=where_file,
            fix="Keep only the date, temperature and day-type columns, one row per day",
        )
    if not header or not "".join(header).strip():
        raise ScenarioError(
            "The scenario file is empty", where=where_file, fix="Add a header and one row per day"
        )
    return header, rows


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
        Columns ``date``, ``temperature``, ``day_type`` (blank = from the calendar), and
        ``temperature_min`` (blank = from the typical spread) when the scenario has minima.
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
    if scenario.temperature_min_c is not None:
        lows = units.to_unit(np.asarray(scenario.temperature_min_c, dtype=float), unit)
        frame["temperature_min"] = np.round(np.asarray(lows, dtype=float), 4)
    return frame.to_csv(index=False, lineterminator="\n")


def is_definition(text: str) -> bool:
    """Whether a scenario file's text is a JSON scenario definition rather than a CSV table
    (its first non-blank character opens a JSON object; a CSV header cannot)."""
    return text.lstrip("\ufeff \t\r\n").startswith("{")


def read_scenario_file(
    source: Any,
    *,
    temp_unit: str = "C",
    date_col: str = "date",
    temp_col: str = "temperature",
    day_type_col: str = "day_type",
    temp_min_col: str = "temperature_min",
    name: str | None = None,
    model_end: Any = None,
    max_days: int = MAX_DAYS,
) -> Scenario:
    """Read a scenario file: a CSV table (:func:`read_scenario_csv`) or the app's JSON scenario
    definition (:mod:`loadcore.scenario.definition`), told apart by the content.

    Parameters
    ----------
    source : path, file-like, bytes or str of text
        The file.
    temp_unit, date_col, temp_col, day_type_col
        As for :func:`read_scenario_csv`; a definition names its columns itself and holds °C
        (``temperature_c``), so these apply to CSV files only.
    name : str, optional
        Scenario name; by default the definition's own name, or the CSV file's name.
    model_end : date-like, optional
        Last date of the model's history (see :meth:`Scenario.check_start`).
    max_days : int
        Longest allowed horizon, days.

    Returns
    -------
    Scenario
    """
    if hasattr(source, "read"):
        source = source.read()
    read = files.read_head(source, what="scenario file", n_bytes=HEAD_BYTES)
    if not is_definition(read.text):
        return read_scenario_csv(
            source,
            temp_unit=temp_unit,
            date_col=date_col,
            temp_col=temp_col,
            day_type_col=day_type_col,
            name=name,
            model_end=model_end,
            max_days=max_days,
        )
    if not read.complete:
        raise ScenarioError(
            f"The scenario definition is larger than {HEAD_BYTES // (1024 * 1024)} MB, far more "
            f"than {MAX_DAYS} days need",
            where="scenario definition",
            fix="Save the scenario again from loadcore",
        )
    from .definition import parse_json

    data = parse_json(read.text)
    if name is not None and isinstance(data, dict):
        data = {**data, "name": name}
    return Scenario.from_dict(data, model_end=model_end, max_days=max_days)
