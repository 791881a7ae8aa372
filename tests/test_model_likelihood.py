"""The exact likelihood against statsmodels' SARIMAX, the reference implementation.

Every check names its reference in the docstring. The filter theory is Harvey (1989) and
Durbin and Koopman (2012); the banded form of the covariance is Ansley (1979); missing days are
handled by the additive-outlier device of Gomez, Maravall and Pena (1999).
"""

from __future__ import annotations

import warnings

import numpy as np
import pytest
from scipy.signal import lfilter
from statsmodels.tsa.statespace.sarimax import SARIMAX

from loadcore.errors import InputError
from loadcore.model import Orders, RegressionArima, lag_polynomials
from loadcore.model.constraints import constrain, stationary_invertible, unconstrain

N = 500


def _orders(pqPQ, d: int = 0, D: int = 0) -> Orders:
    p, q, P, Q = pqPQ
    return Orders(p, d, q, P, D, Q)


def _polys(params, o: Orders):
    return lag_polynomials(np.asarray(params, float), o.p, o.q, o.P, o.Q, o.period)


def _series(shape: Orders, params, d: int, D: int, seed: int):
    """A simulated regression with (integrated) seasonal ARMA errors: a known truth."""
    rng = np.random.default_rng(seed)
    t = np.arange(N)
    X = np.column_stack(
        [np.ones(N), t / 365.25, np.sin(2 * np.pi * t / 365.25), rng.standard_normal(N)]
    )
    ar, ma = _polys(params, shape)
    u = lfilter(ma, ar, rng.standard_normal(N + 300))[300:] * 0.02
    for _ in range(D):
        for i in range(7, N):
            u[i] += u[i - 7]
    for _ in range(d):
        u = np.cumsum(u)
    if d or D:
        X = X[:, 1:]  # a constant is not identified under differencing
        if d and D:
            X = X[:, 1:]  # nor is a straight-line trend under both
    y = X @ np.linspace(0.5, -0.2, X.shape[1]) + u
    return y, X


def _reference(y, X, shape, d, D, params, sigma2, beta, exact_diffuse=False) -> float:
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        model = SARIMAX(
            y,
            exog=X,
            order=(shape.p, d, shape.q),
            seasonal_order=(shape.P, D, shape.Q, 7),
            use_exact_diffuse=exact_diffuse,
        )
        return float(model.loglike(np.r_[beta, params, sigma2]))


CASES = [
    # (p, q, P, Q), params, d, D
    ((1, 0, 0, 0), [0.6], 0, 0),
    ((2, 1, 1, 1), [0.5, 0.2, 0.3, 0.4, -0.3], 0, 0),
    ((3, 5, 1, 1), [0.5, 0.2, -0.1, 0.3, 0.2, 0.1, 0.1, 0.05, 0.4, -0.3], 0, 0),
    ((4, 4, 2, 2), [0.4, 0.1, 0.1, -0.2, 0.3, -0.2, 0.2, 0.1, 0.2, 0.2, 0.2, -0.2], 0, 0),
    ((0, 2, 0, 1), [0.4, 0.2, -0.5], 0, 0),
    ((1, 1, 0, 1), [0.5, 0.2, -0.4], 1, 0),
    ((1, 1, 1, 1), [0.5, 0.2, 0.3, -0.4], 0, 1),
    ((1, 1, 0, 1), [0.5, 0.2, -0.4], 1, 1),
]


@pytest.mark.parametrize("missing", [False, True], ids=["complete", "missing"])
@pytest.mark.parametrize("orders,params,d,D", CASES)
def test_loglik_matches_statsmodels(orders, params, d, D, missing):
    """Log-likelihood equals statsmodels' SARIMAX ``loglike`` at the same parameters to 1e-6.

    Reference: statsmodels SARIMAX evaluated at our GLS coefficients and concentrated variance.
    Without differencing: its default settings (stationary start). With differencing: its exact
    diffuse likelihood (``use_exact_diffuse=True``) plus (d + 7D)/2 log(2 pi) (see the next
    test), and its default approximate diffuse start (variance 1e10, first d + 7D contributions
    left out, the filter loadcore uses today) to 1e-4, the accuracy of that approximation.
    Missing days are kept out of the first d + 7D days here; the next test covers them there.
    """
    shape = _orders(orders, d, D)
    y, X = _series(shape, params, d, D, seed=len(params) + 10 * d + 20 * D)
    if missing:
        y[[30, 31, 32, 100, 250, 251, 400, N - 1]] = np.nan
    problem = RegressionArima(y, X, shape)
    ev = problem.evaluate(np.asarray(params))
    approx = _reference(y, X, shape, d, D, params, ev.sigma2, ev.beta)
    if d or D:
        ref = _reference(y, X, shape, d, D, params, ev.sigma2, ev.beta, exact_diffuse=True)
        ref += 0.5 * (d + 7 * D) * np.log(2 * np.pi)
        assert ev.loglik == pytest.approx(approx, abs=1e-4)
    else:
        ref = approx
    assert ev.loglik == pytest.approx(ref, abs=1e-6)
    assert ev.n_obs == N - d - 7 * D - (8 if missing else 0)


@pytest.mark.parametrize("orders,params,d,D", [c for c in CASES if c[2] or c[3]])
def test_differenced_loglik_is_exact_diffuse_likelihood(orders, params, d, D):
    """With differencing and missing days anywhere (also in the first d + 7D days), the
    likelihood equals statsmodels' exact diffuse likelihood (``use_exact_diffuse=True``;
    Durbin and Koopman, 2012, section 5.2) plus (d + 7D)/2 log(2 pi): statsmodels counts the
    d + 7D diffuse periods in its normalising constant, the differenced-data likelihood does
    not (Ansley and Kohn, 1985, for the equivalence of the two)."""
    shape = _orders(orders, d, D)
    y, X = _series(shape, params, d, D, seed=3)
    y[[2, 5, 60, 61, 300]] = np.nan
    problem = RegressionArima(y, X, shape)
    ev = problem.evaluate(np.asarray(params))
    ref = _reference(y, X, shape, d, D, params, ev.sigma2, ev.beta, exact_diffuse=True)
    assert ev.loglik == pytest.approx(ref + 0.5 * (d + 7 * D) * np.log(2 * np.pi), abs=1e-6)


def test_gls_coefficients_and_variance_maximise_the_likelihood():
    """The closed-form coefficients and variance are the maximisers given the ARMA parameters:
    statsmodels' SARIMAX likelihood (the reference) is lower when either is moved."""
    shape = _orders((2, 1, 1, 1))
    params = [0.5, 0.2, 0.3, 0.4, -0.3]
    y, X = _series(shape, params, 0, 0, seed=5)
    y[[10, 11, 200]] = np.nan
    ev = RegressionArima(y, X, shape).evaluate(np.asarray(params))
    best = _reference(y, X, shape, 0, 0, params, ev.sigma2, ev.beta)
    for j in range(len(ev.beta)):
        b = ev.beta.copy()
        b[j] += 0.01
        assert _reference(y, X, shape, 0, 0, params, ev.sigma2, b) < best
    assert _reference(y, X, shape, 0, 0, params, ev.sigma2 * 1.02, ev.beta) < best
    assert _reference(y, X, shape, 0, 0, params, ev.sigma2 / 1.02, ev.beta) < best


def test_constraint_round_trip_and_roots():
    """The reparametrisation (Monahan, 1984; Jones, 1980) maps any real vector to stationary and
    invertible polynomials (roots checked with numpy), and inverts on them."""
    rng = np.random.default_rng(0)
    shape = _orders((3, 2, 2, 1))
    for _ in range(50):
        x = rng.normal(scale=2.0, size=shape.n_arma)
        theta = constrain(x, shape)
        stat, inv = stationary_invertible(theta, shape, margin=1.0)
        assert stat and inv
        assert np.allclose(constrain(unconstrain(theta, shape), shape), theta, atol=1e-8)


def test_bad_input_is_reported():
    """A missing regressor value and a regressor that vanishes under differencing get clear
    errors (common practice, no source)."""
    y = np.random.default_rng(1).standard_normal(200)
    X = np.ones((200, 2))
    X[:, 1] = np.arange(200.0)
    X[17, 1] = np.nan
    with pytest.raises(InputError, match="row 17"):
        RegressionArima(y, X, Orders(1, 0, 0, 0, 0, 0))
    X[17, 1] = 17.0
    with pytest.raises(InputError, match="vanishes under differencing"):
        RegressionArima(y, X, Orders(1, 1, 0, 0, 0, 0))


@pytest.mark.parametrize("missing", [False, True], ids=["complete", "missing"])
def test_slowly_converging_factor_matches_statsmodels(missing):
    """MA roots close to the unit circle (theta 0.8, weekly Theta -0.9) make the banded factor
    converge slowly, so the leading block is doubled several times before the steady-state
    recursion takes over; the log-likelihood still equals statsmodels' SARIMAX ``loglike`` (the
    reference) to 1e-6 on 3,000 days."""
    n = 3000
    shape = _orders((1, 1, 0, 1))
    params = np.array([0.3, 0.8, -0.9])
    rng = np.random.default_rng(21)
    ar, ma = _polys(params, shape)
    X = np.column_stack([np.ones(n), np.sin(2 * np.pi * np.arange(n) / 365.25)])
    y = X @ np.array([7.0, 0.1]) + lfilter(ma, ar, rng.standard_normal(n + 300))[300:] * 0.02
    if missing:
        y[[4, 100, 101, 1500, 2999]] = np.nan
    ev = RegressionArima(y, X, shape).evaluate(params)
    ref = _reference(y, X, shape, 0, 0, params, ev.sigma2, ev.beta)
    assert ev.loglik == pytest.approx(ref, abs=1e-6)
