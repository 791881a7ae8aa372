"""The state-space form of the demand model, the one place that calls statsmodels' filter.

A regression with seasonal ARIMA errors is written in state-space form and run through the
Kalman filter (Durbin and Koopman, 2012) by statsmodels' SARIMAX. Only this module and the exact
fitting (:mod:`loadcore.model.exact`) speak to statsmodels; they also hold the translation of
our parameter names (``error_weekly_ar_1``, ``shock_variance``) to the library's spelling, which
is needed nowhere else.

What the forecasts need from the filter is kept in :class:`EndState`: the predicted state after
the last day of the history and the system matrices. Forecasts propagate it with our own code, so
a model loaded from its file forecasts bit for bit like the fitted one.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd

from ..errors import ModelError, quote
from .orders import SHOCK_VARIANCE, Orders, error_term, lag_polynomials

#: Fields of :class:`EndState`, also the keys of its block in the model file.
FIELDS = (
    "mean",
    "covariance",
    "transition",
    "observation",
    "selection",
    "shock_covariance",
    "observation_variance",
)

#: Optional field of :class:`EndState` (model files written before it lack it).
OPTIONAL_FIELDS = ("regression_weights",)


@dataclass(frozen=True, eq=False)
class EndState:
    """The error process in state-space form at the end of the history.

    Durbin and Koopman's (2012) symbols in brackets; every array is float and read-only.

    Parameters
    ----------
    mean : (k,) array
        Predicted state for the first day after the history (a).
    covariance : (k, k) array
        Its covariance (P).
    transition : (k, k) array
        State transition matrix (T).
    observation : (1, k) array
        Row that maps the state to the error of the day (Z).
    selection : (k, r) array
        Maps the shocks into the state (R).
    shock_covariance : (r, r) array
        Covariance of the shocks (Q), model scale.
    observation_variance : (1, 1) array
        Variance of the observation noise (H; zero for an ARIMA error process).
    regression_weights : (k, m) array, optional
        How the predicted state depends on the m regression coefficients: the filter is linear
        in the data, so the state filtered from the residuals y - X beta is
        ``a(y) - regression_weights @ beta``; column j is the state filtered from regressor j
        alone. Forecasts need it for the variance that the estimated coefficients add
        (:func:`loadcore.model.forecast.coefficient_variance`).
    """

    mean: np.ndarray
    covariance: np.ndarray
    transition: np.ndarray
    observation: np.ndarray
    selection: np.ndarray
    shock_covariance: np.ndarray
    observation_variance: np.ndarray
    regression_weights: np.ndarray | None = None

    def __post_init__(self) -> None:
        for name in FIELDS + OPTIONAL_FIELDS:
            if getattr(self, name) is None:
                continue
            value = np.array(getattr(self, name), dtype=float)
            value.setflags(write=False)
            object.__setattr__(self, name, value)
        k = self.mean.shape
        if (
            self.mean.ndim != 1
            or self.covariance.shape != k * 2
            or self.transition.shape != k * 2
            or self.observation.shape != (1, *k)
            or self.selection.ndim != 2
            or self.selection.shape[0] != k[0]
            or self.shock_covariance.shape != (self.selection.shape[1],) * 2
            or self.observation_variance.shape != (1, 1)
            or (
                self.regression_weights is not None
                and (self.regression_weights.ndim != 2 or self.regression_weights.shape[0] != k[0])
            )
        ):
            raise ValueError("the state-space matrices do not fit together")

    def to_dict(self) -> dict[str, list]:
        names = FIELDS + tuple(n for n in OPTIONAL_FIELDS if getattr(self, n) is not None)
        return {name: getattr(self, name).tolist() for name in names}

    @classmethod
    def from_dict(cls, data: dict[str, Any]) -> EndState:
        optional = {name: data[name] for name in OPTIONAL_FIELDS if data.get(name) is not None}
        return cls(**{name: data[name] for name in FIELDS}, **optional)


def system_matrices(
    orders: Orders, error_params: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The transition (T), observation (Z) and selection (R) matrices of the error process,
    built from its orders and parameters with our own code.

    The layout is that of statsmodels' SARIMAX (Harvey's representation with the differencing
    states first; Durbin and Koopman, 2012, section 3.4), so a stored :class:`EndState` can be
    checked against the parameters it claims to come from.

    Parameters
    ----------
    orders : Orders
    error_params : array
        The error parameters in :meth:`Orders.parameter_names` order, without the shock variance.
    """
    p, d, q, P, D, Q, s = orders.p, orders.d, orders.q, orders.P, orders.D, orders.Q, orders.period
    ar_poly, ma_poly = lag_polynomials(np.asarray(error_params, float), p, q, P, Q, s)
    k_order = max(len(ar_poly) - 1, len(ma_poly))
    k_diff = d + s * D
    k = k_diff + k_order
    T = np.zeros((k, k))
    block = slice(k_diff, k)
    T[block, block] = np.eye(k_order, k=1)
    T[k_diff : k_diff + len(ar_poly) - 1, k_diff] = -ar_poly[1:]
    for j in range(D):  # the weekly differencing states
        start = d + j * s
        T[start : start + s, start : start + s] = np.eye(s, k=-1)
        T[start, start + s - 1] = 1.0
        if j < D - 1:
            T[start, start + 2 * s - 1] = 1.0
        T[start, k_diff] = 1.0
    if d:  # the differencing states
        T[np.triu_indices(d)] = 1.0
        T[:d, d:k_diff] = ([0.0] * (s - 1) + [1.0]) * D
        T[:d, k_diff] = 1.0
    Z = np.zeros((1, k))
    Z[0, :k_diff] = [1.0] * d + ([0.0] * (s - 1) + [1.0]) * D
    Z[0, k_diff] = 1.0
    R = np.zeros((k, 1))
    R[k_diff : k_diff + len(ma_poly), 0] = ma_poly
    return T, Z, R


def build_state_space(
    y: np.ndarray, X: np.ndarray | None, orders: Orders, *, concentrate_scale: bool = False
):
    """The SARIMAX state-space model of a regression with seasonal ARIMA errors.

    With ``concentrate_scale`` the innovation variance is concentrated out of the likelihood
    (Harvey, 1989) and is not among the model's parameters. A differenced model starts from the
    exact diffuse initialisation (Durbin and Koopman, 2012, section 5.2), whose likelihood is
    that of the differenced data (Ansley and Kohn, 1985) up to the constant
    ``(d + 7D)/2 log 2 pi`` (see :func:`loadcore.model.likelihood.diffuse_constant`), as our
    exact fits compute it; the approximate diffuse start miscounts a missing day in the first
    ``d + 7D`` days.
    """
    from statsmodels.tsa.statespace.sarimax import SARIMAX

    return SARIMAX(
        y,
        exog=X,
        order=orders.order,
        seasonal_order=orders.seasonal_order,
        trend=None,
        enforce_stationarity=True,
        enforce_invertibility=True,
        concentrate_scale=concentrate_scale,
        use_exact_diffuse=orders.lost_days > 0,
    )


def statsmodels_name(name: str, period: int) -> str:
    """An error parameter's name (``error_weekly_ar_2``, ``shock_variance``) in statsmodels'
    SARIMAX spelling. Regression coefficients come first in both and are matched by position."""
    if name == SHOCK_VARIANCE:
        return "sigma2"
    term = error_term(name)
    if term is None:
        raise ValueError(f"not an error parameter: {quote(name)}")
    kind, k = term
    return {
        "ar": f"ar.L{k}",
        "ma": f"ma.L{k}",
        "weekly_ar": f"ar.S.L{k * period}",
        "weekly_ma": f"ma.S.L{k * period}",
    }[kind]


def own_name(sm_name: str, period: int) -> str:
    """Inverse of :func:`statsmodels_name` (used to read model files of format 1)."""
    if sm_name == "sigma2":
        return SHOCK_VARIANCE
    for prefix, kind, step in (
        ("ar.S.L", "weekly_ar", period),
        ("ma.S.L", "weekly_ma", period),
        ("ar.L", "ar", 1),
        ("ma.L", "ma", 1),
    ):
        if sm_name.startswith(prefix) and sm_name[len(prefix) :].isdigit():
            lag = int(sm_name[len(prefix) :])
            if lag % step or lag == 0:
                raise ValueError(f"{quote(sm_name)} is not at a multiple of {step} days")
            return f"error_{kind}_{lag // step}"
    raise ValueError(f"unknown error parameter {quote(sm_name)}")


@dataclass(frozen=True, eq=False)
class FilterRun:
    """One Kalman filter pass with fixed parameters.

    ``errors`` are the one-step-ahead prediction errors (model scale) of every day, NaN where
    demand is missing; the first ``burn`` days are the filter's start-up. ``covariance`` is the
    outer-product-of-gradients parameter covariance (Berndt et al., 1974) when asked for.
    """

    results: Any
    end_state: EndState
    errors: np.ndarray
    burn: int
    loglik: float
    covariance: np.ndarray | None

    def residuals(self, dates: pd.DatetimeIndex) -> pd.Series:
        """The prediction errors after the start-up days, on the filtered ``dates``."""
        return pd.Series(self.errors[self.burn :], index=dates[self.burn :], name="residual")

    def check_names(self, n_exog: int, orders: Orders) -> None:
        """Guard on the name translation: the library's error-parameter names must be ours in
        its spelling (a failure is a bug, not a user error)."""
        names = tuple(self.results.model.param_names)
        ours = tuple(statsmodels_name(n, orders.period) for n in orders.parameter_names())
        if names[n_exog:] != ours:
            raise ModelError(
                "The model's parameter names do not match the state-space model's",
                where=", ".join(names),
                fix="Report this as a bug",
            )


def regression_weights(results: Any, X: np.ndarray | None) -> np.ndarray:
    """The end state filtered from each regressor alone, one column per regressor.

    The Kalman filter's gains do not depend on the data, so the predicted state is linear in the
    series filtered (Durbin and Koopman, 2012, section 4.3): the state filtered from
    ``y - X beta`` is ``a(y) - W beta``, with ``W[:, j]`` the state filtered from ``X[:, j]`` (the
    days missing from ``y`` missing from it too). ``W`` is run through the gains of the filter
    ``results`` already computed, ``W_(t+1) = T W_t + K_t (x_t - Z W_t)`` (``W_(t+1) = T W_t`` on a
    missing day), all columns at once. A differenced model's exact diffuse start uses other
    gains for its first days, so there each column is filtered on its own.
    """
    model = results.model
    ssm = model.ssm
    k = ssm.k_states
    if X is None or X.shape[1] == 0:
        return np.zeros((k, 0))
    X = np.asarray(X, float)
    y = np.asarray(model.endog, float).reshape(-1)
    missing = ~np.isfinite(y)
    if int(getattr(results, "nobs_diffuse", 0) or 0) > 0:
        arma = np.asarray(results.params, float)[X.shape[1] :]
        columns = []
        for j in range(X.shape[1]):
            series = np.where(missing, np.nan, X[:, j])
            orders = _orders_of(model)
            res = build_state_space(series, None, orders).filter(arma, cov_type="none")
            columns.append(np.asarray(res.predicted_state[:, -1], float))
        return np.column_stack(columns)
    T = _fixed(ssm, "transition")
    Z = _fixed(ssm, "design")
    gains = np.asarray(results.filter_results.kalman_gain, float)[:, 0, :]
    W = np.zeros((k, X.shape[1]))
    for t in range(len(y)):
        if missing[t]:
            W = T @ W
        else:
            W = T @ W + np.outer(gains[:, t], X[t] - (Z @ W)[0])
    return W


def _fixed(ssm, name: str) -> np.ndarray:
    """A time-invariant system matrix (statsmodels keeps a time axis only when it varies)."""
    m = np.asarray(ssm[name], float)
    return m[:, :, 0] if m.ndim == 3 else m


def _orders_of(model) -> Orders:
    """The :class:`Orders` of a SARIMAX model."""
    p, d, q = model.order
    P, D, Q, s = model.seasonal_order
    return Orders(int(p), int(d), int(q), int(P), int(D), int(Q), int(s))


def run_filter(
    y: np.ndarray,
    X: np.ndarray,
    orders: Orders,
    params: np.ndarray,
    *,
    with_covariance: bool = False,
) -> FilterRun:
    """Filter the model-scale response ``y`` with regression rows ``X`` and fixed ``params``
    (regression coefficients, error parameters, shock variance: the model's own order)."""
    model = build_state_space(y, X, orders)
    res = model.filter(np.asarray(params, float), cov_type="opg" if with_covariance else "none")
    ssm = res.model.ssm

    def fixed(name: str) -> np.ndarray:
        return _fixed(ssm, name)

    state = EndState(
        mean=np.asarray(res.predicted_state[:, -1], float),
        covariance=np.asarray(res.predicted_state_cov[:, :, -1], float),
        transition=fixed("transition"),
        observation=fixed("design"),
        selection=fixed("selection"),
        shock_covariance=fixed("state_cov"),
        observation_variance=fixed("obs_cov"),
        regression_weights=regression_weights(res, X),
    )
    errors = np.asarray(res.filter_results.forecasts_error[0], float).copy()
    errors[~np.isfinite(np.asarray(y, float))] = np.nan
    return FilterRun(
        results=res,
        end_state=state,
        errors=errors,
        burn=max(int(res.loglikelihood_burn), int(getattr(res, "nobs_diffuse", 0) or 0)),
        loglik=float(res.llf),
        covariance=np.asarray(res.cov_params(), float) if with_covariance else None,
    )
