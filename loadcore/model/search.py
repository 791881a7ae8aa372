"""The order search: screen candidates, refit the best few exactly, polish the winner.

Two stages keep the search fast and honest:

1. *Screening* (:mod:`loadcore.model.screening`): every candidate order (the stepwise walk of
   Hyndman and Khandakar, 2008, for the quick search; every order within the bounds for the
   thorough one) is fitted by conditional sum of squares and ranked by an approximate AICc.
2. *Exact refit* (:mod:`loadcore.model.exact`): the best 2 (quick) or 4 (thorough) are refitted
   by exact maximum likelihood with loose tolerances, in parallel; when none is usable the next
   few are tried. The best usable one (converged, stationary, invertible) by exact AICc is
   polished with tight tolerances.

Everything here works on the optimiser's scale: the response rescaled and centred on a first
least-squares fit (see :func:`loadcore.model.fitting.fit`).
"""

from __future__ import annotations

import logging
import math
from dataclasses import dataclass

import numpy as np
import pandas as pd

from ..errors import ModelError
from .exact import ExactResult, default_workers, exact_fit, exact_fits, gls_start
from .orders import WEEKLY_PERIOD, Orders, SearchBounds
from .screening import ScreenResult, css_screen, screen_rank, stepwise_orders
from .settings import Progress

log = logging.getLogger(__name__)

#: How many screened candidates each search refits by exact likelihood (our choice, measured:
#: the exact winner was inside the screening top three in every benchmark run).
REFIT_COUNT = {"quick": 2, "thorough": 4}

#: Batches of exact refits tried before giving up when none is usable (our choice).
MAX_REFIT_BATCHES = 3

#: Guess of the stepwise walk's length for the progress bar (our measurements: 20 to 40).
STEPWISE_GUESS = 30


@dataclass(frozen=True)
class SearchOutcome:
    """Every screened candidate, every exact refit and the chosen (polished) one."""

    screened: dict[Orders, ScreenResult]
    exact: dict[Orders, ExactResult]
    best: ExactResult


def screening_burn(bounds: SearchBounds) -> int:
    """Days left out of every candidate's screening sum of squares (a common sample)."""
    return bounds.ar_up_to + WEEKLY_PERIOD * bounds.weekly_ar_up_to + WEEKLY_PERIOD


def search_orders(
    ys: np.ndarray,
    X: np.ndarray,
    w: np.ndarray,
    *,
    d: int,
    D: int,
    search: str,
    bounds: SearchBounds,
    workers: int = 0,
    orders: Orders | None = None,
    progress: Progress | None = None,
) -> SearchOutcome:
    """Choose the error orders and estimate them.

    Parameters
    ----------
    ys : array
        The response on the optimiser's scale, NaN on missing days.
    X : array
        Regression rows, one per day.
    w : array
        The differenced residual series to screen on (optimiser's scale, no gaps).
    d, D : int
        The differencing already decided.
    search : {"quick", "thorough"}
    bounds : SearchBounds
    workers : int
        Processes for the exact refits (0 = :func:`default_workers`).
    orders : Orders, optional
        Skip the search and fit these orders.
    progress : callable, optional
        ``progress(done, total, text)``.

    Raises
    ------
    ModelError
        When no candidate gives a usable exact fit.
    """
    n_exog = X.shape[1]
    burn = screening_burn(bounds)

    def screen(o: Orders) -> ScreenResult:
        return css_screen(w, o, n_exog=n_exog, burn=burn)

    screened, total = _screen_all(screen, search, bounds, d, D, orders, progress)
    ranked = sorted(screened.values(), key=screen_rank)
    n_refit = 1 if orders is not None else REFIT_COUNT[search]
    exact = _refit_best(ys, X, ranked, n_refit, burn, workers or default_workers(), total, progress)
    usable = [e for e in exact.values() if e.usable]
    if not usable:
        notes = "; ".join(
            f"{e.orders.describe()}: {e.note or 'not usable'}" for e in exact.values()
        )
        raise ModelError(
            "No candidate error model converged to a stationary, invertible fit",
            where=notes,
            fix="Try the thorough search, smaller bounds, or check the history for level shifts",
        )
    best = min(usable, key=lambda e: e.aicc)
    # Polish the chosen model with tight tolerances; keep the ranking fit if that fails.
    polished = exact_fit(ys, X, best.orders, best.params, tolerance="final", maxiter=200)
    if polished.usable and polished.loglik >= best.loglik - 1e-6:
        best = exact[best.orders] = polished  # the candidate table shows the final fit
    else:
        log.warning("tight refit of %s did not improve (%s)", best.orders.describe(), polished.note)
    return SearchOutcome(screened, exact, best)


def _screen_all(screen, search, bounds, d, D, orders, progress):
    """Screen the given orders, the whole grid, or the stepwise walk; returns the screened
    candidates and the progress total."""
    if orders is not None:
        return {orders: screen(orders)}, 2
    if search == "thorough":
        grid = bounds.all_orders(d, D)
        total = len(grid) + REFIT_COUNT["thorough"]
        screened = {}
        for i, o in enumerate(grid, 1):
            screened[o] = screen(o)
            if progress:
                progress(i, total, f"screened {o.describe()}")
        return screened, total
    refits = REFIT_COUNT["quick"]
    count = 0

    def screen_counted(o: Orders) -> ScreenResult:
        nonlocal count
        count += 1
        if progress:
            progress(
                count, max(STEPWISE_GUESS + refits, count + refits), f"screened {o.describe()}"
            )
        return screen(o)

    screened = stepwise_orders(screen_counted, bounds, d, D)
    return screened, len(screened) + refits


def _refit_best(ys, X, ranked, n_refit, burn, workers, total, progress):
    """Exact refits of the best ``n_refit`` screened candidates, then the next batch while none
    is usable (at most :data:`MAX_REFIT_BATCHES` batches)."""
    exact: dict[Orders, ExactResult] = {}
    done = len(ranked)
    pos = 0

    def tick(text: str) -> None:
        nonlocal done
        done += 1
        if progress:
            progress(min(done, total), max(total, done), f"exact fit {text}")

    while pos < len(ranked):
        batch = ranked[pos : pos + n_refit]
        pos += n_refit
        tasks = []
        for r in batch:
            arma = r.params if r.ok else np.zeros_like(r.params)
            start = np.r_[gls_start(ys, X, r.orders, arma, burn), arma]
            tasks.append((ys, X, r.orders, start))
        for res in exact_fits(tasks, workers, tick):
            exact[res.orders] = res
        if any(e.usable for e in exact.values()) or pos >= MAX_REFIT_BATCHES * n_refit:
            break
    return exact


def candidate_table(outcome: SearchOutcome, scale: float) -> pd.DataFrame:
    """One row per screened candidate: orders in our words, screening and exact AICc (the
    exact one on the model scale), whether it was refitted, converged, usable, chosen."""
    n_obs = outcome.best.n_obs
    rows = []
    for o, r in outcome.screened.items():
        e = outcome.exact.get(o)
        rows.append(
            {
                **o.to_dict(),
                "screening_aicc": r.aicc,
                # Exact AICc on the model scale: undo the optimiser's scaling of the response.
                "aicc": (e.aicc - 2 * n_obs * math.log(scale)) if e is not None else float("nan"),
                "exact_fit": e is not None,
                "converged": bool(e.converged) if e is not None else None,
                "stationary_invertible": (
                    bool(e.stationary and e.invertible) if e is not None else None
                ),
                "chosen": o == outcome.best.orders,
                "note": "; ".join(x for x in (r.note, e.note if e is not None else "") if x),
            }
        )
    df = pd.DataFrame(rows)
    return df.sort_values(["aicc", "screening_aicc"], na_position="last").reset_index(drop=True)
