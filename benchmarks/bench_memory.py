"""What the temperature memory terms do to 14-day forecast accuracy: rolling-origin backtests of
the same histories with the memory terms tried (the default) and switched off, in the same run.

Histories (no dataset shipped by an installed registry package has daily load beside
temperature, so the "real-like" ones are simulated with truths that have memory):

- ``daily_memory``: 2,000 simulated days (:mod:`loadcore.model.simulate`) whose truth responds
  to the smoothed past temperature (weight 0.5, pandas span 3) and the daily minimum
  (:data:`loadcore.model.simulate.MEMORY_RESPONSE`), read with its daily minima;
- ``hourly_memory``: the same kind of truth on another seed, written as six years of hourly
  rows (a daily temperature cycle from the minimum at 04:00 to the maximum at 16:00, demand
  peaking at 18:00) and read through :func:`loadcore.history.read_history`, which aggregates the
  hours to daily peaks, maxima and minima;
- ``daily_no_memory``: a truth without memory (the control: the terms should change little);
- ``demo``: the demo history (daily maxima only, so only the smoothed past temperature is tried).

Each history is backtested ex post (actual temperatures), 14 days ahead, at 24 and at 12
origins (and the demo also at the product's default of 20), for two model kinds: the product's
model (regression with weekly seasonal ARIMA errors, quick search) and a plain regression (all
error orders bounded at 0). Figures: 14-day MAPE with and without the terms and its relative
change, ``(with - without) / without``; the memory terms kept by each backtest's fit (on the
data before its first origin); and the quick fit's median wall time with the terms tried over
without them (``ratio``, the largest over the histories; noisy on a shared machine). The memory
terms pass when they do not make the
product's MAPE worse by more than 1 % on any history, and cut it on both histories with memory.
"""

from __future__ import annotations

import statistics
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

#: Origins of the backtests (the issue's 24 and 12; 20 is the product's default).
ORIGINS = (24, 12)
#: Days ahead of every backtest.
HORIZON = 14
#: Fits timed per history and variant for the fit-time ratio (the median counts).
REPEATS = 3
#: Largest accepted worsening of the product's MAPE on any history, relative (our choice).
TOLERANCE = 0.01


def _truth():
    from loadcore.model.orders import Orders
    from loadcore.model.simulate import ErrorTruth

    # A short daily load error process (plausible, our choice), so the backtests stay quick.
    return ErrorTruth(Orders(2, 0, 1, 1, 0, 0), (0.6, 0.1, 0.2, 0.25))


def _hourly(sim) -> bytes:
    """Hourly rows of a simulated daily truth: hourly temperature between the day's minimum and
    maximum, hourly demand whose daily peak is the simulated daily demand."""
    hours = np.arange(24)
    temp_shape = 0.5 * (1 + np.cos(2 * np.pi * (hours - 16) / 24))  # 0 at 04:00, 1 at 16:00
    load_shape = 0.8 + 0.2 * 0.5 * (1 + np.cos(2 * np.pi * (hours - 18) / 24))  # 1 at 18:00
    tmax, tmin = sim.temperature_c, sim.temperature_min_c
    temps = tmin[:, None] + (tmax - tmin)[:, None] * temp_shape[None, :]
    demand = np.exp(sim.y)[:, None] * load_shape[None, :]
    days = sim.dates.to_numpy()[:, None]
    stamps = (days + pd.to_timedelta(hours, unit="h").to_numpy()[None, :]).ravel()
    frame = pd.DataFrame(
        {
            "timestamp": pd.DatetimeIndex(stamps).strftime("%Y-%m-%d %H:%M"),
            "demand": np.round(demand.ravel(), 2),
            "temperature": np.round(temps.ravel(), 2),
        }
    )
    return frame.to_csv(index=False).encode()


def _histories():
    from loadcore.history import HistorySettings, read_history
    from loadcore.model.simulate import MEMORY_RESPONSE, simulated_history

    truth = _truth()
    sim = simulated_history(truth, n_days=2000, seed=11, memory=MEMORY_RESPONSE)
    yield "daily_memory", sim.to_history(with_minimum=True)
    sim = simulated_history(truth, n_days=6 * 365, seed=12, memory=MEMORY_RESPONSE)
    settings = HistorySettings(date_col="timestamp", subdaily_demand="peak")
    yield "hourly_memory", read_history(_hourly(sim), settings)
    sim = simulated_history(truth, n_days=2000, seed=13)
    yield "daily_no_memory", sim.to_history(with_minimum=True)
    yield "demo", read_history(ROOT / "demo_data" / "history.csv")


def _settings(kind: str, memory: bool):
    from loadcore.model import FitSettings, TermSpec

    bounds = {}
    if kind == "plain_regression":
        bounds = dict(ar_up_to=0, ma_up_to=0, ar_ma_up_to=0, weekly_ar_up_to=0, weekly_ma_up_to=0)
    return FitSettings(search="quick", terms=TermSpec(memory=memory), **bounds)


def _backtest(history, kind: str, memory: bool, origins: int) -> tuple[float, list[str]]:
    """14-day MAPE (%) and the memory terms the backtest's fit (before its first origin) kept."""
    from loadcore.evaluate import backtest

    result = backtest(history, _settings(kind, memory), horizon=HORIZON, origins=origins)
    return float(result.summary["mape"]), list(result.summary["memory_terms"])


def _fit_seconds(history, memory: bool) -> float:
    """Median wall time of a quick fit, with or without the memory terms tried."""
    from loadcore.model import fit

    times = []
    for _ in range(REPEATS):
        started = time.perf_counter()
        fit(history, _settings("product", memory))
        times.append(time.perf_counter() - started)
    return statistics.median(times)


def run() -> dict:
    rows, timing = [], []
    for name, history in _histories():
        counts = (*ORIGINS, 20) if name == "demo" else ORIGINS
        with_s, without_s = _fit_seconds(history, True), _fit_seconds(history, False)
        timing.append(
            {
                "history": name,
                "fit_seconds_with": round(with_s, 3),
                "fit_seconds_without": round(without_s, 3),
                "ratio": round(with_s / without_s, 3),
            }
        )
        print(timing[-1], flush=True)
        for kind in ("product", "plain_regression"):
            for origins in counts:
                with_terms, kept = _backtest(history, kind, True, origins)
                without, _ = _backtest(history, kind, False, origins)
                rows.append(
                    {
                        "history": name,
                        "model": kind,
                        "origins": origins,
                        "kept": kept,
                        "mape_without": round(without, 4),
                        "mape_with": round(with_terms, 4),
                        "relative_change": round((with_terms - without) / without, 4),
                    }
                )
                print(rows[-1], flush=True)
    product = [r for r in rows if r["model"] == "product"]
    worst = max(r["relative_change"] for r in product)
    with_memory = ("daily_memory", "hourly_memory")
    memory_cut = all(r["relative_change"] < 0 for r in product if r["history"] in with_memory)
    return {
        "rows": rows,
        "fit_time": timing,
        "ratio": max(t["ratio"] for t in timing),
        "worst_relative_change_product": worst,
        "tolerance": TOLERANCE,
        "passed": bool(worst <= TOLERANCE and memory_cut),
    }


if __name__ == "__main__":
    import json

    print(json.dumps(run(), indent=2))
