"""One model per zone with the same settings, and the zones folder that keeps them.

A zones folder holds ``<zone>.json`` (a model file, as ``loadcore fit`` writes it) for every
zone that was fitted, ``zones.json`` (the list of zones: error model, AICc, convergence, fitted
temperature range, data fingerprint, or the reason a zone failed) and ``zones-timing.json``
(the seconds each zone took and where the run went). The time taken is kept apart so that
``zones.json`` and the model files are the same bytes however and wherever the zones ran (the
model files carry the run's one time stamp and no wall times).
"""

from __future__ import annotations

import dataclasses
import datetime as dt
import logging
import os
import time
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from loadcore import files, plainjson
from loadcore.errors import InputError, LoadcoreError, clip
from loadcore.history import History
from loadcore.model import FitSettings
from loadcore.zones.histories import ZoneHistories, zone_file_stem
from loadcore.zones.runner import ClusterChoice, Progress, RunReport, run_tasks

log = logging.getLogger(__name__)

#: The zones folder's list of zones.
MANIFEST = "zones.json"
#: The zones folder's timings (kept apart so that the other files are byte-stable).
TIMING = "zones-timing.json"
#: Kind and format of ``zones.json``.
MANIFEST_KIND = "loadcore zones"
MANIFEST_FORMAT = 1


@dataclass(frozen=True)
class ZoneFit:
    """The outcome for one zone.

    Attributes
    ----------
    zone : str
    model_json : str
        The model file's text ("" when the zone failed).
    reason : str
        Why the zone failed ("" when it was fitted).
    seconds : float
        Wall time of the zone's fit (its read and validation not included), s.
    summary : dict
        The zone's row of ``zones.json``.
    """

    zone: str
    model_json: str
    reason: str
    seconds: float
    summary: dict

    @property
    def ok(self) -> bool:
        return not self.reason


@dataclass(frozen=True)
class ZonesResult:
    """Every zone's outcome, in file order, with how the run went."""

    fits: tuple[ZoneFit, ...]
    run: RunReport
    settings: FitSettings
    fitted_at: str

    @property
    def fitted(self) -> tuple[str, ...]:
        return tuple(f.zone for f in self.fits if f.ok)

    @property
    def failed(self) -> dict[str, str]:
        return {f.zone: f.reason for f in self.fits if not f.ok}

    def manifest(self) -> dict:
        """The content of ``zones.json`` (no times taken: byte-stable)."""
        return {
            "kind": MANIFEST_KIND,
            "format_version": MANIFEST_FORMAT,
            "fitted_at": self.fitted_at,
            "settings": self.settings.to_dict(),
            "zones": [f.summary for f in self.fits],
        }

    def timing(self) -> dict:
        """The content of ``zones-timing.json``."""
        return {
            "ran": self.run.where,
            "workers": self.run.workers,
            "wall_seconds": round(self.run.wall_seconds, 3),
            "zone_seconds": {f.zone: round(f.seconds, 3) for f in self.fits},
        }

    def write(self, folder: str | os.PathLike[str]) -> Path:
        """Write the zones folder: every fitted zone's model file, ``zones.json``,
        ``zones-timing.json`` (each all at once, :func:`loadcore.files.write_atomic`)."""
        out = Path(folder)
        if out.exists() and not out.is_dir():
            raise InputError(
                "The zones output is a file, not a folder", where=str(out), fix="Give a folder"
            )
        out.mkdir(parents=True, exist_ok=True)
        for f in self.fits:
            if f.ok:
                files.write_atomic(out / f.summary["file"], f.model_json, what="zone model file")
        files.write_atomic(
            out / MANIFEST, plainjson.dumps(self.manifest(), indent=1), what=MANIFEST
        )
        files.write_atomic(out / TIMING, plainjson.dumps(self.timing(), indent=1), what=TIMING)
        return out


def run_stamp(now: dt.datetime | None = None) -> str:
    """The time a zones run is stamped with, UTC ISO seconds: ``SOURCE_DATE_EPOCH`` when set
    (the reproducible-builds convention, so two runs can write the same bytes), else now."""
    epoch = os.environ.get("SOURCE_DATE_EPOCH", "").strip()
    if epoch.isdigit():
        now = dt.datetime.fromtimestamp(int(epoch), dt.UTC)
    now = now or dt.datetime.now(dt.UTC)
    return now.isoformat(timespec="seconds")


def _summary(zone: str, model: Any) -> dict:
    low, high = model.temperature_range_c
    return {
        "zone": zone,
        "file": zone_file_stem(zone) + ".json",
        "status": "fitted",
        "error_model": model.orders.describe(),
        "errors": model.orders.to_dict(),
        "aicc": float(model.aicc),
        "converged": bool(model.converged),
        "temperature_range_c": [round(low, 2), round(high, 2)],
        "data_fingerprint": model.data_fingerprint,
        "days": int(len(model.history.frame)),
        "history_start": model.history.start,
        "history_end": model.history_end,
    }


def _failed(zone: str, reason: str) -> dict:
    return {"zone": zone, "file": "", "status": "failed", "reason": clip(reason, 600)}


def fit_one_zone(task: tuple[str, History, FitSettings, str]) -> ZoneFit:
    """Fit one zone (the task a worker runs): the model file's text and its summary, or the
    reason it failed. Never raises for a problem of the zone's data."""
    from loadcore.model import fit

    zone, history, settings, stamp = task
    started = time.perf_counter()
    try:
        model = fit(history, settings)
        # One stamp for the run and no wall times inside the model file (they are in
        # zones-timing.json), so that the file is the same bytes wherever the zone ran.
        comparison = getattr(model, "response_comparison", None)
        changes: dict[str, Any] = {"fitted_at": stamp}
        if comparison is not None and getattr(comparison, "seconds", 0.0):
            changes["response_comparison"] = dataclasses.replace(comparison, seconds=0.0)
        model = dataclasses.replace(model, **changes)
        text = model.to_json()
    except LoadcoreError as exc:
        return ZoneFit(zone, "", str(exc), time.perf_counter() - started, _failed(zone, str(exc)))
    except (ArithmeticError, ValueError, MemoryError, np.linalg.LinAlgError) as exc:
        reason = f"The fit stopped: {type(exc).__name__}: {clip(exc)}"
        log.warning("zone %s: %s", zone, reason)
        return ZoneFit(zone, "", reason, time.perf_counter() - started, _failed(zone, reason))
    return ZoneFit(zone, text, "", time.perf_counter() - started, _summary(zone, model))


def fit_zones(
    zones: ZoneHistories | Mapping[str, History],
    settings: FitSettings = FitSettings(),  # noqa: B008
    *,
    cluster: ClusterChoice = ClusterChoice("none"),  # noqa: B008
    progress: Progress | None = None,
    fitted_at: str | None = None,
) -> ZonesResult:
    """Fit one model per zone with the same settings.

    Parameters
    ----------
    zones : ZoneHistories or mapping of zone -> History
        The zones; in a :class:`ZoneHistories`, the zones whose history failed validation are
        reported as failed with their first error.
    settings : FitSettings
        The one set of settings; each zone's fit runs its order search in one process
        (``workers=1``), since the zones are the parallel work.
    cluster : ClusterChoice
        Where the fits run (:func:`loadcore.zones.runner.parse_cluster`); this process by
        default.
    progress : callable, optional
        ``progress(done, total, zone)`` after every zone.
    fitted_at : str, optional
        The stamp written into every model file (:func:`run_stamp` when not given); one stamp
        for the run, so the files do not depend on when each zone finished.

    Returns
    -------
    ZonesResult
        A zone that fails is reported with its reason; the others are fitted all the same.
    """
    if isinstance(zones, ZoneHistories):
        order = zones.zones
        histories = zones.histories
        failures = dict(zones.failures)
    else:
        order = tuple(zones)
        histories = dict(zones)
        failures = {}
    settings = dataclasses.replace(settings, workers=1)
    stamp = fitted_at or run_stamp()
    tasks = [(z, histories[z], settings, stamp) for z in order if z in histories]
    results, run = run_tasks(
        fit_one_zone, tasks, cluster, progress=progress, label=lambda task: task[0]
    )
    by_zone: dict[str, ZoneFit] = {}
    for task, result in zip(tasks, results, strict=True):
        zone = task[0]
        if isinstance(result, ZoneFit):
            by_zone[zone] = result
        else:  # the task was lost (a worker died): the zone fails, the others stand
            reason = f"The zone's task was lost on the cluster ({clip(result)})"
            by_zone[zone] = ZoneFit(zone, "", reason, 0.0, _failed(zone, reason))
    for zone, reason in failures.items():
        by_zone[zone] = ZoneFit(zone, "", reason, 0.0, _failed(zone, reason))
    fits = tuple(by_zone[z] for z in order)
    return ZonesResult(fits=fits, run=run, settings=settings, fitted_at=stamp)
