"""Fit settings: everything that decides a fit, apart from the data."""

from __future__ import annotations

import json
from collections.abc import Callable
from dataclasses import asdict, dataclass, field

import numpy as np

from ..calendar import CalendarSpec
from ..errors import InputError, quote
from .orders import SearchBounds
from .terms import TermSpec

#: The order searches: the stepwise walk, or every order within the bounds.
SEARCH_MODES = ("quick", "thorough")

#: ``progress(done, total, text)``, called as the fit goes.
Progress = Callable[[int, int, str], None]

_BOUND_NAMES = ("ar_up_to", "ma_up_to", "ar_ma_up_to", "weekly_ar_up_to", "weekly_ma_up_to")


@dataclass(frozen=True)
class FitSettings:
    """Everything that decides a fit, apart from the data.

    Parameters
    ----------
    search : {"quick", "thorough"}
        Stepwise search or every order within the bounds.
    ar_up_to, ma_up_to, ar_ma_up_to, weekly_ar_up_to, weekly_ma_up_to : int
        Bounds of the order search (non-seasonal AR and MA, their sum, weekly AR and MA).
    log : bool
        Model log demand (multiplicative effects) rather than demand.
    terms : TermSpec
        Temperature response, annual terms, growth.
    calendar : CalendarSpec
        Public holidays, day-type scheme and overrides.
    workers : int
        Processes for the exact refits (0 = as many as the machine has, at most 2).
    """

    search: str = "quick"
    ar_up_to: int = 5
    ma_up_to: int = 5
    ar_ma_up_to: int = 8
    weekly_ar_up_to: int = 2
    weekly_ma_up_to: int = 2
    log: bool = True
    terms: TermSpec = field(default_factory=TermSpec)
    calendar: CalendarSpec = field(default_factory=CalendarSpec)
    workers: int = 0

    def __post_init__(self) -> None:
        if self.search not in SEARCH_MODES:
            raise InputError(
                f"Unknown search '{self.search}'",
                where="model settings",
                fix="Use 'quick' or 'thorough'",
            )
        for name in _BOUND_NAMES:
            value = getattr(self, name)
            if not isinstance(value, int | np.integer) or not 0 <= value <= 10:
                raise InputError(
                    f"{name} must be a whole number from 0 to 10, got {quote(value)}",
                    where="model settings",
                    fix="Lower the bound; the defaults are p, q up to 5, p+q up to 8, weekly up to 2",
                )

    @property
    def bounds(self) -> SearchBounds:
        return SearchBounds(*(getattr(self, name) for name in _BOUND_NAMES))

    def to_dict(self) -> dict:
        d = {k: v for k, v in asdict(self).items() if k not in ("terms", "calendar")}
        d["terms"] = self.terms.to_dict()
        d["calendar"] = self.calendar.to_dict()
        return d

    @classmethod
    def from_dict(cls, data: dict) -> FitSettings:
        """Inverse of :meth:`to_dict`."""
        data = dict(data)
        terms = TermSpec.from_dict(data.pop("terms", {}))
        calendar = CalendarSpec.from_dict(data.pop("calendar", {}))
        return cls(terms=terms, calendar=calendar, **data)

    def key(self) -> str:
        """A stable text key of the settings (for caches)."""
        return json.dumps(self.to_dict(), sort_keys=True)
