"""``fit()``: the demand model fitted to a history, as a short pipeline.

log(demand_t) = x_t' beta + u_t, where u_t follows a weekly seasonal ARIMA process, estimated
jointly by exact Gaussian maximum likelihood (:mod:`loadcore.model.likelihood`). How a fit runs:

1. the regression rows (:mod:`loadcore.model.terms`) and an ordinary least-squares fit;
2. the differencing tests on its residuals (:func:`loadcore.model.orders.choose_differencing`),
   and the columns that stay identified under that differencing;
3. the order search (:func:`loadcore.model.search.search_orders`): pilot, screen, exact fits,
   polish;
4. the other temperature response with the same error orders
   (:mod:`loadcore.model.response`: degree days with bases by profile likelihood beside the
   quadratic, or the quadratic beside degree days); with ``response="auto"`` the one with the
   lower AICc is kept (refitted with its covariance);
5. the memory terms (:func:`loadcore.model.memory.choose_memory`): each kept only when it
   lowers AICc with the chosen error orders;
6. one Kalman filter pass at the chosen parameters (statsmodels, the reference) for the end
   state the forecasts start from and the one-step residuals
   (:func:`loadcore.model.statespace.run_filter`).
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import logging
import time
from dataclasses import dataclass

import numpy as np
import pandas as pd

from ..calendar import BASE_TYPE, day_types
from ..errors import ModelError
from ..history import History
from . import response as other_response
from .exact import exact_fit
from .fitted import FittedModel
from .identify import check_temperature_terms
from .likelihood import RegressionArima, identified_columns
from .memory import candidate_groups, choose_memory, group_columns
from .orders import DifferencingDecision, Orders, choose_differencing
from .search import candidate_table, search_orders
from .settings import FitSettings, Progress
from .statespace import run_filter
from .terms import TermSpec, design_matrix, model_response
from .workers import one_blas_thread

log = logging.getLogger(__name__)

#: Fewest days with demand a fit accepts: two thirds of a year (our choice; the weekly and
#: temperature terms need most of a year to be told apart).
MIN_DEMAND_DAYS = 2 * 365 // 3


@dataclass(frozen=True)
class _Design:
    """The regression of a history: response, rows, day-type levels and the design facts."""

    y: np.ndarray
    frame: pd.DataFrame
    types: np.ndarray
    levels: tuple[str, ...]
    base_type: str
    origin: pd.Timestamp

    def columns(self, history: History, terms: TermSpec) -> pd.DataFrame:
        """The regression columns of ``history`` for other temperature terms (intercept
        included; every other column as in ``frame``)."""
        frame = history.frame
        return design_matrix(
            pd.DatetimeIndex(frame.index),
            frame["temperature_c"].to_numpy(float),
            self.types,
            terms,
            levels=self.levels,
            base_type=self.base_type,
            origin=self.origin,
            intercept=True,
        )


def _ols(y: np.ndarray, X: np.ndarray) -> np.ndarray:
    ok = np.isfinite(y)
    beta, *_ = np.linalg.lstsq(X[ok], y[ok], rcond=None)
    return beta


def _regression(history: History, settings: FitSettings) -> tuple[_Design, np.ndarray]:
    """Steps 1 and 2 of the pipeline: the design with an intercept, and its OLS residuals."""
    frame = history.frame
    dates = pd.DatetimeIndex(frame.index)
    y = model_response(frame["demand"].to_numpy(float), settings.log)
    if np.isfinite(y).sum() < MIN_DEMAND_DAYS:
        raise ModelError(
            "Too few days with demand to fit a model",
            where=f"{np.isfinite(y).sum()} days with demand",
            fix="Provide at least a year of daily history",
        )
    types = day_types(dates, settings.calendar).to_numpy(dtype=object)
    base = BASE_TYPE[settings.calendar.scheme]
    present = sorted(set(types))
    if base not in present:
        raise ModelError(
            f"The history has no '{base}' days, the reference day type",
            where="day types of the history",
            fix="Check the calendar overrides; they may cover every working day",
        )
    levels = tuple(t for t in present if t != base)
    X = design_matrix(
        dates,
        frame["temperature_c"].to_numpy(float),
        types,
        settings.terms,
        levels=levels,
        base_type=base,
        origin=dates[0],
        intercept=True,
    )
    check_temperature_terms(
        X, frame["temperature_c"].to_numpy(float), np.isfinite(y), settings.terms
    )
    return _Design(y, X, types, levels, base, dates[0]), _ols(y, X.to_numpy())


def _identified(frame: pd.DataFrame, d: int, D: int) -> pd.DataFrame:
    """The regression columns that stay identified under the differencing: no constant once the
    errors are differenced, and no column that the differencing makes vanish (a weekday type
    under weekly differencing, a straight-line trend under both)."""
    if d or D:
        frame = frame.drop(columns="const")
    keep = identified_columns(frame.to_numpy(), d, D)
    if not keep.all():
        log.info(
            "left out under differencing %d, weekly %d: %s",
            d,
            D,
            ", ".join(frame.columns[~keep]),
        )
    return frame.loc[:, keep]


def fit(
    history: History,
    settings: FitSettings | None = None,
    progress: Progress | None = None,
    *,
    orders: Orders | None = None,
    compare_responses: bool = True,
) -> FittedModel:
    """Fit the demand model to a validated history, choosing the error orders automatically.

    Parameters
    ----------
    history : History
        Validated daily history (:func:`loadcore.history.read_history`).
    settings : FitSettings, optional
        Search, regressors and calendar; defaults to :class:`FitSettings()`.
    progress : callable, optional
        ``progress(done, total, text)`` after each candidate.
    orders : Orders, optional
        Skip the search and fit these orders (parameters are still estimated).
    compare_responses : bool
        Also fit the other temperature response with the chosen orders
        (:mod:`loadcore.model.response`; about a tenth to a half of a quick fit's time). Always
        done when the settings ask for ``response="auto"``; the rolling refits of a backtest
        leave it out.

    Returns
    -------
    FittedModel
    """
    settings = settings or FitSettings()
    asked = settings.terms.response
    settings = dataclasses.replace(settings, terms=settings.terms.start_response())
    design, beta_ols = _regression(history, settings)
    y = design.y
    X_full = design.frame.to_numpy()
    if orders is None:
        decision = choose_differencing(y - X_full @ beta_ols)
    else:
        decision = DifferencingDecision.given(orders)
    d, D = decision.d, decision.D
    X_df = _identified(design.frame, d, D)
    X = X_df.to_numpy()
    outcome = search_orders(
        y,
        X,
        d=d,
        D=D,
        search=settings.search,
        bounds=settings.bounds,
        workers=settings.workers,
        orders=orders,
        progress=progress,
    )
    best = outcome.best
    started = time.perf_counter()

    def build(terms: TermSpec) -> pd.DataFrame:
        return _identified(design.columns(history, terms), d, D)

    temps = history.frame["temperature_c"].to_numpy(float)
    other = None
    if compare_responses or asked == "auto":
        other = other_response.fit_other(y, build, settings.terms, temps, best.orders, best.arma)
    comparison = None
    if other is not None:
        own = other_response.ResponseFit(
            settings.terms, tuple(X_df.columns), best.beta, best.loglik, best.aicc
        )
        other_fit = other[0]
        if asked == "auto" and other_fit.aicc < own.aicc:
            # The other response wins: refit it with its covariance from its own optimum.
            X_df = other[2]
            X = X_df.to_numpy()
            with one_blas_thread():
                best = exact_fit(RegressionArima(y, X, best.orders), start=other[1].arma)
            settings = dataclasses.replace(settings, terms=other_fit.terms)
            own, other_fit = other_fit, own
        comparison = other_response.comparison(asked, own, other_fit, started)
        log.info(
            "temperature response %s AICc %.1f, %s AICc %.1f (%.2f s)",
            own.response,
            own.aicc,
            other_fit.response,
            other_fit.aicc,
            comparison.seconds,
        )
    has_demand = np.isfinite(y)
    memory = choose_memory(
        y,
        X_df,
        {
            g: group_columns(g, history, settings.terms, has_demand)
            for g in candidate_groups(history, settings.terms)
        },
        best,
        d=d,
        D=D,
    )
    best, X_df, X = memory.fit, memory.frame, memory.frame.to_numpy()
    params = best.params
    covariance = best.cov
    run = run_filter(y, X, best.orders, params, with_covariance=not np.all(np.isfinite(covariance)))
    if run.covariance is not None:  # the information matrix was singular: OPG instead
        log.warning("exact covariance not available; using the outer product of gradients")
        covariance = run.covariance
    columns = tuple(X_df.columns)
    run.check_names(len(columns), best.orders)
    model = FittedModel(
        settings=settings,
        history=history,
        orders=best.orders,
        columns=columns,
        day_type_levels=design.levels,
        base_type=design.base_type,
        origin=design.origin,
        intercept=d == 0 and D == 0,
        params=params,
        param_names=columns + best.orders.parameter_names(),
        covariance=covariance,
        loglik=best.loglik,
        aicc=best.aicc,
        n_obs=best.n_obs,
        converged=best.converged,
        candidates=candidate_table(outcome),
        differencing=decision,
        end_state=run.end_state,
        residuals=run.residuals(pd.DatetimeIndex(history.frame.index)),
        fitted_at=dt.datetime.now(dt.UTC).isoformat(timespec="seconds"),
        response_comparison=comparison,
        memory_trials=memory.trials,
    )
    model._keep_statsmodels_results(run.results)
    for text in model.calendar_warnings():
        log.info("%s", text)  # the model keeps it: FittedModel.calendar_warnings()
    log.info("fitted %s, AICc %.2f", best.orders.describe(), model.aicc)
    return model
