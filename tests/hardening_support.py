"""Shared builders for the hardening tests (issue 11): a simulated history and a tiny model.

The history is simulated from a known truth (a quadratic temperature response on log demand, a
weekday pattern and AR(1) errors); the model is fitted with the smallest search so that the tests
about files and messages do not wait for a real fit.
"""

from __future__ import annotations

import functools

import numpy as np
import pandas as pd

SMALL_SEARCH = (
    "--ar-up-to",
    "1",
    "--ma-up-to",
    "0",
    "--ar-ma-up-to",
    "1",
    "--weekly-ar-up-to",
    "0",
    "--weekly-ma-up-to",
    "0",
    "--annual-harmonics",
    "0",
)


def simulated_frame(days: int = 400, start: str = "2029-01-01", seed: int = 3) -> pd.DataFrame:
    """A daily table (``date``, ``demand`` MW, ``temperature`` °C) from a known truth: log
    demand = log 1500 + 0.0012 (T - 18)^2 + weekday effects + AR(1) errors (phi 0.6, sd 2 %)."""
    rng = np.random.default_rng(seed)
    dates = pd.date_range(start, periods=days, freq="D")
    doy = dates.day_of_year.to_numpy()
    temp = 15 + 11 * np.sin(2 * np.pi * (doy - 110) / 365.25) + rng.normal(0, 2.5, days)
    weekday = np.array([0.0, 0.01, 0.01, 0.01, 0.0, -0.08, -0.12])[dates.day_of_week]
    noise = np.zeros(days)
    shocks = rng.normal(0, 0.02, days)
    for i in range(1, days):
        noise[i] = 0.6 * noise[i - 1] + shocks[i]
    log_demand = np.log(1500) + 0.0012 * (temp - 18) ** 2 + weekday + noise
    return pd.DataFrame(
        {"date": dates, "demand": np.round(np.exp(log_demand), 1), "temperature": temp.round(1)}
    )


def history_csv_text(frame: pd.DataFrame | None = None) -> str:
    frame = simulated_frame() if frame is None else frame
    return frame.assign(date=frame["date"].dt.strftime("%Y-%m-%d")).to_csv(index=False)


def small_settings():
    from loadcore.model import FitSettings, TermSpec

    return FitSettings(
        ar_up_to=1,
        ma_up_to=0,
        ar_ma_up_to=1,
        weekly_ar_up_to=0,
        weekly_ma_up_to=0,
        workers=1,
        terms=TermSpec(annual_harmonics=0),
    )


@functools.lru_cache(maxsize=1)
def tiny_model():
    """A model fitted with the smallest search on :func:`simulated_frame` (cached)."""
    from loadcore.history import read_history
    from loadcore.model import fit

    history = read_history(history_csv_text().encode())
    return fit(history, small_settings())


def scenario_csv_text(model, days: int = 5, temperature_c: float = 20.0) -> str:
    """A scenario file starting the day after the model's history."""
    dates = pd.date_range(model.history_end + pd.Timedelta(days=1), periods=days, freq="D")
    return "date,temperature\n" + "".join(f"{d:%Y-%m-%d},{temperature_c}\n" for d in dates)
