"""Shared session state, cached loaders and small display helpers for every page.

The session-state keys are documented at the top of ``app/main.py``. Pages read and write them only
through the names defined here, and write a key only after the loadcore call that produces the new
value has succeeded, so a bad input never replaces a good history, model or scenario.
"""

from __future__ import annotations

import hashlib
import json
import os
from collections.abc import Callable, Mapping
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
import streamlit as st

from loadcore import units
from loadcore.calendar import CalendarSpec
from loadcore.errors import HistoryError, LoadcoreError

REPO_ROOT = Path(__file__).resolve().parent.parent
DEMO_HISTORY = REPO_ROOT / "demo_data" / "history.csv"
DEMO_MODEL = REPO_ROOT / "demo_data" / "demo_model.json"
HISTORY_ENV = "LOADCORE_HISTORY"

# Session-state keys (see app/main.py for what each holds).
HISTORY = "history"
HISTORY_SOURCE = "history_source"
CALENDAR = "calendar_spec"
FIT_SETTINGS = "fit_settings"
MODEL = "model"
SCENARIOS = "scenarios"
FORECASTS = "forecasts"
TEMP_UNIT = "temp_unit"
MEETING = "meeting_view"
ENSEMBLE = "ensemble"
BACKTEST = "backtest"

LEVELS = (80, 95)

# The team's threshold for the public-safety note on hot scenarios (common practice, no source:
# daily highs of 38 °C and above are where heat-health warnings are usually issued).
HEAT_HEALTH_C = 38.0

CAUTION = (
    "loadcore is a planning aid, not an operating or reliability-compliance tool. Defer to the "
    "system operator's procedures, local reliability standards and licensed engineering judgement."
)
INTERNAL_ERROR = (
    "Something went wrong on this page. That is a fault in loadcore, not in your input; your "
    "history, model and scenarios are unchanged. Please report it (the server log has the details)."
)
HEAT_NOTE = (
    "Public safety: this scenario has days at or above {limit} with highs up to {peak}. Heat of this "
    "kind brings a risk of heat-related illness; check the operator's emergency procedures and the "
    "local heat-health plan."
)


# --------------------------------------------------------------------------------------------
# Loading the demo data and starting a session
# --------------------------------------------------------------------------------------------


@st.cache_resource(show_spinner="Reading the demo history...")
def demo_history():
    """The demo history (demo_data/history.csv) read with the default settings."""
    from loadcore.history import read_history

    return read_history(DEMO_HISTORY)


@st.cache_resource(show_spinner="Loading the pre-fitted demo model...")
def demo_model(history_fingerprint: str):
    """The pre-fitted demo model when demo_data/demo_model.json exists and matches the history.

    Returns None when the file is missing, unreadable or was fitted on other data.
    """
    if not DEMO_MODEL.exists():
        return None
    from loadcore.model import load_model

    try:
        model = load_model(DEMO_MODEL)
    except LoadcoreError:
        return None
    if model.history.fingerprint != history_fingerprint:
        return None
    return model


@st.cache_resource(show_spinner="Reading the history file...")
def file_history(path: str):
    """The history file named by the LOADCORE_HISTORY environment variable (``loadcore app
    --history FILE``), read with the default settings."""
    from loadcore.history import read_history

    return read_history(path)


DEMO_SOURCE = "demo data (Calder Basin Power & Light)"


def init_state() -> None:
    """Fill in the session's defaults: the demo history (or the file from ``loadcore app
    --history``), its calendar, and the pre-fitted demo model when it matches."""
    state = st.session_state
    if HISTORY not in state:
        chosen = os.environ.get(HISTORY_ENV, "").strip()
        history = None
        if chosen:
            try:
                history = file_history(chosen)
                state[HISTORY_SOURCE] = f"file {Path(chosen).name}"
            except LoadcoreError as exc:
                show_error(exc, f"{chosen} could not be used; the demo data is loaded instead")
        if history is None:
            history = demo_history()
            state[HISTORY_SOURCE] = DEMO_SOURCE
        state[HISTORY] = history
        if MODEL not in state:
            model = demo_model(history.fingerprint)
            if model is not None:
                state[MODEL] = model
    fitted = state.get(MODEL)
    if fitted is not None:
        state.setdefault(FIT_SETTINGS, fitted.settings)
        state.setdefault(CALENDAR, fitted.settings.calendar)
    state.setdefault(HISTORY_SOURCE, DEMO_SOURCE)
    if CALENDAR not in state:
        state[CALENDAR] = CalendarSpec()
    if FIT_SETTINGS not in state:
        from loadcore.model import FitSettings

        state[FIT_SETTINGS] = FitSettings(calendar=state[CALENDAR])
    state.setdefault(MODEL, None)
    state.setdefault(SCENARIOS, {})
    state.setdefault(FORECASTS, {})
    state.setdefault(TEMP_UNIT, "C")
    state.setdefault(MEETING, False)


def history():
    """The session's current History."""
    return st.session_state[HISTORY]


def model():
    """The session's fitted model, or None."""
    return st.session_state.get(MODEL)


def scenarios() -> dict:
    """The session's scenario set, name -> Scenario (insertion order is the display order)."""
    return st.session_state[SCENARIOS]


# --------------------------------------------------------------------------------------------
# Fitting: one shared store keyed by the data fingerprint and the settings
# --------------------------------------------------------------------------------------------

FITS_KEPT = 4


@st.cache_resource(show_spinner=False)
def _fitted_store() -> dict:
    """Fitted models shared by every session, (history fingerprint, settings key) -> model.

    A store rather than a cached fit, so the fit can report progress to the page (a cached
    function may not update an element made outside it).
    """
    return {}


def fit_model(history, settings, progress=None):
    """``loadcore.model.fit(history, settings, progress)``, reused for the same data and settings."""
    from loadcore.model import fit

    store = _fitted_store()
    key = (history.fingerprint, settings.key())
    if key in store:
        return store[key]
    fitted = fit(history, settings, progress=progress)
    store[key] = fitted
    while len(store) > FITS_KEPT:
        store.pop(next(iter(store)))
    return fitted


# --------------------------------------------------------------------------------------------
# Forecasts: cached per (model, scenario) so a redraw never recomputes an unchanged forecast
# --------------------------------------------------------------------------------------------


def model_key(fitted) -> str:
    """A text key that changes whenever the fitted model changes."""
    return f"{fitted.fingerprint}|{fitted.order}|{fitted.seasonal_order}|{fitted.aicc!r}"


def scenario_key(scenario) -> str:
    """A sha256 over the scenario's name, dates, temperatures and day types."""
    digest = hashlib.sha256()
    digest.update(str(scenario.name).encode())
    digest.update(pd.DatetimeIndex(scenario.dates).asi8.tobytes())
    digest.update(np.asarray(scenario.temperature_c, dtype=float).tobytes())
    digest.update(json.dumps(list(scenario.day_types or ())).encode())
    return digest.hexdigest()


@st.cache_resource(max_entries=256, show_spinner=False)
def _cached_forecast(_model, _scenario, model_id: str, scenario_id: str, levels: tuple[int, ...]):
    return _model.forecast(_scenario, levels=levels)


def forecast(fitted, scenario, levels: tuple[int, ...] = LEVELS):
    """``fitted.forecast(scenario, levels)``, cached by the model and scenario keys."""
    return _cached_forecast(fitted, scenario, model_key(fitted), scenario_key(scenario), levels)


def forecasts_for_set(fitted) -> dict:
    """Forecast every scenario in the set with ``fitted``; errors are shown and that one skipped.

    The result is also kept in ``st.session_state["forecasts"]``.
    """
    out = {}
    for name, scenario in scenarios().items():
        try:
            out[name] = forecast(fitted, scenario)
        except LoadcoreError as exc:
            st.error(f"Scenario '{name}' cannot be forecast: {exc}")
    st.session_state[FORECASTS] = out
    return out


# --------------------------------------------------------------------------------------------
# Temperature units (°C inside, °F only at the edges)
# --------------------------------------------------------------------------------------------


def temp_unit() -> str:
    """``"C"`` or ``"F"``: the unit the user reads and types temperatures in."""
    return st.session_state.get(TEMP_UNIT, "C")


def unit_symbol(unit: str | None = None) -> str:
    """``"°C"`` or ``"°F"``."""
    return "°F" if (unit or temp_unit()) == "F" else "°C"


def to_display(values_c):
    """Temperatures in °C converted to the display unit (arrays, Series or floats)."""
    return units.to_unit(values_c, temp_unit())


def from_display(values):
    """Temperatures typed in the display unit converted to °C."""
    return units.from_unit(values, temp_unit())


def delta_to_display(delta_c: float) -> float:
    """A temperature difference in °C in the display unit (a °F step is 5/9 of a °C step)."""
    return float(units.delta_to_unit(float(delta_c), temp_unit()))


def delta_from_display(delta: float) -> float:
    """A temperature difference typed in the display unit, in °C."""
    return float(units.delta_from_unit(float(delta), temp_unit()))


def fmt_temp(value_c: float, digits: int = 1) -> str:
    """A temperature in °C as display text, e.g. ``"41.0 °C"`` or ``"105.8 °F"``."""
    return f"{float(to_display(value_c)):.{digits}f} {unit_symbol()}"


def fmt_delta(delta_c: float, digits: int = 1) -> str:
    """A temperature difference in °C as display text."""
    return f"{delta_to_display(delta_c):.{digits}f} {unit_symbol()}"


# --------------------------------------------------------------------------------------------
# Messages
# --------------------------------------------------------------------------------------------


def show_error(exc: LoadcoreError, what: str | None = None) -> None:
    """Show a loadcore error inline (and a history report's errors as a table)."""
    lead = f"{what}: " if what else ""
    st.error(f"{lead}{exc}")
    report = getattr(exc, "report", None) if isinstance(exc, HistoryError) else None
    if report is not None and len(report.issues):
        st.caption(
            "The file has errors, so nothing was changed. Each line below names the row, date or "
            "column and how to fix it; warnings and notes are listed too."
        )
        st.dataframe(report.to_frame(), hide_index=True, width="stretch")


def attempt(call: Callable[[], Any], what: str | None = None) -> tuple[bool, Any]:
    """Run a loadcore call; on a LoadcoreError show it inline and return (False, None)."""
    try:
        return True, call()
    except LoadcoreError as exc:
        show_error(exc, what)
        return False, None


def heat_note(scenario_name: str, temperature_c) -> None:
    """The public-safety note for a scenario with days at or above HEAT_HEALTH_C."""
    temps = np.asarray(temperature_c, dtype=float)
    if temps.size and np.nanmax(temps) >= HEAT_HEALTH_C:
        text = HEAT_NOTE.format(limit=fmt_temp(HEAT_HEALTH_C, 0), peak=fmt_temp(np.nanmax(temps)))
        st.warning(f"**{scenario_name}.** {text}", icon=":material/health_and_safety:")


def out_of_range_lines(forecasts, range_c: tuple[float, float]) -> list[str]:
    """One line per out-of-range day (``loadcore.export.out_of_range_days``): scenario, date,
    temperature and how far outside the fitted range it lies."""
    from loadcore.export import out_of_range_days

    unit = temp_unit()
    table = out_of_range_days(list(forecasts), temp_unit=unit)
    temp_col, by_col = units.temperature_column(unit), units.out_of_range_column(unit)
    low, high = (float(v) for v in range_c)
    lines = []
    for _, row in table.iterrows():
        temp_c = float(units.from_unit(float(row[temp_col]), unit))
        side = "above the hottest" if temp_c > high else "below the coldest"
        lines.append(
            f"{row['scenario']}, {pd.Timestamp(row['date']):%a %Y-%m-%d}: {float(row[temp_col]):.1f} "
            f"{unit_symbol()}, {abs(float(row[by_col])):.1f} {unit_symbol()} {side} day the model "
            "was fitted on"
        )
    return lines


def need_model() -> Any:
    """The fitted model, or stop the page with a pointer to the Model page."""
    fitted = model()
    if fitted is None:
        st.info("No model yet. Fit one on the Model page (or upload a saved model there).")
        st.page_link("pages/model_fit.py", label="Go to the Model page", icon=":material/tune:")
        footer()
        st.stop()
    return fitted


def footer() -> None:
    """The cautions shown at the foot of every page."""
    st.divider()
    st.caption(f":material/info: {CAUTION}")


def as_options(mapping: Mapping[str, str]) -> tuple[list[str], Callable[[str], str]]:
    """Option values and a format function for a selectbox from a value -> label mapping."""
    return list(mapping), lambda value: mapping[value]
