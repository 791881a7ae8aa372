"""Simulated daily demand histories with known truths, for the tests and the benchmark.

The regressors are the product's own (:func:`loadcore.model.terms.design_matrix` with the day
types of :func:`loadcore.calendar.day_types`), built on seasonal temperatures; the errors follow a chosen
weekly seasonal ARMA process; a few per cent of demand days are missing. Everything is drawn
from one seeded generator (the max-min spread from a second one seeded from the same seed), so a
seed gives the same history on every machine.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy.signal import lfilter

from ..calendar import BASE_TYPE, CalendarSpec, day_types
from ..errors import InputError
from .constraints import stationary_invertible
from .orders import Orders, lag_polynomials
from .terms import TermSpec, design_matrix

#: Mean daily maximum temperature and its annual swing, °C, of a temperate invented region.
MEAN_TEMPERATURE_C = 15.0
ANNUAL_SWING_C = 10.0
#: Day-to-day temperature anomalies: AR(1) coefficient and standard deviation, °C (our choice).
ANOMALY_AR = 0.7
ANOMALY_SD_C = 3.0
#: Daily max-min spread, °C: mean, annual swing (widest in summer) and day-to-day standard
#: deviation, of the same invented region (our choice).
SPREAD_MEAN_C = 9.0
SPREAD_SWING_C = 2.0
SPREAD_SD_C = 1.5

#: A memory response for simulated truths with memory (log MW per unit of each column): a
#: spell of cold or hot days raises demand beyond what the day's own maximum does (our choice).
MEMORY_RESPONSE = {"temp_past": -0.01, "temp_past_sq": 0.025, "temp_min": -0.015}

#: Log-demand response used for every simulated history (log MW per unit of each regressor).
TRUE_RESPONSE = {
    "const": np.log(1500.0),
    "trend_years": 0.015,
    "temp": 0.02,
    "temp_sq": 0.05,
    "type_monday": -0.01,
    "type_friday": -0.015,
    "type_saturday": -0.09,
    "type_sunday": -0.13,
    "type_holiday": -0.11,
    "annual_cos1": 0.01,
    "annual_sin1": -0.005,
    "annual_cos2": 0.004,
    "annual_sin2": 0.002,
}

#: Log-demand per heating and cooling degree (per °C) when a history is simulated with the
#: degree-day response (close to the demo's invented utility; our choice).
TRUE_DEGREE_DAYS = {"hdd": 0.011, "cdd": 0.026}


@dataclass(frozen=True)
class ErrorTruth:
    """A stationary, invertible weekly seasonal ARMA error process.

    Parameters
    ----------
    orders : Orders
        Orders (no differencing).
    params : tuple of float
        AR, MA, weekly AR, weekly MA (signs of :func:`loadcore.model.orders.lag_polynomials`).
    sigma : float
        Innovation standard deviation, log-demand units (0.015 is about 1.5 % of demand).
    """

    orders: Orders
    params: tuple[float, ...]
    sigma: float = 0.015

    def __post_init__(self) -> None:
        if len(self.params) != self.orders.n_arma:
            raise InputError(
                f"{len(self.params)} coefficients given for {self.orders.n_arma} ARMA parameters",
                where="simulated error truth",
                fix="Give p + q + P + Q coefficients in the order phi, theta, Phi, Theta",
            )
        stat, inv = stationary_invertible(np.asarray(self.params), self.orders)
        if not (stat and inv):
            raise InputError(
                "The simulated error process is not stationary and invertible",
                where=f"coefficients {self.params}",
                fix="Choose coefficients whose lag polynomials have all roots outside the unit circle",
            )


#: The two high-order truths of the benchmark (plausible for daily load errors, our choice).
TRUTH_AR3_MA5 = ErrorTruth(
    Orders(3, 0, 5, 1, 0, 1), (0.55, 0.2, 0.1, 0.35, 0.3, 0.25, 0.2, 0.15, 0.35, -0.15)
)
TRUTH_AR4_MA4 = ErrorTruth(
    Orders(4, 0, 4, 2, 0, 2),
    (0.5, 0.15, 0.15, -0.2, 0.35, -0.25, 0.3, 0.2, 0.3, 0.2, 0.25, -0.2),
)


@dataclass(frozen=True)
class SimulatedHistory:
    """A simulated history and its truth.

    Attributes
    ----------
    dates : DatetimeIndex
        Daily dates.
    temperature_c : array
        Daily temperature, °C.
    y : array
        Log demand (log MW), NaN on missing days.
    X : array
        Regressors in ``columns`` order (intercept included: the errors are not differenced).
    columns : tuple of str
        Regressor names.
    beta : array
        True regression coefficients.
    truth : ErrorTruth
        True error process.
    temperature_min_c : array
        Daily minimum temperature, °C.
    """

    dates: pd.DatetimeIndex
    temperature_c: np.ndarray
    y: np.ndarray
    X: np.ndarray
    columns: tuple[str, ...]
    beta: np.ndarray
    truth: ErrorTruth
    temperature_min_c: np.ndarray | None = None

    def to_history(self, *, with_minimum: bool = False):
        """The simulated days as a validated :class:`loadcore.history.History` (demand in MW
        = exp of the log demand, missing days kept missing), with the daily minimum when asked."""
        from ..history import history_from_frame

        columns = {"demand": np.exp(self.y), "temperature_c": self.temperature_c}
        if with_minimum:
            columns["temperature_min_c"] = self.temperature_min_c
        return history_from_frame(pd.DataFrame(columns, index=self.dates))


def simulate_errors(truth: ErrorTruth, n_days: int, rng: np.random.Generator) -> np.ndarray:
    """A draw of the error process, started far back so that it is stationary (burn-in 500 days)."""
    o = truth.orders
    ar, ma = lag_polynomials(np.asarray(truth.params), o.p, o.q, o.P, o.Q, o.period)
    burn = 500
    e = rng.standard_normal(n_days + burn) * truth.sigma
    return lfilter(ma, ar, e)[burn:]


def simulated_history(
    truth: ErrorTruth,
    *,
    n_days: int = 2000,
    missing_fraction: float = 0.03,
    seed: int = 0,
    start: str = "2019-01-01",
    terms: TermSpec | None = None,
    memory: dict[str, float] | None = None,
) -> SimulatedHistory:
    """Simulate a daily log-demand history with the product's regressors.

    Parameters
    ----------
    truth : ErrorTruth
        Error process.
    n_days : int
        Length of the history, days.
    missing_fraction : float
        Share of demand days set missing (single days and short runs of 2-4 days).
    seed : int
        Seed of the one random generator behind everything.
    start : str
        First date (ISO).
    terms : TermSpec, optional
        The true regressors (default ``TermSpec()``, the quadratic); with degree days the
        coefficients of :data:`TRUE_DEGREE_DAYS` at the spec's bases.
    memory : dict, optional
        True coefficients of memory columns (for example :data:`MEMORY_RESPONSE`), added to
        the truth; None for a truth without memory.
    """
    if not 0.0 <= missing_fraction < 0.5:
        raise InputError(
            f"missing_fraction must be in [0, 0.5), got {missing_fraction}",
            where="simulated history",
            fix="Use a few per cent, e.g. 0.03",
        )
    rng = np.random.default_rng(seed)
    dates = pd.date_range(start, periods=n_days, freq="D")
    doy = dates.day_of_year.to_numpy(float)
    anomaly = lfilter([1.0], [1.0, -ANOMALY_AR], rng.standard_normal(n_days + 100))[100:]
    anomaly *= ANOMALY_SD_C * np.sqrt(1 - ANOMALY_AR**2)
    # Warmest in late July (day 205), a common shape for a northern temperate climate.
    temperature_c = (
        MEAN_TEMPERATURE_C + ANNUAL_SWING_C * np.cos(2 * np.pi * (doy - 205) / 365.25) + anomaly
    )
    # The spread has its own generator (seeded from the same seed), so that histories without
    # memory draw exactly what they drew before it existed.
    spread = (
        SPREAD_MEAN_C
        + SPREAD_SWING_C * np.cos(2 * np.pi * (doy - 205) / 365.25)
        + SPREAD_SD_C * np.random.default_rng([seed, 1]).standard_normal(n_days)
    )
    temperature_min_c = temperature_c - np.maximum(spread, 1.0)
    spec = CalendarSpec()
    types = day_types(dates, spec).to_numpy(dtype=object)
    base = BASE_TYPE[spec.scheme]
    levels = tuple(sorted(set(types) - {base}))
    frame = design_matrix(
        dates,
        temperature_c,
        types,
        terms or TermSpec(),
        levels=levels,
        base_type=base,
        origin=dates[0],
        intercept=True,
        memory=("past", "minimum") if memory else (),
        temperature_min_c=temperature_min_c,
    )
    truth_response = {**TRUE_RESPONSE, **TRUE_DEGREE_DAYS, **(memory or {})}
    frame = frame[[c for c in frame.columns if c in truth_response]]
    columns = tuple(frame.columns)
    beta = np.array([truth_response[c] for c in columns])
    X = frame.to_numpy()
    y = X @ beta + simulate_errors(truth, n_days, rng)
    n_missing = int(round(missing_fraction * n_days))
    missing: set[int] = set()
    while len(missing) < n_missing:
        first = int(rng.integers(0, n_days))
        run = 1 if rng.random() < 0.7 else int(rng.integers(2, 5))
        missing.update(range(first, min(first + run, n_days)))
    y[sorted(missing)[:n_missing]] = np.nan
    return SimulatedHistory(dates, temperature_c, y, X, columns, beta, truth, temperature_min_c)
