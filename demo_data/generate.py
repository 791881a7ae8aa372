"""Generate the synthetic demo history for the fictional Calder Basin Power & Light.

Run from the repository root::

    python demo_data/generate.py                 # writes history.csv, truth.json, overrides.txt
    python demo_data/generate.py --out-dir /tmp  # somewhere else

Everything here is invented. The true parameters are kept in ``TRUTH`` below and written verbatim
to ``truth.json`` (plus ``start``, ``end`` and ``seed``) so that tests can check that a fitted model
recovers them.

Model (daily):

    log(demand_mw) = log(base_mw)
                     + growth_per_year * years since start
                     + heating_per_degc * max(heating_base_c - T, 0)
                     + cooling_per_degc * max(T - cooling_base_c, 0)
                     + day-type effect (relative to Tuesday-Thursday)
                     + annual_cos * cos(2 pi doy / 365.25) + annual_sin * sin(2 pi doy / 365.25)
                     + u_t

    u_t = ar1 * u_{t-1} + seasonal_ar1 * u_{t-7} - ar1 * seasonal_ar1 * u_{t-8} + e_t,
    e_t ~ Normal(0, sigma)

where T is the daily maximum temperature in °C as written to the file (rounded to 0.1 °C).
"""

from __future__ import annotations

import argparse
import datetime as dt
import json
import logging
from pathlib import Path

import holidays
import numpy as np
import pandas as pd

logger = logging.getLogger("demo_data.generate")

SEED = 20210101
START = "2021-01-01"
END = "2026-11-29"

# The true demand parameters; written verbatim to truth.json.
TRUTH: dict = {
    "base_mw": 1450.0,
    "growth_per_year": 0.012,
    "heating_base_c": 18.0,
    "cooling_base_c": 24.0,
    "heating_per_degc": 0.011,
    "cooling_per_degc": 0.026,
    "day_type_effects": {
        "midweek": 0.0,
        "monday": -0.01,
        "friday": -0.02,
        "saturday": -0.13,
        "sunday": -0.17,
        "holiday": -0.15,
        "year_end": -0.10,
    },
    "year_end": {"start": "12-24", "end": "01-01"},
    "annual_cos": 0.015,
    "annual_sin": 0.0,
    "ar1": 0.75,
    "seasonal_ar1": 0.25,
    "sigma": 0.018,
    "country": "US",
}

# The invented climate of the Calder Basin (daily maximum temperature, °C).
CLIMATE: dict = {
    "mean_c": 19.0,
    "amplitude_c": 15.0,
    "coldest_doy": 20,
    "noise_ar1": 0.7,
    "noise_sd_c": 3.5,
    "heat_waves_per_summer": (1, 2),
    "heat_wave_days": (4, 9),
    "heat_wave_peak_c": (40.0, 43.0),
    "cold_snaps_per_winter": (1, 2),
    "cold_snap_days": (4, 8),
    "cold_snap_low_c": (-6.0, 0.0),
}

BURN_IN_DAYS = 1000
DAYS_PER_YEAR = 365.25


def _ar1(rng: np.random.Generator, n: int, phi: float, marginal_sd: float) -> np.ndarray:
    """Stationary AR(1) series with the given marginal standard deviation."""
    innovation_sd = marginal_sd * np.sqrt(1.0 - phi**2)
    out = np.empty(n)
    out[0] = rng.normal(0.0, marginal_sd)
    shocks = rng.normal(0.0, innovation_sd, n)
    for t in range(1, n):
        out[t] = phi * out[t - 1] + shocks[t]
    return out


def _event_profile(
    rng: np.random.Generator, length: int, extreme: float, sign: float
) -> np.ndarray:
    """Hump-shaped run of daily highs reaching ``extreme`` in the middle of the event.

    ``sign`` is +1 for a heat wave (edges cooler than the peak) and -1 for a cold snap.
    """
    k = np.arange(length)
    shape = np.sin(np.pi * (k + 0.5) / length)  # 1 in the middle, smaller at the edges
    profile = extreme - sign * 3.0 * (1.0 - shape)
    return profile + rng.normal(0.0, 0.5, length)


def _place_events(
    rng: np.random.Generator,
    dates: pd.DatetimeIndex,
    temps: np.ndarray,
    window: tuple[pd.Timestamp, pd.Timestamp],
    count_range: tuple[int, int],
    length_range: tuple[int, int],
    extreme_range: tuple[float, float],
    sign: float,
) -> None:
    """Inject 1-2 non-overlapping events into ``window`` (in place)."""
    lo, hi = window
    count = int(rng.integers(count_range[0], count_range[1] + 1))
    span = (hi - lo).days
    part = span // count
    for i in range(count):
        length = int(rng.integers(length_range[0], length_range[1] + 1))
        first = lo + pd.Timedelta(days=i * part + int(rng.integers(0, max(part - length, 1))))
        extreme = float(rng.uniform(*extreme_range))
        profile = _event_profile(rng, length, extreme, sign)
        event_days = pd.date_range(first, periods=length, freq="D")
        pos = dates.get_indexer(event_days)
        keep = pos >= 0
        pos, profile = pos[keep], profile[keep]
        if sign > 0:
            temps[pos] = np.maximum(temps[pos], profile)
        else:
            temps[pos] = np.minimum(temps[pos], profile)


def make_temperature(rng: np.random.Generator, dates: pd.DatetimeIndex) -> np.ndarray:
    """Daily maximum temperature in °C for ``dates``."""
    doy = np.asarray(dates.day_of_year, dtype=float)
    seasonal = CLIMATE["mean_c"] + CLIMATE["amplitude_c"] * (
        -np.cos(2 * np.pi * (doy - CLIMATE["coldest_doy"]) / DAYS_PER_YEAR)
    )
    temps = seasonal + _ar1(rng, len(dates), CLIMATE["noise_ar1"], CLIMATE["noise_sd_c"])
    for year in range(dates[0].year, dates[-1].year + 1):
        summer = (pd.Timestamp(f"{year}-06-15"), pd.Timestamp(f"{year}-08-25"))
        if summer[0] <= dates[-1]:
            _place_events(
                rng,
                dates,
                temps,
                summer,
                CLIMATE["heat_waves_per_summer"],
                CLIMATE["heat_wave_days"],
                CLIMATE["heat_wave_peak_c"],
                +1.0,
            )
        winter = (pd.Timestamp(f"{year - 1}-12-15"), pd.Timestamp(f"{year}-02-10"))
        _place_events(
            rng,
            dates,
            temps,
            winter,
            CLIMATE["cold_snaps_per_winter"],
            CLIMATE["cold_snap_days"],
            CLIMATE["cold_snap_low_c"],
            -1.0,
        )
    return np.round(temps, 1)


def true_day_types(dates: pd.DatetimeIndex) -> np.ndarray:
    """The generator's own day types: holiday > weekend, year_end on remaining days."""
    names = np.array(
        ["monday", "midweek", "midweek", "midweek", "friday", "saturday", "sunday"], dtype=object
    )
    types = names[np.asarray(dates.day_of_week)].copy()
    years = range(dates[0].year, dates[-1].year + 1)
    federal = holidays.country_holidays(TRUTH["country"], years=years)
    is_holiday = np.array([d.date() in federal for d in dates])
    types[is_holiday] = "holiday"
    md = dates.strftime("%m-%d")
    start_md, end_md = TRUTH["year_end"]["start"], TRUTH["year_end"]["end"]
    in_year_end = (md >= start_md) | (md <= end_md)
    types[in_year_end & np.isin(types, ["monday", "midweek", "friday"])] = "year_end"
    return types


#: Years after the history's end the year-end overrides run on: scenario windows reach 24
#: months past the history plus a 92-day window (loadcore.scenario's window limits).
OVERRIDE_YEARS_AHEAD = 2

OVERRIDES_HEADER = (
    "# The demo's year-end low-load period as loadcore calendar overrides (written by\n"
    "# demo_data/generate.py): the working days from 24 December to 1 January, the days the\n"
    "# generator gives the year_end effect, for the history's years and the years a scenario\n"
    '# window can reach. Give them to a fit with --override "$(cat demo_data/overrides.txt)".\n'
)


def year_end_overrides() -> list[str]:
    """Override lines (``START[..END] year_end Year-end low load``) covering exactly the days
    :func:`true_day_types` calls ``year_end``, from the history's start to the last year-end
    period a scenario window can reach."""
    last = pd.Timestamp(END) + pd.DateOffset(years=OVERRIDE_YEARS_AHEAD)
    dates = pd.date_range(START, pd.Timestamp(year=last.year + 1, month=1, day=31), freq="D")
    is_year_end = true_day_types(dates) == "year_end"
    lines, run_start = [], None
    for i, flag in enumerate(is_year_end):
        if flag and run_start is None:
            run_start = dates[i]
        if run_start is not None and (not flag or i == len(dates) - 1):
            run_end = dates[i] if flag else dates[i - 1]
            span = f"{run_start:%Y-%m-%d}"
            if run_end != run_start:
                span += f"..{run_end:%Y-%m-%d}"
            lines.append(f"{span} year_end Year-end low load")
            run_start = None
    return lines


def make_errors(rng: np.random.Generator, n: int) -> np.ndarray:
    """Multiplicative (log-scale) AR(1) x weekly seasonal AR(1) errors, burnt in."""
    phi, big_phi, sigma = TRUTH["ar1"], TRUTH["seasonal_ar1"], TRUTH["sigma"]
    total = n + BURN_IN_DAYS
    e = rng.normal(0.0, sigma, total)
    u = np.zeros(total)
    for t in range(total):
        u[t] = e[t]
        if t >= 1:
            u[t] += phi * u[t - 1]
        if t >= 7:
            u[t] += big_phi * u[t - 7]
        if t >= 8:
            u[t] -= phi * big_phi * u[t - 8]
    return u[BURN_IN_DAYS:]


def make_history(seed: int = SEED) -> pd.DataFrame:
    """The demo history as a DataFrame with columns date (ISO), demand (MW), temperature (°C)."""
    rng = np.random.default_rng(seed)
    dates = pd.date_range(START, END, freq="D")
    temps = make_temperature(rng, dates)
    years = np.asarray((dates - dates[0]).days, dtype=float) / DAYS_PER_YEAR
    doy = np.asarray(dates.day_of_year, dtype=float)
    effects = TRUTH["day_type_effects"]
    day_effect = np.array([effects[t] for t in true_day_types(dates)])
    log_demand = (
        np.log(TRUTH["base_mw"])
        + TRUTH["growth_per_year"] * years
        + TRUTH["heating_per_degc"] * np.maximum(TRUTH["heating_base_c"] - temps, 0.0)
        + TRUTH["cooling_per_degc"] * np.maximum(temps - TRUTH["cooling_base_c"], 0.0)
        + day_effect
        + TRUTH["annual_cos"] * np.cos(2 * np.pi * doy / DAYS_PER_YEAR)
        + TRUTH["annual_sin"] * np.sin(2 * np.pi * doy / DAYS_PER_YEAR)
        + make_errors(rng, len(dates))
    )
    return pd.DataFrame(
        {
            "date": dates.strftime("%Y-%m-%d"),
            "demand": np.round(np.exp(log_demand), 1),
            "temperature": temps,
        }
    )


def truth_record(seed: int = SEED) -> dict:
    """What truth.json holds: TRUTH plus start, end and seed."""
    return {**TRUTH, "start": START, "end": END, "seed": seed}


def write(out_dir: Path, seed: int = SEED) -> tuple[Path, Path]:
    """Write history.csv, truth.json and overrides.txt into ``out_dir``; returns the first two
    paths."""
    out_dir.mkdir(parents=True, exist_ok=True)
    frame = make_history(seed)
    lines = ["date,demand,temperature"]
    lines += [
        f"{d},{m:.1f},{t:.1f}"
        for d, m, t in zip(frame["date"], frame["demand"], frame["temperature"], strict=True)
    ]
    csv_path = out_dir / "history.csv"
    csv_path.write_bytes(("\n".join(lines) + "\n").encode("utf-8"))
    truth_path = out_dir / "truth.json"
    truth_path.write_bytes((json.dumps(truth_record(seed), indent=2) + "\n").encode("utf-8"))
    overrides_path = out_dir / "overrides.txt"
    overrides_path.write_bytes(
        (OVERRIDES_HEADER + "\n".join(year_end_overrides()) + "\n").encode("utf-8")
    )
    logger.info("wrote %s (%d days), %s and %s", csv_path, len(frame), truth_path, overrides_path)
    return csv_path, truth_path


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description="Write the synthetic Calder Basin demo history.")
    parser.add_argument(
        "--out-dir",
        type=Path,
        default=Path(__file__).resolve().parent,
        help="folder for history.csv, truth.json and overrides.txt (default: demo_data/)",
    )
    parser.add_argument("--seed", type=int, default=SEED, help="random seed")
    args = parser.parse_args(argv)
    logging.basicConfig(level=logging.INFO, format="%(message)s")
    csv_path, truth_path = write(args.out_dir, args.seed)
    print(f"Wrote {csv_path} and {truth_path} ({dt.date.fromisoformat(START)} to {END}).")


if __name__ == "__main__":
    main()
