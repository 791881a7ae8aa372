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

from ..errors import ModelError
from .orders import SHOCK_VARIANCE, Orders, error_term

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
    """

    mean: np.ndarray
    covariance: np.ndarray
    transition: np.ndarray
    observation: np.ndarray
    selection: np.ndarray
    shock_covariance: np.ndarray
    observation_variance: np.ndarray

    def __post_init__(self) -> None:
        for name in FIELDS:
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
        ):
            raise ValueError("the state-space matrices do not fit together")

    def to_dict(self) -> dict[str, list]:
        return {name: getattr(self, name).tolist() for name in FIELDS}

    @classmethod
    def from_dict(cls, data: dict[str, Any]) -> EndState:
        return cls(**{name: data[name] for name in FIELDS})


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
        raise ValueError(f"not an error parameter: {name!r}")
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
                raise ValueError(f"{sm_name!r} is not at a multiple of {step} days")
            return f"error_{kind}_{lag // step}"
    raise ValueError(f"unknown error parameter {sm_name!r}")


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
        m = np.asarray(ssm[name], float)
        return m[:, :, 0] if m.ndim == 3 else m

    state = EndState(
        mean=np.asarray(res.predicted_state[:, -1], float),
        covariance=np.asarray(res.predicted_state_cov[:, :, -1], float),
        transition=fixed("transition"),
        observation=fixed("design"),
        selection=fixed("selection"),
        shock_covariance=fixed("state_cov"),
        observation_variance=fixed("obs_cov"),
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
