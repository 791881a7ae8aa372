"""How to read a history file: :class:`HistorySettings`, validated completely by its constructor.

The temperature unit is parsed by :func:`loadcore.units.parse_unit`, the one parser of "C"/"F";
the other choices are checked here, once, so the reader trusts the settings it is given.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np

from loadcore import units
from loadcore.errors import HistoryError, InputError, quote

TempKind = Literal["max", "mean"]
SubdailyDemand = Literal["peak", "total"]


#: Where the planner names each column: the app's field and the command-line option (the one
#: wording of a fix that asks for a column; messages never show the setting's own name).
COLUMN_FIELDS: dict[str, tuple[str, str]] = {
    "date_col": ("Date column", "--date-col"),
    "demand_col": ("Demand column", "--demand-col"),
    "temp_col": ("Temperature column", "--temp-col"),
    "hour_col": ("Hour column", "--hour-col"),
    "temp_min_col": ("Minimum temperature column", "--temp-min-col"),
}


def name_the_column(setting: str) -> str:
    """How to name a column, for a message's fix: "choose the app's Date column, or give
    --date-col NAME on the command line"."""
    field, option = COLUMN_FIELDS[setting]
    return f"choose it as the app's {field}, or give {option} NAME on the command line"


@dataclass(frozen=True)
class HistorySettings:
    """How to read a history file.

    Parameters
    ----------
    date_col, demand_col, temp_col : str
        Column names in the file (matched ignoring case and surrounding spaces).
    hour_col : str or None
        A column with the reading's place in the day, for files whose date column holds only
        the date: hour numbers 1-24 (hour ending) or 0-23 (hour beginning), detected from the
        values, or a time of day (``HH:MM`` or ``HH:MM:SS``). ``None``: the date column carries
        any time of day itself.
    temp_min_col : str or None
        A column with the daily minimum temperature (same unit as ``temp_col``), for daily
        files; sub-daily files give the minimum of the day's readings without it.
    temp_unit : {"C", "F"}
        Unit of the temperature column; °F is converted to °C on reading. Any spelling that
        :func:`loadcore.units.parse_unit` accepts (``"f"``, ``"°F"``) is stored as ``"C"`` or
        ``"F"``.
    temp_kind : {"max", "mean"}
        Whether the temperature is a daily maximum or mean (a label; sub-daily readings are
        aggregated to the daily maximum or mean accordingly).
    demand_unit : str
        Label for the demand unit, e.g. ``"MW"``.
    subdaily_demand : {"peak", "total"}
        For sub-daily data: daily demand is the peak (max) or the total (sum) of the intervals.
    date_format : str or None
        A strftime pattern such as ``"%d/%m/%Y"`` to force; ``None`` detects the format.
    max_temp_gap_days : int
        Temperature gaps up to this many days are filled by linear interpolation; longer gaps
        are errors.
    max_demand_gap_days : int
        Demand gaps up to this many days are kept as missing values; longer gaps are errors.
    decimal : {".", ","} or None
        The decimal mark of the file's numbers; ``None`` decides it for each column from all its
        values (:mod:`loadcore.history.numbers`), an error when nothing in the file tells.
    drop_outliers : bool
        Treat the days flagged as outliers (:mod:`loadcore.history.outliers`) as missing demand
        instead of only reporting them.
    """

    date_col: str = "date"
    demand_col: str = "demand"
    temp_col: str = "temperature"
    hour_col: str | None = None
    temp_min_col: str | None = None
    temp_unit: units.Unit = "C"
    temp_kind: TempKind = "max"
    demand_unit: str = "MW"
    subdaily_demand: SubdailyDemand = "peak"
    date_format: str | None = None
    max_temp_gap_days: int = 3
    max_demand_gap_days: int = 31
    decimal: str | None = None
    drop_outliers: bool = False

    def __post_init__(self) -> None:
        where = "history settings: temp_unit"
        try:
            unit = units.parse_unit(self.temp_unit, where=where)
        except InputError as exc:
            raise HistoryError(exc.problem, where=where, fix=exc.fix) from None
        object.__setattr__(self, "temp_unit", unit)
        if self.temp_kind not in ("max", "mean"):
            raise HistoryError(
                f"Unknown temperature kind {quote(self.temp_kind)}",
                where="history settings: temp_kind",
                fix="Use 'max' for daily maximum or 'mean' for daily mean temperature",
            )
        if self.subdaily_demand not in ("peak", "total"):
            raise HistoryError(
                f"Unknown sub-daily aggregation {quote(self.subdaily_demand)}",
                where="history settings: subdaily_demand",
                fix="Use 'peak' (daily maximum) or 'total' (daily sum)",
            )
        for name in ("max_temp_gap_days", "max_demand_gap_days"):
            value = getattr(self, name)
            if not isinstance(value, (int, np.integer)) or value < 0:
                raise HistoryError(
                    f"{name} must be a whole number of days, 0 or more (got {quote(value)})",
                    where=f"history settings: {name}",
                    fix="Give a number such as 3",
                )
        for name in ("date_col", "demand_col", "temp_col"):
            if not str(getattr(self, name)).strip():
                raise HistoryError(
                    f"The {name} setting is empty",
                    where=f"history settings: {name}",
                    fix="Give the column's name as it appears in the file's header",
                )
        for name in ("hour_col", "temp_min_col"):
            value = getattr(self, name)
            if value is not None and not str(value).strip():
                object.__setattr__(self, name, None)  # an empty field means "no such column"
        names = self.column_settings()
        named = [str(getattr(self, n)).strip().lower() for n in names]
        for i, name in enumerate(names):
            if named[i] in named[:i]:
                first = names[named.index(named[i])]
                raise HistoryError(
                    f"The {first} and {name} settings name the same column "
                    f"({quote(getattr(self, name))})",
                    where=f"history settings: {name}",
                    fix="Give each setting its own column of the file",
                )
        if self.decimal not in (None, ".", ","):
            raise HistoryError(
                f"Unknown decimal mark {quote(self.decimal)}",
                where="history settings: decimal",
                fix="Use '.' (1441.5) or ',' (1441,5), or leave it unset to detect it",
            )
        if not isinstance(self.drop_outliers, bool):
            raise HistoryError(
                f"drop_outliers must be true or false, got {quote(self.drop_outliers)}",
                where="history settings: drop_outliers",
                fix="Give True or False",
            )

    def column_settings(self) -> tuple[str, ...]:
        """The names of the settings that name a column of the file, those in use only."""
        optional = tuple(n for n in ("hour_col", "temp_min_col") if getattr(self, n) is not None)
        return ("date_col", "demand_col", "temp_col", *optional)
