"""The order search picks a model within 2 AICc of the best of an exhaustively fitted space.

Reference: exact fits of every order in a small space (our exact fit, checked against
statsmodels SARIMAX in test_likelihood.py); AICc of Hurvich and Tsai (1989); stepwise walk of
Hyndman and Khandakar (2008).
"""

from __future__ import annotations

import numpy as np
import pytest

from loadcore.model import (
    Orders,
    RegressionArima,
    SearchBounds,
    exact_fit,
    fit_orders,
    identified_columns,
    search_orders,
)
from loadcore.model.simulate import ErrorTruth, simulated_history

BOUNDS = SearchBounds(ar_up_to=2, ma_up_to=2, ar_ma_up_to=3, weekly_ar_up_to=1, weekly_ma_up_to=1)
TRUTH = ErrorTruth(Orders(2, 0, 1, 1, 0, 0), (0.7, -0.2, 0.3, 0.25), sigma=0.015)


def thorough_search(y, X, bounds, *, d=0, D=0, workers=2, progress=None):
    return search_orders(
        y, X, d=d, D=D, search="thorough", bounds=bounds, workers=workers, progress=progress
    )


def stepwise_search(y, X, bounds, *, workers=2):
    return search_orders(y, X, d=0, D=0, search="quick", bounds=bounds, workers=workers)


@pytest.fixture(scope="module")
def case():
    h = simulated_history(TRUTH, n_days=900, missing_fraction=0.03, seed=11)
    grid = BOUNDS.all_orders(0, 0)
    fits = {
        o: exact_fit(RegressionArima(h.y, h.X, o), covariance=False, tolerance="rank") for o in grid
    }
    best = min(f.aicc for f in fits.values() if f.usable)
    return h, fits, best


def test_space_is_small_and_fitted(case):
    """The exhaustive reference covers all 32 orders of the small space (count by hand)."""
    _h, fits, best = case
    assert len(fits) == 32
    assert np.isfinite(best)


@pytest.mark.parametrize("workers", [1, 2])
def test_thorough_search_within_two_of_exhaustive_best(case, workers):
    """The thorough search's choice is within 2 AICc of the exhaustive best, with one worker
    (all in this process) and with two forked workers."""
    h, _fits, best = case
    out = thorough_search(h.y, h.X, BOUNDS, workers=workers)
    assert out.best.usable
    assert out.best.aicc <= best + 2.0
    assert len(out.screened) == 32


def test_quick_search_within_two_of_exhaustive_best(case):
    """The stepwise walk ends within 2 AICc of the exhaustive best on this space."""
    h, _fits, best = case
    out = stepwise_search(h.y, h.X, BOUNDS, workers=2)
    assert out.best.usable
    assert out.best.aicc <= best + 2.0
    assert len(out.screened) < 32


def test_search_with_weekly_differencing_matches_reference_likelihood():
    """With weekly differencing the search runs end to end, and the chosen fit's
    log-likelihood equals statsmodels' exact diffuse SARIMAX likelihood (the reference;
    ``use_exact_diffuse=True``) plus 7/2 log(2 pi) for the seven diffuse periods (Durbin and
    Koopman, 2012, section 5.2; Ansley and Kohn, 1985)."""
    import warnings

    from statsmodels.tsa.statespace.sarimax import SARIMAX

    h = simulated_history(TRUTH, n_days=700, missing_fraction=0.03, seed=5)
    # Integrate the errors weekly: y_t = y_(t-7) + (regression change) + stationary errors.
    u = h.y - h.X @ h.beta
    ok = np.isfinite(u)
    u = np.where(ok, u, 0.0)
    for t in range(7, len(u)):
        u[t] += u[t - 7]
    # No constant, and no weekday indicator that weekly differencing wipes out.
    keep = identified_columns(h.X, 0, 1)
    assert not keep[h.columns.index("const")]
    X = h.X[:, keep]
    y = np.where(ok, X @ h.beta[keep] + u, np.nan)
    small = SearchBounds(
        ar_up_to=1, ma_up_to=1, ar_ma_up_to=2, weekly_ar_up_to=1, weekly_ma_up_to=1
    )
    out = thorough_search(y, X, small, d=0, D=1, workers=1)
    assert out.best.usable
    o = out.best_orders
    assert (o.d, o.D) == (0, 1)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        ref = SARIMAX(
            y, exog=X, order=o.order, seasonal_order=o.seasonal_order, use_exact_diffuse=True
        ).loglike(out.best.params)
    assert out.best.loglik == pytest.approx(ref + 3.5 * np.log(2 * np.pi), abs=1e-6)
    again = fit_orders(y, X, Orders(o.p, 0, o.q, o.P, 1, o.Q))
    assert again.loglik == pytest.approx(out.best.loglik, abs=0.05)


def test_progress_reports_reach_the_total(case):
    """Progress calls count up and end at done == total (the contract of loadcore.model.fit's
    ``progress(done, total, text)``; common practice, no source)."""
    h, _fits, _best = case
    calls = []
    thorough_search(h.y, h.X, BOUNDS, workers=1, progress=lambda a, b, t: calls.append((a, b)))
    assert calls
    done = [a for a, _ in calls]
    assert done == sorted(done)
    assert calls[-1][0] == calls[-1][1]
    assert all(a <= b for a, b in calls)
