"""Residual checks of a fitted model: autocorrelations and the Ljung-Box test, in words."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy import stats

from .orders import WEEKLY_PERIOD

#: Ljung-Box lag for daily data: twice the weekly period (common practice, no source).
LJUNG_BOX_LAG = 2 * WEEKLY_PERIOD

#: Autocorrelations shown, days: four weeks (our choice).
ACF_MAX_LAG = 28

#: Two-sided 95 % normal quantile for the white-noise band ±1.96/√n (Box and Jenkins, 1976).
ACF_BAND_Z = 1.96

#: Size of the Ljung-Box test (common practice, no source).
LJUNG_BOX_ALPHA = 0.05


@dataclass(frozen=True)
class Diagnostics:
    """Residual checks of a fitted model.

    ``residuals`` are one-step-ahead prediction errors on the model scale (log demand when the
    model is in logs), after the filter's start-up days.
    """

    residuals: pd.Series
    acf: np.ndarray
    acf_bound: float
    ljung_box_stat: float
    ljung_box_pvalue: float
    ljung_box_lag: int
    ljung_box_dof: int
    verdict: str
    advice: str


def autocorrelations(x: np.ndarray, max_lag: int) -> np.ndarray:
    """Sample autocorrelations r_1..r_max_lag (Box and Jenkins, 1976, the usual biased estimator)."""
    x = np.asarray(x, float)
    x = x - x.mean()
    denom = float(x @ x)
    return np.array([float(x[k:] @ x[:-k]) / denom for k in range(1, max_lag + 1)])


def ljung_box(x: np.ndarray, lag: int, dof: int) -> tuple[float, float]:
    """Ljung-Box portmanteau statistic Q = n(n+2) sum r_k^2/(n-k) and its chi-square p-value.

    Ljung and Box (1978); ``dof`` degrees of freedom (the lag less the ARMA parameters).
    """
    n = len(x)
    r = autocorrelations(x, lag)
    q = float(n * (n + 2) * np.sum(r**2 / (n - np.arange(1, lag + 1))))
    dof = max(int(dof), 1)
    return q, float(stats.chi2.sf(q, dof))


def diagnose(residuals: pd.Series, n_arma: int, max_lag: int = ACF_MAX_LAG) -> Diagnostics:
    """Residual ACF with ±1.96/√n bounds and the Ljung-Box test at lag 14 with ``n_arma``
    (p + q + P + Q) degrees of freedom removed, with a verdict and advice in words."""
    kept = residuals.dropna()
    r = kept.to_numpy(float)
    acf = autocorrelations(r, max_lag)
    dof = LJUNG_BOX_LAG - n_arma
    stat, pval = ljung_box(r, LJUNG_BOX_LAG, dof)
    if pval >= LJUNG_BOX_ALPHA:
        verdict = (
            f"No remaining autocorrelation detected (Ljung-Box p = {pval:.3f} at lag "
            f"{LJUNG_BOX_LAG}): the error model captures the day-to-day pattern."
        )
        advice = ""
    else:
        verdict = (
            f"Some autocorrelation remains (Ljung-Box p = {pval:.3f} at lag "
            f"{LJUNG_BOX_LAG}): intervals may be too narrow."
        )
        advice = (
            "Try the thorough search or larger bounds, add annual terms, mark unusual "
            "days (shutdowns, bridge days) as their own day type, or use the detailed "
            "day-type scheme."
        )
    return Diagnostics(
        pd.Series(r, index=kept.index, name="residual"),
        acf,
        ACF_BAND_Z / math.sqrt(len(r)),
        stat,
        pval,
        LJUNG_BOX_LAG,
        dof,
        verdict,
        advice,
    )
