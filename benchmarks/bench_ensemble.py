"""Benchmark: a 30-day weather ensemble of 7,000 demand paths, against a path-by-path loop.

Measured work: ``loadcore.weather.ensemble_forecast`` on the demo model for the 30 days after
the history, with 5 past years x 7 day shifts = 35 temperature traces and 200 error paths each
(7,000 pooled paths), quantiles, window peaks, exceedance figures and the variance split
included.

Baseline, measured in the same run: the plain way of drawing the same paths, one at a time, with
the statsmodels simulator of the same fitted model
(``model.statsmodels_results().simulate(30, anchor="end", exog=...)``), each path given its
trace's regressors. A seeded sample of ``BASELINE_SAMPLE`` paths is timed and scaled to 7,000
(the regressor matrices are built beforehand and not timed, which favours the baseline).

Target: the ensemble under 2 s, and faster than the baseline (ratio ensemble / baseline < 1).
"""

from __future__ import annotations

import json
import statistics
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd

REPO = Path(__file__).resolve().parent.parent
for _folder in (REPO, REPO / "benchmarks"):
    if str(_folder) not in sys.path:
        sys.path.insert(0, str(_folder))

from common import benchmark_model  # noqa: E402

from loadcore.history import read_history  # noqa: E402
from loadcore.weather import ensemble_forecast, temperature_traces  # noqa: E402

NAME = "ensemble"
TARGET_SECONDS = 2.0
DAYS = 30
SHIFT_DAYS = 3
PATHS_PER_TRACE = 200
REPEATS = 3
BASELINE_SAMPLE = 50
SEED = 20261201


def _model(history):
    return benchmark_model(history)


def _trace_regressors(model, traces: pd.DataFrame) -> list[np.ndarray]:
    """The model's regressor matrix for every trace (what the baseline simulator needs)."""
    dates = pd.DatetimeIndex(traces.index)
    types = model.calendar_types(dates).to_numpy(dtype=object)
    temps = traces.to_numpy(dtype=float)
    out = [model.regressors(dates, temps[:, j], types) for j in range(temps.shape[1])]
    return out


def _baseline_seconds(model, regressors: list[np.ndarray], n_total: int) -> tuple[float, int]:
    """Time a seeded sample of single-path statsmodels simulations; scale to ``n_total``."""
    results = model.statsmodels_results()
    rng = np.random.default_rng(SEED)
    picks = rng.integers(0, len(regressors), size=BASELINE_SAMPLE)
    results.simulate(DAYS, anchor="end", exog=regressors[0], rng=0)  # warm-up
    t0 = time.perf_counter()
    for i, k in enumerate(picks):
        sim = results.simulate(DAYS, anchor="end", exog=regressors[int(k)], rng=SEED + i)
        model.to_demand(np.asarray(sim, dtype=float))
    elapsed = time.perf_counter() - t0
    return elapsed * n_total / BASELINE_SAMPLE, BASELINE_SAMPLE


def run() -> dict:
    """Time the pooled ensemble against the path-by-path baseline; figures in seconds."""
    history = read_history(REPO / "demo_data" / "history.csv")
    model, source = _model(history)
    start = model.history_end + pd.Timedelta(days=1)
    traces = temperature_traces(model.history, start, DAYS, shift_days=SHIFT_DAYS)
    n_traces = traces.shape[1]
    n_paths = n_traces * PATHS_PER_TRACE

    ensemble_forecast(model, days=DAYS, paths_per_trace=10, seed=0)  # warm-up
    times = []
    result = None
    for r in range(REPEATS):
        t0 = time.perf_counter()
        result = ensemble_forecast(
            model,
            days=DAYS,
            shift_days=SHIFT_DAYS,
            paths_per_trace=PATHS_PER_TRACE,
            seed=SEED + r,
            threshold_mw=float(history.frame["demand"].quantile(0.99)),
        )
        times.append(time.perf_counter() - t0)
    ensemble_s = statistics.median(times)

    regressors = _trace_regressors(model, traces)
    baseline_s, sampled = _baseline_seconds(model, regressors, n_paths)
    ratio = ensemble_s / baseline_s
    return {
        "name": NAME,
        "what": (
            f"ensemble_forecast: {DAYS} days, {n_traces} temperature traces x "
            f"{PATHS_PER_TRACE} error paths = {n_paths} paths, with quantiles, peaks, "
            "exceedance and variance split"
        ),
        "baseline": (
            "statsmodels SARIMAXResults.simulate(anchor='end', exog=trace regressors), one path "
            f"per call; {sampled} seeded calls timed and scaled to {n_paths} paths"
        ),
        "model": source,
        "n_traces": n_traces,
        "n_paths": int(result.n_paths),
        "ensemble_seconds_median": round(ensemble_s, 4),
        "ensemble_seconds_all": [round(t, 4) for t in times],
        "baseline_seconds_estimated": round(baseline_s, 3),
        "ratio": round(ratio, 5),
        "speedup": round(1.0 / ratio, 1),
        "target_seconds": TARGET_SECONDS,
        "target": f"ensemble_seconds_median < {TARGET_SECONDS:g} s and ratio < 1",
        "passed": bool(ensemble_s < TARGET_SECONDS and ratio < 1.0),
    }


if __name__ == "__main__":
    result = run()
    out = REPO / "benchmarks" / "results" / f"{NAME}.json"
    out.parent.mkdir(parents=True, exist_ok=True)
    out.write_text(json.dumps(result, indent=2) + "\n", encoding="utf-8")
    print(json.dumps(result, indent=2))
