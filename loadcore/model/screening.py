"""Screening of candidate error orders by conditional sum of squares, and the stepwise walk.

Every candidate order is fitted to the (differenced) regression residuals by conditional sum of
squares (CSS; Box and Jenkins, 1976), which costs a few milliseconds, and ranked by an
approximate AICc (Hurvich and Tsai, 1989) computed on a common sample. The quick search walks
the stepwise path of Hyndman and Khandakar (2008) over that criterion.

The screening is behind one function, :func:`css_screen` (``(w, orders, n_exog, burn) ->
ScreenResult``), so that another screening can replace it without touching the search.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from scipy.optimize import least_squares
from scipy.signal import lfilter

from .orders import Orders, SearchBounds, aicc, lag_polynomials, roots_ok, split_polynomials


@dataclass(frozen=True)
class ScreenResult:
    """One screened candidate: its ARMA parameters (AR, MA, weekly AR, weekly MA), the CSS
    innovation variance (model scale), the screening AICc and whether the estimate is
    stationary and invertible (``ok``)."""

    orders: Orders
    params: np.ndarray
    sigma2: float
    aicc: float
    ok: bool
    note: str


def css_screen(w: np.ndarray, orders: Orders, *, n_exog: int, burn: int) -> ScreenResult:
    """Fit one candidate to a (differenced) residual series by conditional sum of squares.

    Parameters
    ----------
    w : array
        The stationary series (regression residuals after the chosen differencing), model scale.
    orders : Orders
        Candidate orders.
    n_exog : int
        Number of regression coefficients, counted in the criterion so that it is comparable
        with the exact refit.
    burn : int
        Residuals before this index are left out of the sum of squares, the same for every
        candidate so that their criteria are computed on a common sample.
    """
    p, q, P, Q, s = orders.p, orders.q, orders.P, orders.Q, orders.period
    k = orders.n_arma
    n_used = len(w) - burn
    if k == 0:
        sse = float(np.sum(w[burn:] ** 2))
        params = np.zeros(0)
    else:
        sol = least_squares(
            lambda th: _css_residuals(th, w, p, q, P, Q, s, burn),
            _css_start(p, q, P, Q),
            jac=lambda th: _css_jacobian(th, w, p, q, P, Q, s, burn),
            method="lm",
            max_nfev=400,
        )
        params = sol.x
        sse = float(np.sum(_css_residuals(params, w, p, q, P, Q, s, burn) ** 2))
    sigma2 = sse / n_used
    loglik = -0.5 * n_used * (np.log(2 * np.pi * sigma2) + 1.0)
    ar, ma = lag_polynomials(params, p, q, P, Q, s)
    ok = roots_ok(ar) and roots_ok(ma)
    note = "" if ok else "screening estimate not stationary or not invertible"
    crit = aicc(loglik, k + n_exog + 1, n_used)
    return ScreenResult(orders, params, sigma2, crit, ok, note)


def _css_start(p: int, q: int, P: int, Q: int) -> np.ndarray:
    start = np.zeros(p + q + P + Q)
    if p:
        start[0] = 0.5
    if P:
        start[p + q] = 0.2
    return start


def _css_residuals(theta, w, p, q, P, Q, s, burn) -> np.ndarray:
    """Conditional residuals e = A(L)S(L) / (M(L)N(L)) w with zero pre-sample values."""
    ar, ma = lag_polynomials(theta, p, q, P, Q, s)
    e = lfilter(ar, ma, w)[burn:]
    if not np.all(np.isfinite(e)) or np.max(np.abs(e)) > 1e6:
        return np.full(len(w) - burn, 1e3)
    return e


def _shift(u: np.ndarray, lag: int) -> np.ndarray:
    out = np.zeros_like(u)
    out[lag:] = u[:-lag]
    return out


def _css_jacobian(theta, w, p, q, P, Q, s, burn) -> np.ndarray:
    """Exact derivatives of the conditional residuals: each column is a lagged filtered series.

    d e / d phi_i = -L^i S/(MN) w,  d e / d Phi_i = -L^{si} A/(MN) w,
    d e / d theta_i = -L^i e/M,     d e / d Theta_i = -L^{si} e/N.
    """
    A, M, S, N = split_polynomials(theta, p, q, P, Q, s)
    MN = np.convolve(M, N)
    e = lfilter(np.convolve(A, S), MN, w)
    n = len(w) - burn
    if not np.all(np.isfinite(e)) or np.max(np.abs(e)) > 1e6:
        return np.zeros((n, len(theta)))
    cols = []
    if p:
        u = lfilter(S, MN, w)
        cols += [-_shift(u, i) for i in range(1, p + 1)]
    if q:
        u = lfilter([1.0], M, e)
        cols += [-_shift(u, i) for i in range(1, q + 1)]
    if P:
        u = lfilter(A, MN, w)
        cols += [-_shift(u, s * i) for i in range(1, P + 1)]
    if Q:
        u = lfilter([1.0], N, e)
        cols += [-_shift(u, s * i) for i in range(1, Q + 1)]
    return np.column_stack(cols)[burn:]


def screen_rank(r: ScreenResult) -> tuple[int, float]:
    """Sort key of screened candidates: usable ones first, then by screening AICc."""
    return (0 if r.ok else 1, r.aicc)


def stepwise_orders(
    screen: Callable[[Orders], ScreenResult],
    bounds: SearchBounds,
    d: int,
    D: int,
    *,
    max_steps: int = 94,
) -> dict[Orders, ScreenResult]:
    """The stepwise walk of Hyndman and Khandakar (2008) over the screening criterion.

    Starts from four models and moves to the best neighbour (one order up or down, or p and q,
    or P and Q, together) until no neighbour improves the criterion.
    """
    seen: dict[Orders, ScreenResult] = {}

    def visit(p: int, q: int, P: int, Q: int) -> ScreenResult | None:
        if not bounds.allows(p, q, P, Q):
            return None
        o = Orders(p, d, q, P, D, Q)
        if o not in seen:
            seen[o] = screen(o)
        return seen[o]

    # Starting models of Hyndman and Khandakar (2008), section 3.2.
    starts = [(2, 2, 1, 1), (0, 0, 0, 0), (1, 0, 1, 0), (0, 1, 0, 1)]
    for s in starts:
        visit(*s)
    best = min(seen.values(), key=screen_rank)
    for _ in range(max_steps):
        o = best.orders
        moves = [
            (o.p + dp, o.q + dq, o.P + dP, o.Q + dQ)
            for dp, dq, dP, dQ in [
                (1, 0, 0, 0),
                (-1, 0, 0, 0),
                (0, 1, 0, 0),
                (0, -1, 0, 0),
                (1, 1, 0, 0),
                (-1, -1, 0, 0),
                (0, 0, 1, 0),
                (0, 0, -1, 0),
                (0, 0, 0, 1),
                (0, 0, 0, -1),
                (0, 0, 1, 1),
                (0, 0, -1, -1),
            ]
        ]
        improved = None
        for m in moves:
            r = visit(*m)
            if r is not None and screen_rank(r) < screen_rank(
                best if improved is None else improved
            ):
                improved = r
        if improved is None:
            break
        best = improved
    return seen
