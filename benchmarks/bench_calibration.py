"""Interval calibration per band of days ahead on simulated histories, pooled over seeds.

One simulated history's last year gives a band's coverage a standard error of about 4 points
(52 weekly origins; the days from one origin move together), so the check pools the backtests
of :data:`SEEDS` simulated 2,000-day histories per error truth (:mod:`loadcore.model.simulate`:
AR 1 x weekly AR 1, and AR 3 · MA 5 | weekly AR 1 · MA 1), about 200 origins each.

- baseline: the nominal level of each interval (80 %, 95 %);
- figure: the pooled share of days inside, per band (1-4, 5-9, 10-14 days ahead), with its
  standard error (:func:`loadcore.scores.coverage_standard_error`, origins as units);
- target (issue 9, item 4): 80 % bands cover 75-85 %, 95 % bands 91-98 %, in every band.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

#: Seeds of the simulated histories per truth (our choice: four give about 200 origins).
SEEDS = (1, 2, 3, 4)
#: (level, lowest, highest) accepted pooled coverage (issue 9's targets).
TARGETS = ((80, 0.75, 0.85), (95, 0.91, 0.98))
BANDS = ((1, 4), (5, 9), (10, 14))


def _truths():
    from loadcore.model import Orders
    from loadcore.model.simulate import TRUTH_AR3_MA5, ErrorTruth

    yield "ar1_weekly_ar1", ErrorTruth(Orders(1, 0, 0, 1, 0, 0), (0.75, 0.25), sigma=0.018)
    yield "ar3_ma5", TRUTH_AR3_MA5


def run() -> dict:
    from loadcore.evaluate import backtest
    from loadcore.model import FitSettings
    from loadcore.model.simulate import simulated_history
    from loadcore.scores import coverage_standard_error

    out: dict = {"targets": [list(t) for t in TARGETS], "truths": {}}
    passed = True
    worst = 0.0
    for name, truth in _truths():
        frames = []
        for seed in SEEDS:
            history = simulated_history(truth, n_days=2000, seed=seed).to_history()
            f = backtest(history, FitSettings()).forecasts.copy()
            f["origin"] = f["origin"].astype(str) + f"/{seed}"
            frames.append(f)
        f = pd.concat(frames, ignore_index=True)
        f = f[np.isfinite(f["actual"])]
        bands = {}
        for a, b in BANDS:
            g = f[(f["horizon"] >= a) & (f["horizon"] <= b)]
            row = {}
            for level, low, high in TARGETS:
                lo, hi = g[f"lower_{level}"], g[f"upper_{level}"]
                share = float(((g["actual"] >= lo) & (g["actual"] <= hi)).mean())
                se = coverage_standard_error(g["actual"], lo, hi, g["origin"])
                row[f"coverage_{level}"] = round(share, 4)
                row[f"coverage_se_{level}"] = round(se, 4)
                passed &= low <= share <= high
                worst = max(worst, abs(share - level / 100))
            bands[f"{a}-{b}"] = row
        out["truths"][name] = {"origins": int(f["origin"].nunique()), "bands": bands}
    out["ratio"] = round(worst, 4)  # largest distance from the nominal level, as a share
    out["passed"] = bool(passed)
    return out


if __name__ == "__main__":
    import json

    print(json.dumps(run(), indent=2))
