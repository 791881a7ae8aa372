"""Many zones on Dask: a 2-worker local cluster against this process, on simulated systems.

Systems of 8 and 64 zones x 2,000 days (loadcore.zones.simulate, shocks correlated 0.6) are
fitted with the quick search, once in this process and once on a local Dask cluster of two
single-threaded worker processes. Reported: wall times and their ratio (in-process / cluster,
the speed-up), the mean fit time of one zone, the highest peak memory of a worker process, and
the cluster's overhead per zone: (cluster wall x workers - the zones' own fit seconds) / zones,
which counts the cluster's start, shipping each history and the scheduler's bookkeeping. The
cost of 1,000 feeders follows from the measured per-zone cost. The machine is shared: when other
work holds a core, two workers on two cores share one and the cluster loses to one process
(``cluster_per_zone_fit_s`` against ``per_zone_fit_s`` shows it).
"""

from __future__ import annotations

import json
import logging

from loadcore.model import FitSettings
from loadcore.zones import ClusterChoice, ZoneLayout, fit_zones, read_zone_histories
from loadcore.zones.simulate import simulated_system

SIZES = (8, 64)
DAYS = 2000
WORKERS = 2
#: The 64-zone speed-up with two workers on two cores (our target: the cluster must pay for
#: its start and shipping well within the run).
TARGET_AT_LEAST = 1.2


def _one(n_zones: int) -> dict:
    system = simulated_system(n_zones, n_days=DAYS, rho=0.6, seed=n_zones)
    zones = read_zone_histories(
        system.long_table().to_csv(index=False), ZoneLayout(zone_col="zone")
    )
    settings = FitSettings(search="quick")
    here = fit_zones(zones, settings, cluster=ClusterChoice("none"), fitted_at="bench")
    there = fit_zones(
        zones, settings, cluster=ClusterChoice("local", workers=WORKERS), fitted_at="bench"
    )
    zone_s = sum(f.seconds for f in there.fits)
    per_zone = sum(f.seconds for f in here.fits) / n_zones
    return {
        "zones": n_zones,
        "days": DAYS,
        "fitted": len(here.fitted),
        "in_process_s": round(here.run.wall_seconds, 2),
        "cluster_s": round(there.run.wall_seconds, 2),
        "speedup_ratio": round(here.run.wall_seconds / there.run.wall_seconds, 3),
        "per_zone_fit_s": round(per_zone, 3),
        "overhead_per_zone_s": round((there.run.wall_seconds * WORKERS - zone_s) / n_zones, 3),
        "worker_peak_mb": round(there.run.worker_peak_mb, 1),
        "in_process_peak_mb": round(here.run.worker_peak_mb, 1),
        "cluster_per_zone_fit_s": round(zone_s / n_zones, 3),
        "same_model_files": all(
            a.model_json == b.model_json for a, b in zip(here.fits, there.fits, strict=True)
        ),
        "same_models_but_rejected_candidates": all(
            _without_candidates(a.model_json) == _without_candidates(b.model_json)
            for a, b in zip(here.fits, there.fits, strict=True)
        ),
    }


def _without_candidates(text: str) -> str:
    data = json.loads(text)
    data["candidates"] = [c for c in data["candidates"] if c["chosen"]]
    return json.dumps(data)


def run() -> dict:
    logging.getLogger("loadcore.model.search").setLevel(logging.ERROR)
    rows = [_one(n) for n in SIZES]
    big = rows[-1]
    per_zone_two = big["cluster_s"] / big["zones"]
    return {
        "systems": rows,
        "ratio": big["speedup_ratio"],
        "target": TARGET_AT_LEAST,
        "passed": big["speedup_ratio"] >= TARGET_AT_LEAST
        and all(r["fitted"] == r["zones"] for r in rows),
        "baseline": "the same zones fitted in this process, same run",
        "cost_1000_feeders_hours_one_core": round(1000 * big["per_zone_fit_s"] / 3600, 2),
        "cost_1000_feeders_hours_two_workers": round(1000 * per_zone_two / 3600, 2),
    }


if __name__ == "__main__":
    print(json.dumps(run(), indent=1))
