"""Reading a zones folder back, and the per-zone scenarios of a zones forecast.

A zones folder (:mod:`loadcore.zones.fitting`) is read through its ``zones.json``: every zone
listed as fitted is loaded with :func:`loadcore.model.load_model` and checked against the data
fingerprint the list recorded; zones listed as failed are carried with their reason.

A zones scenario file is read with the one scenario reader
(:func:`loadcore.scenario.read_scenario_csv`): either one temperature column per zone, named by
the zone, or one system-wide column of changes from each zone's own seasonal normal
(:func:`loadcore.scenario.seasonal_normal_path`), in °C or °F differences.
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import pandas as pd

from loadcore import files, plainjson, units
from loadcore.errors import InputError, ModelError, ScenarioError, quote, quote_all
from loadcore.model import FittedModel, load_model
from loadcore.scenario import Scenario, make_scenario, read_scenario_csv, seasonal_normal_path
from loadcore.zones.fitting import MANIFEST, MANIFEST_FORMAT, MANIFEST_KIND


@dataclass(frozen=True)
class ZoneModels:
    """The models of a zones folder.

    Attributes
    ----------
    folder : Path
    models : dict
        Zone -> FittedModel, in the order of ``zones.json``, fitted zones only.
    failed : dict
        Zone -> the reason it was not fitted.
    manifest : dict
        The content of ``zones.json``.
    """

    folder: Path
    models: dict[str, FittedModel]
    failed: dict[str, str] = field(default_factory=dict)
    manifest: dict = field(default_factory=dict)

    @property
    def zones(self) -> tuple[str, ...]:
        return tuple(self.models)

    def history_end(self) -> pd.Timestamp:
        """The last history day every zone shares (they are fitted on the same dates)."""
        ends = {z: m.history_end for z, m in self.models.items()}
        distinct = sorted(set(ends.values()))
        if len(distinct) > 1:
            late = [z for z, e in ends.items() if e == distinct[-1]][:3]
            early = [z for z, e in ends.items() if e == distinct[0]][:3]
            raise ScenarioError(
                f"The zones' histories end on different days ({distinct[0]:%Y-%m-%d} for "
                f"{quote_all(early)}, {distinct[-1]:%Y-%m-%d} for {quote_all(late)})",
                where=str(self.folder),
                fix="Refit the zones on histories that end on the same day",
            )
        return distinct[0]


def load_zone_folder(folder: str | os.PathLike[str]) -> ZoneModels:
    """Load every fitted zone of a zones folder.

    Raises
    ------
    InputError
        When the folder or its ``zones.json`` is missing or is not a zones list.
    ModelError
        When a zone's model file is missing, damaged, or not fitted on the data the list names.
    """
    path = Path(folder)
    if not path.is_dir():
        raise InputError(
            "The zones folder does not exist or is not a folder",
            where=str(path),
            fix="Give the folder written by 'loadcore zones fit'",
        )
    manifest = plainjson.loads(
        files.read_text(path / MANIFEST, what="zones list", limit_mb=50).text, what="zones list"
    )
    if (
        not isinstance(manifest, dict)
        or manifest.get("kind") != MANIFEST_KIND
        or manifest.get("format_version") != MANIFEST_FORMAT
        or not isinstance(manifest.get("zones"), list)
    ):
        raise InputError(
            f"{MANIFEST} is not a zones list written by loadcore",
            where=str(path / MANIFEST),
            fix="Give the folder written by 'loadcore zones fit', or fit the zones again",
        )
    models: dict[str, FittedModel] = {}
    failed: dict[str, str] = {}
    for row in manifest["zones"]:
        if not isinstance(row, dict) or not isinstance(row.get("zone"), str):
            raise InputError(
                f"{MANIFEST} has a damaged zone entry", where=str(path), fix="Fit the zones again"
            )
        zone = row["zone"]
        if row.get("status") != "fitted":
            failed[zone] = str(row.get("reason", "not fitted"))
            continue
        name = str(row.get("file", ""))
        if not name or Path(name).name != name:
            raise InputError(
                f"The zone {quote(zone)} names no model file of this folder",
                where=str(path / MANIFEST),
                fix="Fit the zones again",
            )
        try:
            model = load_model(path / name)
        except ModelError as exc:
            raise ModelError(
                f"The model of zone {quote(zone)} cannot be used: {exc.problem}",
                where=str(path / name),
                fix=exc.fix or "Fit the zones again",
            ) from None
        if model.data_fingerprint != row.get("data_fingerprint"):
            raise ModelError(
                f"The model file of zone {quote(zone)} is not the one {MANIFEST} lists (other "
                "data)",
                where=str(path / name),
                fix="Fit the zones again so that the folder is consistent",
            )
        models[zone] = model
    if not models:
        raise ModelError(
            "The zones folder has no fitted zone",
            where=str(path),
            fix="See the reasons in zones.json and fit again",
        )
    return ZoneModels(path, models, failed, manifest)


def zone_scenarios(
    source: Any,
    zones: ZoneModels,
    *,
    temp_unit: units.Unit = "C",
    as_anomaly: bool = False,
    anomaly_col: str = "temperature",
    date_col: str = "date",
    day_type_col: str = "day_type",
    name: str | None = None,
) -> dict[str, Scenario]:
    """One scenario per zone from a zones scenario file.

    Parameters
    ----------
    source : path, file-like, bytes or CSV text
        The scenario file: a date column, optionally day types, and either one temperature
        column per zone named by the zone (daily maximum in ``temp_unit``), or (``as_anomaly``)
        one column ``anomaly_col`` of changes from each zone's seasonal normal, in degrees of
        ``temp_unit``.
    zones : ZoneModels
    temp_unit : {"C", "F"}
    as_anomaly : bool
    anomaly_col, date_col, day_type_col : str
        Column names.
    name : str, optional
        Scenario name (the file's name by default).

    Raises
    ------
    ScenarioError
        For zone columns missing from the file (all named at once), dates that do not follow
        the zones' histories, anything the scenario reader refuses.
    """
    end = zones.history_end()
    if isinstance(source, (str, os.PathLike)) and "\n" not in str(source):
        data = files.read_bytes(source, what="scenario file")[0]
        name = name or Path(source).stem
    else:
        data = source
    if as_anomaly:
        # The reader checks the column as temperatures on the °C scale (plausible values); the
        # numbers are changes, converted as differences below.
        base = read_scenario_csv(
            data,
            temp_unit="C",
            date_col=date_col,
            temp_col=anomaly_col,
            day_type_col=day_type_col,
            name=name,
            model_end=end,
        )
        change_c = units.delta_from_unit(base.temperature_c, temp_unit)
        out = {}
        for zone, model in zones.models.items():
            normal = seasonal_normal_path(model.history, base.start, base.horizon)
            out[zone] = make_scenario(base.name, normal + change_c, base.day_types, model_end=end)
        return out
    out: dict[str, Scenario] = {}
    missing: list[str] = []
    for zone in zones.models:
        try:
            out[zone] = read_scenario_csv(
                data,
                temp_unit=temp_unit,
                date_col=date_col,
                temp_col=zone,
                day_type_col=day_type_col,
                name=name,
                model_end=end,
            )
        except ScenarioError as exc:
            if "column" in exc.problem.lower() and quote(zone) in exc.problem:
                missing.append(zone)
                continue
            raise
    if missing:
        raise ScenarioError(
            f"The scenario file has no temperature column for zone(s) {quote_all(missing)}",
            where="zones scenario",
            fix="Add one column per zone named by the zone, or give one system-wide column "
            "with --as-anomaly",
        )
    return out
