"""What the library stores and gives back: entries to save, saved scenarios, list lines.

:func:`entry_from_forecast` builds a :class:`ScenarioEntry` from a forecast, its scenario and the
model that made it, keeping the last weeks of demand and a model summary so that a brief can be
drawn later without the model file. :func:`is_current` tells whether a saved forecast was made
with a given model; :func:`settings_to_dict` is the plain-JSON form its comparison uses.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field, fields
from typing import Any

import pandas as pd

from loadcore import levels as interval_levels
from loadcore import plainjson, texts
from loadcore.export import summarise_model

# Recorded demand kept with each save so a brief can be drawn without the model file, days.
HISTORY_TAIL_DAYS = 56


@dataclass(frozen=True, eq=False)
class ScenarioEntry:
    """What a save writes: a scenario, the model it was forecast with, and the forecast.

    Parameters
    ----------
    name : str
        Library name (unique, ignoring ASCII case; at most 120 characters, no control characters).
    definition : dict
        The scenario definition, as :meth:`loadcore.scenario.Scenario.to_dict` writes it.
    model_fingerprint : str
        ``FittedModel.fingerprint`` of the model used.
    model_settings : dict
        The model's settings as plain JSON (:func:`settings_to_dict`).
    forecast : pandas.DataFrame
        The forecast table (``Forecast.frame``): ``date``, ``temperature_c`` (°C), ``day_type``,
        ``mean``, ``median``, ``lower_L``/``upper_L`` (demand unit), ``out_of_range``,
        ``out_of_range_by_c`` (°C) and any further columns of plain values.
    note, author : str
        Free text.
    context : dict
        Extra JSON kept for exports: ``levels``, ``model_summary``, ``history_tail``,
        ``demand_unit``, ``demand_kind``, ``warnings``, ``history_period``.
    """

    name: str
    definition: Mapping[str, Any]
    model_fingerprint: str
    model_settings: Mapping[str, Any]
    forecast: pd.DataFrame
    note: str = ""
    author: str = ""
    context: Mapping[str, Any] = field(default_factory=dict)


@dataclass(frozen=True, eq=False)
class StoredForecast:
    """A forecast reloaded from the library; reads like ``loadcore.model.Forecast`` for exports."""

    frame: pd.DataFrame
    levels: tuple[float, ...]
    scenario_name: str
    note: str
    warning_texts: tuple[str, ...] = ()

    temperature_range_c: tuple[float, float] | None = None
    growth_months: float = 0.0

    def warnings(self, temp_unit: str = "C") -> list[str]:
        """The forecast's warnings in ``temp_unit``; the texts saved with it when the saved
        forecast does not record the fitted temperature range (older libraries). A far
        window's growth note is given again from the saved ``growth_months``."""
        if self.temperature_range_c is None or "temperature_c" not in self.frame:
            return list(self.warning_texts)
        out = texts.forecast_warnings(self.frame, self.temperature_range_c, temp_unit)
        if self.growth_months > texts.GROWTH_NOTE_MONTHS:
            out.append(texts.growth_note(self.growth_months))
        return out


@dataclass(frozen=True)
class ScenarioListing:
    """One line of the library's list: everything but the heavy JSON."""

    name: str
    note: str
    author: str
    created_utc: str
    changed_utc: str
    version: int
    first_date: str
    last_date: str
    days: int
    model_fingerprint: str

    def to_dict(self) -> dict[str, Any]:
        """Plain JSON-friendly fields."""
        return {f.name: getattr(self, f.name) for f in fields(self)}


@dataclass(frozen=True)
class DamagedRow:
    """A stored row too damaged to list: its name (or row number) and what is wrong."""

    name: str
    reason: str


@dataclass(frozen=True)
class LibraryListing:
    """The library's list: the readable rows, and the damaged ones that were skipped."""

    items: tuple[ScenarioListing, ...]
    damaged: tuple[DamagedRow, ...] = ()


@dataclass(frozen=True, eq=False)
class SavedScenario:
    """A scenario as stored in the library, at one version.

    ``version`` is what an edit must quote as ``expected_version``. Times are UTC ISO 8601 strings.
    """

    name: str
    note: str
    author: str
    created_utc: str
    changed_utc: str
    version: int
    definition: Mapping[str, Any]
    model_fingerprint: str
    model_settings: Mapping[str, Any]
    forecast: pd.DataFrame
    context: Mapping[str, Any]

    @property
    def levels(self) -> tuple[float, ...]:
        """Interval levels of the stored forecast, percent."""
        levels = self.context.get("levels")
        if levels:
            return interval_levels.parse_levels(levels, where="saved forecast levels")
        return interval_levels.levels_in_columns(self.forecast.columns)

    def to_forecast(self) -> StoredForecast:
        """The stored forecast in the shape export functions read."""
        return StoredForecast(
            frame=self.forecast.copy(),
            levels=self.levels,
            scenario_name=self.name,
            note=self.note,
            warning_texts=tuple(str(w) for w in self.context.get("warnings", ()) or ()),
            temperature_range_c=_range_or_none(self.context.get("temperature_range_c")),
            growth_months=_months_or_zero(self.context.get("growth_months")),
        )

    def scenario(self):
        """Rebuild the :class:`loadcore.scenario.Scenario`, named as in the library."""
        from loadcore.scenario import Scenario

        definition = dict(self.definition)
        definition["name"] = self.name
        return Scenario.from_dict(definition)

    def history_tail(self) -> pd.DataFrame:
        """Recorded demand kept with the save: ``demand`` on a ``date`` index (may be empty)."""
        records = self.context.get("history_tail") or []
        frame = pd.DataFrame.from_records(records, columns=["date", "demand"])
        frame["date"] = pd.to_datetime(frame["date"])
        frame["demand"] = pd.to_numeric(frame["demand"], errors="coerce").astype(float)
        return frame.set_index("date")


def _months_or_zero(value: Any) -> float:
    try:
        months = float(value)
    except (TypeError, ValueError):
        return 0.0
    return months if math.isfinite(months) and 0.0 <= months <= 1000.0 else 0.0


def _range_or_none(value: Any) -> tuple[float, float] | None:
    try:
        low, high = (float(v) for v in value)
    except (TypeError, ValueError):
        return None
    return (low, high) if math.isfinite(low) and math.isfinite(high) else None


def settings_to_dict(settings: Any) -> dict[str, Any]:
    """Model settings as plain JSON (dataclasses become dicts, tuples lists, dates ISO strings).

    Parameters
    ----------
    settings : dataclass or mapping
        ``FittedModel.settings`` (a ``FitSettings``) or an already-plain dict.

    Returns
    -------
    dict
        A JSON round-trip of the settings, so that a stored copy compares equal to a fresh one.
    """
    to_dict = getattr(settings, "to_dict", None)
    if callable(to_dict) and not isinstance(settings, Mapping):
        settings = to_dict()
    plain = plainjson.to_plain(settings, nonfinite="error", where="model settings")
    if not isinstance(plain, dict):
        plain = {"value": plain}
    return plainjson.loads(plainjson.dumps(plain, sort_keys=True), what="model settings")


def entry_from_forecast(
    forecast: Any,
    *,
    scenario: Any,
    model: Any,
    name: str | None = None,
    note: str | None = None,
    author: str = "",
    history_days: int = HISTORY_TAIL_DAYS,
) -> ScenarioEntry:
    """A :class:`ScenarioEntry` from a forecast, its scenario and the model that made it.

    Parameters
    ----------
    forecast : loadcore.model.Forecast
        The forecast to store (its ``frame``, ``levels`` and ``warnings()``).
    scenario : loadcore.scenario.Scenario
        The scenario forecast.
    model : loadcore.model.FittedModel
        The model used (its ``fingerprint``, ``settings`` and ``history``).
    name : str, optional
        Library name; default the scenario's name.
    note : str, optional
        Default the forecast's note.
    author : str
        Who saved it.
    history_days : int, default 56
        Days of recorded demand kept with the save for the meeting brief.
    """
    history = getattr(model, "history", None)
    frame = getattr(history, "frame", None)
    tail: list[dict[str, Any]] = []
    period: list[str] = []
    if isinstance(frame, pd.DataFrame) and "demand" in frame.columns and len(frame):
        demand = frame["demand"].tail(max(int(history_days), 0))
        tail = [
            {
                "date": pd.Timestamp(d).strftime("%Y-%m-%d"),
                "demand": plainjson.to_plain(v, nonfinite="error", where="history"),
            }
            for d, v in demand.items()
        ]
        period = [
            pd.Timestamp(frame.index.min()).strftime("%Y-%m-%d"),
            pd.Timestamp(frame.index.max()).strftime("%Y-%m-%d"),
        ]
    hist_settings = getattr(history, "settings", None)
    warnings_fn = getattr(forecast, "warnings", None)
    warnings = [str(w) for w in (warnings_fn() if callable(warnings_fn) else []) or []]
    context = {
        "levels": [float(x) for x in (getattr(forecast, "levels", ()) or ())],
        "model_summary": summarise_model(model),
        "history_tail": tail,
        "history_period": period,
        "demand_unit": str(
            getattr(forecast, "demand_unit", None) or getattr(hist_settings, "demand_unit", "MW")
        ),
        "demand_kind": str(getattr(hist_settings, "subdaily_demand", "peak")),
        "warnings": warnings,
        "temperature_range_c": list(getattr(forecast, "temperature_range_c", ()) or ()),
        "growth_months": float(getattr(forecast, "growth_months", 0.0) or 0.0),
    }
    return ScenarioEntry(
        name=name if name is not None else str(getattr(scenario, "name", "")),
        definition=scenario.to_dict(),
        model_fingerprint=str(getattr(model, "fingerprint", "")),
        model_settings=settings_to_dict(getattr(model, "settings", {})),
        forecast=forecast.frame,
        note=str(getattr(forecast, "note", "") or "") if note is None else note,
        author=author,
        context=context,
    )


def is_current(saved: SavedScenario, model: Any) -> bool:
    """True when ``saved`` was forecast with this model (same fingerprint and settings).

    The app uses it to offer a re-forecast when the model has changed.
    """
    fingerprint = getattr(model, "fingerprint", None)
    if fingerprint is None or str(fingerprint) != saved.model_fingerprint:
        return False
    return settings_to_dict(getattr(model, "settings", {})) == settings_to_dict(
        saved.model_settings
    )
