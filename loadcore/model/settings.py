"""Fit settings: everything that decides a fit, apart from the data."""

from __future__ import annotations

import json
import logging
from collections.abc import Callable
from dataclasses import asdict, dataclass, field, fields

import numpy as np

from .. import checks
from ..calendar import CalendarSpec
from ..errors import InputError, quote_all
from .orders import SearchBounds
from .terms import TermSpec

log = logging.getLogger(__name__)

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
        Processes for the exact refits (0 = as many as the machine has, at most 2); at most the
        machine's cores (:func:`loadcore.checks.machine_cores`).
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
        where = "model settings"
        checks.one_of(self.search, "search", SEARCH_MODES, where=where)
        for name in _BOUND_NAMES:
            try:
                checks.whole_number(getattr(self, name), name, 0, 10, where=where)
            except InputError as exc:
                raise InputError(
                    exc.problem,
                    where=where,
                    fix="Lower the bound; the defaults are p, q up to 5, p+q up to 8, weekly up to 2",
                ) from None
        checks.flag(self.log, "log", where=where)
        if not isinstance(self.terms, TermSpec) or not isinstance(self.calendar, CalendarSpec):
            raise InputError(
                "The model settings need a TermSpec and a CalendarSpec",
                where=where,
                fix="Build them with TermSpec(...) and CalendarSpec(...)",
            )
        cores = checks.machine_cores()
        checks.whole_number(
            self.workers, "workers", 0, cores, where=f"{where} (this machine has {cores} core(s))"
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
        """Inverse of :meth:`to_dict`; every value is checked as by the constructor.

        A worker count above this machine's cores (a file saved on a bigger machine) is lowered
        to the cores, since it only sets how fast a refit runs; anything that is not a whole
        number of at least 0 is refused.
        """
        if not isinstance(data, dict):
            raise InputError(
                "The model settings are not a set of named values",
                where="model settings",
                fix="Use settings written by loadcore",
            )
        data = dict(data)
        terms = TermSpec.from_dict(data.pop("terms", {}))
        calendar = CalendarSpec.from_dict(data.pop("calendar", {}))
        workers = data.get("workers", 0)
        cores = checks.machine_cores()
        if (
            not isinstance(workers, bool)
            and isinstance(workers, int | np.integer)
            and workers > cores
        ):
            log.info(
                "model settings: %d workers lowered to this machine's %d core(s)", workers, cores
            )
            data["workers"] = cores
        unknown = sorted(set(data) - {f.name for f in fields(cls)})
        if unknown:
            raise InputError(
                f"Unknown model setting(s) {quote_all(unknown)}",
                where="model settings",
                fix="Use settings written by loadcore",
            )
        return cls(terms=terms, calendar=calendar, **data)

    def key(self) -> str:
        """A stable text key of the settings (for caches)."""
        return json.dumps(self.to_dict(), sort_keys=True)
