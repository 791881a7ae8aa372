"""Spreadsheet-safe CSV: the one writer for every CSV download and CLI export.

Text cells that a spreadsheet would run as a formula are neutralised (:func:`safe_cell`,
:func:`safe_frame`); :func:`to_csv_bytes` writes UTF-8 without a byte-order mark, CRLF line
endings, ISO 8601 dates and a fixed number of significant digits.
"""

from __future__ import annotations

import io
import re
import unicodedata
from datetime import date, datetime
from typing import Any

import numpy as np
import pandas as pd

from loadcore.errors import InputError

# Leading characters that make a spreadsheet treat a cell as a formula (OWASP, "CSV Injection").
FORMULA_PREFIXES = ("=", "+", "-", "@", "\t", "\r")

#: Unicode categories skipped before the formula check: invisible format characters (zero-width
#: space, byte-order mark), spaces, controls and line separators (our choice: a spreadsheet may
#: drop them and then see the formula).
INVISIBLE_CATEGORIES = frozenset({"Cf", "Zs", "Zl", "Zp", "Cc"})


def starts_formula(text: str) -> bool:
    """True when a spreadsheet could run ``text`` as a formula.

    The text is checked as written and after NFKC normalisation (full-width ``＝＋－＠`` become
    ``= + - @``) with invisible leading characters removed (zero-width characters, byte-order
    marks, spaces, controls).
    """
    if text.startswith(FORMULA_PREFIXES):
        return True
    folded = unicodedata.normalize("NFKC", text)
    start = 0
    while start < len(folded) and unicodedata.category(folded[start]) in INVISIBLE_CATEGORIES:
        start += 1
    return folded[start:].startswith(FORMULA_PREFIXES[:4])


def safe_cell(value: Any) -> Any:
    """Neutralise a text cell that a spreadsheet would run as a formula.

    Text starting with ``=``, ``+``, ``-``, ``@``, a tab or a carriage return gets a single quote in
    front, as the OWASP guidance on CSV injection recommends; so does text that starts so once
    normalised (:func:`starts_formula`: full-width signs, invisible leading characters). Numbers (int, float, bool and numpy
    numbers, negative ones included), missing values, dates and every other non-text value are
    returned unchanged.

    Parameters
    ----------
    value : Any
        One cell.

    Returns
    -------
    Any
        The cell, with a leading quote added when it is risky text.
    """
    if isinstance(value, (str, np.str_)) and starts_formula(str(value)):
        return "'" + str(value)
    return value


def _is_text_column(series: pd.Series) -> bool:
    dtype = series.dtype
    return (
        pd.api.types.is_object_dtype(dtype)
        or isinstance(dtype, pd.StringDtype)
        or isinstance(dtype, pd.CategoricalDtype)
    )


def safe_frame(frame: pd.DataFrame) -> pd.DataFrame:
    """Apply :func:`safe_cell` to the text columns of a table.

    Only object, string and categorical columns are touched, so numeric columns keep their dtype.
    Column names are neutralised too, since they become the header row. The input is not changed.

    Parameters
    ----------
    frame : pandas.DataFrame
        Any table.

    Returns
    -------
    pandas.DataFrame
        A copy with risky text cells prefixed by a single quote.
    """
    if not isinstance(frame, pd.DataFrame):
        raise InputError(
            f"Expected a table to export, got {type(frame).__name__}",
            fix="Pass a pandas DataFrame",
        )
    header = [safe_cell(c if isinstance(c, str) else str(c)) for c in frame.columns]
    columns = {}
    for i in range(frame.shape[1]):  # by position, so repeated column names are fine
        series = frame.iloc[:, i]
        if _is_text_column(series):
            series = series.astype(object).map(safe_cell).astype(object)
        columns[i] = series
    out = pd.DataFrame(columns, index=frame.index)
    out.columns = header
    out.attrs = dict(frame.attrs)
    return out


def _all_midnight(series: pd.Series) -> bool:
    valid = series.dropna()
    if valid.empty:
        return True
    return bool((valid == valid.dt.normalize()).all())


def to_csv_bytes(frame: pd.DataFrame, *, float_digits: int = 8) -> bytes:
    """The one CSV writer for downloads and CLI exports.

    Text cells are neutralised with :func:`safe_frame`, dates are written as ISO 8601
    (``YYYY-MM-DD`` when every value falls at midnight, else ``YYYY-MM-DDTHH:MM:SS``), floats with
    ``float_digits`` significant digits, missing values as empty cells, UTF-8 without a byte-order
    mark, CRLF line endings (RFC 4180; it also makes the writer quote any cell that holds a
    carriage return or line feed). A meaningful index (anything but a plain 0..n-1 range) is written as
    leading column(s).

    Parameters
    ----------
    frame : pandas.DataFrame
        The table to write.
    float_digits : int, default 8
        Significant digits for floats (8 keeps a demand of 123456.78 MW exact to 0.01 MW).

    Returns
    -------
    bytes
        The CSV file content.
    """
    if not isinstance(frame, pd.DataFrame):
        raise InputError(
            f"Expected a table to export, got {type(frame).__name__}",
            fix="Pass a pandas DataFrame",
        )
    if not 1 <= int(float_digits) <= 17:
        raise InputError(
            f"Float_digits must be between 1 and 17, got {float_digits}", fix="Use 8 unless told"
        )
    out = frame
    if not isinstance(out.index, pd.RangeIndex) or out.index.name is not None:
        out = out.reset_index()
    header = list(out.columns)
    columns = {}
    for i in range(out.shape[1]):  # by position, so repeated column names are fine
        series = out.iloc[:, i]
        if isinstance(series.dtype, pd.DatetimeTZDtype) or pd.api.types.is_datetime64_any_dtype(
            series.dtype
        ):
            pattern = "%Y-%m-%d" if _all_midnight(series) else "%Y-%m-%dT%H:%M:%S"
            series = series.dt.strftime(pattern).astype(object).where(series.notna(), None)
        elif pd.api.types.is_object_dtype(series.dtype):
            series = series.map(_iso_if_date)
        columns[i] = series
    out = pd.DataFrame(columns, index=out.index)
    out.columns = header
    out = safe_frame(out)
    buffer = io.StringIO()
    out.to_csv(buffer, index=False, float_format=f"%.{int(float_digits)}g", lineterminator="\r\n")
    return buffer.getvalue().encode("utf-8")


def _iso_if_date(value: Any) -> Any:
    if isinstance(value, pd.Timestamp):
        if pd.isna(value):
            return None
        return value.strftime("%Y-%m-%d") if value == value.normalize() else value.isoformat()
    if isinstance(value, datetime):
        return value.isoformat()
    if isinstance(value, date):
        return value.isoformat()
    return value


# Digits a planner reads (common practice, no source): temperatures to 0.1 degree, demand to the
# whole MW, percentages to 0.1 %, shares (0 to 1) to 0.001 (0.1 %), scores to 3 decimals.
TEMPERATURE_DIGITS = 1
DEMAND_DIGITS = 0
PERCENT_DIGITS = 1
SHARE_DIGITS = 3


_DEMAND_COLUMNS = frozenset(
    {"mean", "median", "actual", "naive", "peak_mean", "sum_of_daily_means", "peak_vs_base"}
    | {"sum_vs_base", "rmse", "naive_rmse", "crps", "scale"}
)
_SHARE_COLUMNS = frozenset({"weather_share", "prob_above", "pit", "mase", "naive_mase"})


def _planner_digits(column: str) -> int | None:
    """Digits for a column of loadcore's tables, by its name (None: leave it as it is)."""
    name = str(column)
    if name.startswith(("temperature_", "out_of_range_by_")):
        return TEMPERATURE_DIGITS
    if name.endswith("_pct") or name in ("mape", "naive_mape", "pinball"):
        return PERCENT_DIGITS
    if name.startswith("coverage_") or name in _SHARE_COLUMNS:
        return SHARE_DIGITS
    if name in _DEMAND_COLUMNS or re.fullmatch(r"(lower|upper)_[0-9._]+|p[0-9]+", name):
        return DEMAND_DIGITS
    return None


def round_for_planners(frame: pd.DataFrame) -> pd.DataFrame:
    """A copy of one of loadcore's tables rounded to the digits a planner reads.

    Temperatures (``temperature_c``/``_f``, ``out_of_range_by_*``) to 0.1 degree, demand
    (``mean``, ``median``, ``lower_L``/``upper_L``, quantiles ``pNN``, ``actual``, differences
    from a base) to the whole unit, percentages (``*_pct``, MAPE) to 0.1, shares from 0 to 1
    (coverage, probabilities, weather share, PIT) and MASE to 3 decimals. Other columns are
    left as they are.

    Parameters
    ----------
    frame : pandas.DataFrame
        A forecast, comparison, ensemble or backtest table.

    Returns
    -------
    pandas.DataFrame
        The rounded copy (the table's ``attrs`` kept).
    """
    out = frame.copy()
    for column in out.columns:
        digits = _planner_digits(column)
        if digits is not None and pd.api.types.is_float_dtype(out[column].dtype):
            out[column] = out[column].round(digits)
    return out
