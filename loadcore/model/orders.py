"""Orders of the error model, differencing decisions, lag polynomials and the AICc criterion.

The error process u_t of the demand regression is a weekly seasonal ARIMA process; this module
holds what every stage of the search shares: the orders (:class:`Orders`, in our own words and
layout), the search bounds, the differencing tests (KPSS and the weekly seasonal strength), the
expanded lag polynomials with their root checks, and the corrected Akaike criterion.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import numpy as np

from ..errors import InputError

#: Weekly seasonal period of daily data (common practice, no source).
WEEKLY_PERIOD = 7

#: KPSS test size used to decide on differencing, as in Hyndman and Khandakar (2008).
KPSS_ALPHA = 0.05

#: Seasonal-strength threshold above which weekly differencing is taken
#: (Wang, Smith and Hyndman, 2006, as used for seasonal differencing decisions; from memory).
SEASONAL_STRENGTH_THRESHOLD = 0.64

#: A root closer to the unit circle than this is treated as a unit root (common practice, no source).
ROOT_MARGIN = 1.001

#: Name of the innovation variance among the model's parameters.
SHOCK_VARIANCE = "shock_variance"

_WEEK_WORDS = {1: "a week", 2: "two weeks", 3: "three weeks", 4: "four weeks"}


@dataclass(frozen=True, order=True)
class Orders:
    """Orders of a weekly seasonal ARIMA error process.

    ``p``, ``d``, ``q``: autoregressive order, first differences, moving-average order;
    ``P``, ``D``, ``Q``: the same at multiples of ``period`` days (weekly for daily data).
    """

    p: int
    d: int
    q: int
    P: int
    D: int
    Q: int
    period: int = WEEKLY_PERIOD

    def __post_init__(self) -> None:
        values = (self.p, self.d, self.q, self.P, self.D, self.Q)
        if (
            any(isinstance(v, bool) or not isinstance(v, int | np.integer) or v < 0 for v in values)
            or isinstance(self.period, bool)
            or not isinstance(self.period, int | np.integer)
            or self.period < 2
        ):
            raise InputError(
                f"Model orders must be whole numbers of at least 0, got {values}",
                where="error model orders",
                fix="Give Orders(p, d, q, P, D, Q) as non-negative whole numbers",
            )

    @property
    def order(self) -> tuple[int, int, int]:
        return (self.p, self.d, self.q)

    @property
    def seasonal_order(self) -> tuple[int, int, int, int]:
        return (self.P, self.D, self.Q, self.period)

    @property
    def n_arma(self) -> int:
        return self.p + self.q + self.P + self.Q

    @property
    def ar_degree(self) -> int:
        """Degree of the expanded AR polynomial, ``p + period * P`` (days)."""
        return self.p + self.period * self.P

    @property
    def ma_degree(self) -> int:
        """Degree of the expanded MA polynomial, ``q + period * Q`` (days)."""
        return self.q + self.period * self.Q

    @property
    def lost_days(self) -> int:
        """Days the differencing uses up at the start, ``d + period * D``."""
        return self.d + self.period * self.D

    def split(self, params) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """The blocks AR, MA, weekly AR, weekly MA of an error-parameter vector."""
        params = np.asarray(params, float)
        p, q, P = self.p, self.q, self.P
        return params[:p], params[p : p + q], params[p + q : p + q + P], params[p + q + P :]

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

    def parameter_names(self) -> tuple[str, ...]:
        """Names of the error-process parameters, in estimation order, ending with the shock
        variance: ``error_ar_1``.., ``error_ma_1``.., ``error_weekly_ar_1`` (lag one period)..,
        ``error_weekly_ma_1``.., ``shock_variance``."""
        return (
            *(f"error_ar_{i}" for i in range(1, self.p + 1)),
            *(f"error_ma_{i}" for i in range(1, self.q + 1)),
            *(f"error_weekly_ar_{i}" for i in range(1, self.P + 1)),
            *(f"error_weekly_ma_{i}" for i in range(1, self.Q + 1)),
            SHOCK_VARIANCE,
        )


def error_term(name: str) -> tuple[str, int] | None:
    """``error_weekly_ma_2`` -> (``weekly_ma``, 2); None for a name that is not an error term."""
    if not name.startswith("error_"):
        return None
    kind, _, number = name[len("error_") :].rpartition("_")
    if kind not in ("ar", "ma", "weekly_ar", "weekly_ma") or not number.isdigit():
        return None
    return kind, int(number)


def weeks_in_words(n_weeks: int) -> str:
    """1 -> ``a week``, 2 -> ``two weeks``, 6 -> ``6 weeks``."""
    n = max(int(n_weeks), 1)
    return _WEEK_WORDS.get(n, f"{n} weeks")


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


def aicc(loglik: float, n_params: int, n_obs: int) -> float:
    """Corrected Akaike criterion, AIC + 2k(k+1)/(n-k-1) (Hurvich and Tsai, 1989).

    ``n_params`` counts every estimated parameter, the innovation variance included.
    """
    aic = -2.0 * loglik + 2.0 * n_params
    denom = n_obs - n_params - 1
    if denom <= 0:
        return float("inf")
    return float(aic + 2.0 * n_params * (n_params + 1) / denom)


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

    @classmethod
    def given(cls, orders: Orders) -> DifferencingDecision:
        """The decision when the orders were given rather than tested."""
        return cls(orders.d, orders.D, (), float("nan"), float("nan"))


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
    x = fill_gaps(resid)
    strength = seasonal_strength(x, period)
    D = int(strength > SEASONAL_STRENGTH_THRESHOLD)
    if D:
        x = x[period:] - x[:-period]
    d, stats, crit = kpss_differences(x, max_d=2)
    return DifferencingDecision(d, D, tuple(stats), crit, strength)


def difference(x: np.ndarray, d: int, D: int, period: int = WEEKLY_PERIOD) -> np.ndarray:
    """Apply ``D`` weekly and ``d`` first differences along the first axis (rows are days)."""
    x = np.asarray(x, float)
    for _ in range(D):
        x = x[period:] - x[:-period]
    for _ in range(d):
        x = x[1:] - x[:-1]
    return x


def fill_gaps(x: np.ndarray) -> np.ndarray:
    """Linear interpolation over missing values (screening only; the exact fit keeps them missing)."""
    x = np.asarray(x, float).copy()
    bad = ~np.isfinite(x)
    if bad.any():
        idx = np.arange(len(x))
        x[bad] = np.interp(idx[bad], idx[~bad], x[~bad])
    return x


# --------------------------------------------------------------------------------------------
# Lag polynomials
# --------------------------------------------------------------------------------------------


def split_polynomials(
    theta: np.ndarray, p: int, q: int, P: int, Q: int, s: int
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """The four factors A (AR), M (MA), S (weekly AR), N (weekly MA) of a multiplicative model,
    as coefficients of L^0, L^1, ... from the parameters (AR, MA, weekly AR, weekly MA)."""
    A = np.r_[1.0, -theta[:p]]
    M = np.r_[1.0, theta[p : p + q]]
    S = np.zeros(P * s + 1)
    S[0] = 1.0
    S[s::s] = -theta[p + q : p + q + P]
    N = np.zeros(Q * s + 1)
    N[0] = 1.0
    N[s::s] = theta[p + q + P :]
    return A, M, S, N


def lag_polynomials(
    params: np.ndarray, p: int, q: int, P: int, Q: int, period: int = WEEKLY_PERIOD
) -> tuple[np.ndarray, np.ndarray]:
    """Expanded AR and MA lag polynomials (coefficients of L^0, L^1, ...) of a multiplicative model.

    The AR side is (1 - phi_1 L - ...)(1 - Phi_1 L^s - ...), the MA side (1 + theta_1 L + ...)
    (1 + Theta_1 L^s + ...), the sign conventions of statsmodels' SARIMAX.
    """
    A, M, S, N = split_polynomials(np.asarray(params, float), p, q, P, Q, period)
    return np.convolve(A, S), np.convolve(M, N)


def roots_ok(poly: np.ndarray, margin: float = ROOT_MARGIN) -> bool:
    """True when every root of the lag polynomial lies outside ``|z| = margin``."""
    poly = np.trim_zeros(np.asarray(poly, float), "b")
    if len(poly) <= 1:
        return True
    roots = np.roots(poly[::-1])
    return bool(np.all(np.abs(roots) > margin))
