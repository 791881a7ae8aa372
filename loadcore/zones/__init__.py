"""Many zones: one model per zone, fitted on Dask, and the system total with honest intervals.

Modules, in the order the data flows: ``histories`` (a zones file, long or wide, into one
validated :class:`~loadcore.history.History` per zone), ``runner`` (where the work runs: a
local Dask cluster, an existing scheduler, or this process), ``fitting`` (one model per zone,
the zones folder), ``forecast`` (per-zone scenarios, zone forecasts, the system total from
joint sample paths whose daily shocks keep the zones' correlation); ``simulate`` makes
simulated systems with known truths for the tests and the benchmark.
"""

from loadcore.zones.fitting import MANIFEST, TIMING, ZoneFit, ZonesResult, fit_zones, run_stamp
from loadcore.zones.histories import (
    SYSTEM,
    ZoneHistories,
    ZoneLayout,
    read_zone_histories,
    zone_file_stem,
)
from loadcore.zones.runner import ClusterChoice, parse_cluster

__all__ = [
    "MANIFEST",
    "SYSTEM",
    "TIMING",
    "ClusterChoice",
    "ZoneFit",
    "ZoneHistories",
    "ZoneLayout",
    "ZonesResult",
    "fit_zones",
    "parse_cluster",
    "read_zone_histories",
    "run_stamp",
    "zone_file_stem",
]
