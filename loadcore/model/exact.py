"""Exact Gaussian maximum likelihood of one candidate, and the pool of worker processes.

The best screened candidates are refitted jointly with the regression coefficients by exact
Gaussian maximum likelihood in state-space form (statsmodels SARIMAX; Durbin and Koopman, 2012),
in parallel on the machine's cores. Each refit is checked for convergence, retried with another
optimiser when it fails, and must be stationary and invertible to be used.

The engine is behind two small functions so that another can replace it: :func:`exact_fit`
(``(y, X, orders, start) -> ExactResult``, one candidate) and :func:`exact_fits` (many, in the
worker pool, yielding results as they finish).
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
from scipy.signal import lfilter

from .orders import Orders, aicc, difference, fill_gaps, lag_polynomials, roots_ok
from .statespace import build_state_space

log = logging.getLogger(__name__)


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


def gls_start(
    y: np.ndarray, X: np.ndarray | None, orders: Orders, arma: np.ndarray, burn: int
) -> np.ndarray:
    """Regression coefficients by least squares on data pre-whitened with the screening ARMA
    filter (an approximate GLS step; Cochrane and Orcutt, 1949, generalised), to start from."""
    if X is None or X.shape[1] == 0:
        return np.zeros(0)
    ar, ma = lag_polynomials(arma, orders.p, orders.q, orders.P, orders.Q, orders.period)
    yd = difference(fill_gaps(y), orders.d, orders.D, orders.period)
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
    model = build_state_space(y, X, orders, concentrate_scale=True)
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


def shutdown_workers() -> None:
    """Stop the worker processes (they start again on the next parallel refit)."""
    global _POOL, _POOL_WORKERS
    if _POOL is not None:
        _POOL.shutdown(cancel_futures=True)
    _POOL, _POOL_WORKERS = None, 0


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
