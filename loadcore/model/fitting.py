"""``fit()``: the demand model fitted to a history, as a short pipeline.

log(demand_t) = x_t' beta + u_t, where u_t follows a weekly seasonal ARIMA process, estimated
jointly by exact Gaussian maximum likelihood through the Kalman filter (Durbin and Koopman,
2012). How a fit runs:

1. the regression rows (:mod:`loadcore.model.terms`) and an ordinary least-squares fit;
2. the differencing tests on its residuals (:func:`loadcore.model.orders.choose_differencing`);
3. the response rescaled and centred on a least-squares fit, so that every optimiser parameter
   is of order one;
4. the order search (:func:`loadcore.model.search.search_orders`): screening, exact refits,
   polish;
5. a final Kalman filter on the model scale for the end state, residuals and OPG standard
   errors (:func:`loadcore.model.statespace.run_filter`).
"""

from __future__ import annotations

import datetime as dt
import logging
from dataclasses import dataclass

import numpy as np
import pandas as pd

from ..calendar import BASE_TYPE, day_types
from ..errors import ModelError
from ..history import History
from .fitted import FittedModel
from .orders import DifferencingDecision, Orders, aicc, choose_differencing, difference, fill_gaps
from .search import candidate_table, search_orders
from .settings import FitSettings, Progress
from .statespace import run_filter
from .terms import design_matrix, model_response

log = logging.getLogger(__name__)

#: Fewest days with demand a fit accepts: two thirds of a year (our choice; the weekly and
#: temperature terms need most of a year to be told apart).
MIN_DEMAND_DAYS = 2 * 365 // 3


@dataclass(frozen=True)
class _Design:
    """The regression of a history: response, rows, day-type levels and the design facts."""

    y: np.ndarray
    frame: pd.DataFrame
    levels: tuple[str, ...]
    base_type: str
    origin: pd.Timestamp


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
    return _Design(y, X, levels, base, dates[0]), _ols(y, X.to_numpy())


def fit(
    history: History,
    settings: FitSettings | None = None,
    progress: Progress | None = None,
    *,
    orders: Orders | None = None,
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

    Returns
    -------
    FittedModel
    """
    settings = settings or FitSettings()
    design, beta_ols = _regression(history, settings)
    y = design.y
    X_full = design.frame.to_numpy()
    if orders is None:
        decision = choose_differencing(y - X_full @ beta_ols)
    else:
        decision = DifferencingDecision.given(orders)
    d, D = decision.d, decision.D
    intercept = d == 0 and D == 0
    if intercept:
        X_df, beta0 = design.frame, beta_ols
    else:  # the constant is not identified once the errors are differenced
        X_df = design.frame.drop(columns="const")
        X = X_df.to_numpy()
        Xd = np.column_stack([difference(X[:, j], d, D) for j in range(X.shape[1])])
        beta0 = _ols(difference(y, d, D), Xd)
    X = X_df.to_numpy()

    # The optimiser works on s*(y - X beta0) with coefficients delta = s*(beta - beta0): the
    # same likelihood, but every parameter of order one, which the quasi-Newton steps need.
    w = difference(fill_gaps(y - X @ beta0), d, D)
    scale = 1.0 / float(np.std(w)) if np.std(w) > 0 else 1.0
    outcome = search_orders(
        (y - X @ beta0) * scale,
        X,
        w * scale,
        d=d,
        D=D,
        search=settings.search,
        bounds=settings.bounds,
        workers=settings.workers,
        orders=orders,
        progress=progress,
    )
    best = outcome.best

    # Back to the model scale for the final filter.
    params = best.params.copy()
    n_exog = X.shape[1]
    params[:n_exog] = beta0 + params[:n_exog] / scale
    params[-1] /= scale**2
    run = run_filter(y, X, best.orders, params, with_covariance=True)
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
        intercept=intercept,
        params=params,
        param_names=columns + best.orders.parameter_names(),
        covariance=run.covariance,
        loglik=run.loglik,
        aicc=aicc(run.loglik, len(params), best.n_obs),
        n_obs=best.n_obs,
        converged=best.converged,
        candidates=candidate_table(outcome, scale),
        differencing=decision,
        end_state=run.end_state,
        residuals=run.residuals(pd.DatetimeIndex(history.frame.index)),
        fitted_at=dt.datetime.now(dt.UTC).isoformat(timespec="seconds"),
    )
    model._keep_statsmodels_results(run.results)
    log.info("fitted %s, AICc %.2f", best.orders.describe(), model.aicc)
    return model
