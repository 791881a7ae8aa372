"""Prediction-interval levels: the one place that parses them and names their columns.

A level L is a percentage (80 means the central 80 % interval, from the 10th to the 90th
percentile). It is parsed and checked once, at the edge, by :func:`parse_levels`; every table
names its interval columns with :func:`lower_column` / :func:`upper_column` (``lower_80``,
``upper_97.5``) and reads a level back from a column name with :func:`level_of_column`.
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable
from typing import Any

from scipy import stats

from loadcore.errors import InputError

#: Levels shown when the user asks for none, % (common practice, no source).
DEFAULT_LEVELS: tuple[float, ...] = (80, 95)

#: The narrowest and widest level a user may ask for, %. Below 1 % an interval says nothing; at
#: 99.9 % the normal tails are already far beyond what a daily model can support (our choice).
MIN_LEVEL = 1.0
MAX_LEVEL = 99.9

_HOW = "Give levels in percent between 1 and 99.9, separated by commas, e.g. 80,95 or 50,80,97.5"
# Column names written by older versions spelled 97.5 as 97_5; both are read back.
_COLUMN = re.compile(r"^(lower|upper|coverage)_(\d+(?:[._]\d+)?)$")


def normalise_level(value: Any, *, where: str = "interval levels") -> float:
    """One level as a number in [1, 99.9]; whole numbers become ``int`` so labels read ``80``."""
    text = str(value).strip().rstrip("%").strip() if isinstance(value, str) else value
    try:
        number = float(text)
    except (TypeError, ValueError):
        shown = str(value).strip()[:20] or "(blank)"
        raise InputError(f"The level '{shown}' is not a number", where=where, fix=_HOW) from None
    if not math.isfinite(number) or not MIN_LEVEL <= number <= MAX_LEVEL:
        raise InputError(
            f"The level {number:g} is outside 1 to 99.9 percent", where=where, fix=_HOW
        )
    # Keep at most one decimal place of meaning: 97.50 and 97.5 are the same level.
    number = round(number, 6)
    return int(number) if number.is_integer() else number


def parse_levels(
    value: str | Iterable[Any], *, where: str = "interval levels"
) -> tuple[float, ...]:
    """Levels from ``"80,95"``, ``"80 %, 97.5 %"`` or a sequence of numbers.

    Returns
    -------
    tuple
        Distinct levels in ascending order (whole numbers as ``int``).

    Raises
    ------
    InputError
        For a value that is not a number, outside 1 to 99.9, or no level at all.
    """
    parts = str(value).split(",") if isinstance(value, str) else list(value)
    levels = {
        normalise_level(part, where=where)
        for part in parts
        if not (isinstance(part, str) and not part.strip().rstrip("%").strip())
    }
    if not levels:
        raise InputError("No interval level was given", where=where, fix=_HOW)
    return tuple(sorted(levels))


def level_label(level: float) -> str:
    """The level as written in column names and headers: ``80``, ``97.5``."""
    number = float(level)
    return str(int(number)) if number.is_integer() else f"{number:g}"


def lower_column(level: float) -> str:
    """``lower_80``: the lower end of the ``level`` % prediction interval."""
    return f"lower_{level_label(level)}"


def upper_column(level: float) -> str:
    """``upper_80``: the upper end of the ``level`` % prediction interval."""
    return f"upper_{level_label(level)}"


def coverage_column(level: float) -> str:
    """``coverage_80``: the share of actual values inside the ``level`` % interval."""
    return f"coverage_{level_label(level)}"


def coverage_se_column(level: float) -> str:
    """``coverage_se_80``: the standard error of the ``level`` % coverage (a share)."""
    return f"coverage_se_{level_label(level)}"


def level_of_coverage_se_column(name: str) -> float | None:
    """The level of a ``coverage_se_<L>`` column (``coverage_se_80`` -> 80), else None."""
    text = str(name)
    if not text.startswith("coverage_se_"):
        return None
    return level_of_column("coverage_" + text[len("coverage_se_") :])


def interval_columns(levels: Iterable[float]) -> list[str]:
    """``lower_L``, ``upper_L`` for each level, in the given order."""
    return [col for lv in levels for col in (lower_column(lv), upper_column(lv))]


def level_of_column(name: str) -> float | None:
    """The level of an interval or coverage column (``upper_97.5`` -> 97.5), else None."""
    match = _COLUMN.match(str(name))
    if not match:
        return None
    number = float(match.group(2).replace("_", "."))
    return int(number) if number.is_integer() else number


def levels_in_columns(columns: Iterable[str]) -> tuple[float, ...]:
    """The levels that have both a lower and an upper column, ascending."""
    names = [str(c) for c in columns]
    found = {level_of_column(c) for c in names if c.startswith("lower_")}
    both = {
        lv
        for lv in found
        if lv is not None and any(level_of_column(c) == lv for c in names if c.startswith("upper_"))
    }
    return tuple(sorted(both))


def tail_probabilities(level: float) -> tuple[float, float]:
    """Lower and upper quantile probabilities of a central interval (80 -> 0.1, 0.9)."""
    tail = (1.0 - float(level) / 100.0) / 2.0
    return tail, 1.0 - tail


def z_value(level: float) -> float:
    """Standard normal quantile of a central interval's upper end (95 -> 1.95996...)."""
    return float(stats.norm.ppf(tail_probabilities(level)[1]))
