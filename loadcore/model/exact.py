"""Exact maximum likelihood of one candidate: regression with weekly seasonal ARIMA errors.

Route (chosen by measurement on 2,000 simulated days, 13 regressors, 60 missing days; one BLAS
thread, CPU time):

1. *Start* from the conditional-least-squares estimate of the screen
   (:func:`loadcore.model.screening.css_fit`), within a fraction of a log-likelihood unit of the
   exact optimum for daily series of a few years, so a handful of steps suffice.
2. *Exact stage*: the exact likelihood of :mod:`loadcore.model.likelihood` with the regression
   coefficients in closed form (GLS) and the variance concentrated out, so that the optimiser
   sees the error parameters only (at most 12 instead of 25 or more with the regression
   coefficients). The likelihood is written as a sum of squares, ``exp(logdet / n) * rss``, and
   minimised by Levenberg-Marquardt (scipy ``least_squares``, MINPACK) over unconstrained values
   that map to stationary, invertible parameters (:func:`loadcore.model.constraints.constrain`).
   Measured from the same start (evaluations; CPU seconds) for AR 3 · MA 5 | weekly AR 1 · MA 1:
   Levenberg-Marquardt 154; 0.43 at the final tolerance, L-BFGS-B with numerical gradients
   484; 1.21; for AR 4 · MA 4 | weekly AR 2 · MA 2: 143; 0.40 against 403; 1.08 (and a lower
   optimum). One evaluation costs 2.4 ms against 7.3 ms for statsmodels' SARIMAX ``loglike``
   (compiled Kalman filter with the regression coefficients as parameters). The trust-region
   variant (``trf``) took as many steps at about twice the cost per evaluation.
3. *Checks*: convergence is the optimiser's own test and a test on the exact likelihood: the
   gain one more Gauss-Newton step promises, ``(n / 2S) |P_J r|^2`` (``P_J`` the projection on
   the Jacobian's columns), is below :data:`GAIN_TOLERANCE`; stationarity and invertibility are
   checked on the roots of the expanded polynomials (the reparametrisation keeps them inside, but
   an optimum on the boundary is reported as not usable).
4. *Covariance*: error-parameter block from the Gauss-Newton information ``(S / n) (J'J)^-1`` at
   the optimum (Box, Jenkins and Reinsel, 2008, section 7.2); regression block the GLS
   covariance ``sigma2 (X' Omega^-1 X)^-1`` with the missing days profiled out; innovation
   variance ``2 sigma2^2 / n``. Cross terms are zero: the information matrix of a regression with
   stationary ARMA errors is block diagonal between these groups (Harvey, 1989, section 3.4).
"""

from __future__ import annotations

import logging
import time
from dataclasses import dataclass, field

import numpy as np
from scipy.linalg import LinAlgError
from scipy.optimize import least_squares

from .constraints import constrain, stationary_invertible, unconstrain
from .likelihood import RegressionArima
from .orders import Orders, aicc
from .screening import css_fit, ols_residual_series

log = logging.getLogger(__name__)

#: Largest log-likelihood gain that one more Gauss-Newton step still promises at a point accepted
#: as converged, per tolerance (our choice: 0.01 moves an AICc by 0.02 while ranking; 1e-4 for
#: the chosen model). Scale-free, unlike a gradient threshold.
GAIN_TOLERANCE = {"rank": 1e-2, "final": 1e-4}

#: Relative tolerances of the exact stage on the scaled sum of squares S: ``rank`` for candidates,
#: ``final`` for the chosen one (our choice). loglik = -n/2 log S, so a relative change ``f`` in S
#: is ``n f / 2`` in loglik: 1e-5 is 0.01 at n = 2000, matching :data:`GAIN_TOLERANCE`; measured,
#: ranking AICc within 0.01 of the ``final`` fits with 20-35 % fewer evaluations than 1e-7.
EXACT_FTOL = {"rank": 1e-5, "final": 1e-9}

#: Residual value returned where the likelihood is not defined, so that the trust region
#: shrinks instead of stepping there (our choice).
PENALTY = 1e3


# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class ExactFit:
    """One exact maximum-likelihood fit.

    Attributes
    ----------
    orders : Orders
        Orders of the error process, differencing included.
    arma : array
        Error parameters AR, MA, weekly AR, weekly MA (signs of
        :func:`loadcore.model.orders.lag_polynomials`).
    beta : array
        Regression coefficients, units of the response per unit of each regressor.
    sigma2 : float
        Innovation variance, units of the response squared.
    loglik : float
        Exact log-likelihood of the differenced data (natural log).
    n_obs : int
        Observations used: differenced values less missing days.
    aicc : float
        Hurvich and Tsai (1989), with ``k = len(beta) + len(arma) + 1``.
    converged : bool
        Optimiser's test passed and ``expected_gain <`` :data:`GAIN_TOLERANCE`.
    stationary, invertible : bool
        Root checks on the expanded AR and MA polynomials.
    max_gradient : float
        Largest absolute gradient of the log-likelihood at the optimum (unconstrained scale).
    expected_gain : float
        Log-likelihood gain one more Gauss-Newton step promises from the optimum.
    evaluations : int
        Likelihood evaluations used (Jacobian columns included).
    seconds : float
        Wall time of the fit.
    cov : array or None
        Covariance of ``params`` (``[beta, arma, sigma2]``, the order of statsmodels' SARIMAX
        parameters), or None when not asked for.
    note : str
        What happened, in plain words, when anything did not go to plan.
    """

    orders: Orders
    arma: np.ndarray
    beta: np.ndarray
    sigma2: float
    loglik: float
    n_obs: int
    aicc: float
    converged: bool
    stationary: bool
    invertible: bool
    max_gradient: float
    expected_gain: float
    evaluations: int
    seconds: float
    cov: np.ndarray | None = field(default=None, repr=False)
    note: str = ""

    @property
    def params(self) -> np.ndarray:
        """``[beta, arma, sigma2]``: the parameter vector statsmodels' SARIMAX filter takes."""
        return np.r_[self.beta, self.arma, self.sigma2]

    @property
    def n_params(self) -> int:
        return len(self.beta) + len(self.arma) + 1

    @property
    def usable(self) -> bool:
        return bool(
            self.converged and self.stationary and self.invertible and np.isfinite(self.aicc)
        )

    @property
    def std_errors(self) -> np.ndarray | None:
        return None if self.cov is None else np.sqrt(np.clip(np.diag(self.cov), 0.0, None))


class _Counter:
    def __init__(self, problem: RegressionArima) -> None:
        self.problem = problem
        self.calls = 0

    def residuals(self, x: np.ndarray) -> np.ndarray:
        self.calls += 1
        theta = constrain(x, self.problem.orders)
        try:
            r = self.problem.scaled_residuals(theta)
        except (LinAlgError, ValueError, FloatingPointError):
            return np.full(self.problem.n_diff, PENALTY)
        if not np.all(np.isfinite(r)):
            return np.full(self.problem.n_diff, PENALTY)
        return r


def _jacobian(fun, x: np.ndarray, f0: np.ndarray, step: float = 1e-6) -> np.ndarray:
    """Forward-difference Jacobian (one evaluation per parameter)."""
    J = np.empty((len(f0), len(x)))
    for i in range(len(x)):
        xi = x.copy()
        h = step * max(1.0, abs(x[i]))
        xi[i] += h
        J[:, i] = (fun(xi) - f0) / h
    return J


def exact_fit(
    problem: RegressionArima,
    start: np.ndarray | None = None,
    *,
    covariance: bool = True,
    max_steps: int = 40,
    tolerance: str = "final",
) -> ExactFit:
    """Exact maximum likelihood for one order (the method of the module docstring).

    Parameters
    ----------
    problem : RegressionArima
        Prepared data and orders.
    start : array, optional
        ARMA parameters to start from; by default the CSS estimate on the differenced OLS
        residuals (gaps interpolated), which is what makes a handful of steps enough.
    covariance : bool
        Also compute the covariance of all parameters (costs one more Jacobian).
    max_steps : int
        Budget of the exact stage in Gauss-Newton steps (each costs one Jacobian, i.e. one
        likelihood evaluation per ARMA parameter, plus the step's own evaluation).
    tolerance : {"rank", "final"}
        Stopping tolerance, :data:`EXACT_FTOL`.

    Returns
    -------
    ExactFit
    """
    t0 = time.perf_counter()
    orders = problem.orders
    k = orders.n_arma
    counter = _Counter(problem)
    notes: list[str] = []
    Jx = r_opt = None
    if k == 0:
        x = np.zeros(0)
        opt_ok = True
    else:
        if start is None:
            w0 = ols_residual_series(problem.y, problem.X, problem.d, problem.D, orders.period)
            start = css_fit(w0 - w0.mean(), orders)
        x0 = unconstrain(np.asarray(start, float), orders)
        # Levenberg-Marquardt (MINPACK): the same steps as the trust-region variant at a
        # third of its overhead per step in our runs; its evaluation count includes the
        # Jacobian's, hence the budget in steps times (k + 1).
        sol = least_squares(
            counter.residuals,
            x0,
            method="lm",
            jac="2-point",
            x_scale=1.0,
            ftol=EXACT_FTOL[tolerance],
            xtol=1e-8,
            gtol=1e-10,
            max_nfev=max_steps * (k + 1),
        )
        x, Jx, r_opt = sol.x, sol.jac, sol.fun
        opt_ok = sol.status > 0
        if not opt_ok:
            notes.append(f"optimiser stopped: {sol.message}")
    theta = constrain(x, orders)
    try:
        ev = problem.evaluate(theta)
    except (LinAlgError, ValueError) as exc:
        return ExactFit(
            orders, theta, np.zeros(problem.k), float("nan"), -np.inf,
            problem.n_obs, float("inf"), False, False, False, float("inf"), float("inf"),
            counter.calls,
            time.perf_counter() - t0, None, f"likelihood undefined at the optimum: {exc}",
        )  # fmt: skip
    n = ev.n_obs
    max_grad = gain = 0.0
    cov = None
    if k:
        # The optimiser's last Jacobian is taken at its solution: loglik = -n/2 log S + const,
        # so d loglik / dx = -(n / S) J' r there.
        S = float(r_opt @ r_opt)
        max_grad = float(np.max(np.abs(n / S * (Jx.T @ r_opt))))
        coef, *_ = np.linalg.lstsq(Jx, r_opt, rcond=None)
        fitted = Jx @ coef
        gain = float(0.5 * n / S * (fitted @ fitted))
        if covariance:
            # Chain rule to the natural parameters: J_theta = J_x (d theta / d x)^-1.
            dtheta = _jacobian(lambda z: constrain(z, orders), x, theta, step=1e-7)
            try:
                Jt = np.linalg.solve(dtheta.T, Jx.T).T
                cov_arma = S / n * np.linalg.inv(Jt.T @ Jt)
            except np.linalg.LinAlgError:
                cov_arma = np.full((k, k), np.nan)
                notes.append("ARMA information matrix singular")
    if covariance:
        cov_beta = problem.coefficient_covariance(theta, ev.sigma2)
        nb = problem.k
        cov = np.zeros((nb + k + 1, nb + k + 1))
        cov[:nb, :nb] = cov_beta
        if k:
            cov[nb : nb + k, nb : nb + k] = cov_arma
        cov[-1, -1] = 2.0 * ev.sigma2**2 / n
    converged = bool(opt_ok and gain < GAIN_TOLERANCE[tolerance])
    if opt_ok and not converged:
        notes.append(f"a further step promises {gain:.3g} in log-likelihood")
    stat, inv = stationary_invertible(theta, orders)
    if not (stat and inv):
        notes.append("optimum on the stationarity or invertibility boundary")
    n_params = problem.k + k + 1
    return ExactFit(
        orders=orders,
        arma=theta,
        beta=ev.beta,
        sigma2=ev.sigma2,
        loglik=ev.loglik,
        n_obs=n,
        aicc=aicc(ev.loglik, n_params, n),
        converged=converged,
        stationary=stat,
        invertible=inv,
        max_gradient=max_grad,
        expected_gain=gain,
        evaluations=counter.calls,
        seconds=time.perf_counter() - t0,
        cov=cov,
        note="; ".join(notes),
    )
