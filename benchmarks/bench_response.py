"""The other temperature response's cost: a fit with the response comparison against the same
fit without it, in the same run (2 cores).

Histories: the demo (2,159 days) and two simulated 2,000-day histories with the product's
regressors and high-order errors (AR 3 · MA 5 | weekly AR 1 · MA 1; :mod:`loadcore.model.simulate`),
one with a quadratic truth and one with a degree-day truth (bases 15.5 and 21.5 °C).

- baseline: ``fit(history, FitSettings(search="quick"), compare_responses=False)``;
- measured: the same fit with the comparison (the default), which adds degree days with bases
  by profile likelihood beside the quadratic;
- figures: median wall time of each over :data:`REPEATS` runs and their ratio (noisy on a
  shared machine: the two are separate runs), and the comparison's share, the comparison's own
  seconds (``ResponseComparison.seconds``, median) over the rest of the same fits (one run, so
  the load is the same for both). Target (our choice): the share is at most 0.5, i.e. the
  comparison adds at most half of a quick fit's time.
"""

from __future__ import annotations

import statistics
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

#: Fits timed per history and variant (the median counts).
REPEATS = 3
#: Largest accepted share of the comparison in a quick fit's time (our choice).
TARGET_SHARE = 0.5


def _histories():
    from loadcore.history import read_history
    from loadcore.model import TermSpec
    from loadcore.model.simulate import TRUTH_AR3_MA5, simulated_history

    yield "demo", read_history(ROOT / "demo_data" / "history.csv")
    yield "simulated_quadratic", simulated_history(TRUTH_AR3_MA5, n_days=2000, seed=3).to_history()
    degree_days = TermSpec(response="degree_days", heating_base_c=15.5, cooling_base_c=21.5)
    yield (
        "simulated_degree_days",
        simulated_history(TRUTH_AR3_MA5, n_days=2000, seed=4, terms=degree_days).to_history(),
    )


def _median_fit(history, compare: bool):
    from loadcore.model import FitSettings, fit

    times, shares, model = [], [], None
    for _ in range(REPEATS):
        started = time.perf_counter()
        model = fit(history, FitSettings(search="quick"), compare_responses=compare)
        times.append(time.perf_counter() - started)
        if model.response_comparison is not None:
            spent = model.response_comparison.seconds
            shares.append((spent, spent / (times[-1] - spent)))
    share = statistics.median(s for _, s in shares) if shares else 0.0
    spent = statistics.median(t for t, _ in shares) if shares else 0.0
    return statistics.median(times), model, spent, share


def run() -> dict:
    out: dict = {"target_share_at_most": TARGET_SHARE, "histories": {}}
    passed = True
    shares = []
    for name, history in _histories():
        without, *_ = _median_fit(history, False)
        with_cmp, model, spent, share = _median_fit(history, True)
        comparison = model.response_comparison
        ratio = with_cmp / without
        shares.append(share)
        passed &= share <= TARGET_SHARE
        out["histories"][name] = {
            "days": len(history.frame),
            "error_model": model.orders.describe(),
            "fit_without_comparison_s": round(without, 3),
            "fit_with_comparison_s": round(with_cmp, 3),
            "extra_s": round(with_cmp - without, 3),
            "ratio": round(ratio, 3),
            "comparison_s": round(spent, 3),
            "comparison_share": round(share, 3),
            "fitted_aicc": round(comparison.fitted.aicc, 1),
            "other_aicc": round(comparison.other.aicc, 1),
            "other_bases_c": [
                comparison.other.terms.heating_base_c,
                comparison.other.terms.cooling_base_c,
            ],
            "other_is_better": comparison.other_is_better,
        }
    out["ratio"] = round(max(shares), 3)
    out["passed"] = bool(passed)
    return out


if __name__ == "__main__":
    import json

    print(json.dumps(run(), indent=2))
