"""Temperature memory: which memory terms a fit keeps, and their inputs for future days.

*Selection.* After the order search has chosen the error orders on the regression without
memory terms, each memory group (:data:`loadcore.model.terms.MEMORY_GROUPS`: the smoothed past
temperature; the daily minimum where the history has it) is added in turn and the model refitted
by exact maximum likelihood with the same error orders (started from the chosen model's error
parameters; trials at the ranking tolerance of the search, the kept one polished at the final
tolerance with its covariance; one BLAS thread, as the search: on a shared machine a
multi-threaded BLAS made these small fits several times slower). The group that lowers AICc
most is kept, and the others are tried again on top of it
(forward selection); a group is kept only when it lowers AICc. Every trial is reported
(:class:`MemoryTrial`), so the fit text, the Model page and the model file say what was tried
and what was kept. AICc is comparable across the trials: same response, same days, same error
orders (Hurvich and Tsai, 1989).

*Future days.* The smoothed past temperature of a scenario runs on from the history: its lead-in
is the history's temperatures and, for a window that starts later than the day after the
history, the history's seasonal normal (:func:`loadcore.scenario.seasonal_normal_path`) for the
days in between (the expected weather of the gap, which is what a planner assumes when nothing
else is known; the weights of those days halve every day back, so after a week the choice hardly
matters). A scenario without minima gets them from its maxima less the history's typical
max-min spread for those calendar days (:func:`typical_spread_c`).
"""

from __future__ import annotations

import logging
from dataclasses import dataclass

import numpy as np
import pandas as pd

from ..history import History
from ..scenario.paths import seasonal_normal_path
from .exact import ExactFit, exact_fit
from .likelihood import RegressionArima, identified_columns
from .terms import MEMORY_GROUPS, TermSpec, kept_groups, memory_terms, temperature_terms
from .workers import single_blas

log = logging.getLogger(__name__)

#: A degree-day memory column with fewer active days (days with demand) than this is left out
#: of its group: the same floor the fit applies to the main degree days
#: (:data:`loadcore.model.identify.MIN_DEGREE_DAYS`, our choice there).
MIN_ACTIVE_DAYS = 10

#: Plain names of the groups, for the fit text and the Model page.
GROUP_LABELS = {
    "past": "smoothed past temperature",
    "minimum": "daily minimum temperature",
}


@dataclass(frozen=True)
class MemoryTrial:
    """One fit of the memory selection.

    Attributes
    ----------
    terms : tuple of str
        Memory groups in this fit (empty: the model without memory terms).
    aicc : float
        Exact AICc of the fit, model scale (NaN when the fit was not usable).
    kept : bool
        Whether this is the model the fit kept.
    """

    terms: tuple[str, ...]
    aicc: float
    kept: bool

    def to_dict(self) -> dict:
        return {"terms": list(self.terms), "aicc": self.aicc, "kept": self.kept}


@dataclass(frozen=True)
class MemoryOutcome:
    """The selection's result: the kept fit, its design and every trial."""

    fit: ExactFit
    frame: pd.DataFrame
    kept: tuple[str, ...]
    trials: tuple[MemoryTrial, ...]


def candidate_groups(history: History, spec: TermSpec) -> tuple[str, ...]:
    """The memory groups a fit of ``history`` tries: none when ``spec.memory`` is off; the
    minimum only when the history has daily minima."""
    if not spec.memory:
        return ()
    return tuple(g for g in MEMORY_GROUPS if g != "minimum" or history.has_minimum)


def group_columns(
    group: str, history: History, spec: TermSpec, has_demand: np.ndarray
) -> pd.DataFrame:
    """The columns of one memory group over the history's days (the history's own first day
    starts the smoothing). Degree-day columns active on fewer than :data:`MIN_ACTIVE_DAYS`
    days with demand are left out."""
    frame = history.frame
    minimum = frame["temperature_min_c"].to_numpy(float) if "temperature_min_c" in frame else None
    cols = memory_terms(
        group, spec, frame["temperature_c"].to_numpy(float), temperature_min_c=minimum
    )
    out = pd.DataFrame(cols, index=frame.index)
    if spec.response == "degree_days":
        active = (out[has_demand] > 0).sum()
        out = out.loc[:, active >= MIN_ACTIVE_DAYS]
    return out


def _combined(base: pd.DataFrame, extras: dict[str, pd.DataFrame], groups) -> pd.DataFrame:
    parts = [base] + [extras[g] for g in MEMORY_GROUPS if g in groups]
    return pd.concat(parts, axis=1)


@single_blas
def choose_memory(
    y: np.ndarray,
    base: pd.DataFrame,
    extras: dict[str, pd.DataFrame],
    chosen: ExactFit,
    *,
    d: int,
    D: int,
) -> MemoryOutcome:
    """Forward selection of the memory groups by exact AICc with the chosen error orders.

    Parameters
    ----------
    y : array
        Response on the model scale, NaN on missing days.
    base : DataFrame
        The regression without memory terms (identified columns only), one row per day.
    extras : dict
        Group name -> its columns (:func:`group_columns`); an empty frame is not tried.
    chosen : ExactFit
        The search's chosen fit on ``base`` (polished, with covariance).
    d, D : int
        The differencing of the error orders.

    Returns
    -------
    MemoryOutcome
    """
    trials: list[tuple[tuple[str, ...], ExactFit | None]] = [((), chosen)]
    current: tuple[str, ...] = ()
    current_fit = chosen
    remaining = [g for g in MEMORY_GROUPS if g in extras and extras[g].shape[1] > 0]
    while remaining:
        best_group, best_fit = None, None
        for group in remaining:
            groups = tuple(g for g in MEMORY_GROUPS if g in (*current, group))
            frame = _combined(base, extras, groups)
            keep = identified_columns(frame.to_numpy(), d, D)
            frame = frame.loc[:, keep]
            problem = RegressionArima(y, frame.to_numpy(), chosen.orders)
            try:
                trial = exact_fit(problem, current_fit.arma, covariance=False, tolerance="rank")
            except (np.linalg.LinAlgError, ValueError) as err:  # a singular design
                log.info("memory trial %s failed: %s", groups, err)
                trial = None
            usable = trial is not None and trial.usable
            trials.append((groups, trial if usable else None))
            if (
                usable
                and trial.aicc < current_fit.aicc
                and (best_fit is None or trial.aicc < best_fit.aicc)
            ):
                best_group, best_fit = group, trial
        if best_group is None:
            break
        current = tuple(g for g in MEMORY_GROUPS if g in (*current, best_group))
        current_fit = best_fit
        remaining.remove(best_group)
    frame = _combined(base, extras, current)
    frame = frame.loc[:, identified_columns(frame.to_numpy(), d, D)]
    kept_fit = current_fit
    if current:  # the kept trial polished at the final tolerance, with its covariance
        problem = RegressionArima(y, frame.to_numpy(), chosen.orders)
        polished = exact_fit(problem, current_fit.arma, covariance=True, tolerance="final")
        if polished.usable and polished.loglik >= current_fit.loglik - 1e-6:
            current_fit = polished
        else:
            log.warning("polish of the memory terms' fit failed: %s", polished.note)
            current_fit = exact_fit(problem, current_fit.arma, covariance=True, tolerance="rank")
        trials = [(g, current_fit if f is kept_fit else f) for g, f in trials]
    table = tuple(
        MemoryTrial(
            groups,
            float(fit.aicc) if fit is not None else float("nan"),
            groups == current and fit is current_fit,
        )
        for groups, fit in trials
    )
    if len(trials) == 1:  # nothing could be tried: no selection to report
        table = ()
    log.info("memory terms kept: %s", ", ".join(current) or "none")
    return MemoryOutcome(current_fit, frame, current, table)


def lead_in_c(history: History, start: pd.Timestamp) -> np.ndarray:
    """Temperatures of the days before ``start``, °C: the history's up to ``start`` and the
    history's seasonal normal for any days between the history's end and ``start``."""
    temps = history.frame["temperature_c"]
    start = pd.Timestamp(start)
    before = temps[temps.index < start].to_numpy(float)
    end = pd.Timestamp(temps.index[-1])
    gap = (start - end).days - 1
    if gap <= 0:
        return before
    normal = seasonal_normal_path(history, end + pd.Timedelta(days=1), gap).to_numpy(float)
    return np.concatenate([before, normal])


def typical_spread_c(history: History, dates: pd.DatetimeIndex) -> np.ndarray:
    """The history's typical max-min spread for the calendar days of ``dates``, °C: the mean
    spread on each calendar day, smoothed over +/-7 days of year (the seasonal normal's rule,
    :func:`loadcore.scenario.seasonal_normal_path`), never below zero."""
    frame = history.frame
    spread = (frame["temperature_c"] - frame["temperature_min_c"]).dropna()
    dates = pd.DatetimeIndex(dates)
    normal = seasonal_normal_path(spread, dates[0], len(dates)).to_numpy(float)
    return np.maximum(normal, 0.0)


def steady_columns(
    group: str, spec: TermSpec, temperature_c: np.ndarray, history: History
) -> dict[str, np.ndarray]:
    """A memory group's columns after a spell at each temperature (°C): the smoothed past
    temperature equal to it, the minimum it less the history's mean max-min spread. For
    response curves."""
    t = np.asarray(temperature_c, float)
    if group == "past":
        return dict(
            zip(spec.memory_columns("past"), temperature_terms(t, spec).values(), strict=True)
        )
    frame = history.frame
    spread = float(np.nanmean(frame["temperature_c"] - frame["temperature_min_c"]))
    return memory_terms(group, spec, t, temperature_min_c=t - spread)


def minimum_for(
    history: History,
    dates: pd.DatetimeIndex,
    temperature_c: np.ndarray,
    temperature_min_c: np.ndarray | None,
) -> np.ndarray | None:
    """Daily minima for future ``dates``: the ones given, else the maxima less the history's
    typical spread (None when the history has no minima and none are given)."""
    if temperature_min_c is not None:
        return np.asarray(temperature_min_c, float)
    if not history.has_minimum:
        return None
    return np.asarray(temperature_c, float) - typical_spread_c(history, dates)


__all__ = [
    "GROUP_LABELS",
    "MemoryOutcome",
    "MemoryTrial",
    "candidate_groups",
    "choose_memory",
    "group_columns",
    "kept_groups",
    "lead_in_c",
    "minimum_for",
    "steady_columns",
    "typical_spread_c",
]
