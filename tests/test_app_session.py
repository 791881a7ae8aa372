"""A planner's whole session across the pages, in one AppTest (issue 10, "Done when").

From the demo history (ending 29 November 2026) and its model: a heat wave in next July and that
July's seasonal normal built with the window picker (plus the next two weeks), the °C/°F switch
and back (the scenarios unchanged), Compare with the base and the scenarios shown, the meeting
view and back, a new history (another seed of the invented generator, ending four weeks later)
uploaded and fitted, the July scenarios re-forecast with the new model and the next-two-weeks one
marked, a save to the library and the CSV export. Every number checked is a loadcore call's.
"""

from __future__ import annotations

import io

import pandas as pd
import pytest
from test_app_support import (
    FIT_TIMEOUT_S,
    assert_no_exception,
    build_heat_wave_in_app,
    demo_model,
    download_bytes,
    heat_wave_by_loadcore,
    heat_wave_settings,
    new_app,
    other_demo_csv,
    recording_downloads,
    texts,
)

from loadcore.export import comparison_summary
from loadcore.library import ScenarioLibrary, is_current
from loadcore.scenario import make_scenario, seasonal_normal_path, window_starts


def _add(at, name: str) -> None:
    at.text_input(key="scn_name").set_value(name)
    at.run()
    assert not texts(at, "error"), texts(at, "error")
    [b for b in at.button if b.label in ("Add to the set", "Replace it in the set")][0].click()
    at.run()
    assert_no_exception(at)
    assert name in at.session_state["scenarios"]


def _quick(at, kind: str) -> None:
    at.button(key=f"scn_window_{kind}").click()
    at.run()


def _sidebar(at, key: str, value) -> None:
    """What the sidebar's unit radio and meeting toggle do (app/state.py's transitions; AppTest
    runs app/main.py's sidebar on the first run only, the browser test uses the real one)."""
    at.session_state[key] = value
    at.run()
    assert_no_exception(at)


def _page(at, path: str) -> None:
    at.switch_page(path)
    at.run()
    assert_no_exception(at)


@pytest.fixture
def library_path(tmp_path, monkeypatch):
    path = tmp_path / "scenarios.sqlite"
    monkeypatch.setenv("LOADCORE_LIBRARY", str(path))
    return path


def test_a_planners_session_from_november_to_next_july(library_path):
    model = demo_model()
    july = next(c for c in window_starts(model.history) if c.kind == "hottest_month")
    assert july.start == pd.Timestamp("2027-07-01")
    with recording_downloads():
        at = new_app(page="pages/scenario.py", model=model)
        assert_no_exception(at)

        # Build: the July heat wave, the July seasonal normal, the next two weeks.
        _quick(at, "hottest_month")
        settings = {**heat_wave_settings(model), "start": july.start, "days": july.days}
        build_heat_wave_in_app(at, settings, name="July heat wave")
        _add(at, "July heat wave")
        at.checkbox(key="scn_hw_on").set_value(False)
        at.run()
        _add(at, "July normal")
        _quick(at, "next")
        _add(at, "Next two weeks")
        built = dict(at.session_state["scenarios"])
        assert built["July heat wave"] == heat_wave_by_loadcore(
            model, settings, name="July heat wave"
        )
        assert built["July normal"] == make_scenario(
            "July normal", seasonal_normal_path(model.history, july.start, july.days)
        )
        assert built["Next two weeks"].start == model.history_end + pd.Timedelta(days=1)

        # °F and back (the sidebar's transition): what is shown changes, the scenarios do not.
        peak_c = round(settings["peak_c"], 1)
        _sidebar(at, "temp_unit", "F")
        assert at.number_input(key="scn_hw_peak").value == round(peak_c * 1.8 + 32, 1)
        assert "°F" in at.number_input(key="scn_hw_peak").label
        assert at.session_state["scenarios"] == built
        _sidebar(at, "temp_unit", "C")
        assert at.number_input(key="scn_hw_peak").value == peak_c
        assert at.session_state["scenarios"] == built

        # Compare: the base is the seasonal normal; take the next two weeks off the chart.
        _page(at, "pages/compare.py")
        assert at.selectbox(key="cmp_base").value == "July normal"
        at.multiselect(key="cmp_shown").set_value(["July heat wave", "July normal"])
        at.run()
        july_fcs = [model.forecast(built[n]) for n in ("July heat wave", "July normal")]
        expected = comparison_summary(july_fcs, "July normal")
        shown = at.dataframe[0].value
        assert list(shown["scenario"]) == ["July heat wave", "July normal"]
        assert list(shown["peak, MW"].round(3)) == list(expected["peak_mean"].round(3))

        # The meeting view follows those choices; leaving it keeps them.
        _sidebar(at, "meeting_view", True)
        assert [t.value for t in at.title] == ["Demand scenarios"]
        assert [m.label for m in at.metric] == ["July heat wave", "July normal"]
        wave_delta = expected.set_index("scenario").loc["July heat wave", "peak_vs_base"]
        assert at.metric[0].proto.delta == f"{wave_delta:+,.0f} MW vs July normal"
        at.button(key="leave_meeting").click()
        at.run()
        assert at.multiselect(key="cmp_shown").value == ["July heat wave", "July normal"]
        assert at.selectbox(key="cmp_base").value == "July normal"

        # A new history (four weeks more, another seed), checked and fitted through the pages.
        _page(at, "pages/history.py")
        at.file_uploader(key="history_upload").set_value(
            ("next_month.csv", other_demo_csv(), "text/csv")
        )
        at.run()
        [b for b in at.button if b.label == "Check and use this file"][0].click()
        at.run()
        assert_no_exception(at)
        new_history = at.session_state["history"]
        assert new_history.end == pd.Timestamp("2026-12-27")
        _page(at, "pages/model_fit.py")
        [b for b in at.get("button") if getattr(b, "label", "") == "Fit the model"][0].click()
        at.run(timeout=FIT_TIMEOUT_S)
        assert_no_exception(at)
        new_model = at.session_state["model"]
        assert new_model is not model and new_model.history_end == new_history.end

        # Compare: the July scenarios are re-forecast, the next two weeks are marked.
        _page(at, "pages/compare.py")
        assert at.session_state["scenarios"] == built  # nothing lost
        notice = " ".join(texts(at, "warning"))
        assert "1 of the 3 scenarios" in notice and "Next two weeks" in notice
        assert set(at.session_state["forecasts"]) == {"July heat wave", "July normal"}
        for name, fc in at.session_state["forecasts"].items():
            again = new_model.forecast(built[name])
            pd.testing.assert_series_equal(fc.frame["mean"], again.frame["mean"])
        assert (
            not at.session_state["forecasts"]["July normal"]
            .frame["mean"]
            .equals(july_fcs[1].frame["mean"])
        )

        # The CSV export: the July scenarios shown, July dates, the one forecast table's columns.
        table = pd.read_csv(io.BytesIO(download_bytes(at, "cmp_csv")))
        assert list(table.columns) == [
            "scenario",
            "date",
            "temperature_c",
            "day_type",
            "mean",
            "median",
            "lower_80",
            "upper_80",
            "lower_95",
            "upper_95",
            "out_of_range",
            "out_of_range_by_c",
            "sparse_temperature",
        ]
        assert set(table["scenario"]) == {"July heat wave", "July normal"}
        dates = pd.to_datetime(table["date"])
        assert (dates.dt.month == 7).all() and (dates.dt.year == 2027).all()
        assert len(table) == 2 * 31

        # Save the heat wave to the library: its forecast is the new model's.
        _page(at, "pages/saved.py")
        at.selectbox(key="lib_pick").set_value("July heat wave")
        at.run()
        at.button(key="lib_save").click()
        at.run()
        assert_no_exception(at)
        saved = ScenarioLibrary(library_path).get("July heat wave")
        assert saved.scenario() == built["July heat wave"]
        assert is_current(saved, new_model)
        assert any("Saved 'July heat wave'" in s for s in texts(at, "success"))
