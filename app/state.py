"""The session: its keys, and every transition between its states.

Not split (over 800 lines), on purpose: the project's rule is that one module owns every session key
and every transition, so that a page can never change the session behind the others' backs.

This module owns ``st.session_state``. Pages read the session through the getters below and change
it only through the transition functions (``use_history``, ``use_model``, ``put_scenario``...);
they never write a session key of their own (their widgets' keys are theirs). A transition is
called only after the loadcore call producing the new value has succeeded, so a bad input never
replaces a good history, model or scenario.

Session keys (the only ones shared between pages):

``history``
    ``loadcore.history.History`` in use (the demo history until the user uploads a valid file).
``history_source``
    Text naming where the history came from (shown on the pages).
``calendar_spec``
    ``loadcore.calendar.CalendarSpec`` for the next fit: public holidays and day-type scheme
    (chosen on the Model page), special periods (History page). After a fit or an upload it is
    the model's calendar.
``fit_settings``
    ``loadcore.model.FitSettings`` of the model in use (or the defaults).
``model``
    ``loadcore.model.FittedModel`` or None. The pre-fitted demo model when demo_data/demo_model.json
    exists and was fitted on the demo history.
``scenarios``
    dict, scenario name -> ``loadcore.scenario.Scenario``, in the order they were added.
``forecasts``
    dict, scenario name -> ``loadcore.model.Forecast`` for the current model (recomputed, cached;
    :func:`forecasts_for_set` also returns the scenarios the model cannot forecast, and why).
``scenario_kinds``
    dict, scenario name -> how it was made: ``"seasonal_normal"`` (a plain seasonal normal from
    the path tools, the default base of a comparison), ``"built"``, ``"file"`` or ``"library"``.
``library_message``
    The Saved-scenarios page's last save, as text shown once after the page is drawn again
    (:func:`library_saved`); the save also empties the note field for the next one.
``compare_choice``
    :class:`CompareChoice` fields as a dict (``hidden``: names taken off the chart, ``base``,
    ``tail_days``): the one set of choices the Compare page and the meeting view both follow.
    Bound to the Compare page's ``cmp_shown``, ``cmp_base`` and ``cmp_tail`` widgets through
    :func:`sync_compare_widgets` and :func:`compare_chosen`.
``temp_unit``
    ``"C"`` or ``"F"`` (a ``loadcore.units.Unit``): the unit for every temperature typed or shown
    (°C inside). Set through :func:`set_temp_unit`, bound to the sidebar's ``unit_choice`` radio.
``meeting_view``
    bool: the Compare page in its large, control-free form for meetings. Set through
    :func:`set_meeting_view`, bound to the sidebar's ``meeting_choice`` toggle.
``ensemble`` / ``backtest``
    The last weather-ensemble and backtest results with the key of the inputs they were made
    from (:func:`keep_ensemble`, :func:`keep_backtest`).
``typed_temperatures``
    dict, widget key -> ``{"c": value, "unit": unit shown, "put": number shown}``: every
    temperature typed into a temperature input (:func:`typed_temperature`), kept in °C (or as a
    °C difference), so the unit switch converts what the input shows and never the value.
``fit_form_terms``
    The temperature settings the Model page's fit form is to show on its next run (set by
    :func:`switch_response` after the one-click switch of response, applied and removed by
    :func:`sync_fit_form` before the form is drawn).
``day_edits``
    The day-by-day table's edits on the Build-a-scenario page, in °C, for the base path they
    were made on (:func:`day_editor_key`, :func:`day_edits`): they survive the unit switch, which
    gives the table a new widget key.
``scenario_window``
    ``{"start": pandas.Timestamp, "days": int}``: the window the planner is working on (first
    day and length), shared by the scenario builder and the weather ensembles and kept across
    pages (:func:`prepare_window`, :func:`window_typed`, :func:`window_chosen`). A start that
    the model in use does not allow (after a new history) is brought back to the earliest one.
``zones``
    ``{"models": loadcore.zones.folder.ZoneModels, "source": text}`` or absent: the zones opened
    or fitted on the Zones page (:func:`use_zones`); a bad folder or file never replaces them.
"""

from __future__ import annotations

import os
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import streamlit as st

from app import cache
from loadcore import units
from loadcore.calendar import CalendarSpec
from loadcore.errors import LoadcoreError

REPO_ROOT = Path(__file__).resolve().parent.parent
DEMO_HISTORY = REPO_ROOT / "demo_data" / "history.csv"
DEMO_MODEL = REPO_ROOT / "demo_data" / "demo_model.json"
DEMO_OVERRIDES = REPO_ROOT / "demo_data" / "overrides.txt"
HISTORY_ENV = "LOADCORE_HISTORY"
# The HistorySettings of that file as JSON (``loadcore app --history FILE --date-col ...``).
HISTORY_SETTINGS_ENV = "LOADCORE_HISTORY_SETTINGS"

# Session-state keys (documented above).
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
KINDS = "scenario_kinds"
LIBRARY_MESSAGE = "library_message"
COMPARE = "compare_choice"
TYPED = "typed_temperatures"
DAY_EDITS = "day_edits"
FIT_FORM_TERMS = "fit_form_terms"
WINDOW = "scenario_window"
ZONES = "zones"

# Keys of the sidebar widgets bound to ``temp_unit`` and ``meeting_view`` (app/main.py).
UNIT_WIDGET = "unit_choice"
MEETING_WIDGET = "meeting_choice"
# Keys of the Build-a-scenario page's name, source and from-the-set widgets.
NAME_WIDGET = "scn_name"
SOURCE_WIDGET = "scn_source"
FROM_SET_WIDGET = "scn_from_set"
# Keys of the Saved-scenarios page's save form.
LIB_PICK_WIDGET = "lib_pick"
LIB_NAME_WIDGET = "lib_save_name"
LIB_NOTE_WIDGET = "lib_note"
# Keys of the Compare page's widgets bound to ``compare_choice``.
SHOWN_WIDGET = "cmp_shown"
BASE_WIDGET = "cmp_base"
TAIL_WIDGET = "cmp_tail"
# Keys of the window pickers' first-day and length inputs, per page (app/picker.py).
WINDOW_WIDGETS = {"scn": ("scn_start", "scn_days"), "ens": ("ens_start", "ens_days")}
# Days of recorded demand drawn before the scenarios unless the planner chooses otherwise.
DEFAULT_TAIL_DAYS = 56

DEMO_SOURCE = "demo data (Calder Basin Power & Light)"


# --------------------------------------------------------------------------------------------
# Loading the demo data and starting a session
# --------------------------------------------------------------------------------------------


@st.cache_resource(show_spinner="Reading the demo history...")
def demo_history():
    """The demo history (demo_data/history.csv) read with the default settings."""
    from loadcore.history import read_history

    return read_history(DEMO_HISTORY)


@st.cache_resource(show_spinner=False)
def demo_calendar() -> CalendarSpec:
    """The demo's calendar: US holidays and the demo's year-end low-load period
    (demo_data/overrides.txt, written by demo_data/generate.py)."""
    from loadcore.calendar import overrides_from_text

    return CalendarSpec(overrides=overrides_from_text(DEMO_OVERRIDES.read_text(encoding="utf-8")))


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
    if model.settings.calendar != demo_calendar():  # fitted without the year-end period
        return None
    return model


@st.cache_resource(show_spinner="Reading the history file...")
def file_history(path: str, settings_json: str = ""):
    """The history file named by the LOADCORE_HISTORY environment variable (``loadcore app
    --history FILE``), read with the settings ``loadcore app`` passed as JSON (its history
    options, as ``fit`` takes them; the defaults when there are none)."""
    from loadcore import plainjson
    from loadcore.history import HistorySettings, read_history

    given = plainjson.loads(settings_json, what="history settings") if settings_json else {}
    return read_history(path, HistorySettings(**given))


def init_state() -> list[tuple[LoadcoreError, str]]:
    """Fill in the session's defaults: the demo history (or the file from ``loadcore app
    --history``), its calendar, and the pre-fitted demo model when it matches.

    Returns
    -------
    list of (LoadcoreError, str)
        What went wrong on the way and what it meant, for the caller to show (empty when all
        went well; this module draws nothing).
    """
    problems: list[tuple[LoadcoreError, str]] = []
    state = st.session_state
    if HISTORY not in state:
        chosen = os.environ.get(HISTORY_ENV, "").strip()
        history = None
        if chosen:
            try:
                history = file_history(chosen, os.environ.get(HISTORY_SETTINGS_ENV, ""))
                state[HISTORY_SOURCE] = f"file {Path(chosen).name}"
            except LoadcoreError as exc:
                problems.append(
                    (exc, f"{chosen} could not be used; the demo data is loaded instead")
                )
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
        state[CALENDAR] = demo_calendar() if using_demo_data() else CalendarSpec()
    if FIT_SETTINGS not in state:
        from loadcore.model import FitSettings

        state[FIT_SETTINGS] = FitSettings(calendar=state[CALENDAR])
    state.setdefault(MODEL, None)
    state.setdefault(SCENARIOS, {})
    state.setdefault(FORECASTS, {})
    state.setdefault(TEMP_UNIT, "C")
    state.setdefault(MEETING, False)
    return problems


# --------------------------------------------------------------------------------------------
# Reading the session
# --------------------------------------------------------------------------------------------


def history():
    """The session's current History."""
    return st.session_state[HISTORY]


def history_source() -> str:
    """Where the history in use came from, in words."""
    return str(st.session_state.get(HISTORY_SOURCE, DEMO_SOURCE))


def using_demo_data() -> bool:
    """True while the history in use is the demo data."""
    return history_source() == DEMO_SOURCE


def model():
    """The session's fitted model, or None."""
    return st.session_state.get(MODEL)


def fit_settings():
    """The FitSettings of the model in use (or the defaults)."""
    return st.session_state[FIT_SETTINGS]


def calendar() -> CalendarSpec:
    """The calendar the next fit will use (holidays, scheme, special periods)."""
    return st.session_state[CALENDAR]


def calendar_in_use() -> CalendarSpec:
    """The calendar that gives the day types shown: the model's when a model is in use (that
    is what its forecasts use), else the session's calendar for the next fit."""
    fitted = model()
    return fitted.settings.calendar if fitted is not None else calendar()


def scenarios() -> dict:
    """The session's scenario set, name -> Scenario (insertion order is the display order).

    A read-only view for pages: change the set with :func:`put_scenario` and
    :func:`remove_scenarios`.
    """
    return dict(st.session_state[SCENARIOS])


def temp_unit() -> units.Unit:
    """``"C"`` or ``"F"``: the unit the user reads and types temperatures in."""
    return st.session_state.get(TEMP_UNIT, "C")


def meeting_view() -> bool:
    """True while the Compare page is shown in its meeting form."""
    return bool(st.session_state.get(MEETING, False))


# --------------------------------------------------------------------------------------------
# Transitions: the only writers of the session keys
# --------------------------------------------------------------------------------------------


def use_history(new, source: str) -> None:
    """Use the History ``new`` (read successfully from ``source``, shown in words)."""
    st.session_state[HISTORY] = new
    st.session_state[HISTORY_SOURCE] = str(source)


def use_demo_history() -> None:
    """Go back to the demo history, with the demo's calendar for the next fit."""
    use_history(demo_history(), DEMO_SOURCE)
    st.session_state[CALENDAR] = demo_calendar()


def use_calendar(spec: CalendarSpec) -> None:
    """Use ``spec`` for the next fit (the model in use keeps its own calendar)."""
    if not isinstance(spec, CalendarSpec):
        raise TypeError(f"expected a CalendarSpec, got {type(spec).__name__}")
    st.session_state[CALENDAR] = spec


def use_model(fitted, *, source: str | None = None) -> None:
    """Use a fitted or uploaded model: its settings and calendar become the session's.

    Parameters
    ----------
    fitted : loadcore.model.FittedModel
        The model.
    source : str, optional
        For an uploaded model, the file name. When the model was fitted on another history
        than the one in use, its own (embedded) history is used from then on.
    """
    st.session_state[MODEL] = fitted
    st.session_state[FIT_SETTINGS] = fitted.settings
    st.session_state[CALENDAR] = fitted.settings.calendar
    if source is not None and fitted.history.fingerprint != history().fingerprint:
        use_history(fitted.history, f"the history saved in {source}")


def put_scenario(scenario, *, kind: str = "built") -> bool:
    """Add ``scenario`` to the set, or replace the one of the same name; True if it replaced.

    ``kind`` says how it was made (``"seasonal_normal"``, ``"built"``, ``"file"``,
    ``"library"``); a plain seasonal normal is the default base of a comparison.
    """
    current = dict(st.session_state[SCENARIOS])
    replaced = scenario.name in current
    current[scenario.name] = scenario
    st.session_state[SCENARIOS] = current
    kinds = dict(st.session_state.get(KINDS, {}))
    kinds[scenario.name] = str(kind)
    st.session_state[KINDS] = kinds
    return replaced


def remove_scenarios(names: Iterable[str]) -> None:
    """Remove the named scenarios from the set (unknown names are ignored)."""
    drop = set(names)
    st.session_state[SCENARIOS] = {
        name: scenario for name, scenario in st.session_state[SCENARIOS].items() if name not in drop
    }
    st.session_state[KINDS] = {
        name: kind for name, kind in st.session_state.get(KINDS, {}).items() if name not in drop
    }


def move_scenarios(moved: Iterable[Any]) -> None:
    """Put moved scenarios (same names, new dates) in place of the old ones, order kept."""
    new = {scenario.name: scenario for scenario in moved}
    st.session_state[SCENARIOS] = {
        name: new.get(name, scenario) for name, scenario in st.session_state[SCENARIOS].items()
    }


def set_temp_unit(unit: Any) -> None:
    """Show and read temperatures in ``unit`` (parsed by loadcore.units: "C" or "F")."""
    st.session_state[TEMP_UNIT] = units.parse_unit(unit)


def set_meeting_view(on: bool) -> None:
    """Turn the meeting view on or off."""
    st.session_state[MEETING] = bool(on)


def sync_sidebar_widgets() -> None:
    """Show the session's unit and meeting view in the sidebar widgets (before they are drawn),
    so a change made elsewhere (the Compare page's "Leave the meeting view") shows there too."""
    st.session_state[UNIT_WIDGET] = temp_unit()
    st.session_state[MEETING_WIDGET] = meeting_view()


def unit_chosen() -> None:
    """Callback of the sidebar's unit radio."""
    set_temp_unit(st.session_state[UNIT_WIDGET])


def meeting_chosen() -> None:
    """Callback of the sidebar's meeting-view toggle."""
    set_meeting_view(st.session_state[MEETING_WIDGET])


def keep_ensemble(fitted, result) -> None:
    """Keep a weather-ensemble result made with ``fitted``."""
    st.session_state[ENSEMBLE] = {"model": cache.model_key(fitted), "result": result}


def kept_ensemble(fitted):
    """The kept ensemble result when it was made with ``fitted``, else None."""
    kept = st.session_state.get(ENSEMBLE)
    return kept["result"] if kept and kept["model"] == cache.model_key(fitted) else None


def _backtest_key(hist, settings) -> tuple[str, str]:
    return (hist.fingerprint, repr(settings))


def keep_backtest(hist, settings, result) -> None:
    """Keep a backtest result made on ``hist`` with ``settings``."""
    st.session_state[BACKTEST] = {"key": _backtest_key(hist, settings), "result": result}


def kept_backtest(hist, settings):
    """The kept backtest result when it was made on ``hist`` with ``settings``, else None."""
    kept = st.session_state.get(BACKTEST)
    return kept["result"] if kept and kept["key"] == _backtest_key(hist, settings) else None


# --------------------------------------------------------------------------------------------
# The set's forecasts (cached in app/cache.py), kept for the pages that read them
# --------------------------------------------------------------------------------------------


def forecasts_for_set(fitted) -> tuple[dict, dict]:
    """Forecast every scenario in the set with ``fitted`` (cached in app/cache.py).

    Returns
    -------
    (dict, dict)
        Scenario name -> Forecast for those the model can forecast (also kept in
        ``st.session_state["forecasts"]``), and name -> LoadcoreError for the others (a window
        that starts before the model's history ends, a day type the model does not know...).
    """
    out, problems = {}, {}
    for name, scenario in scenarios().items():
        try:
            out[name] = cache.forecast(fitted, scenario)
        except LoadcoreError as exc:
            problems[name] = exc
    st.session_state[FORECASTS] = out
    return out, problems


# --------------------------------------------------------------------------------------------
# The Compare page's choices, shared with the meeting view
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class CompareChoice:
    """What the Compare page and the meeting view show.

    Attributes
    ----------
    shown : tuple of str
        Scenarios on the chart, in the set's order (every forecast one unless taken off).
    base : str or None
        The scenario the others are compared with (one of ``shown``; None when nothing is shown).
    tail_days : int
        Days of recorded demand drawn before the scenarios.
    """

    shown: tuple[str, ...]
    base: str | None
    tail_days: int


def _default_base(shown: list[str]) -> str | None:
    """The first plain seasonal normal shown, else the first shown whose name says "normal",
    else the first shown."""
    kinds = st.session_state.get(KINDS, {})
    for name in shown:
        if kinds.get(name) == "seasonal_normal":
            return name
    for name in shown:
        if "normal" in name.casefold():
            return name
    return shown[0] if shown else None


def compare_choice(names: Iterable[str]) -> CompareChoice:
    """The choices for the forecast scenarios ``names`` (in the set's order)."""
    kept = st.session_state.get(COMPARE, {})
    hidden = set(kept.get("hidden", ()))
    shown = [name for name in names if name not in hidden]
    base = kept.get("base")
    if base not in shown:
        base = _default_base(shown)
    tail = int(kept.get("tail_days", DEFAULT_TAIL_DAYS))
    return CompareChoice(tuple(shown), base, tail)


def sync_compare_widgets(names: Iterable[str]) -> CompareChoice:
    """Show the kept choices in the Compare page's widgets (before they are drawn): the widgets
    forget their values while the meeting view hides them, the choices do not."""
    choice = compare_choice(names)
    st.session_state[SHOWN_WIDGET] = list(choice.shown)
    if choice.base is not None:
        st.session_state[BASE_WIDGET] = choice.base
    st.session_state[TAIL_WIDGET] = choice.tail_days
    return choice


def compare_chosen(names: Iterable[str]) -> None:
    """Callback of the Compare page's widgets: keep what they now show."""
    session = st.session_state
    shown = list(session.get(SHOWN_WIDGET, []))
    kept = dict(session.get(COMPARE, {}))
    kept["hidden"] = [name for name in names if name not in shown]
    if session.get(BASE_WIDGET) in shown:
        kept["base"] = session[BASE_WIDGET]
    kept["tail_days"] = int(session.get(TAIL_WIDGET, DEFAULT_TAIL_DAYS))
    session[COMPARE] = kept


# --------------------------------------------------------------------------------------------
# Temperatures typed in the display unit, kept in °C (the unit switch changes only the display)
# --------------------------------------------------------------------------------------------


def typed_temperature(key: str, default_c: float, *, difference: bool = False) -> float:
    """The °C value behind the temperature input ``key``; call it just before drawing the input.

    What the planner typed is kept in °C (``typed_temperatures``). The input's own value is in
    the unit it was shown in: a value that differs from the one last put there was typed, and
    is read back to °C in that unit once. When the display unit has changed (or the input was
    not on the last page shown), the input is given the kept value in the new unit, rounded to
    0.1 for display only; the value returned stays the one typed. No callback is used, so this
    works for inputs inside a form.

    Parameters
    ----------
    key : str
        The number input's widget key.
    default_c : float
        The value before anything is typed, °C (a °C difference when ``difference``).
    difference : bool, default False
        A temperature difference (a shift, a warming): converted by 1.8, without the 32 offset.

    Returns
    -------
    float
        The temperature (or difference) in °C.
    """
    unit = temp_unit()
    session = st.session_state
    store = session.setdefault(TYPED, {})
    entry = dict(store.get(key) or {"c": float(default_c), "unit": None, "put": None})
    if key in session and entry["unit"] is not None and session[key] != entry["put"]:
        typed = float(session[key])
        back = units.delta_from_unit if difference else units.from_unit
        entry.update(c=float(back(typed, entry["unit"])), put=typed)
    if entry["unit"] != unit or key not in session:
        there = units.delta_to_unit if difference else units.to_unit
        put = round(float(there(entry["c"], unit)), 1)
        session[key] = put
        entry.update(unit=unit, put=put)
    store[key] = entry
    return float(entry["c"])


# --------------------------------------------------------------------------------------------
# The day-by-day table of the scenario builder: edits kept in °C across the unit switch
# --------------------------------------------------------------------------------------------


def day_editor_key(base_id: str) -> str:
    """The widget key of the day-by-day table for the base path ``base_id`` in the display unit.

    The table shows temperatures in the display unit, so each unit has its own widget key; when
    the key changes (the unit was switched), the edits made under the old key are first folded
    into ``day_edits`` in °C, so the new table starts from them. A new base path (other tool
    settings, another file) starts with no edits.
    """
    unit = temp_unit()
    key = f"scn_editor_{base_id}_{unit}"
    edits = st.session_state.get(DAY_EDITS)
    if edits is None or edits["base"] != base_id:
        edits = {"base": base_id, "temps_c": {}, "types": {}, "key": key, "unit": unit}
    elif edits["key"] != key:
        edits = _fold_table_edits(edits)
        edits.update(key=key, unit=unit)
    st.session_state[DAY_EDITS] = edits
    return key


def _table_changes(edits: dict) -> dict[int, dict]:
    """The live edits of the table ``edits["key"]`` (row position -> changed cells)."""
    table = st.session_state.get(edits["key"]) or {}
    rows = table.get("edited_rows", {}) if isinstance(table, Mapping) else {}
    return {int(pos): dict(change) for pos, change in rows.items()}


def _fold_table_edits(edits: dict) -> dict:
    """``edits`` with the live edits of its table added (temperatures converted to °C)."""
    temps = dict(edits["temps_c"])
    types = dict(edits["types"])
    for pos, change in _table_changes(edits).items():
        if "temperature" in change:
            value = change["temperature"]
            temps[pos] = None if value is None else float(units.from_unit(value, edits["unit"]))
        if "day_type" in change:
            types[pos] = change["day_type"]
    return {**edits, "temps_c": temps, "types": types}


def kept_day_edits() -> tuple[dict[int, float | None], dict[int, Any]]:
    """The edits a new table starts from: row -> °C (None for a blank cell), row -> day type."""
    edits = st.session_state.get(DAY_EDITS)
    if edits is None:
        return {}, {}
    return dict(edits["temps_c"]), dict(edits["types"])


def day_edits() -> tuple[dict[int, float | None], dict[int, Any]]:
    """Every edit of the day-by-day table, kept and live, in °C (call after drawing it)."""
    edits = st.session_state.get(DAY_EDITS)
    if edits is None:
        return {}, {}
    folded = _fold_table_edits(edits)
    return folded["temps_c"], folded["types"]


# --------------------------------------------------------------------------------------------
# Names: a scenario started from another gets its own; the library's "Save as" follows its picker
# --------------------------------------------------------------------------------------------


def unique_name(wanted: str) -> str:
    """``wanted``, or ``wanted`` with the next free number (``"Mild (variant 2)"``) when the set
    has it already."""
    taken = set(scenarios())
    if wanted not in taken:
        return wanted
    bracket = wanted.endswith(")")
    stem = wanted[:-1] if bracket else wanted
    number = 2
    while (f"{stem} {number})" if bracket else f"{stem} {number}") in taken:
        number += 1
    return f"{stem} {number})" if bracket else f"{stem} {number}"


def default_builder_name(name: str) -> None:
    """Before the builder's name field is drawn the first time: start it at ``name``."""
    st.session_state.setdefault(NAME_WIDGET, name)


def builder_start_chosen() -> None:
    """Callback of the builder's "Start from" and "Scenario to start from" widgets: starting from
    a scenario in the set names the new one after it (a free name), so adding it never replaces
    the scenario it came from."""
    session = st.session_state
    names = list(scenarios())
    if session.get(SOURCE_WIDGET) != "set" or not names:
        return
    picked = session.get(FROM_SET_WIDGET)
    if picked not in names:
        picked = names[0]
    session[NAME_WIDGET] = unique_name(f"{picked} (variant)")


def library_pick_chosen() -> None:
    """Callback of the library's scenario picker: "Save as" follows it."""
    session = st.session_state
    session[LIB_NAME_WIDGET] = session.get(LIB_PICK_WIDGET, "")


def library_saved(message: str) -> None:
    """After a save to the library: keep ``message`` to show once, and empty the note field
    (:func:`prepare_library_form` does it before the field is drawn again)."""
    st.session_state[LIBRARY_MESSAGE] = str(message)


def prepare_library_form(names: list[str]) -> str | None:
    """Before the save form is drawn: "Save as" holds the picker's name, the note is emptied
    after a save; returns the last save's message once (None when there is none)."""
    session = st.session_state
    if names and session.get(LIB_PICK_WIDGET) not in names:
        session[LIB_PICK_WIDGET] = names[0]
        session[LIB_NAME_WIDGET] = names[0]
    session.setdefault(LIB_NAME_WIDGET, session.get(LIB_PICK_WIDGET, ""))
    message = session.pop(LIBRARY_MESSAGE, None)
    if message is not None:
        session[LIB_NOTE_WIDGET] = ""
    return message


# --------------------------------------------------------------------------------------------
# The History page's upload form: the file's own columns, with loadcore's guesses as defaults
# --------------------------------------------------------------------------------------------

# Widget keys of the History page's column choices and the file's unit, by HistorySettings name.
HISTORY_COLUMN_WIDGETS = {
    "date_col": "history_date_col",
    "demand_col": "history_demand_col",
    "temp_col": "history_temp_col",
    "hour_col": "history_hour_col",
    "temp_min_col": "history_temp_min_col",
}
HISTORY_UNIT_WIDGET = "history_file_unit"
HISTORY_FORM_FILE = "history_form_file"
# The optional columns are guessed but not chosen: a wrong hour column changes the whole file.
OPTIONAL_COLUMNS = ("hour_col", "temp_min_col")


def prepare_history_form(file_id: str, preview) -> None:
    """Before the upload form's choices are drawn: for a new file (``file_id``), start them at
    ``preview``'s guesses (``loadcore.history.preview.FilePreview``); the planner's own choices
    for the same file are kept."""
    session = st.session_state
    if session.get(HISTORY_FORM_FILE) == file_id:
        return
    session[HISTORY_FORM_FILE] = file_id
    columns = list(preview.columns)
    for setting, key in HISTORY_COLUMN_WIDGETS.items():
        guess = preview.guesses.get(setting)
        if setting in OPTIONAL_COLUMNS:
            session[key] = ""
        else:
            session[key] = guess if guess in columns else (columns[0] if columns else "")
    if preview.unit_hint in ("C", "F"):
        session[HISTORY_UNIT_WIDGET] = preview.unit_hint


# --------------------------------------------------------------------------------------------
# The Model page's one-click switch of temperature response
# --------------------------------------------------------------------------------------------

#: The fit form's widgets for the temperature response and its temperatures (TermSpec fields).
FIT_RESPONSE_WIDGET = "fit_response"
FIT_TEMPERATURE_WIDGETS = {
    "reference_temp_c": "fit_ref",
    "heating_base_c": "fit_hdd",
    "cooling_base_c": "fit_cdd",
}


def switch_response(fitted) -> None:
    """Use ``fitted`` (the model refitted with the other temperature response) and have the fit
    form show its temperature settings from the next run on (:func:`sync_fit_form`)."""
    use_model(fitted)
    st.session_state[FIT_FORM_TERMS] = fitted.settings.terms


def sync_fit_form() -> None:
    """Before the Model page's fit form is drawn: after a switch of response, put the new
    response and its temperatures (kept in °C, shown in the display unit) into the form."""
    session = st.session_state
    terms = session.pop(FIT_FORM_TERMS, None)
    if terms is None:
        return
    session[FIT_RESPONSE_WIDGET] = terms.response
    store = session.setdefault(TYPED, {})
    for field, key in FIT_TEMPERATURE_WIDGETS.items():
        store[key] = {"c": float(getattr(terms, field)), "unit": None, "put": None}
        session.pop(key, None)


# --------------------------------------------------------------------------------------------
# The scenario window: its first day and length, shared by the builder and the ensembles
# --------------------------------------------------------------------------------------------


def prepare_window(page: str, first: Any, last: Any, default_days: int, max_days: int) -> None:
    """Before a page's window picker is drawn: show the kept window in its inputs.

    Parameters
    ----------
    page : str
        ``"scn"`` (Build a scenario) or ``"ens"`` (Weather ensembles): which inputs.
    first, last : date-like
        The earliest and latest start the model in use allows
        (``loadcore.scenario.window_limits``); a kept start outside them (after a new history
        and model) is replaced by ``first``.
    default_days : int
        The length before the planner chooses one.
    max_days : int
        The longest window (``loadcore.scenario.MAX_DAYS``); a longer kept length is cut to it.
    """
    import pandas as pd

    start_key, days_key = WINDOW_WIDGETS[page]
    session = st.session_state
    first, last = pd.Timestamp(first).normalize(), pd.Timestamp(last).normalize()
    kept = dict(session.get(WINDOW) or {"start": first, "days": int(default_days)})
    start = pd.Timestamp(kept["start"]).normalize()
    if not first <= start <= last:
        start = first
    days = min(max(int(kept["days"]), 1), int(max_days))
    session[WINDOW] = {"start": start, "days": days}
    session[start_key] = start.date()
    session[days_key] = days


def window() -> tuple[Any, int] | None:
    """The kept window: (first day as a pandas Timestamp, length in days), or None."""
    kept = st.session_state.get(WINDOW)
    return None if kept is None else (kept["start"], int(kept["days"]))


def window_typed(page: str) -> None:
    """Callback of a window picker's first-day and length inputs: keep what they show."""
    import pandas as pd

    start_key, days_key = WINDOW_WIDGETS[page]
    session = st.session_state
    kept = dict(session.get(WINDOW) or {})
    if session.get(start_key) is not None:
        kept["start"] = pd.Timestamp(session[start_key]).normalize()
    if session.get(days_key) is not None:
        kept["days"] = int(session[days_key])
    session[WINDOW] = kept


def window_chosen(start: Any, days: int) -> None:
    """Callback of a quick choice of window (``loadcore.scenario.window_starts``): use its
    first day and suggested length."""
    import pandas as pd

    st.session_state[WINDOW] = {"start": pd.Timestamp(start).normalize(), "days": int(days)}


# --------------------------------------------------------------------------------------------
# The zones of a system (Zones page)
# --------------------------------------------------------------------------------------------


def use_zones(zone_models, source: str) -> None:
    """Use ``zone_models`` (a loaded zones folder) from now on; called only after it loaded."""
    st.session_state[ZONES] = {"models": zone_models, "source": source}


def zones():
    """The zones in use (``ZoneModels``) or None."""
    kept = st.session_state.get(ZONES)
    return kept["models"] if kept else None


def zones_source() -> str:
    """Where the zones in use came from."""
    kept = st.session_state.get(ZONES)
    return kept["source"] if kept else ""
