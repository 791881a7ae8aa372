"""Automatic choice of the error model: differencing tests and the order search.

Two stages keep the search fast and honest:

1. *Screening.* Every candidate order is fitted to the regression residuals by conditional sum of
   squares (CSS; Box and Jenkins, 1976), which costs a few milliseconds, and ranked by an
   approximate AICc (Hurvich and Tsai, 1989) computed on a common sample.
2. *Exact refit.* The best few are refitted jointly with the regression coefficients by exact
   Gaussian maximum likelihood in state-space form (statsmodels SARIMAX), in parallel on the
   machine's cores. Each refit is checked for convergence, retried with another optimiser when it
   fails, and the chosen model must be stationary and invertible.

The quick search walks the stepwise path of Hyndman and Khandakar (2008) over the screening
criterion; the thorough search screens every order within the bounds.
"""

from __future__ import annotations

import logging
import multiprocessing as mp
import os
import warnings
from collections.abc import Callable, Iterable
from concurrent.futures import ProcessPoolExecutor
from concurrent.futures.process import BrokenProcessPool
from dataclasses import dataclass

import numpy as np
from scipy.optimize import least_squares
from scipy.signal import lfilter

log = logging.getLogger(__name__)

#: Weekly seasonal period of daily data (common practice, no source).
WEEKLY_PERIOD = 7

#: KPSS test size used to decide on differencing, as in Hyndman and Khandakar (2008).
KPSS_ALPHA = 0.05

#: Seasonal-strength threshold above which weekly differencing is taken
#: (Wang, Smith and Hyndman, 2006, as used for seasonal differencing decisions; from memory).
SEASONAL_STRENGTH_THRESHOLD = 0.64

#: A root closer to the unit circle than this is treated as a unit root (common practice, no source).
ROOT_MARGIN = 1.001

Progress = Callable[[int, int, str], None]


@dataclass(frozen=True, order=True)
class Orders:
    """Orders of a weekly seasonal ARIMA error process."""

    p: int
    d: int
    q: int
    P: int
    D: int
    Q: int
    period: int = WEEKLY_PERIOD

    @property
    def order(self) -> tuple[int, int, int]:
        return (self.p, self.d, self.q)

    @property
    def seasonal_order(self) -> tuple[int, int, int, int]:
        return (self.P, self.D, self.Q, self.period)

    @property
    def n_arma(self) -> int:
        return self.p + self.q + self.P + self.Q

    def to_dict(self) -> dict[str, int]:
        """The orders in the product's own words (model files, ``fit --json``)."""
        return {
            "ar": self.p,
            "differencing": self.d,
            "ma": self.q,
            "weekly_ar": self.P,
            "weekly_differencing": self.D,
            "weekly_ma": self.Q,
        }

    @classmethod
    def from_dict(cls, data: dict[str, int]) -> Orders:
        """Inverse of :meth:`to_dict`."""
        return cls(
            int(data["ar"]),
            int(data["differencing"]),
            int(data["ma"]),
            int(data["weekly_ar"]),
            int(data["weekly_differencing"]),
            int(data["weekly_ma"]),
        )

    def describe(self) -> str:
        """Our own plain layout, e.g. ``AR 2 · MA 1 | weekly AR 1 · MA 0 | differencing 0, weekly 0``."""
        word = "weekly" if self.period == WEEKLY_PERIOD else f"every {self.period} days"
        return (
            f"AR {self.p} · MA {self.q} | {word} AR {self.P} · MA {self.Q} | "
            f"differencing {self.d}, {word} {self.D}"
        )


@dataclass(frozen=True)
class SearchBounds:
    """Bounds of the order search (defaults as in the product specification)."""

    ar_up_to: int = 5
    ma_up_to: int = 5
    ar_ma_up_to: int = 8
    weekly_ar_up_to: int = 2
    weekly_ma_up_to: int = 2

    def allows(self, p: int, q: int, P: int, Q: int) -> bool:
        return (
            0 <= p <= self.ar_up_to
            and 0 <= q <= self.ma_up_to
            and p + q <= self.ar_ma_up_to
            and 0 <= P <= self.weekly_ar_up_to
            and 0 <= Q <= self.weekly_ma_up_to
        )

    def all_orders(self, d: int, D: int) -> list[Orders]:
        return [
            Orders(p, d, q, P, D, Q)
            for p in range(self.ar_up_to + 1)
            for q in range(self.ma_up_to + 1)
            for P in range(self.weekly_ar_up_to + 1)
            for Q in range(self.weekly_ma_up_to + 1)
            if self.allows(p, q, P, Q)
        ]


# --------------------------------------------------------------------------------------------
# Differencing tests
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class DifferencingDecision:
    """Outcome of the differencing tests on the regression residuals."""

    d: int
    D: int
    kpss_statistics: tuple[float, ...]
    kpss_critical_5pct: float
    seasonal_strength: float

    def describe(self) -> str:
        parts = [
            f"KPSS statistic {s:.3f} against 5 % critical value {self.kpss_critical_5pct:.3f}"
            for s in self.kpss_statistics
        ]
        return (
            f"differencing {self.d} ({'; '.join(parts)}); weekly differencing {self.D} "
            f"(weekly seasonal strength {self.seasonal_strength:.2f}, threshold "
            f"{SEASONAL_STRENGTH_THRESHOLD})"
        )


def kpss_statistic(x: np.ndarray) -> tuple[float, float]:
    """KPSS level-stationarity statistic and its 5 % critical value.

    Kwiatkowski, Phillips, Schmidt and Shin (1992), with their long bandwidth
    l12 = int(12 (n/100)^(1/4)) (statsmodels' ``nlags="legacy"``), which keeps the test's size
    near 5 % for the persistent errors of daily demand; the shorter automatic bandwidth
    over-rejected on simulated AR errors in our checks.
    """
    from statsmodels.tsa.stattools import kpss

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # p-value outside the table: we use the statistic
        stat, _pvalue, _lags, crit = kpss(
            np.asarray(x, float), regression="c", nlags="legacy", result_object=False
        )
    return float(stat), float(crit["5%"])


def kpss_differences(x: np.ndarray, max_d: int = 2) -> tuple[int, list[float], float]:
    """Number of first differences until the KPSS test no longer rejects level stationarity."""
    x = np.asarray(x, float)
    stats: list[float] = []
    crit = 0.463  # Kwiatkowski et al. (1992), Table 1, level case, 5 %
    for d in range(max_d + 1):
        stat, crit = kpss_statistic(x)
        stats.append(stat)
        if stat <= crit or d == max_d:
            return d, stats, crit
        x = np.diff(x)
    return max_d, stats, crit  # pragma: no cover - loop always returns


def seasonal_strength(x: np.ndarray, period: int = WEEKLY_PERIOD) -> float:
    """Strength of the seasonal pattern, max(0, 1 - Var(R) / Var(S + R)), from an STL decomposition.

    Wang, Smith and Hyndman (2006); STL of Cleveland et al. (1990) as in statsmodels.
    """
    from statsmodels.tsa.seasonal import STL

    x = np.asarray(x, float)
    res = STL(x, period=period, robust=True).fit()
    remainder = res.resid
    var_sr = np.var(res.seasonal + remainder)
    if var_sr <= 0:
        return 0.0
    return float(max(0.0, 1.0 - np.var(remainder) / var_sr))


def choose_differencing(resid: np.ndarray, period: int = WEEKLY_PERIOD) -> DifferencingDecision:
    """Weekly differencing from the seasonal strength, then first differences from KPSS."""
    x = _fill_gaps(resid)
    strength = seasonal_strength(x, period)
    D = int(strength > SEASONAL_STRENGTH_THRESHOLD)
    if D:
        x = x[period:] - x[:-period]
    d, stats, crit = kpss_differences(x, max_d=2)
    return DifferencingDecision(d, D, tuple(stats), crit, strength)


def difference(x: np.ndarray, d: int, D: int, period: int = WEEKLY_PERIOD) -> np.ndarray:
    """Apply ``D`` weekly and ``d`` first differences."""
    x = np.asarray(x, float)
    for _ in range(D):
        x = x[period:] - x[:-period]
    for _ in range(d):
        x = np.diff(x)
    return x


def _fill_gaps(x: np.ndarray) -> np.ndarray:
    """Linear interpolation over missing values (screening only; the exact fit keeps them missing)."""
    x = np.asarray(x, float).copy()
    bad = ~np.isfinite(x)
    if bad.any():
        idx = np.arange(len(x))
        x[bad] = np.interp(idx[bad], idx[~bad], x[~bad])
    return x


# --------------------------------------------------------------------------------------------
# Screening by conditional sum of squares
# --------------------------------------------------------------------------------------------


def lag_polynomials(
    params: np.ndarray, p: int, q: int, P: int, Q: int, period: int = WEEKLY_PERIOD
) -> tuple[np.ndarray, np.ndarray]:
    """Expanded AR and MA lag polynomials (coefficients of L^0, L^1, ...) of a multiplicative model.

    The AR side is (1 - phi_1 L - ...)(1 - Phi_1 L^s - ...), the MA side (1 + theta_1 L + ...)
    (1 + Theta_1 L^s + ...), the sign conventions of statsmodels' SARIMAX.
    """
    A, M, S, N = _split(np.asarray(params, float), p, q, P, Q, period)
    return np.convolve(A, S), np.convolve(M, N)


def roots_ok(poly: np.ndarray) -> bool:
    """True when every root of the lag polynomial lies outside the unit circle (with a margin)."""
    poly = np.trim_zeros(np.asarray(poly, float), "b")
    if len(poly) <= 1:
        return True
    roots = np.roots(poly[::-1])
    return bool(np.all(np.abs(roots) > ROOT_MARGIN))


@dataclass(frozen=True)
class ScreenResult:
    orders: Orders
    params: np.ndarray
    sigma2: float
    aicc: float
    ok: bool
    note: str


def aicc(loglik: float, n_params: int, n_obs: int) -> float:
    """Corrected Akaike criterion, AIC + 2k(k+1)/(n-k-1) (Hurvich and Tsai, 1989).

    ``n_params`` counts every estimated parameter, the innovation variance included.
    """
    aic = -2.0 * loglik + 2.0 * n_params
    denom = n_obs - n_params - 1
    if denom <= 0:
        return float("inf")
    return float(aic + 2.0 * n_params * (n_params + 1) / denom)


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


def _split(theta: np.ndarray, p: int, q: int, P: int, Q: int, s: int):
    A = np.r_[1.0, -theta[:p]]
    M = np.r_[1.0, theta[p : p + q]]
    S = np.zeros(P * s + 1)
    S[0] = 1.0
    S[s::s] = -theta[p + q : p + q + P]
    N = np.zeros(Q * s + 1)
    N[0] = 1.0
    N[s::s] = theta[p + q + P :]
    return A, M, S, N


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
    A, M, S, N = _split(theta, p, q, P, Q, s)
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
    best = min(seen.values(), key=_rank)
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
            if r is not None and _rank(r) < _rank(best if improved is None else improved):
                improved = r
        if improved is None:
            break
        best = improved
    return seen


def _rank(r: ScreenResult) -> tuple[int, float]:
    return (0 if r.ok else 1, r.aicc)


# --------------------------------------------------------------------------------------------
# Exact maximum likelihood refits
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class ExactResult:
    orders: Orders
    params: np.ndarray
    loglik: float
    n_obs: int
    aicc: float
    converged: bool
    stationary: bool
    invertible: bool
    method: str
    note: str

    @property
    def usable(self) -> bool:
        return self.converged and self.stationary and self.invertible and np.isfinite(self.aicc)


def build_state_space(y: np.ndarray, X: np.ndarray | None, orders: Orders):
    """The SARIMAX state-space model of a regression with seasonal ARIMA errors."""
    from statsmodels.tsa.statespace.sarimax import SARIMAX

    return SARIMAX(
        y,
        exog=X,
        order=orders.order,
        seasonal_order=orders.seasonal_order,
        trend=None,
        enforce_stationarity=True,
        enforce_invertibility=True,
    )


def gls_start(
    y: np.ndarray, X: np.ndarray | None, orders: Orders, arma: np.ndarray, burn: int
) -> np.ndarray:
    """Regression coefficients by least squares on data pre-whitened with the screening ARMA
    filter (an approximate GLS step; Cochrane and Orcutt, 1949, generalised), to start from."""
    if X is None or X.shape[1] == 0:
        return np.zeros(0)
    ar, ma = lag_polynomials(arma, orders.p, orders.q, orders.P, orders.Q, orders.period)
    yd = difference(_fill_gaps(y), orders.d, orders.D, orders.period)
    Xd = np.column_stack(
        [difference(X[:, j], orders.d, orders.D, orders.period) for j in range(X.shape[1])]
    )
    yf = lfilter(ar, ma, yd)[burn:]
    Xf = np.column_stack([lfilter(ar, ma, Xd[:, j])[burn:] for j in range(Xd.shape[1])])
    keep = np.any(np.abs(Xf) > 1e-12, axis=0)
    beta = np.zeros(X.shape[1])
    if keep.any():
        beta[keep] = np.linalg.lstsq(Xf[:, keep], yf, rcond=None)[0]
    return beta


#: Optimiser tolerances (scipy L-BFGS-B factr, pgtol): loose while ranking candidates, tight
#: for the chosen one (our choice: the loose log-likelihood was within 0.02 of the tight one).
TOLERANCE = {"rank": (1e10, 1e-4), "final": (1e8, 1e-5)}


def exact_fit(
    y: np.ndarray,
    X: np.ndarray | None,
    orders: Orders,
    start: np.ndarray | None,
    *,
    maxiter: int = 300,
    tolerance: str = "rank",
) -> ExactResult:
    """Exact Gaussian maximum likelihood of one candidate, with convergence checks and retries.

    ``y`` should be scaled so that the innovation standard deviation is of order one; the
    optimiser is badly conditioned otherwise (common practice, no source). ``start`` holds the
    regression coefficients and the ARMA parameters (the innovation variance is concentrated
    out of the likelihood and estimated in closed form; Harvey, 1989). Returned parameters end
    with the innovation variance.
    """
    from statsmodels.tsa.statespace.sarimax import SARIMAX

    model = SARIMAX(
        y,
        exog=X,
        order=orders.order,
        seasonal_order=orders.seasonal_order,
        trend=None,
        enforce_stationarity=True,
        enforce_invertibility=True,
        concentrate_scale=True,
    )
    factr, pgtol = TOLERANCE[tolerance]
    if start is not None and len(start) == len(model.param_names) + 1:
        start = np.asarray(start[:-1], float)
    attempts = [("lbfgs", start, maxiter), ("nm", start, 4000), ("lbfgs", None, maxiter)]
    res = None
    notes: list[str] = []
    method = ""
    converged = False
    prev = None
    for method, sp, iters in attempts:
        if method == "lbfgs" and sp is None and prev is not None:
            sp = prev  # polish the simplex solution by gradient steps
        extra = {"factr": factr, "pgtol": pgtol} if method == "lbfgs" else {}
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                res = model.fit(
                    start_params=sp,
                    method=method,
                    maxiter=iters,
                    disp=False,
                    cov_type="none",
                    optim_complex_step=False,
                    **extra,
                )
        except (np.linalg.LinAlgError, ValueError) as exc:  # numerical failure: try next
            notes.append(f"{method} failed: {exc}")
            continue
        converged = bool(res.mle_retvals.get("converged", False)) and np.isfinite(res.llf)
        prev = res.params
        if converged:
            break
        notes.append(f"{method} did not converge")
    if res is None:
        return ExactResult(
            orders,
            np.zeros(0),
            -np.inf,
            len(y),
            np.inf,
            False,
            False,
            False,
            method,
            "; ".join(notes),
        )
    params = np.r_[np.asarray(res.params, float), float(res.scale)]
    k = len(params)
    n_obs = int(res.nobs_effective) if hasattr(res, "nobs_effective") else int(res.nobs)
    n_obs -= int(np.sum(~np.isfinite(y)))
    crit = aicc(float(res.llf), k, n_obs)
    ar, ma = _poly(res, orders)
    if converged and notes:
        notes.append(f"converged with {method}")
    return ExactResult(
        orders,
        params,
        float(res.llf),
        n_obs,
        crit,
        converged,
        roots_ok(ar),
        roots_ok(ma),
        method,
        "; ".join(notes),
    )


def _poly(res, orders: Orders) -> tuple[np.ndarray, np.ndarray]:
    names = list(res.model.param_names)
    params = np.asarray(res.params, float)

    def pick(prefix: str) -> np.ndarray:
        return np.array([params[i] for i, n in enumerate(names) if n.startswith(prefix)])

    arma = np.r_[pick("ar.L"), pick("ma.L"), pick("ar.S.L"), pick("ma.S.L")]
    return lag_polynomials(arma, orders.p, orders.q, orders.P, orders.Q, orders.period)


# Work shipped to worker processes: module-level so that it pickles by reference.
def _exact_task(args: tuple) -> ExactResult:
    y, X, orders, start = args
    return exact_fit(y, X, orders, start)


def _one_blas_thread() -> None:
    """Worker start-up: one BLAS thread per process. The state-space matrices are tiny, and
    several multi-threaded BLAS pools on two cores slowed parallel fits three- to five-fold in our
    measurements."""
    try:
        from threadpoolctl import threadpool_limits

        threadpool_limits(1)
    except ImportError:  # pragma: no cover - threadpoolctl is a declared dependency
        pass


_POOL: ProcessPoolExecutor | None = None
_POOL_WORKERS = 0


def _pool(workers: int) -> ProcessPoolExecutor:
    """A persistent pool of worker processes, forked so that scripts need no main guard."""
    global _POOL, _POOL_WORKERS
    if _POOL is None or _POOL_WORKERS != workers:
        if _POOL is not None:
            _POOL.shutdown(cancel_futures=True)
        method = "fork" if "fork" in mp.get_all_start_methods() else "spawn"
        _POOL = ProcessPoolExecutor(
            max_workers=workers, mp_context=mp.get_context(method), initializer=_one_blas_thread
        )
        _POOL_WORKERS = workers
    return _POOL


def default_workers() -> int:
    """Worker processes for the exact refits: ``LOADCORE_WORKERS`` if set, else up to 2 cores."""
    env = os.environ.get("LOADCORE_WORKERS", "").strip()
    if env.isdigit() and int(env) > 0:
        return int(env)
    return max(1, min(2, os.cpu_count() or 1))


def exact_fits(
    tasks: list[tuple], workers: int, progress: Callable[[str], None] | None = None
) -> Iterable[ExactResult]:
    """Run exact refits, in parallel when ``workers`` > 1; yields results as they finish."""
    if workers <= 1 or len(tasks) <= 1:
        for t in tasks:
            r = _exact_task(t)
            if progress:
                progress(r.orders.describe())
            yield r
        return
    try:
        pool = _pool(workers)
        futures = [pool.submit(_exact_task, t) for t in tasks]
    except (OSError, RuntimeError) as exc:  # no processes here: do the work in this one
        log.warning("parallel refits unavailable (%s); fitting one at a time", exc)
        yield from exact_fits(tasks, 1, progress)
        return
    for task, f in zip(tasks, futures, strict=True):
        try:
            r = f.result()
        except BrokenProcessPool as exc:  # a worker died: redo this one here
            global _POOL
            _POOL = None
            log.warning("a worker process stopped (%s); refitting in this process", exc)
            r = _exact_task(task)
        if progress:
            progress(r.orders.describe())
        yield r
