"""Forecast scores: point errors, quantile losses, CRPS, PIT and interval coverage.

numpy only, plus scipy's normal distribution function; no other loadcore module except errors.
Every function takes array-likes and returns floats or numpy arrays; missing actual values
(NaN) are left out of averages rather than propagated, so a backtest with a few missing days
still scores.

References
----------
Hyndman, R. J. and Koehler, A. B. (2006). Another look at measures of forecast accuracy.
International Journal of Forecasting 22(4), 679-688 (MASE).
Gneiting, T. and Raftery, A. E. (2007). Strictly proper scoring rules, prediction, and
estimation. Journal of the American Statistical Association 102(477), 359-378 (CRPS, its energy
form and the closed form for a normal).
Koenker, R. and Bassett, G. (1978). Regression quantiles. Econometrica 46(1), 33-50 (the check
or pinball loss).
Hyndman, R. J. and Fan, Y. (1996). Sample quantiles in statistical packages. The American
Statistician 50(4), 361-365 (the linear-interpolation sample quantile, their type 7).
"""

from __future__ import annotations

import numpy as np

from loadcore.errors import InputError

__all__ = [
    "mape",
    "rmse",
    "mae",
    "seasonal_naive_mae",
    "mase",
    "pinball_loss",
    "sample_quantiles",
    "crps_ensemble",
    "crps_normal",
    "pit_ensemble",
    "pit_histogram",
    "interval_coverage",
    "coverage_standard_error",
]

# Seasonal lag for daily demand: one week (common practice, no source).
WEEK_LAG = 7


def _as_float(values, name: str) -> np.ndarray:
    try:
        array = np.asarray(values, dtype=float)
    except (TypeError, ValueError) as exc:
        raise InputError(
            f"{name} must be numbers",
            where=name,
            fix="Pass a list or array of numbers",
        ) from exc
    return array


def _pair(actual, predicted) -> tuple[np.ndarray, np.ndarray]:
    y = _as_float(actual, "actual")
    f = _as_float(predicted, "predicted")
    if y.shape != f.shape:
        raise InputError(
            f"actual has shape {y.shape} but predicted has shape {f.shape}",
            where="scores",
            fix="Pass one prediction for every actual value",
        )
    return y, f


def mae(actual, predicted) -> float:
    """Mean absolute error, in the units of the data (MW for demand).

    Pairs where either value is NaN are left out; NaN when no pair is left.
    """
    y, f = _pair(actual, predicted)
    err = np.abs(y - f)
    err = err[np.isfinite(err)]
    return float(err.mean()) if err.size else float("nan")


def rmse(actual, predicted) -> float:
    """Root mean squared error, in the units of the data (MW for demand)."""
    y, f = _pair(actual, predicted)
    err = (y - f) ** 2
    err = err[np.isfinite(err)]
    return float(np.sqrt(err.mean())) if err.size else float("nan")


def mape(actual, predicted) -> float:
    """Mean absolute percentage error, in percent.

    Actual values of zero are left out (the percentage is undefined there).
    """
    y, f = _pair(actual, predicted)
    with np.errstate(divide="ignore", invalid="ignore"):
        pct = np.abs((y - f) / y) * 100.0
    pct = pct[np.isfinite(pct)]
    return float(pct.mean()) if pct.size else float("nan")


def seasonal_naive_mae(insample, lag: int = WEEK_LAG) -> float:
    """In-sample mean absolute error of the seasonal-naive forecast ``y[t] = y[t - lag]``.

    This is the scale of MASE (Hyndman and Koehler, 2006). Pairs with a missing value are left
    out.

    Parameters
    ----------
    insample : array-like
        The training series, oldest first, in MW.
    lag : int
        Seasonal lag in days (7: same weekday last week).
    """
    x = _as_float(insample, "insample").ravel()
    if lag < 1 or x.size <= lag:
        raise InputError(
            f"need more than {lag} in-sample values to scale MASE, got {x.size}",
            where="insample",
            fix="Use a longer history",
        )
    return mae(x[lag:], x[:-lag])


def mase(actual, predicted, insample, lag: int = WEEK_LAG) -> float:
    """Mean absolute scaled error (Hyndman and Koehler, 2006), no unit.

    The forecast MAE divided by the in-sample MAE of the seasonal-naive forecast at ``lag``.
    Below 1 means better than repeating last week's demand in the training period.
    """
    scale = seasonal_naive_mae(insample, lag)
    if not np.isfinite(scale) or scale <= 0:
        raise InputError(
            "the in-sample seasonal-naive error is zero, so MASE has no scale",
            where="insample",
            fix="Check the history: demand repeats exactly every week",
        )
    return mae(actual, predicted) / scale


def pinball_loss(actual, quantile_forecast, prob: float) -> float:
    """Mean pinball (quantile, check) loss of a forecast of the ``prob`` quantile, in MW.

    ``loss = prob * (y - q)`` when ``y >= q`` and ``(1 - prob) * (q - y)`` otherwise
    (Koenker and Bassett, 1978). Half the mean absolute error when ``prob = 0.5``.
    """
    if not 0.0 < prob < 1.0:
        raise InputError(
            f"quantile level {prob} is outside (0, 1)",
            where="prob",
            fix="Use a level such as 0.1 or 0.9",
        )
    y, q = _pair(actual, quantile_forecast)
    diff = y - q
    loss = np.where(diff >= 0, prob * diff, (prob - 1.0) * diff)
    loss = loss[np.isfinite(loss)]
    return float(loss.mean()) if loss.size else float("nan")


def sample_quantiles(samples, probs, axis: int = -1) -> np.ndarray:
    """Sample quantiles by linear interpolation between order statistics.

    Hyndman and Fan (1996) type 7: position ``(m - 1) * p`` in the sorted sample. Quantiles
    come first in the result: shape ``(len(probs),) + the other axes``.

    Parameters
    ----------
    samples : array-like
        Ensemble members along ``axis``.
    probs : sequence of float
        Levels in [0, 1].
    """
    x = np.sort(_as_float(samples, "samples"), axis=axis)
    x = np.moveaxis(x, axis, -1)
    p = _as_float(probs, "probs").ravel()
    if p.size and (p.min() < 0 or p.max() > 1):
        raise InputError("quantile levels must lie in [0, 1]", where="probs", fix="Use e.g. 0.1")
    m = x.shape[-1]
    pos = (m - 1) * p
    lo = np.floor(pos).astype(int)
    hi = np.minimum(lo + 1, m - 1)
    frac = pos - lo
    out = x[..., lo] * (1.0 - frac) + x[..., hi] * frac
    return np.moveaxis(out, -1, 0)


def crps_ensemble(samples, actual) -> np.ndarray:
    """CRPS of an ensemble forecast, in the units of the data (MW for demand).

    The energy form ``E|X - y| - 0.5 E|X - X'|`` with X, X' drawn from the ensemble
    (Gneiting and Raftery, 2007). The pair term is computed after sorting in O(m log m):
    ``E|X - X'| = 2 / m^2 * sum_i (2 i - m - 1) x_(i)``.

    Parameters
    ----------
    samples : array-like, shape (..., m)
        Ensemble members on the last axis.
    actual : array-like, shape (...)
        Observed values.

    Returns
    -------
    ndarray of shape (...); NaN where the actual value is missing.
    """
    x = np.sort(_as_float(samples, "samples"), axis=-1)
    y = _as_float(actual, "actual")
    if x.shape[:-1] != y.shape:
        raise InputError(
            f"samples have shape {x.shape} but actual has shape {y.shape}",
            where="crps_ensemble",
            fix="Put the ensemble members on the last axis",
        )
    m = x.shape[-1]
    first = np.abs(x - y[..., None]).mean(axis=-1)
    weights = 2.0 * np.arange(1, m + 1) - m - 1.0
    pair = 2.0 / (m * m) * (x * weights).sum(axis=-1)
    return first - 0.5 * pair


def _norm_pdf(z: np.ndarray) -> np.ndarray:
    return np.exp(-0.5 * z * z) / np.sqrt(2.0 * np.pi)


def _norm_cdf(z: np.ndarray) -> np.ndarray:
    from scipy.special import ndtr

    return ndtr(z)


def crps_normal(mean, sd, actual) -> np.ndarray:
    """Closed-form CRPS of a normal forecast N(mean, sd^2) (Gneiting and Raftery, 2007).

    ``sd * (z (2 Phi(z) - 1) + 2 phi(z) - 1 / sqrt(pi))`` with ``z = (y - mean) / sd``.
    Same units as the data.
    """
    mu = _as_float(mean, "mean")
    s = _as_float(sd, "sd")
    y = _as_float(actual, "actual")
    if np.any(s <= 0):
        raise InputError("standard deviation must be positive", where="sd", fix="Pass sd > 0")
    z = (y - mu) / s
    return s * (z * (2.0 * _norm_cdf(z) - 1.0) + 2.0 * _norm_pdf(z) - 1.0 / np.sqrt(np.pi))


def pit_ensemble(samples, actual) -> np.ndarray:
    """Probability integral transform of each actual value under its ensemble.

    The share of members below the actual value, counting ties as half, in [0, 1]. Well
    calibrated forecasts give PIT values that look uniform. NaN where the actual is missing.

    Parameters
    ----------
    samples : array-like, shape (..., m)
    actual : array-like, shape (...)
    """
    x = _as_float(samples, "samples")
    y = _as_float(actual, "actual")
    if x.shape[:-1] != y.shape:
        raise InputError(
            f"samples have shape {x.shape} but actual has shape {y.shape}",
            where="pit_ensemble",
            fix="Put the ensemble members on the last axis",
        )
    below = (x < y[..., None]).sum(axis=-1)
    equal = (x == y[..., None]).sum(axis=-1)
    pit = (below + 0.5 * equal) / x.shape[-1]
    return np.where(np.isfinite(y), pit, np.nan)


def pit_histogram(pit, bins: int = 10) -> tuple[np.ndarray, np.ndarray]:
    """Counts of PIT values in ``bins`` equal bins on [0, 1]; NaN values are dropped.

    Returns
    -------
    counts : ndarray of int, shape (bins,)
    edges : ndarray of float, shape (bins + 1,)
    """
    if bins < 1:
        raise InputError("a PIT histogram needs at least one bin", where="bins", fix="Use 10")
    values = _as_float(pit, "pit").ravel()
    values = values[np.isfinite(values)]
    counts, edges = np.histogram(values, bins=bins, range=(0.0, 1.0))
    return counts, edges


def interval_coverage(actual, lower, upper) -> float:
    """Share of actual values inside ``[lower, upper]``, in [0, 1]; NaN actuals are left out."""
    y = _as_float(actual, "actual")
    lo = _as_float(lower, "lower")
    hi = _as_float(upper, "upper")
    if not (y.shape == lo.shape == hi.shape):
        raise InputError(
            "actual, lower and upper must have the same shape",
            where="interval_coverage",
            fix="Pass one bound pair per actual value",
        )
    keep = np.isfinite(y)
    if not keep.any():
        return float("nan")
    inside = (y >= lo) & (y <= hi)
    return float(inside[keep].mean())


def coverage_standard_error(actual, lower, upper, groups) -> float:
    """Standard error of :func:`interval_coverage` when the days come in correlated groups.

    The days forecast from one origin share that origin's error state, so they fall inside or
    outside an interval together; the groups (origins) are the independent units. The variance
    is that of a ratio estimator over clusters, ``m / (m - 1) * sum_i (k_i - p n_i)^2 /
    (sum_i n_i)^2`` for ``m`` groups with ``n_i`` scored days and ``k_i`` of them inside, ``p``
    the pooled coverage (Cochran, 1977, *Sampling Techniques*, the ratio estimator; from
    memory). NaN actuals are left out; NaN when fewer than two groups have scored days.

    Parameters
    ----------
    actual, lower, upper : array-like
        Actual values and interval bounds, one per day.
    groups : array-like
        The group (forecast origin) of each day.

    Returns
    -------
    float
        Standard error of the coverage, as a share (0.04 = 4 percentage points).
    """
    y = _as_float(actual, "actual")
    lo = _as_float(lower, "lower")
    hi = _as_float(upper, "upper")
    labels = np.asarray(groups)
    if not (y.shape == lo.shape == hi.shape == labels.shape):
        raise InputError(
            "actual, lower, upper and groups must have the same shape",
            where="coverage_standard_error",
            fix="Pass one bound pair and one group per actual value",
        )
    keep = np.isfinite(y)
    if not keep.any():
        return float("nan")
    inside = ((y >= lo) & (y <= hi))[keep].astype(float)
    _, index = np.unique(labels[keep], return_inverse=True)
    n = np.bincount(index).astype(float)
    k = np.bincount(index, weights=inside)
    m = len(n)
    if m < 2:
        return float("nan")
    p = k.sum() / n.sum()
    variance = m / (m - 1) * float(np.sum((k - p * n) ** 2)) / float(n.sum()) ** 2
    return float(np.sqrt(variance))
