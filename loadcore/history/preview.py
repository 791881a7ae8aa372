"""A first look at a history file before it is read: its columns and what they seem to hold.

:func:`preview_history_file` reads the first lines of a file through the one file policy
(:mod:`loadcore.files`), finds the delimiter and the header as the reader does, and guesses which
column holds the dates, the demand, the temperature (and an hour or a daily minimum), the date
layout and the temperature unit. The app offers these guesses as the defaults of its column
choices; nothing here decides for the reader, which checks the file again in full.
"""

from __future__ import annotations

import csv
import io
import re
from dataclasses import dataclass, field
from typing import Any

import pandas as pd

from loadcore import files, tables
from loadcore.history.parsing import _READABLE, DATE_LAYOUTS

# Lines looked at for the preview (enough for a header and a sample of values).
PREVIEW_LINES = 200
# Words that name each column, in order of preference (common practice, no source).
_NAME_HINTS = {
    "date_col": ("date", "day", "timestamp", "datetime", "time", "period"),
    "demand_col": ("demand", "load", "mw", "consumption", "peak", "kw", "energy"),
    "temp_col": ("temperature", "tmax", "temp", "high", "tx", "max"),
    "hour_col": ("hour", "he", "hr", "hour_ending", "interval"),
    "temp_min_col": ("tmin", "min_temp", "minimum", "low", "tn"),
}
# A median daily high above this is very likely in °F (the hottest populated places reach
# about 50 °C; common practice, no source).
FAHRENHEIT_HINT_ABOVE = 45.0

DELIMITER_NAMES = {",": "comma", ";": "semicolon", "\t": "tab", "|": "pipe"}


@dataclass(frozen=True)
class FilePreview:
    """What the first lines of a history file show.

    Attributes
    ----------
    columns : tuple of str
        The header's column names, as in the file.
    delimiter : str
        The field separator found (``","``, ``";"``, tab or ``"|"``).
    guesses : dict
        Setting name (``date_col``, ``demand_col``, ``temp_col``, ``hour_col``,
        ``temp_min_col``) -> the column that seems to hold it, or None.
    date_layouts : tuple of str
        The date layouts (readable, e.g. "DD/MM/YYYY (day first)") that fit every sampled value of
        the guessed date column; two when the sample cannot tell day-first from month-first.
    unit_hint : {"C", "F"} or None
        The temperature unit the column name or the values suggest.
    unit_reason : str
        Why, in words ("" when there is no hint).
    """

    columns: tuple[str, ...]
    delimiter: str
    guesses: dict[str, str | None] = field(default_factory=dict)
    date_layouts: tuple[str, ...] = ()
    unit_hint: str | None = None
    unit_reason: str = ""

    @property
    def delimiter_name(self) -> str:
        """The delimiter in words (``"semicolon"``)."""
        return DELIMITER_NAMES.get(self.delimiter, repr(self.delimiter))


def _guess(columns: list[str], setting: str, taken: set[str]) -> str | None:
    normed = {c: re.sub(r"[^a-z0-9]+", "_", tables.norm_name(c)).strip("_") for c in columns}
    for hint in _NAME_HINTS[setting]:
        for column, name in normed.items():
            if column in taken:
                continue
            if name == hint or hint in name.split("_"):
                return column
    for hint in _NAME_HINTS[setting]:
        for column, name in normed.items():
            if column not in taken and len(hint) > 2 and hint in name:
                return column
    return None


def _date_layouts(values: pd.Series) -> tuple[str, ...]:
    sample = values.dropna().astype(str).str.strip().str.split(r"[ T]", n=1).str[0]
    sample = sample[sample != ""].head(100)
    if sample.empty:
        return ()
    fitting = []
    for layout in DATE_LAYOUTS:
        parsed = pd.to_datetime(sample, format=layout, errors="coerce")
        if parsed.notna().all():
            fitting.append(_READABLE.get(layout, layout))
    return tuple(fitting)


def _unit_hint(name: str | None, values: pd.Series | None) -> tuple[str | None, str]:
    if name:
        words = set(re.split(r"[^a-z]+", tables.norm_name(name)))
        if words & {"f", "degf", "fahrenheit", "degreesf"}:
            return "F", f"the column name {name!r} says °F"
        if words & {"c", "degc", "celsius", "degreesc"}:
            return "C", f"the column name {name!r} says °C"
    if values is not None:
        numbers = pd.to_numeric(values.astype(str).str.replace(",", "."), errors="coerce")
        if numbers.notna().sum() >= 5:
            median = float(numbers.median())
            if median > FAHRENHEIT_HINT_ABOVE:
                return "F", f"the typical value ({median:.0f}) is too warm for °C"
            return "C", f"the typical value ({median:.0f}) reads as °C"
    return None, ""


def preview_history_file(source: Any) -> FilePreview:
    """Columns, delimiter and guesses for a history file (path, bytes or file-like object).

    Parameters
    ----------
    source : path, bytes or file-like
        The history file.

    Returns
    -------
    FilePreview

    Raises
    ------
    InputError
        When the file cannot be read as text (the file policy's own messages).
    """
    data, _ = files.read_bytes(source, what="history file")
    text = files.decode(data, what="history file", label="history file").text
    lines = text.splitlines()[:PREVIEW_LINES]
    delimiter = tables.detect_delimiter(lines, ("\0",))  # no names known yet: sniff the lines
    records = [r for r in csv.reader(io.StringIO("\n".join(lines)), delimiter=delimiter)]
    records = [r for r in records if any(c.strip() for c in r)]
    if not records:
        return FilePreview(columns=(), delimiter=delimiter)
    width = max(len(r) for r in records[:30])
    header_at = next((i for i, r in enumerate(records[:30]) if len(r) == width), 0)
    columns = [c.strip().strip("\ufeff") for c in records[header_at]]
    body = pd.DataFrame(
        [r + [""] * (len(columns) - len(r)) for r in records[header_at + 1 :]],
        dtype=object,
    ).iloc[:, : len(columns)]
    body.columns = range(body.shape[1])
    guesses: dict[str, str | None] = {}
    taken: set[str] = set()
    for setting in ("date_col", "demand_col", "temp_col", "hour_col", "temp_min_col"):
        column = _guess(columns, setting, taken)
        guesses[setting] = column
        if column is not None:
            taken.add(column)

    def values(column: str | None) -> pd.Series | None:
        if column is None or body.empty:
            return None
        return body[columns.index(column)]

    date_values = values(guesses["date_col"])
    layouts = _date_layouts(date_values) if date_values is not None else ()
    unit, reason = _unit_hint(guesses["temp_col"], values(guesses["temp_col"]))
    return FilePreview(
        columns=tuple(columns),
        delimiter=delimiter if delimiter in tables.DELIMITERS else ",",
        guesses=guesses,
        date_layouts=layouts,
        unit_hint=unit,
        unit_reason=reason,
    )
