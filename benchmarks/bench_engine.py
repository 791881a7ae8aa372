"""Engine benchmarks on the demo history, each a ratio against a baseline measured in this run.

- order search: the thorough search against a plain grid that fits every candidate of the same
  bounds with statsmodels defaults (a seeded sample of candidates timed and scaled by the count);
  target at least 50 times faster with a final AICc no worse than the grid's best over the sample;
  the thorough search under 30 s and the quick one under 5 s are reported beside;
- a 90-day scenario forecast with intervals against statsmodels' get_forecast: target under 50 ms;
- 1,000 sample paths over 30 days against statsmodels' simulator called path by path: target
  under 0.5 s;
- peak memory of a thorough fit (this process and its worker processes): target under 1 GB.
"""

from __future__ import annotations

import json
import resource
import subprocess
import sys
import time
import warnings
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

GRID_SAMPLE = 6  # candidates timed for the grid baseline (seeded)


def _history():
    from loadcore.history import read_history

    return read_history(ROOT / "demo_data" / "history.csv")


def _grid_baseline(history, model, seed: int = 0) -> dict:
    """Fit a seeded sample of the thorough grid with statsmodels defaults, same regressors."""
    from statsmodels.tsa.statespace.sarimax import SARIMAX

    from loadcore.model import model_response

    frame = history.frame
    y = model_response(frame["demand"].to_numpy(float), model.settings.log)
    types = model.calendar_types(frame.index).to_numpy(dtype=object)
    X = model.regressors(frame.index, frame["temperature_c"].to_numpy(float), types)
    grid = model.settings.bounds.all_orders(model.orders.d, model.orders.D)
    rng = np.random.default_rng(seed)
    sample = [grid[i] for i in rng.choice(len(grid), size=GRID_SAMPLE, replace=False)]
    times, aiccs = [], []
    for o in sample:
        t0 = time.perf_counter()
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            res = SARIMAX(y, exog=X, order=o.order, seasonal_order=o.seasonal_order).fit(disp=False)
        times.append(time.perf_counter() - t0)
        aiccs.append(float(res.aicc))
    return {
        "grid_size": len(grid),
        "sample": [o.describe() for o in sample],
        "sample_seconds": times,
        "sample_aicc": aiccs,
        "grid_estimated_seconds": float(np.mean(times) * len(grid)),
    }


def _peak_memory_mb() -> float:
    """Peak resident memory of a thorough fit in a fresh process, workers included."""
    root, csv = str(ROOT), str(ROOT / "demo_data" / "history.csv")
    code = (
        f"import resource, sys; sys.path.insert(0, {root!r})\n"
        "from loadcore.history import read_history\n"
        "from loadcore.model import fit, FitSettings\n"
        f"h = read_history({csv!r})\n"
        "fit(h, FitSettings(search='thorough'))\n"
        "me = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss\n"
        "kids = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss\n"
        "print(me + kids)\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    return float(out.stdout.strip().splitlines()[-1]) / 1024.0  # ru_maxrss is in KiB on Linux


def run() -> dict:
    import statsmodels.tsa.statespace.sarimax  # noqa: F401  (import time is not search time)

    from loadcore.model import FitSettings, fit
    from loadcore.scenario import make_scenario, seasonal_normal_path

    history = _history()
    t0 = time.perf_counter()
    fit(history, FitSettings(search="quick"))
    quick_first_s = time.perf_counter() - t0  # includes starting the worker processes
    t0 = time.perf_counter()
    quick = fit(history, FitSettings(search="quick"))
    quick_s = time.perf_counter() - t0
    t0 = time.perf_counter()
    thorough = fit(history, FitSettings(search="thorough"))
    thorough_s = time.perf_counter() - t0
    grid = _grid_baseline(history, thorough)
    search_ratio = grid["grid_estimated_seconds"] / thorough_s
    aicc_ok = thorough.aicc <= min(grid["sample_aicc"]) + 1e-6

    # Forecast: ours against statsmodels' get_forecast on the same parameters.
    start = thorough.history_end + pd.Timedelta(days=1)
    sc90 = make_scenario(
        "normal 90", seasonal_normal_path(history, start, 90), model_end=thorough.history_end
    )
    thorough.forecast(sc90)  # warm
    reps = 20
    t0 = time.perf_counter()
    for _ in range(reps):
        thorough.forecast(sc90, levels=(80, 95))
    ours_fc = (time.perf_counter() - t0) / reps
    res = thorough.statsmodels_results()
    types = thorough.calendar_types(sc90.dates).to_numpy(dtype=object)
    X90 = thorough.regressors(sc90.dates, sc90.temperature_c, types)
    t0 = time.perf_counter()
    for _ in range(5):
        f = res.get_forecast(90, exog=X90)
        f.conf_int(alpha=0.2)
        f.conf_int(alpha=0.05)
    base_fc = (time.perf_counter() - t0) / 5

    # Sample paths: ours against the statsmodels simulator path by path.
    sc30 = make_scenario(
        "normal 30", seasonal_normal_path(history, start, 30), model_end=thorough.history_end
    )
    t0 = time.perf_counter()
    thorough.sample_paths(sc30, 1000, seed=1)
    ours_paths = time.perf_counter() - t0
    X30 = X90[:30]
    n_sample = 20
    t0 = time.perf_counter()
    for i in range(n_sample):
        res.simulate(30, anchor="end", exog=X30, repetitions=1, rng=i)
    base_paths = (time.perf_counter() - t0) / n_sample * 1000

    peak_mb = _peak_memory_mb()
    result = {
        "search": {
            "quick_seconds": quick_s,
            "quick_first_fit_in_process_seconds": quick_first_s,
            "quick_orders": quick.orders.describe(),
            "thorough_seconds": thorough_s,
            "thorough_orders": thorough.orders.describe(),
            "thorough_aicc": thorough.aicc,
            "candidates_evaluated": thorough.candidates_evaluated,
            **grid,
            "ratio_grid_over_thorough": search_ratio,
            "target_ratio": 50.0,
            "aicc_no_worse_than_grid_sample": aicc_ok,
            "thorough_under_30s": thorough_s < 30,
            "quick_under_5s": quick_s < 5,
        },
        "forecast_90_days": {
            "ours_ms": ours_fc * 1000,
            "statsmodels_get_forecast_ms": base_fc * 1000,
            "ratio": base_fc / ours_fc,
            "target_ms": 50.0,
        },
        "paths_1000_by_30": {
            "ours_seconds": ours_paths,
            "statsmodels_path_by_path_seconds": base_paths,
            "ratio": base_paths / ours_paths,
            "target_seconds": 0.5,
        },
        "memory": {"thorough_fit_peak_mb": peak_mb, "target_mb": 1024.0},
        "load_average_1min": float(open("/proc/loadavg").read().split()[0]),
        "max_rss_this_process_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024,
    }
    result["passed"] = bool(
        search_ratio >= 50 and aicc_ok and ours_fc < 0.05 and ours_paths < 0.5 and peak_mb < 1024
    )
    return result


if __name__ == "__main__":
    out = run()
    dest = ROOT / "benchmarks" / "results" / "engine.json"
    dest.parent.mkdir(parents=True, exist_ok=True)
    dest.write_text(json.dumps(out, indent=2))
    print(json.dumps(out, indent=2))
