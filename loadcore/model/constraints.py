"""Stationary and invertible error parameters: the map the exact fits optimise over.

The exact fits optimise over unconstrained values that map to partial autocorrelations in
(-1, 1) (a scaled hyperbolic tangent), and from partial autocorrelations to polynomial
coefficients by the Durbin-Levinson recursion (Barndorff-Nielsen and Schou, 1973; Jones, 1980;
Monahan, 1984). Each of the four factors (AR, MA, weekly AR, weekly MA) is constrained on its
own, which makes the product stationary (invertible) because its roots are the union of the
factors' roots. Signs follow :func:`loadcore.model.orders.lag_polynomials` (those of
statsmodels' SARIMAX), parameters are ordered AR, MA, weekly AR, weekly MA.
"""

from __future__ import annotations

import numpy as np

from .orders import ROOT_MARGIN, Orders, lag_polynomials, roots_ok

#: Largest partial autocorrelation the optimiser may reach, |tanh(x)| <= this (our choice: keeps
#: roots at least ~1e-3 inside the admissible region, where the likelihood is still finite).
MAX_PARTIAL = 0.9995


def _partials_to_ar(r: np.ndarray) -> np.ndarray:
    """AR coefficients of ``1 - phi_1 L - ...`` from partial autocorrelations (Durbin-Levinson)."""
    phi = np.zeros(0)
    for k, rk in enumerate(r):
        phi = np.r_[phi - rk * phi[::-1], rk] if k else np.array([rk])
    return phi


def _ar_to_partials(phi: np.ndarray) -> np.ndarray:
    """Inverse of :func:`_partials_to_ar` (the step-down recursion); NaN when not stationary."""
    a = np.asarray(phi, float).copy()
    k = len(a)
    r = np.zeros(k)
    for j in range(k - 1, -1, -1):
        rj = a[j]
        r[j] = rj
        if j == 0:
            break
        if abs(rj) >= 1.0:
            return np.full(k, np.nan)
        a = (a[:j] + rj * a[:j][::-1]) / (1.0 - rj * rj)
    return r


def _to_block(x: np.ndarray, sign: float) -> np.ndarray:
    r = MAX_PARTIAL * np.tanh(x)
    return sign * _partials_to_ar(r) if len(r) else np.zeros(0)


def _from_block(c: np.ndarray, sign: float) -> np.ndarray:
    if not len(c):
        return np.zeros(0)
    r = _ar_to_partials(sign * np.asarray(c, float))
    if not np.all(np.isfinite(r)) or np.any(np.abs(r) >= MAX_PARTIAL):
        r = np.clip(np.nan_to_num(r, nan=0.0), -0.99 * MAX_PARTIAL, 0.99 * MAX_PARTIAL)
    return np.arctanh(r / MAX_PARTIAL)


def constrain(x: np.ndarray, orders: Orders) -> np.ndarray:
    """Map unconstrained optimiser values to stationary and invertible error parameters.

    An MA factor ``1 + theta_1 L + ...`` is invertible exactly when ``1 - (-theta_1) L - ...`` is
    a stationary AR polynomial, hence the sign flip.
    """
    a, b, c, d = orders.split(x)
    return np.r_[_to_block(a, 1.0), _to_block(b, -1.0), _to_block(c, 1.0), _to_block(d, -1.0)]


def unconstrain(params: np.ndarray, orders: Orders) -> np.ndarray:
    """Inverse of :func:`constrain`; parameters on or outside the boundary are pulled inside."""
    a, b, c, d = orders.split(params)
    return np.r_[
        _from_block(a, 1.0), _from_block(b, -1.0), _from_block(c, 1.0), _from_block(d, -1.0)
    ]


def stationary_invertible(
    params: np.ndarray, orders: Orders, margin: float = ROOT_MARGIN
) -> tuple[bool, bool]:
    """Root checks on the expanded polynomials: every root outside ``|z| = margin``."""
    ar, ma = lag_polynomials(params, orders.p, orders.q, orders.P, orders.Q, orders.period)
    return roots_ok(ar, margin), roots_ok(ma, margin)


__all__ = ["MAX_PARTIAL", "ROOT_MARGIN", "constrain", "stationary_invertible", "unconstrain"]
