"""The window picker (issue 10, section 1): a scenario window anywhere in the coming 24 months.

The demo history ends on 29 November 2026, so "next July" is 213 days after it. The builder's and
the ensembles' windows are loadcore's (``loadcore.scenario.window_limits``, ``window_starts``,
``MAX_DAYS``); every path tool builds the same path for a far window as the loadcore call does.
"""

from __future__ import annotations

import pandas as pd
import pytest
from test_app_support import (
    assert_no_exception,
    build_heat_wave_in_app,
    demo_model,
    heat_wave_by_loadcore,
    heat_wave_settings,
    new_app,
    texts,
)

from loadcore.scenario import (
    MAX_DAYS,
    Alignment,
    cold_snap,
    constant_path,
    copy_period,
    copy_same_days,
    make_scenario,
    same_days_source,
    seasonal_normal_path,
    shift_path,
    window_limits,
    window_starts,
)
from loadcore.weather import ensemble_forecast


def _builder():
    return new_app(page="pages/scenario.py", model=demo_model())


def _quick(at, kind: str, page: str = "scn") -> None:
    [b for b in at.button if b.key == f"{page}_window_{kind}"][0].click()
    at.run()


def _choice(kind: str):
    return next(c for c in window_starts(demo_model().history) if c.kind == kind)


def _add(at, name: str):
    at.text_input(key="scn_name").set_value(name)
    at.run()
    assert_no_exception(at)
    assert not texts(at, "error"), texts(at, "error")
    [b for b in at.button if b.label in ("Add to the set", "Replace it in the set")][0].click()
    at.run()
    return at.session_state["scenarios"][name]


def test_the_picker_offers_loadcores_quick_choices_and_limits():
    model = demo_model()
    at = _builder()
    assert_no_exception(at)
    choices = window_starts(model.history)
    labels = [b.label for b in at.button if str(b.key).startswith("scn_window_")]
    assert labels == [c.label for c in choices]
    first, last = window_limits(model.history_end)
    picker = at.date_input(key="scn_start")
    assert picker.value == first.date()
    assert f"{first:%d %b %Y} to {last:%d %b %Y}" in picker.label
    days = at.number_input(key="scn_days")
    assert days.proto.max == MAX_DAYS and str(MAX_DAYS) in days.label
    for choice in choices:
        _quick(at, choice.kind)
        assert_no_exception(at)
        assert at.date_input(key="scn_start").value == choice.start.date()
        assert at.number_input(key="scn_days").value == choice.days
        dates = pd.DatetimeIndex(at.data_editor[0].value["date"])
        assert dates[0] == choice.start and len(dates) == choice.days


def test_a_heat_wave_and_the_seasonal_normal_in_next_july():
    """Issue 10's planner: history to November, a heat wave in next July and that July's
    seasonal normal, both forecast; the July window lies 213 days after the history."""
    model = demo_model()
    july = _choice("hottest_month")
    assert (july.start, july.days) == (pd.Timestamp("2027-07-01"), 31)
    at = _builder()
    _quick(at, "hottest_month")
    at.checkbox(key="scn_hw_on").set_value(False)
    at.run()
    normal = _add(at, "July normal")
    assert normal == make_scenario(
        "July normal", seasonal_normal_path(model.history, july.start, july.days)
    )
    assert at.session_state["scenario_kinds"]["July normal"] == "seasonal_normal"
    assert any("213 days after the history ends" in c for c in texts(at, "caption"))

    settings = {**heat_wave_settings(model), "start": july.start, "days": july.days}
    build_heat_wave_in_app(at, settings, name="July heat wave")
    wave = _add(at, "July heat wave")
    assert wave == heat_wave_by_loadcore(model, settings, name="July heat wave")
    assert wave.start == july.start and wave.horizon == 31
    forecasts = [model.forecast(s) for s in (normal, wave)]
    assert all(fc.frame["mean"].notna().all() for fc in forecasts)


@pytest.mark.parametrize("tool", ["constant", "copy", "cold_snap", "shift"])
def test_every_path_tool_builds_the_far_window(tool):
    model = demo_model()
    choice = _choice("coldest_month")  # January 2027
    at = _builder()
    _quick(at, "coldest_month")
    at.checkbox(key="scn_hw_on").set_value(False)
    start, days = choice.start, choice.days
    if tool == "constant":
        at.selectbox(key="scn_base").set_value("constant")
        at.run()
        at.number_input(key="scn_const").set_value(4.0)
        expected = constant_path(start, days, 4.0)
    elif tool == "copy":
        at.selectbox(key="scn_base").set_value("copy")
        at.run()
        copied = pd.Timestamp("2025-01-01")
        [d for d in at.date_input if str(d.key).startswith("scn_copy_from")][0].set_value(
            copied.date()
        )
        expected = copy_period(model.history, copied, start, days)
    elif tool == "cold_snap":
        at.checkbox(key="scn_cs_on").set_value(True)
        at.run()
        at.number_input(key="scn_cs_low").set_value(-12.0)
        at.number_input(key="scn_cs_top").set_value(4)
        at.number_input(key="scn_cs_ramp").set_value(2)
        at.number_input(key="scn_cs_day").set_value(10)
        normal = seasonal_normal_path(model.history, start, days)
        expected = cold_snap(normal, -12.0, 4 + 2 * 2, 2, 9)
    else:
        at.number_input(key="scn_shift").set_value(-3.0)
        expected = shift_path(seasonal_normal_path(model.history, start, days), -3.0)
    at.run()
    built = _add(at, f"January {tool}")
    assert built == make_scenario(f"January {tool}", expected)
    assert built.start == start


@pytest.mark.parametrize("alignment", list(Alignment))
def test_last_years_same_days_by_date_or_by_weekday(alignment):
    """Next July from last July's temperatures, lined up by date or by weekday (the planner
    chooses); the app builds what loadcore.scenario.copy_same_days builds and names the days."""
    model = demo_model()
    july = _choice("hottest_month")
    at = _builder()
    _quick(at, "hottest_month")
    at.checkbox(key="scn_hw_on").set_value(False)
    at.selectbox(key="scn_base").set_value("same_days")
    at.run()
    at.radio(key="scn_align").set_value(alignment)
    at.run()
    built = _add(at, f"Last July {alignment.name}")
    expected = copy_same_days(model.history, july.start, july.days, alignment)
    assert built == make_scenario(f"Last July {alignment.name}", expected)
    source = same_days_source(model.history, july.start, july.days, alignment)
    assert source.year == 2026
    if alignment is Alignment.BY_WEEKDAY:
        assert source.day_of_week == july.start.day_of_week and source != july.start.replace(
            year=2026
        )
    else:
        assert source == pd.Timestamp("2026-07-01")
    assert any(f"Copied from {source:%a %d %b %Y}" in c for c in texts(at, "caption"))


def test_the_copy_defaults_to_the_same_days_a_year_before():
    model = demo_model()
    at = _builder()
    _quick(at, "hottest_month")
    at.selectbox(key="scn_base").set_value("copy")
    at.run()
    copy_from = [d for d in at.date_input if str(d.key).startswith("scn_copy_from")][0]
    assert copy_from.value == pd.Timestamp("2026-07-01").date()
    assert pd.Timestamp(copy_from.proto.max) <= model.history_end - pd.Timedelta(days=30)


def test_the_window_is_kept_across_pages_and_shared_with_the_ensembles():
    at = _builder()
    _quick(at, "year_end")
    choice = _choice("year_end")
    at.switch_page("pages/compare.py")
    at.run()
    at.switch_page("pages/scenario.py")
    at.run()
    assert at.date_input(key="scn_start").value == choice.start.date()
    assert at.number_input(key="scn_days").value == choice.days
    at.switch_page("pages/ensembles.py")
    at.run()
    assert_no_exception(at)
    assert at.date_input(key="ens_start").value == choice.start.date()
    assert at.number_input(key="ens_days").value == choice.days


def test_the_latest_start_is_offered_and_forecast():
    model = demo_model()
    _, last = window_limits(model.history_end)
    at = _builder()
    at.date_input(key="scn_start").set_value(last.date())
    at.number_input(key="scn_days").set_value(MAX_DAYS)
    at.checkbox(key="scn_hw_on").set_value(False)
    at.run()
    built = _add(at, "Latest")
    assert built.start == last and built.horizon == MAX_DAYS


def test_a_kept_window_before_a_new_models_history_moves_to_its_first_day():
    """After a new history and model that end later, a kept start the new model does not
    allow is brought to the new first day (no failure, no stale date in the picker)."""
    model = demo_model()
    at = new_app(
        page="pages/scenario.py",
        model=model,
        extra={"scenario_window": {"start": pd.Timestamp("2025-01-01"), "days": 200}},
    )
    assert_no_exception(at)
    first, _ = window_limits(model.history_end)
    assert at.date_input(key="scn_start").value == first.date()
    assert at.number_input(key="scn_days").value == MAX_DAYS


def test_the_ensemble_runs_for_the_chosen_window():
    model = demo_model()
    at = new_app(page="pages/ensembles.py", model=model)
    _quick(at, "hottest_month", page="ens")
    at.number_input(key="ens_days").set_value(10)
    at.run()  # the window is outside the form; its settings go with the form's button
    at.number_input(key="ens_shift").set_value(1)
    at.number_input(key="ens_paths").set_value(20)
    at.number_input(key="ens_seed").set_value(4)
    [b for b in at.get("button") if getattr(b, "label", "") == "Run the ensemble"][0].click()
    at.run()
    assert_no_exception(at)
    assert not texts(at, "error")
    result = at.session_state["ensemble"]["result"]
    expected = ensemble_forecast(
        model, days=10, start="2027-07-01", shift_days=1, paths_per_trace=20, seed=4
    )
    pd.testing.assert_frame_equal(result.daily, expected.daily, check_dtype=False)
    assert any(
        "Ensemble for Thu 01 Jul 2027 to Sat 10 Jul 2027" in m for m in texts(at, "markdown")
    )
