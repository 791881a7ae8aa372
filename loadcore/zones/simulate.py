"""Simulated systems of many zones with correlated daily shocks (known truths, for the tests and
the benchmark).

Each zone is a simulated history of :mod:`loadcore.model.simulate` in its own right (the
product's regressors, a weekly seasonal ARMA error process), with its own size, temperature
offset and day-type effects; the zones' daily shocks are drawn jointly with a chosen correlation
(every pair ``rho``), so the zones' errors move together as a real system's do. Everything comes
from one seeded generator.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy.signal import lfilter

from loadcore.calendar import BASE_TYPE, CalendarSpec, day_types
from loadcore.errors import InputError
from loadcore.model.orders import Orders, lag_polynomials
from loadcore.model.simulate import (
    ANNUAL_SWING_C,
    ANOMALY_AR,
    ANOMALY_SD_C,
    MEAN_TEMPERATURE_C,
    TRUE_RESPONSE,
    ErrorTruth,
)
from loadcore.model.terms import TermSpec, design_matrix

#: The error process of every simulated zone: AR 1 with a weekly AR 1 (our choice; plausible
#: for daily load errors), innovations of 1.5 % of demand.
ZONE_TRUTH = ErrorTruth(Orders(1, 0, 0, 1, 0, 0), (0.6, 0.25), sigma=0.015)


@dataclass(frozen=True)
class SimulatedSystem:
    """A simulated system and its truth.

    Attributes
    ----------
    dates : DatetimeIndex
    zones : tuple of str
    demand_mw : DataFrame
        Daily demand, MW, one column per zone (NaN on missing days).
    temperature_c : DataFrame
        Daily temperature, °C, one column per zone.
    betas : dict
        Zone -> {regression column: true coefficient} (log MW per unit).
    shock_correlation : (n, n) array
        Correlation of the zones' daily shocks.
    truth : ErrorTruth
        The error process (the same orders and parameters in every zone).
    """

    dates: pd.DatetimeIndex
    zones: tuple[str, ...]
    demand_mw: pd.DataFrame
    temperature_c: pd.DataFrame
    betas: dict
    shock_correlation: np.ndarray
    truth: ErrorTruth

    def long_table(self, days: slice | None = None) -> pd.DataFrame:
        """One row per zone and day: ``date``, ``zone``, ``demand``, ``temperature`` (°C)."""
        sl = days or slice(None)
        parts = []
        for zone in self.zones:
            parts.append(
                pd.DataFrame(
                    {
                        "date": self.dates[sl].strftime("%Y-%m-%d"),
                        "zone": zone,
                        "demand": self.demand_mw[zone].to_numpy()[sl],
                        "temperature": self.temperature_c[zone].to_numpy()[sl],
                    }
                )
            )
        return pd.concat(parts, ignore_index=True)

    def wide_table(self, days: slice | None = None) -> pd.DataFrame:
        """One row per day: ``date``, then ``<zone>_Demand`` and ``<zone>_Temp`` per zone."""
        sl = days or slice(None)
        out = {"date": self.dates[sl].strftime("%Y-%m-%d")}
        for zone in self.zones:
            out[f"{zone}_Demand"] = self.demand_mw[zone].to_numpy()[sl]
            out[f"{zone}_Temp"] = self.temperature_c[zone].to_numpy()[sl]
        return pd.DataFrame(out)


def simulated_system(
    n_zones: int = 8,
    *,
    n_days: int = 2000,
    rho: float = 0.6,
    missing_fraction: float = 0.02,
    seed: int = 0,
    start: str = "2019-01-01",
    truth: ErrorTruth = ZONE_TRUTH,
) -> SimulatedSystem:
    """Simulate a system of zones with correlated daily shocks.

    Parameters
    ----------
    n_zones : int
        Zones (named ``Z01``, ``Z02``, ...).
    n_days : int
        Days of history.
    rho : float
        Correlation of every pair of zones' daily shocks, 0 <= rho < 1.
    missing_fraction : float
        Share of each zone's demand days set missing (single days).
    seed : int
        Seed of the one generator behind everything.
    start : str
        First date (ISO).
    truth : ErrorTruth
        The error process of every zone.
    """
    if not 0.0 <= rho < 1.0:
        raise InputError(
            f"rho must be in [0, 1), got {rho}", where="simulated system", fix="Use e.g. 0.6"
        )
    if not 1 <= n_zones <= 5000:
        raise InputError(
            f"n_zones must be 1 to 5000, got {n_zones}", where="simulated system", fix="Use 8"
        )
    rng = np.random.default_rng(seed)
    zones = tuple(f"Z{i + 1:02d}" for i in range(n_zones))
    dates = pd.date_range(start, periods=n_days, freq="D")
    doy = dates.day_of_year.to_numpy(float)
    # A shared weather pattern with a zone's own offset and a little local noise.
    common = lfilter([1.0], [1.0, -ANOMALY_AR], rng.standard_normal(n_days + 100))[100:]
    common *= ANOMALY_SD_C * np.sqrt(1 - ANOMALY_AR**2)
    seasonal = MEAN_TEMPERATURE_C + ANNUAL_SWING_C * np.cos(2 * np.pi * (doy - 205) / 365.25)
    spec = CalendarSpec()
    types = day_types(dates, spec).to_numpy(dtype=object)
    base = BASE_TYPE[spec.scheme]
    levels = tuple(sorted(set(types) - {base}))
    corr = np.full((n_zones, n_zones), rho) + (1 - rho) * np.eye(n_zones)
    chol = np.linalg.cholesky(corr)
    burn = 500
    shocks = (rng.standard_normal((n_days + burn, n_zones)) @ chol.T) * truth.sigma
    o = truth.orders
    ar, ma = lag_polynomials(np.asarray(truth.params), o.p, o.q, o.P, o.Q, o.period)
    demand, temps, betas = {}, {}, {}
    for j, zone in enumerate(zones):
        offset = rng.uniform(-3.0, 3.0)
        t = seasonal + offset + common + rng.normal(0.0, 0.8, n_days)
        frame = design_matrix(
            dates,
            t,
            types,
            TermSpec(),
            levels=levels,
            base_type=base,
            origin=dates[0],
            intercept=True,
        )
        beta = {c: TRUE_RESPONSE[c] for c in frame.columns}
        beta["const"] = np.log(rng.uniform(200.0, 2500.0))
        for c in frame.columns:
            if c.startswith("type_"):
                beta[c] = TRUE_RESPONSE[c] * rng.uniform(0.6, 1.4)
        y = frame.to_numpy() @ np.array([beta[c] for c in frame.columns])
        y = y + lfilter(ma, ar, shocks[:, j])[burn:]
        miss = rng.random(n_days) < missing_fraction
        mw = np.exp(y)
        mw[miss] = np.nan
        demand[zone], temps[zone], betas[zone] = mw, t, beta
    return SimulatedSystem(
        dates=dates,
        zones=zones,
        demand_mw=pd.DataFrame(demand, index=dates),
        temperature_c=pd.DataFrame(temps, index=dates),
        betas=betas,
        shock_correlation=corr,
        truth=truth,
    )
