"""Checks on a model read from a file: every number and shape, before anything uses it.

A model file is plain JSON that anyone can edit, so nothing in it is trusted. A loaded model is
refused with one :class:`~loadcore.errors.ModelError` line (naming the part of the file) unless:

- its design names exactly the columns :func:`~loadcore.model.terms.design_matrix` builds for its
  settings, day types and intercept (the intercept only when the errors are not differenced);
- every parameter is finite, the shock variance positive, the AR side stationary and the MA side
  invertible (what the fit enforces);
- the parameter covariance is finite, symmetric and positive semi-definite;
- the end state's transition, observation and selection matrices are those the orders and the
  parameters give (:func:`~loadcore.model.statespace.system_matrices`), its shock covariance is
  the shock variance, its observation variance zero, its state covariance symmetric positive
  semi-definite and its state mean of the size the history allows;
- the log-likelihood and AICc are finite and the days used fit in the history;
- the differencing tests agree with the orders;
- a response comparison (optional) compares this model's response with the other kind, its
  columns are those its settings build (the rest of the design as the model's), its
  coefficients finite and one per column, its log-likelihoods and AICc finite.
"""

from __future__ import annotations

from typing import Any

import numpy as np
import pandas as pd

from ..calendar import BASE_TYPE, normalise_type_name
from ..errors import InputError, ModelError, quote, quote_all
from .orders import lag_polynomials
from .statespace import system_matrices
from .terms import MEMORY_GROUPS, design_matrix, kept_groups, model_response

#: Relative tolerance of the matrix comparisons (float64 round trips through JSON are exact;
#: the slack covers files written on another machine's BLAS; our choice).
MATRIX_RTOL = 1e-7

#: Eigenvalues of a covariance may dip this far below zero, relative to the largest, from
#: rounding alone (our choice).
PSD_TOLERANCE = 1e-8

#: A root of the AR or MA polynomial must lie this far outside the unit circle (our choice: the
#: fit's stationarity transform keeps roots strictly outside; a file may not put them on it).
ROOT_TOLERANCE = 1e-9

#: The end state may be at most this many times the history's spread of the response (on the
#: model scale) plus a shock: beyond it the forecasts overflow (our choice).
STATE_SPREAD_LIMIT = 10.0

#: Largest regression weight of the end state (the state filtered from a regressor whose values
#: are of order one to a few tens; our choice).
MAX_WEIGHT = 1e6


def _refuse(problem: str, part: str) -> ModelError:
    return ModelError(problem, where=part, fix="Refit the model or use the original file")


def _psd(matrix: np.ndarray) -> bool:
    if not np.allclose(matrix, matrix.T, rtol=1e-6, atol=1e-12):
        return False
    eig = np.linalg.eigvalsh((matrix + matrix.T) / 2.0)
    return bool(eig.min(initial=0.0) >= -PSD_TOLERANCE * max(1.0, float(np.abs(eig).max())))


def _roots_outside(poly: np.ndarray) -> bool:
    poly = np.trim_zeros(np.asarray(poly, float), "b")
    if len(poly) <= 1:
        return True
    return bool(np.all(np.abs(np.roots(poly[::-1])) > 1.0 + ROOT_TOLERANCE))


def _check_design(model: Any) -> None:
    settings = model.settings
    base = BASE_TYPE[settings.calendar.scheme]
    if model.base_type != base:
        raise _refuse(
            f"The reference day type {quote(model.base_type)} is not that of the calendar "
            f"scheme ({base})",
            "design",
        )
    levels = model.day_type_levels
    try:
        names_ok = all(normalise_type_name(t) == t for t in levels)
    except InputError:
        names_ok = False
    if not names_ok or len(set(levels)) != len(levels) or base in levels:
        raise _refuse(f"The design's day types {quote_all(levels)} are not valid", "design")
    differenced = model.orders.d > 0 or model.orders.D > 0
    if model.intercept == differenced:
        raise _refuse(
            "The design's intercept does not match the error model (a constant is used only "
            "when the errors are not differenced)",
            "design",
        )
    origin = pd.Timestamp(model.origin)
    if origin != origin.normalize():
        raise _refuse("The design's origin is not a date", "design")
    full = design_matrix(
        pd.DatetimeIndex([origin]),
        np.array([settings.terms.reference_temp_c]),
        [base],
        settings.terms,
        levels=levels,
        base_type=base,
        origin=origin,
        intercept=model.intercept,
        memory=MEMORY_GROUPS,
        temperature_min_c=np.array([settings.terms.reference_temp_c]),
    ).columns
    # Memory columns are optional (each kept only when it improved AICc); the rest are not.
    optional = {c for g in MEMORY_GROUPS for c in settings.terms.memory_columns(g)}
    present = set(model.columns)
    expected = [c for c in full if c not in optional or c in present]
    if "minimum" in kept_groups(model.columns, settings.terms) and not model.history.has_minimum:
        raise _refuse(
            "The design uses the daily minimum temperature but the saved history has none",
            "design.columns",
        )
    if tuple(expected) != model.columns:
        unknown = [c for c in model.columns if c not in set(expected)]
        missing = [c for c in expected if c not in set(model.columns)]
        detail = (
            f"unknown column(s) {quote_all(unknown)}"
            if unknown
            else (f"missing column(s) {quote_all(missing)}" if missing else "columns out of order")
        )
        raise _refuse(f"The design does not match the model's settings: {detail}", "design.columns")


def _check_parameters(model: Any) -> None:
    orders = model.orders
    n_exog = len(model.columns)
    error_params = model.params[n_exog:-1]
    if not model.shock_variance > 0:
        raise _refuse("The shock variance is not positive", "parameters")
    ar, ma = lag_polynomials(error_params, orders.p, orders.q, orders.P, orders.Q, orders.period)
    if not _roots_outside(ar):
        raise _refuse(
            "The error model's AR part is not stationary (a root on or inside the unit circle)",
            "parameters",
        )
    if not _roots_outside(ma):
        raise _refuse(
            "The error model's MA part is not invertible (a root on or inside the unit circle)",
            "parameters",
        )
    cov = model.covariance
    if not np.all(np.isfinite(cov)) or not _psd(cov):
        raise _refuse(
            "The parameter covariance is not finite, symmetric and positive semi-definite",
            "covariance",
        )
    if not (np.isfinite(model.loglik) and np.isfinite(model.aicc)):
        raise _refuse("The log-likelihood or AICc is not a finite number", "log_likelihood")
    if not 1 <= model.n_obs <= len(model.history.frame):
        raise _refuse(
            f"The model says it used {model.n_obs} days, but its history has "
            f"{len(model.history.frame)}",
            "observations_used",
        )
    diff = model.differencing
    if (diff.d, diff.D) != (orders.d, orders.D):
        raise _refuse(
            "The differencing tests do not agree with the error model's differencing",
            "differencing_tests",
        )


def _check_end_state(model: Any) -> None:
    state = model.end_state
    for name in ("mean", "covariance", "transition", "observation", "selection"):
        if not np.all(np.isfinite(getattr(state, name))):
            raise _refuse(f"The end state's {name} holds a number that is not finite", "end_state")
    weights = state.regression_weights
    if weights is not None and (
        weights.shape != (state.mean.shape[0], len(model.columns))
        or not np.all(np.isfinite(weights))
        or np.abs(weights).max(initial=0.0) > MAX_WEIGHT
    ):
        raise _refuse(
            "The end state's regression weights do not fit the design or are not finite",
            "end_state",
        )
    T, Z, R = system_matrices(model.orders, model.params[len(model.columns) : -1])
    for name, expected in (("transition", T), ("observation", Z), ("selection", R)):
        stored = getattr(state, name)
        if stored.shape != expected.shape or not np.allclose(
            stored, expected, rtol=MATRIX_RTOL, atol=1e-10
        ):
            raise _refuse(
                f"The end state's {name} matrix does not match the error model's orders and "
                "parameters",
                "end_state",
            )
    shock = model.shock_variance
    if state.shock_covariance.shape != (1, 1) or not np.isclose(
        state.shock_covariance[0, 0], shock, rtol=1e-6, atol=0.0
    ):
        raise _refuse("The end state's shock covariance is not the shock variance", "end_state")
    if not np.allclose(state.observation_variance, 0.0, atol=1e-12):
        raise _refuse("The end state's observation variance is not zero", "end_state")
    if not _psd(state.covariance):
        raise _refuse(
            "The end state's covariance is not symmetric and positive semi-definite", "end_state"
        )
    y = model_response(model.history.frame["demand"].to_numpy(float), model.settings.log)
    spread = float(np.ptp(y[np.isfinite(y)])) if np.isfinite(y).any() else 0.0
    limit = STATE_SPREAD_LIMIT * (spread + np.sqrt(shock))
    if (
        np.abs(state.mean).max(initial=0.0) > limit
        or np.diag(state.covariance).max(initial=0.0) > limit**2
    ):
        raise _refuse(
            "The end state is far larger than the history allows (its forecasts would overflow)",
            "end_state",
        )


def _columns_for(model: Any, terms: Any) -> tuple[str, ...]:
    origin = pd.Timestamp(model.origin)
    return tuple(
        design_matrix(
            pd.DatetimeIndex([origin]),
            np.array([terms.reference_temp_c]),
            [model.base_type],
            terms,
            levels=model.day_type_levels,
            base_type=model.base_type,
            origin=origin,
            intercept=model.intercept,
        ).columns
    )


def _check_comparison(model: Any) -> None:
    comparison = model.response_comparison
    if comparison is None:
        return
    part = "response_comparison"
    fitted, other = comparison.fitted, comparison.other
    # The comparison is made before the memory terms are chosen, so without them.
    terms = model.settings.terms
    memory = {c for g in MEMORY_GROUPS for c in terms.memory_columns(g)}
    own = tuple(c for c in model.columns if c not in memory)
    if fitted.response != terms.response or fitted.columns != own:
        raise _refuse("The response comparison does not describe this model's response", part)
    for side in (fitted, other):
        if side.columns != _columns_for(model, side.terms):
            raise _refuse(
                "The response comparison's columns do not match its temperature settings", part
            )
        if (
            side.beta.shape != (len(side.columns),)
            or not np.all(np.isfinite(side.beta))
            or not (np.isfinite(side.loglik) and np.isfinite(side.aicc))
        ):
            raise _refuse(
                "The response comparison holds coefficients or AICc values that are not finite "
                "or not one per column",
                part,
            )


def check_loaded(model: Any) -> None:
    """Refuse a model read from a file unless every number and shape is as a fit makes them.

    Parameters
    ----------
    model : FittedModel
        Just built from a model file.

    Raises
    ------
    ModelError
        One line naming the part of the file that is wrong.
    """
    _check_design(model)
    _check_parameters(model)
    _check_end_state(model)
    _check_comparison(model)
