"""Day types for every date, past and future.

A day type comes from, in order of precedence (highest first):

1. a user override (a date or an inclusive range of dates set to a named type, such as a plant
   shutdown or a year-end low-load period);
2. a public holiday of the ``holidays`` package for the chosen country and optional subdivision;
3. the day of the week.

Two schemes are offered. ``simple`` has ``working`` and ``non_working`` (weekends and holidays are
non-working). ``detailed`` has ``monday``, ``midweek`` (Tuesday to Thursday), ``friday``,
``saturday``, ``sunday`` and ``holiday``. Override names are kept as their own type in both schemes.
The same function serves history and scenario dates.
"""

from __future__ import annotations

import datetime as dt
import logging
import re
import unicodedata
from collections.abc import Iterable
from dataclasses import dataclass, field
from functools import lru_cache
from typing import Any

import holidays
import numpy as np
import pandas as pd

from loadcore.errors import InputError, clip, quote

__all__ = [
    "BASE_TYPE",
    "DETAILED_TYPES",
    "SCHEMES",
    "SIMPLE_TYPES",
    "CalendarSpec",
    "Override",
    "day_types",
    "holiday_names",
    "normalise_type_name",
    "overrides_from_text",
    "overrides_without_history",
    "parse_holidays",
]

logger = logging.getLogger(__name__)

SCHEMES = ("simple", "detailed")
SIMPLE_TYPES = ("working", "non_working")
DETAILED_TYPES = ("monday", "midweek", "friday", "saturday", "sunday", "holiday")
# The reference level of each scheme: regressors are effects relative to this type.
BASE_TYPE = {"simple": "working", "detailed": "midweek"}

# Day of week (Monday = 0) to detailed type; Tuesday to Thursday share one type because in load
# forecasting these days behave alike (common practice, no source).
_WEEKDAY_DETAILED = np.array(
    ["monday", "midweek", "midweek", "midweek", "friday", "saturday", "sunday"], dtype=object
)
_WEEKDAY_SIMPLE = np.array(
    ["working", "working", "working", "working", "working", "non_working", "non_working"],
    dtype=object,
)

_HOW_TO_FIND_CODES = (
    "Use a two-letter ISO 3166-1 country code such as US, CA or GB, optionally followed by a "
    "subdivision code, e.g. US-TX, or 'none' for no public holidays; the full list is printed by "
    '`python -c "import holidays; print(holidays.list_supported_countries())"`'
)


_TYPE_LABELS = {
    "midweek": "midweek day (Tue-Thu)",
    "holiday": "public holiday",
    "non_working": "non-working day",
    "working": "working day",
    "monday": "Monday",
    "friday": "Friday",
    "saturday": "Saturday",
    "sunday": "Sunday",
    "year_end": "year-end day",
}


def day_type_label(day_type: str) -> str:
    """A day type in plain words for tables and charts, e.g. ``midweek`` -> "midweek day (Tue-Thu)"."""
    return _TYPE_LABELS.get(day_type, str(day_type).replace("_", " ") + " day")


#: Longest day-type name, characters (our choice: it becomes a column name and a chart label).
MAX_TYPE_NAME_CHARS = 60

#: Most calendar overrides one calendar holds (our choice: a hard limit on what a file may ask).
MAX_OVERRIDES = 1000

#: Longest override label, characters (our choice).
MAX_LABEL_CHARS = 120


def normalise_type_name(name: str) -> str:
    """Return ``name`` in lower_snake_case (``"Year End"`` -> ``"year_end"``).

    Full-width and other compatibility forms are folded first (Unicode NFKC), so ``ｈｏｌｉｄａｙ``
    is ``holiday``; accents are dropped (``Fête`` -> ``fete``).

    Raises
    ------
    InputError
        If nothing usable is left (the name has no letters or digits).
    """
    folded = unicodedata.normalize("NFKC", str(name))
    ascii_text = unicodedata.normalize("NFKD", folded).encode("ascii", "ignore").decode("ascii")
    text = re.sub(r"[^0-9a-zA-Z]+", "_", ascii_text.strip()).strip("_").lower()
    if len(text) > MAX_TYPE_NAME_CHARS:
        raise InputError(
            f"The day-type name {quote(str(name), 40)} has {len(text)} characters, more than "
            f"{MAX_TYPE_NAME_CHARS}",
            where="calendar override",
            fix="Give the day type a short name such as year_end or plant_shutdown",
        )
    if not text:
        shown = " ".join(str(name).split())[:40]
        raise InputError(
            f"The day-type name '{shown}' has no letters or digits of the Latin alphabet (a-z, 0-9)",
            where="calendar override",
            fix="Give the override a name such as year_end or plant_shutdown",
        )
    return text


def _to_date(value: Any, what: str) -> dt.date:
    if isinstance(value, dt.datetime):
        return value.date()
    if isinstance(value, dt.date):
        return value
    try:
        stamp = pd.Timestamp(value)
    except (ValueError, TypeError):
        stamp = pd.NaT
    if pd.isna(stamp):
        raise InputError(
            f"The {what} {quote(value)} is not a date",
            where="calendar override",
            fix="Write dates as YYYY-MM-DD, e.g. 2026-12-24",
        )
    return stamp.date()


@dataclass(frozen=True)
class Override:
    """A date or an inclusive range of dates set to a named day type.

    Parameters
    ----------
    start, end : datetime.date
        First and last date, both inclusive (strings and Timestamps are converted).
    day_type : str
        Name of the type; normalised to lower_snake_case.
    label : str
        Free text shown to the user, e.g. ``"Mill shutdown"``.
    """

    start: dt.date
    end: dt.date
    day_type: str
    label: str = ""

    def __post_init__(self) -> None:
        start = _to_date(self.start, "start date")
        end = _to_date(self.end, "end date")
        if end < start:
            raise InputError(
                f"The override {quote(self.day_type)} ends ({end}) before it starts ({start})",
                where="calendar override",
                fix="Put the earlier date first, e.g. 2026-12-24..2027-01-01",
            )
        object.__setattr__(self, "start", start)
        object.__setattr__(self, "end", end)
        object.__setattr__(self, "day_type", normalise_type_name(self.day_type))
        label = str(self.label).strip()
        if len(label) > MAX_LABEL_CHARS:
            raise InputError(
                f"The override label has {len(label)} characters, more than {MAX_LABEL_CHARS}",
                where="calendar override",
                fix="Shorten the label",
            )
        object.__setattr__(self, "label", label)

    def to_dict(self) -> dict[str, str]:
        """Plain dict for JSON (ISO dates)."""
        return {
            "start": self.start.isoformat(),
            "end": self.end.isoformat(),
            "day_type": self.day_type,
            "label": self.label,
        }

    @classmethod
    def from_dict(cls, data: dict[str, Any]) -> Override:
        """Inverse of :meth:`to_dict`."""
        label = data.get("label", "") if isinstance(data, dict) else None
        if not isinstance(label, str) or not isinstance(data.get("day_type"), str):
            raise InputError(
                "A calendar override needs a start, an end, a day type and a label as text",
                where="calendar override",
                fix="Use overrides written by loadcore",
            )
        return cls(data["start"], data["end"], data["day_type"], label)


#: Words that choose no public-holiday calendar at all (weekends and overrides only).
NO_HOLIDAYS = ("none", "no", "off")


def parse_holidays(text: str) -> tuple[str | None, str | None]:
    """Split a holiday-calendar code such as ``"US"`` or ``"US-TX"`` and check it exists.

    ``"none"`` chooses no public holidays (weekends and overrides only).

    Returns
    -------
    (country, subdivision)
        Upper-case country code and subdivision code (or ``None``); ``(None, None)`` for none.

    Raises
    ------
    InputError
        If the country or subdivision is not known to the ``holidays`` package.
    """
    raw = str(text).strip()
    if not raw:
        raise InputError(
            "No holiday calendar was given", where="holiday calendar", fix=_HOW_TO_FIND_CODES
        )
    if raw.lower() in NO_HOLIDAYS:
        return None, None
    country, _, subdivision = raw.partition("-")
    country = country.strip().upper()
    subdivision = subdivision.strip().upper() or None
    _check_country(country, subdivision)
    return country, subdivision


@lru_cache(maxsize=1)
def _supported() -> dict[str, list[str]]:
    return holidays.list_supported_countries()


def _check_country(country: str, subdivision: str | None) -> None:
    supported = _supported()
    if country not in supported:
        raise InputError(
            f"The holiday calendar has no country {quote(country)}",
            where="holiday calendar",
            fix=_HOW_TO_FIND_CODES,
        )
    if subdivision is not None:
        known = [str(code).upper() for code in supported[country]]
        if subdivision not in known:
            listed = ", ".join(known) if known else "none"
            raise InputError(
                f"The holiday calendar for {country} has no subdivision {quote(subdivision)}",
                where="holiday calendar",
                fix=f"Valid subdivisions for {country}: {listed}; or leave the subdivision empty",
            )


@dataclass(frozen=True)
class CalendarSpec:
    """How day types are assigned.

    Parameters
    ----------
    country : str or None
        ISO 3166-1 alpha-2 code for the public-holiday calendar; None or "" for no public
        holidays (weekends and overrides only).
    subdivision : str or None
        Optional state or province code (e.g. ``"TX"``).
    scheme : {"simple", "detailed"}
        Which set of day types to use.
    overrides : tuple of Override
        User-set dates or ranges; later overrides win over earlier ones where they overlap.
    """

    country: str | None = "US"
    subdivision: str | None = None
    scheme: str = "detailed"
    overrides: tuple[Override, ...] = field(default_factory=tuple)

    def __post_init__(self) -> None:
        country = str(self.country or "").strip().upper() or None
        subdivision = self.subdivision
        if subdivision is not None:
            subdivision = str(subdivision).strip().upper() or None
        if country is None:
            subdivision = None
        else:
            _check_country(country, subdivision)
        if self.scheme not in SCHEMES:
            raise InputError(
                f"Unknown day-type scheme {quote(self.scheme)}",
                where="calendar settings",
                fix="Choose 'simple' (working / non_working) or 'detailed'",
            )
        if isinstance(self.overrides, str | bytes) or len(self.overrides) > MAX_OVERRIDES:
            raise InputError(
                f"The calendar overrides must be a list of at most {MAX_OVERRIDES} date ranges",
                where="calendar settings",
                fix="Merge neighbouring overrides into ranges",
            )
        overrides = tuple(
            o if isinstance(o, Override) else Override.from_dict(o) for o in self.overrides
        )
        object.__setattr__(self, "country", country)
        object.__setattr__(self, "subdivision", subdivision)
        object.__setattr__(self, "overrides", overrides)

    @property
    def base_type(self) -> str:
        """The reference day type of this scheme."""
        return BASE_TYPE[self.scheme]

    def to_dict(self) -> dict[str, Any]:
        """Plain dict for JSON."""
        return {
            "country": self.country,
            "subdivision": self.subdivision,
            "scheme": self.scheme,
            "overrides": [o.to_dict() for o in self.overrides],
        }

    @classmethod
    def from_dict(cls, data: dict[str, Any]) -> CalendarSpec:
        """Inverse of :meth:`to_dict`."""
        if (
            not isinstance(data, dict)
            or not isinstance(data.get("overrides", ()), list | tuple)
            or any(not isinstance(data.get(k) or "", str) for k in ("country", "subdivision"))
        ):
            raise InputError(
                "The calendar settings are not ones loadcore writes",
                where="calendar settings",
                fix="Use settings written by loadcore",
            )
        return cls(
            country=data.get("country", "US"),
            subdivision=data.get("subdivision"),
            scheme=data.get("scheme", "detailed"),
            overrides=tuple(Override.from_dict(o) for o in data.get("overrides", ())),
        )


@lru_cache(maxsize=64)
def _holiday_table(
    country: str, subdivision: str | None, years: tuple[int, ...]
) -> tuple[np.ndarray, tuple[str, ...]]:
    """Holiday dates (datetime64[D], sorted) and names for the given years; cached."""
    table = holidays.country_holidays(country, subdiv=subdivision, years=years, language="en_US")
    items = sorted(table.items())
    days = np.array([d for d, _ in items], dtype="datetime64[D]")
    names = tuple(name for _, name in items)
    logger.debug("holiday table %s-%s %s: %d days", country, subdivision, years, len(days))
    return days, names


def _as_index(dates: Iterable[Any] | pd.DatetimeIndex | pd.Series) -> pd.DatetimeIndex:
    if isinstance(dates, pd.Series):
        dates = dates.to_numpy()
    try:
        index = pd.DatetimeIndex(dates)
    except (ValueError, TypeError) as exc:
        raise InputError(
            "Some dates could not be read for the day-type calendar",
            where="calendar",
            fix="Pass dates as a DatetimeIndex or ISO strings (YYYY-MM-DD)",
        ) from exc
    if index.hasnans:
        raise InputError(
            "A date is missing (NaT) in the dates given to the calendar",
            where="calendar",
            fix="Remove blank dates before assigning day types",
        )
    return index


def _holiday_lookup(index: pd.DatetimeIndex, spec: CalendarSpec) -> tuple[np.ndarray, np.ndarray]:
    """Per date: is it a holiday, and the position of its name (or -1)."""
    days = index.values.astype("datetime64[D]")
    if len(days) == 0:
        return np.zeros(0, dtype=bool), np.zeros(0, dtype=int)
    if spec.country is None:
        return np.zeros(len(days), dtype=bool), np.full(len(days), -1)
    years = tuple(range(int(index.year.min()), int(index.year.max()) + 1))
    hol_days, _ = _holiday_table(spec.country, spec.subdivision, years)
    if len(hol_days) == 0:
        return np.zeros(len(days), dtype=bool), np.full(len(days), -1)
    pos = np.searchsorted(hol_days, days)
    pos_clipped = np.minimum(pos, len(hol_days) - 1)
    is_hol = hol_days[pos_clipped] == days
    return is_hol, np.where(is_hol, pos_clipped, -1)


def _override_type(spec: CalendarSpec, override: Override) -> str:
    # In the simple scheme a user-declared extra holiday joins the non-working days rather than
    # starting a level of its own.
    if spec.scheme == "simple" and override.day_type == "holiday":
        return "non_working"
    return override.day_type


def day_types(dates: Iterable[Any] | pd.DatetimeIndex | pd.Series, spec: CalendarSpec) -> pd.Series:
    """Day type of every date.

    Parameters
    ----------
    dates : DatetimeIndex, Series or iterable of dates
        Past or future dates, in any order; times of day are ignored.
    spec : CalendarSpec
        Country, subdivision, scheme and overrides.

    Returns
    -------
    pandas.Series
        ``str`` day type per date, indexed by ``dates`` (as a DatetimeIndex), named ``day_type``.
    """
    index = _as_index(dates)
    days = index.normalize()
    weekday = np.asarray(days.day_of_week)
    if spec.scheme == "detailed":
        values = _WEEKDAY_DETAILED[weekday].copy()
        holiday_type = "holiday"
    else:
        values = _WEEKDAY_SIMPLE[weekday].copy()
        holiday_type = "non_working"
    is_hol, _ = _holiday_lookup(days, spec)
    values[is_hol] = holiday_type
    if spec.overrides:
        day_values = days.values.astype("datetime64[D]")
        for override in spec.overrides:
            lo = np.datetime64(override.start, "D")
            hi = np.datetime64(override.end, "D")
            mask = (day_values >= lo) & (day_values <= hi)
            values[mask] = _override_type(spec, override)
    return pd.Series(values.astype(str), index=index, name="day_type", dtype=object)


def overrides_without_history(
    spec: CalendarSpec, dates: Iterable[Any] | pd.DatetimeIndex
) -> tuple[Override, ...]:
    """The overrides whose effect a history on ``dates`` cannot estimate: none of their days
    is in the history (for example one that lies wholly after it) and no history day has their
    day type through another override. A model fitted on that history has no coefficient for
    them, so a scenario on their days is refused.

    Parameters
    ----------
    spec : CalendarSpec
        The calendar, with its overrides.
    dates : DatetimeIndex or iterable of dates
        The history's days.

    Returns
    -------
    tuple of Override
        In the calendar's order; empty when every override's type is seen in the history.
    """
    if not spec.overrides:
        return ()
    index = _as_index(dates).normalize()
    present = set(day_types(index, spec))
    days = index.values.astype("datetime64[D]")
    out = []
    for override in spec.overrides:
        lo, hi = np.datetime64(override.start, "D"), np.datetime64(override.end, "D")
        covered = bool(((days >= lo) & (days <= hi)).any())
        if not covered and _override_type(spec, override) not in present:
            out.append(override)
    return tuple(out)


def holiday_names(
    dates: Iterable[Any] | pd.DatetimeIndex | pd.Series, spec: CalendarSpec
) -> pd.Series:
    """Public-holiday name of every date, or ``""`` on ordinary days.

    Overrides do not change the names; an override's own label is on the :class:`Override`.

    Returns
    -------
    pandas.Series
        ``str`` per date, indexed by ``dates``, named ``holiday``.
    """
    index = _as_index(dates)
    days = index.normalize()
    is_hol, pos = _holiday_lookup(days, spec)
    out = np.full(len(days), "", dtype=object)
    if is_hol.any():
        years = tuple(range(int(days.year.min()), int(days.year.max()) + 1))
        _, names = _holiday_table(spec.country, spec.subdivision, years)
        names_arr = np.array(names, dtype=object)
        out[is_hol] = names_arr[pos[is_hol]]
    return pd.Series(out, index=index, name="holiday", dtype=object)


_DATE_RE = r"\d{4}-\d{1,2}-\d{1,2}"
_LINE_RE = re.compile(
    rf"^(?P<start>{_DATE_RE})(?:\s*\.\.\s*(?P<end>{_DATE_RE}))?\s+(?P<name>\S+)(?:\s+(?P<label>.*))?$"
)


def overrides_from_text(text: str) -> tuple[Override, ...]:
    """Parse overrides written one per line.

    Each line is ``START[..END] NAME [LABEL]``, for example::

        2026-12-24..2027-01-01 year_end  Year-end low load
        2026-07-03 bridge

    Blank lines and lines starting with ``#`` are ignored.

    Raises
    ------
    InputError
        Naming the line number and its text when a line cannot be read.
    """
    overrides: list[Override] = []
    for number, raw in enumerate(str(text).splitlines(), start=1):
        line = raw.strip()
        if not line or line.startswith("#"):
            continue
        where = f"override line {number}: {quote(line)}"
        match = _LINE_RE.match(line)
        if match is None:
            raise InputError(
                "This override line is not in the form START[..END] NAME",
                where=where,
                fix="Write e.g. '2026-12-24..2027-01-01 year_end' or '2026-07-03 bridge'",
            )
        start = match.group("start")
        end = match.group("end") or start
        try:
            start_date = dt.date.fromisoformat(_pad_iso(start))
            end_date = dt.date.fromisoformat(_pad_iso(end))
        except ValueError as exc:
            raise InputError(
                f"The date in this override line does not exist ({clip(exc)})",
                where=where,
                fix="Check the month and day, e.g. 2026-02-28",
            ) from exc
        if end_date < start_date:
            raise InputError(
                f"The range ends ({end_date}) before it starts ({start_date})",
                where=where,
                fix="Put the earlier date first, e.g. 2026-12-24..2027-01-01",
            )
        try:
            overrides.append(
                Override(start_date, end_date, match.group("name"), match.group("label") or "")
            )
        except InputError as exc:
            raise InputError(exc.problem, where=where, fix=exc.fix) from exc
    return tuple(overrides)


def _pad_iso(text: str) -> str:
    year, month, day = text.split("-")
    return f"{year}-{int(month):02d}-{int(day):02d}"
