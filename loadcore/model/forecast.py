"""Forecasts of a fitted model: the error process propagated from the end of the history.

Forecasts never call statsmodels: the final predicted state, its covariance and the system
matrices (:class:`loadcore.model.statespace.EndState`) are propagated by the Kalman prediction
equations a_{h+1} = T a_h, P_{h+1} = T P_h T' + R Q R' (Durbin and Koopman, 2012, section 4.3),
and error paths are simulated from the same matrices. That is why a loaded model forecasts bit
for bit like the fitted one.

A window may start after a gap of ``skip`` days after the history's end (a July window from a
history ending in November): the error process is propagated through the gap (no temperatures
are needed for it, the regression part needs only the window's own days) and only the window's
days are kept, so intervals widen with the distance as the error model says.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd

from .. import levels as interval_levels
from .. import texts, units
from .statespace import EndState

#: Thin-data flag of scenario temperatures (see loadcore.texts).
SPARSE_MIN_DAYS = texts.SPARSE_MIN_DAYS
SPARSE_HALF_WIDTH_C = texts.SPARSE_HALF_WIDTH_C


@dataclass(frozen=True)
class Forecast:
    """A scenario forecast.

    ``frame`` has one row per day: ``date``, ``temperature_c``, ``day_type``, ``mean`` (bias
    adjusted, exp(mu + sigma^2/2) for a log model), ``median`` (exp(mu)), ``lower_L`` and
    ``upper_L`` for every level L, ``out_of_range`` (bool), ``out_of_range_by_c`` (°C beyond the
    fitted range, 0 inside) and ``sparse_temperature`` (inside the range, thinly observed).
    ``gap_days`` is the number of days between the history's end and the window (0 when the
    window starts the day after); ``growth_months`` how far past the history's end the growth
    term is carried at the window's last day, months (0 for a model without one).
    """

    frame: pd.DataFrame
    levels: tuple[float, ...]
    scenario_name: str
    demand_unit: str
    temperature_range_c: tuple[float, float]
    note: str
    gap_days: int = 0
    growth_months: float = 0.0

    def warnings(self, temp_unit: units.Unit = "C") -> list[str]:
        """Plain messages for every day outside the fitted temperature range or thinly observed,
        with temperatures in ``temp_unit``, and the growth note of a far window (its growth
        term carried more than :data:`loadcore.texts.GROWTH_NOTE_MONTHS` months on)."""
        out = texts.forecast_warnings(self.frame, self.temperature_range_c, temp_unit)
        if self.growth_months > texts.GROWTH_NOTE_MONTHS:
            out.append(texts.growth_note(self.growth_months))
        return out


def noise_moments(state: EndState, horizon: int, skip: int = 0) -> tuple[np.ndarray, np.ndarray]:
    """Mean and variance of the error process on each of ``horizon`` days that start ``skip``
    days after the day after the history's end (model scale)."""
    a, P = state.mean.copy(), state.covariance.copy()
    T, Z, R = state.transition, state.observation, state.selection
    H = state.observation_variance
    RQR = R @ state.shock_covariance @ R.T
    for _ in range(int(skip)):
        a = T @ a
        P = T @ P @ T.T + RQR
    mean = np.empty(horizon)
    var = np.empty(horizon)
    for h in range(horizon):
        mean[h] = (Z @ a).item()
        var[h] = (Z @ P @ Z.T + H).item()
        a = T @ a
        P = T @ P @ T.T + RQR
    return mean, var


def effective_regressors(state: EndState, X_future: np.ndarray, skip: int = 0) -> np.ndarray:
    """How each forecast day depends on the estimated regression coefficients, (horizon, m).

    The forecast on day h is ``x_h' beta + Z T^(h-1) (a(y) - W beta)`` (``W`` the state's
    :attr:`~loadcore.model.statespace.EndState.regression_weights`), so an error in ``beta``
    moves it by ``g_h' (beta_hat - beta)`` with ``g_h = x_h - W' (T')^(h-1) Z'``: near the
    origin the filtered errors take back much of a wrong level, far from it the full ``x_h``
    counts (Goldberger, 1962, for the best linear unbiased predictor with estimated
    coefficients). Model files that predate the weights get zeros: they forecast as they did.
    The window's first row is day ``skip + 1`` after the history's end.
    """
    X_future = np.atleast_2d(np.asarray(X_future, float))
    W = state.regression_weights
    if W is None or W.shape[1] != X_future.shape[1]:
        return np.zeros_like(X_future)
    out = np.empty_like(X_future)
    row = state.observation.copy()  # Z T^(h-1), starting with h = 1
    for _ in range(int(skip)):
        row = row @ state.transition
    for h in range(X_future.shape[0]):
        out[h] = X_future[h] - (row @ W)[0]
        row = row @ state.transition
    return out


def coefficient_variance(
    state: EndState, X_future: np.ndarray, coefficient_covariance: np.ndarray, skip: int = 0
) -> np.ndarray:
    """Variance that the estimated regression coefficients add to each forecast day,
    ``g_h' Cov(beta) g_h`` (see :func:`effective_regressors`), model scale."""
    G = effective_regressors(state, X_future, skip)
    return np.einsum("hi,ij,hj->h", G, np.asarray(coefficient_covariance, float), G)


def coefficient_paths(
    state: EndState,
    X_future: np.ndarray,
    coefficient_covariance: np.ndarray,
    n_paths: int,
    seed: int | None,
    skip: int = 0,
    normals: np.ndarray | None = None,
) -> np.ndarray:
    """Draws of ``g_h' (beta* - beta_hat)``, beta* ~ N(beta_hat, Cov(beta)), shape
    (n_paths, horizon): the forecast's spread from the estimated coefficients, one draw of
    the coefficients per path.

    ``normals``, when given, shape (m, n_paths), are the standard normal draws used in place of
    the generator's, through the Cholesky factor of the covariance (lower triangular, so the
    k-th draw moves the k-th coefficient and those after it, the same way in every model with
    similar designs): draws correlated across models (the zones of a system, whose coefficient
    errors share their shocks) give coefficient errors that move together.
    """
    G = effective_regressors(state, X_future, skip)
    C = np.asarray(coefficient_covariance, float)
    C = (C + C.T) / 2
    if normals is not None:
        try:
            L = np.linalg.cholesky(C)
        except np.linalg.LinAlgError:  # singular: the eigen-factor, positive parts only
            vals, vecs = np.linalg.eigh(C)
            L = vecs * np.sqrt(np.clip(vals, 0, None))
        return (G @ L @ np.asarray(normals, float)).T
    rng = np.random.default_rng(None if seed is None else [int(seed), 1])
    vals, vecs = np.linalg.eigh(C)
    L = vecs * np.sqrt(np.clip(vals, 0, None))
    return (G @ L @ rng.standard_normal((C.shape[0], n_paths))).T


def simulate_noise(
    state: EndState,
    horizon: int,
    n_paths: int,
    seed: int | None,
    skip: int = 0,
    shocks: np.ndarray | None = None,
) -> np.ndarray:
    """Error paths from the end of the history, shape (n_paths, horizon), model scale; the
    first ``skip`` days after the history (a gap before the window) are simulated and dropped.

    ``shocks``, when given, are the standard normal draws behind the shocks entering each window
    day, shape (horizon, r, n_paths) with r the shock dimension (1 for these models), used in
    place of the generator's: draws correlated across models (the zones of a system) give paths
    whose daily shocks keep that correlation. Without a gap the first day's shock is part of the
    end state's covariance P = T P_filtered T' + R Q R'; it is then drawn as the given shock,
    and the rest of P from the generator (Durbin and Koopman, 2012, section 4.3).
    """
    rng = np.random.default_rng(seed)
    T, Z, R = state.transition, state.observation, state.selection
    k = len(state.mean)
    qv, qe = np.linalg.eigh(state.shock_covariance)
    LQ = R @ (qe * np.sqrt(np.clip(qv, 0, None)))
    skip = int(skip)
    given = shocks is not None
    P = (state.covariance + state.covariance.T) / 2
    if given and skip == 0:
        P = P - LQ @ LQ.T  # the part of the start state that is not the first day's shock
    vals, vecs = np.linalg.eigh(P)
    L = vecs * np.sqrt(np.clip(vals, 0, None))
    a = state.mean[:, None] + L @ rng.standard_normal((k, n_paths))
    if given and skip == 0:
        a = a + LQ @ shocks[0]
    h_sd = math.sqrt(max(float(state.observation_variance[0, 0]), 0.0))
    out = np.empty((n_paths, horizon))
    for h in range(skip + horizon):
        if h >= skip:
            out[:, h - skip] = (Z @ a)[0]
            if h_sd:
                out[:, h - skip] += h_sd * rng.standard_normal(n_paths)
        elif h_sd:
            rng.standard_normal(n_paths)  # the gap's draws, so a window's paths continue the gap's
        entering = h + 1 - skip  # the window day the next state belongs to
        if given and 0 <= entering < horizon:
            z = shocks[entering]
        else:
            z = rng.standard_normal((LQ.shape[1], n_paths))
        a = T @ a + LQ @ z
    return out


def forecast_frame(
    *,
    dates: pd.DatetimeIndex,
    temperature_c: np.ndarray,
    day_types: np.ndarray,
    linear: np.ndarray,
    noise_mean: np.ndarray,
    noise_var: np.ndarray,
    use_log: bool,
    levels: Sequence[float],
    history_temperature_c: np.ndarray,
) -> pd.DataFrame:
    """The forecast table: mean, median and intervals from the normal predictive distribution
    on the model scale (lognormal on the demand scale for a log model; Aitchison and Brown,
    1957), and the range flags against the fitted history's temperatures."""
    mu = linear + noise_mean
    sd = np.sqrt(noise_var)

    def to_demand(values: np.ndarray) -> np.ndarray:
        return np.exp(values) if use_log else np.asarray(values, float)

    out = {"date": dates, "temperature_c": temperature_c, "day_type": day_types.astype(str)}
    if use_log:
        out["mean"] = np.exp(mu + noise_var / 2.0)  # lognormal mean
        out["median"] = np.exp(mu)
    else:
        out["mean"] = mu
        out["median"] = mu
    for L in levels:
        z = interval_levels.z_value(L)
        out[interval_levels.lower_column(L)] = to_demand(mu - z * sd)
        out[interval_levels.upper_column(L)] = to_demand(mu + z * sd)
    temps = temperature_c
    tmin, tmax = float(np.nanmin(history_temperature_c)), float(np.nanmax(history_temperature_c))
    by = np.where(temps > tmax, temps - tmax, np.where(temps < tmin, tmin - temps, 0.0))
    out["out_of_range"] = by > 0
    out["out_of_range_by_c"] = np.round(by, 6)
    hist_t = np.sort(np.asarray(history_temperature_c, float))
    near = np.searchsorted(hist_t, temps + SPARSE_HALF_WIDTH_C, side="right") - np.searchsorted(
        hist_t, temps - SPARSE_HALF_WIDTH_C, side="left"
    )
    out["sparse_temperature"] = (by == 0) & (near < SPARSE_MIN_DAYS)
    return pd.DataFrame(out)
