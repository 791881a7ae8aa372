"""Zone forecasts and the system total, with intervals from joint sample paths.

Each zone is forecast by its own model (:meth:`loadcore.model.FittedModel.forecast`). The
system total is the sum of the zones' daily values: its mean is the sum of the zones' means; its
median and intervals come from joint sample paths. In those paths every zone's error process is
the model's own (:func:`loadcore.model.forecast.simulate_noise`, with the model's coefficient
draws added), but the standard normal draws behind the zones' daily shocks are drawn together,
with the correlation of the fitted models' one-step residuals on the days all zones share. That
is what makes the total's band narrower than the sum of the zones' bands (which would hold only
if the zones moved in lockstep) and wider than if they were independent.

For daily peaks the total is the sum of the zone peaks, not the coincident system peak
(:data:`loadcore.texts.ZONE_TOTAL_CAUTION`).
"""

from __future__ import annotations

import logging
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from loadcore import levels as interval_levels
from loadcore import texts, units
from loadcore.errors import ModelError, ScenarioError, quote
from loadcore.model import FittedModel
from loadcore.model import forecast as propagation
from loadcore.model.forecast import Forecast
from loadcore.scenario import Scenario
from loadcore.zones.histories import SYSTEM

log = logging.getLogger(__name__)

#: Fewest days with residuals in every zone for the correlation of their shocks (our choice:
#: below two months the estimated correlations are too loose to trust).
MIN_COMMON_DAYS = 60
#: Joint sample paths of the total, and most bytes of normal draws held at once (our choice).
DEFAULT_PATHS = 2000
CHUNK_BYTES = 64 * 2**20


@dataclass(frozen=True)
class ShockCorrelation:
    """The correlation of the zones' daily shocks.

    Attributes
    ----------
    zones : tuple of str
    matrix : (n, n) array
        Correlation of the models' one-step residuals on the common days.
    common_days : int
        Days on which every zone has a residual.
    """

    zones: tuple[str, ...]
    matrix: np.ndarray
    common_days: int

    @property
    def mean_pairwise(self) -> float:
        """Average correlation over the pairs of zones (1.0 for one zone)."""
        n = len(self.zones)
        if n < 2:
            return 1.0
        return float((self.matrix.sum() - n) / (n * (n - 1)))

    def factor(self) -> np.ndarray:
        """A square root ``L`` with ``L L' = matrix`` (eigen-decomposition, tiny negative
        eigenvalues of a nearly singular estimate set to zero)."""
        vals, vecs = np.linalg.eigh((self.matrix + self.matrix.T) / 2)
        return vecs * np.sqrt(np.clip(vals, 0, None))


def shock_correlation(models: Mapping[str, FittedModel]) -> ShockCorrelation:
    """Correlation of the zones' one-step residuals on the days all of them have one.

    Raises
    ------
    ModelError
        When the zones share fewer than :data:`MIN_COMMON_DAYS` days, or a zone's residuals
        do not vary.
    """
    zones = tuple(models)
    frame = pd.concat({z: models[z].residuals for z in zones}, axis=1).dropna()
    if len(frame) < MIN_COMMON_DAYS:
        raise ModelError(
            f"The zones share only {len(frame)} days with residuals; the system total needs "
            f"at least {MIN_COMMON_DAYS} to estimate how the zones move together",
            where="zones folder",
            fix="Fit the zones on histories that cover the same dates",
        )
    values = frame.to_numpy(float)
    flat = [z for z, sd in zip(zones, values.std(axis=0), strict=True) if not sd > 0]
    if flat:
        raise ModelError(
            f"The residuals of zone {quote(flat[0])} do not vary",
            where="zones folder",
            fix="Check that zone's history",
        )
    matrix = np.atleast_2d(np.corrcoef(values, rowvar=False))
    return ShockCorrelation(zones, matrix, len(frame))


def _seed(seed: int, *parts: int) -> int:
    """A zone's (and a chunk's) own seed, derived from the run's seed."""
    return int(np.random.SeedSequence([int(seed), *parts]).generate_state(1)[0])


def system_paths(
    models: Mapping[str, FittedModel],
    scenarios: Mapping[str, Scenario],
    correlation: ShockCorrelation,
    *,
    n_paths: int = DEFAULT_PATHS,
    seed: int = 0,
) -> np.ndarray:
    """Joint sample paths of the system total, shape (n_paths, horizon), demand units.

    Every zone's paths are its model's (error process from the end state, plus a draw of the
    regression coefficients); the zones' daily shocks are standard normals correlated by
    ``correlation`` (drawn in chunks of paths so that memory stays within
    :data:`CHUNK_BYTES` whatever the number of zones).
    """
    zones = correlation.zones
    horizon = len(scenarios[zones[0]].dates)
    for zone in zones:
        r = models[zone].end_state.shock_covariance.shape[0]
        if r != 1:
            raise ModelError(
                f"Zone {quote(zone)} has {r} shocks per day; joint paths need one",
                where="zones folder",
                fix="Refit the zone with this version of loadcore",
            )
    linear, design, gaps = {}, {}, {}
    for z in zones:
        dates, temps, types = models[z]._scenario_inputs(scenarios[z])
        design[z] = models[z].regressors(dates, temps, types)
        linear[z] = design[z] @ models[z].beta
        gaps[z] = models[z].window_gap(scenarios[z])
    # Coefficient errors share the zones' shocks, so they are drawn with the same correlation,
    # coefficient by coefficient (matched by column name).
    names = list(dict.fromkeys(c for z in zones for c in models[z].columns))
    rows = {z: [names.index(c) for c in models[z].columns] for z in zones}
    factor = correlation.factor()
    per_path = 8 * len(zones) * (horizon + len(names))
    chunk = max(1, min(n_paths, CHUNK_BYTES // per_path))
    rng = np.random.default_rng([int(seed), 7])
    total = np.zeros((n_paths, horizon))
    for c, start in enumerate(range(0, n_paths, chunk)):
        m = min(chunk, n_paths - start)
        shocks = rng.standard_normal((horizon, m, len(zones))) @ factor.T
        coefs = rng.standard_normal((len(names), m, len(zones))) @ factor.T
        for j, zone in enumerate(zones):
            model = models[zone]
            own = np.ascontiguousarray(shocks[:, :, j])[:, None, :]
            noise = propagation.simulate_noise(
                model.end_state, horizon, m, _seed(seed, j, c), gaps[zone], shocks=own
            )
            noise += propagation.coefficient_paths(
                model.end_state,
                design[zone],
                model.coefficient_covariance,
                m,
                None,
                gaps[zone],
                normals=coefs[rows[zone], :, j],
            )
            total[start : start + m] += model.to_demand(linear[zone][None, :] + noise)
    return total


@dataclass(frozen=True)
class SystemForecast:
    """Every zone's forecast and the system total.

    Attributes
    ----------
    zones : tuple of str
    zone_forecasts : dict
        Zone -> :class:`~loadcore.model.forecast.Forecast`.
    system : DataFrame
        ``date``, ``mean``, ``median``, ``lower_L``/``upper_L``, ``out_of_range`` (any zone).
    levels : tuple of float
    correlation : ShockCorrelation
    n_paths, seed : int
        The joint sample paths behind the total's median and intervals.
    """

    zones: tuple[str, ...]
    zone_forecasts: dict[str, Forecast]
    system: pd.DataFrame
    levels: tuple[float, ...]
    correlation: ShockCorrelation
    n_paths: int
    seed: int
    demand_unit: str = "MW"
    notes: tuple[str, ...] = field(default=())

    def naive_band(self, level: float) -> pd.DataFrame:
        """The sum of the zones' own bounds at ``level`` (what adding the zones' bands gives:
        right only if the zones moved in lockstep), ``date``, ``lower``, ``upper``."""
        lo, hi = interval_levels.lower_column(level), interval_levels.upper_column(level)
        frames = [self.zone_forecasts[z].frame for z in self.zones]
        return pd.DataFrame(
            {
                "date": frames[0]["date"].to_numpy(),
                "lower": np.sum([f[lo].to_numpy() for f in frames], axis=0),
                "upper": np.sum([f[hi].to_numpy() for f in frames], axis=0),
            }
        )

    def band_comparison(self, level: float | None = None) -> dict:
        """Average width of the total's band at ``level`` (the first level by default) and of
        the sum of the zones' bands, demand units, with the average pairwise correlation."""
        level = self.levels[0] if level is None else level
        lo, hi = interval_levels.lower_column(level), interval_levels.upper_column(level)
        naive = self.naive_band(level)
        joint = float((self.system[hi] - self.system[lo]).mean())
        summed = float((naive["upper"] - naive["lower"]).mean())
        return {
            "level": level,
            "system_width": joint,
            "sum_of_zone_widths": summed,
            "mean_pairwise_correlation": self.correlation.mean_pairwise,
            "common_days": self.correlation.common_days,
        }

    def table(self, temp_unit: units.Unit = "C") -> pd.DataFrame:
        """The long table: one row per zone and day, then the system's rows: ``zone``,
        ``date``, ``temperature_<u>`` (blank for the system), ``mean``, ``median``,
        ``lower_L``/``upper_L``, ``out_of_range``, ``note`` (the total's caution, system rows)."""
        cols = interval_levels.interval_columns(self.levels)
        temp_col = units.temperature_column(temp_unit)
        parts = []
        for zone in self.zones:
            f = self.zone_forecasts[zone].frame
            part = pd.DataFrame({"zone": zone, "date": f["date"].to_numpy()})
            part[temp_col] = units.rounded(
                units.to_unit(f["temperature_c"].to_numpy(), temp_unit), 2
            )
            for c in ("mean", "median", *cols, "out_of_range"):
                part[c] = f[c].to_numpy()
            part["note"] = ""
            parts.append(part)
        s = self.system
        part = pd.DataFrame({"zone": SYSTEM, "date": s["date"].to_numpy()})
        part[temp_col] = np.nan
        for c in ("mean", "median", *cols, "out_of_range"):
            part[c] = s[c].to_numpy()
        part["note"] = texts.ZONE_TOTAL_CAUTION
        parts.append(part)
        return pd.concat(parts, ignore_index=True)


def forecast_zones(
    models: Mapping[str, FittedModel],
    scenarios: Mapping[str, Scenario],
    *,
    levels: Sequence[float] = interval_levels.DEFAULT_LEVELS,
    n_paths: int = DEFAULT_PATHS,
    seed: int = 0,
) -> SystemForecast:
    """Forecast every zone and the system total.

    Parameters
    ----------
    models : mapping of zone -> FittedModel
    scenarios : mapping of zone -> Scenario
        One scenario per zone, all on the same dates.
    levels : sequence of float
        Interval levels, percent.
    n_paths : int
        Joint sample paths for the total (the median and intervals; its mean is the sum of the
        zones' means).
    seed : int
        Seed of the joint paths.

    Returns
    -------
    SystemForecast

    Raises
    ------
    ScenarioError
        When a zone has no scenario or the zones' scenarios cover different dates.
    ModelError
        When the zones' residuals share too few days (:func:`shock_correlation`).
    """
    levels = interval_levels.parse_levels(levels, where="interval levels")
    zones = tuple(models)
    if not zones:
        raise ModelError("No zone models to forecast", where="zones", fix="Fit the zones first")
    missing = [z for z in zones if z not in scenarios]
    if missing:
        raise ScenarioError(
            f"No scenario for zone(s) {', '.join(quote(z) for z in missing[:10])}",
            where="zones forecast",
            fix="Give a temperature column for every zone, or use a system-wide anomaly",
        )
    first = scenarios[zones[0]].dates
    for z in zones[1:]:
        if not scenarios[z].dates.equals(first):
            raise ScenarioError(
                f"The scenario of zone {quote(z)} covers other dates than that of "
                f"{quote(zones[0])}",
                where="zones forecast",
                fix="Give every zone the same dates",
            )
    per_zone = {z: models[z].forecast(scenarios[z], levels=levels) for z in zones}
    correlation = shock_correlation(models)
    paths = system_paths(models, scenarios, correlation, n_paths=n_paths, seed=seed)
    out = {
        "date": first,
        "mean": np.sum([per_zone[z].frame["mean"].to_numpy() for z in zones], axis=0),
        "median": np.median(paths, axis=0),
    }
    for L in levels:
        lo_p, hi_p = interval_levels.tail_probabilities(L)
        out[interval_levels.lower_column(L)] = np.quantile(paths, lo_p, axis=0)
        out[interval_levels.upper_column(L)] = np.quantile(paths, hi_p, axis=0)
    out["out_of_range"] = np.any(
        [per_zone[z].frame["out_of_range"].to_numpy(bool) for z in zones], axis=0
    )
    units_seen = {models[z].demand_unit for z in zones}
    return SystemForecast(
        zones=zones,
        zone_forecasts=per_zone,
        system=pd.DataFrame(out),
        levels=tuple(levels),
        correlation=correlation,
        n_paths=int(n_paths),
        seed=int(seed),
        demand_unit=units_seen.pop() if len(units_seen) == 1 else "MW",
        notes=(texts.ZONE_TOTAL_CAUTION, texts.INTERVAL_CAUTION),
    )
