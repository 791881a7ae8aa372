"""A planner's whole session in a real browser (issue 10, "Done when"; headless Chromium).

On the demo history (ending 29 November 2026) with the saved demo model uploaded: six July 2027
scenarios built with the window picker (a heat wave, the seasonal normal, warmer and cooler
normals, last July's days by weekday, a longer heat wave), the °C/°F switch and back while a peak
is typed (the scenario keeps its °C value), Compare with the six and its CSV, the meeting view,
then the next two weeks, a new history (another seed of the invented generator, four weeks later)
uploaded and fitted, the July scenarios re-forecast and the other one marked, a save to the
library and the CSV export again. Every request leaving the machine is blocked and counted.
Screenshots in test-artifacts/: 11_scenario_builder, 12_compare_six, 13_meeting_view,
14_after_new_history.
"""

from __future__ import annotations

import csv
import io
import os
import time

import numpy as np
import pandas as pd
import pytest
from browser_support import (
    CHROMIUM_ARGS,
    STEP_TIMEOUT_MS,
    block_outside_requests,
    chromium_path,
    go,
    shot,
)
from test_app_support import demo_model, heat_wave_by_loadcore, heat_wave_settings, other_demo_csv

from loadcore.library import ScenarioLibrary
from loadcore.scenario import (
    Alignment,
    copy_same_days,
    heat_wave,
    make_scenario,
    seasonal_normal_path,
    shift_path,
    window_starts,
)

pytestmark = pytest.mark.browser

JULY = ("July heat wave", "July normal", "July 2 °C warmer", "July 2 °C cooler")
JULY += ("Last July by weekday", "Long July heat wave")
CSV_COLUMNS = [
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


def _idle(page) -> None:
    """Wait until the app has finished its rerun (Streamlit's running indicator is gone)."""
    page.wait_for_timeout(250)
    status = page.locator("[data-testid='stStatusWidget']")
    deadline = time.monotonic() + STEP_TIMEOUT_MS / 1000
    while status.count() and status.first.is_visible() and time.monotonic() < deadline:
        page.wait_for_timeout(100)


def _type(page, label: str, value) -> None:
    field = page.get_by_label(label, exact=True)
    field.fill(str(value))
    field.press("Enter")
    _idle(page)


def _tick(page, label: str, on: bool) -> None:
    box = page.get_by_role("checkbox", name=label, exact=True)
    if box.is_checked() != on:
        page.get_by_text(label, exact=True).click()
        _idle(page)


def _choose(page, label: str, option: str) -> None:
    """Pick ``option`` in the select box labelled ``label``."""
    box = page.locator("[data-testid='stSelectbox']", has_text=label).first
    choice = page.locator("[role='option']", has_text=option).first
    for _ in range(5):  # a rerun that ends just after the click closes the list again
        box.click()
        try:
            choice.wait_for(timeout=5000)
            break
        except Exception:  # noqa: BLE001 - playwright's TimeoutError: open it again
            _idle(page)
    choice.click()
    _idle(page)


def _add(page, name: str, count: int) -> None:
    _type(page, "Scenario name", name)
    page.get_by_role("button", name="Add to the set").click()
    page.get_by_text(f"is in the set ({count} scenario(s))").first.wait_for()
    _idle(page)


def _download(page, tmp_path, name: str) -> list[dict]:
    with page.expect_download() as info:
        page.get_by_role("button", name="Download the forecasts shown (CSV)").click()
    path = tmp_path / name
    info.value.save_as(path)
    return list(csv.DictReader(io.StringIO(path.read_text(encoding="utf-8"))))


def _july_by_loadcore(model) -> dict:
    """The six July scenarios built by loadcore calls only (what the browser must give)."""
    july = next(c for c in window_starts(model.history) if c.kind == "hottest_month")
    normal = seasonal_normal_path(model.history, july.start, july.days)
    settings = {**heat_wave_settings(model), "start": july.start, "days": july.days}
    paths = {
        "July heat wave": heat_wave_by_loadcore(model, {**settings, "peak_c": 40.5}).path(),
        "July normal": normal,
        "July 2 °C warmer": shift_path(normal, 2.0),
        "July 2 °C cooler": shift_path(normal, -2.0),
        "Last July by weekday": copy_same_days(
            model.history, july.start, july.days, Alignment.BY_WEEKDAY
        ),
        "Long July heat wave": heat_wave(normal, 39.0, 8 + 2 * 2, 2, 3),
    }
    return {name: make_scenario(name, path) for name, path in paths.items()}


def _check_export(rows: list[dict], expected: dict) -> None:
    assert rows and list(rows[0]) == CSV_COLUMNS
    assert {r["scenario"] for r in rows} == set(expected)
    for name, scenario in expected.items():
        mine = [r for r in rows if r["scenario"] == name]
        dates = pd.to_datetime([r["date"] for r in mine])
        assert list(dates) == list(scenario.dates)  # 1 to 31 July 2027
        temps = np.array([float(r["temperature_c"]) for r in mine])
        np.testing.assert_allclose(temps, np.round(scenario.temperature_c, 1), atol=0.051)


def test_a_planners_whole_session_in_a_real_browser(served_app, tmp_path):
    chromium = chromium_path()
    sync_api = pytest.importorskip("playwright.sync_api")
    model = demo_model()
    model_file = tmp_path / "demo_model.json"
    model.save(model_file)
    new_history = tmp_path / "next_month.csv"
    new_history.write_bytes(other_demo_csv())
    expected = _july_by_loadcore(model)

    with sync_api.sync_playwright() as pw:
        browser = pw.chromium.launch(executable_path=chromium, args=CHROMIUM_ARGS, headless=True)
        try:
            page = browser.new_page(viewport={"width": 1440, "height": 1000}, accept_downloads=True)
            page.set_default_timeout(int(os.environ.get("BROWSER_STEP_MS", STEP_TIMEOUT_MS)))
            outside = block_outside_requests(page)
            page.goto(served_app)
            page.get_by_role("heading", name="History", exact=True).wait_for()
            sidebar = page.locator("[data-testid='stSidebar']")

            # The saved demo model, uploaded on the Model page.
            go(page, "Model", "Model")
            page.get_by_text("Upload a saved model (JSON)").click()
            page.locator("input[type=file]").set_input_files(str(model_file))
            page.get_by_role("button", name="Use this model").click()
            page.get_by_role("heading", name="The fitted model").wait_for()

            # Next July's heat wave: a peak typed in °C keeps its value through °F and back.
            go(page, "Build a scenario", "Build a scenario")
            page.get_by_role("button", name="Hottest month of the history: July 2027").click()
            page.get_by_text("Thursday 01 July 2027 to Saturday 31 July 2027").wait_for()
            _idle(page)
            _type(page, "Peak daily high, °C", 40.5)
            sidebar.get_by_text("°F", exact=True).click()
            page.get_by_label("Peak daily high, °F", exact=True).wait_for()
            _idle(page)
            shown_f = page.get_by_label("Peak daily high, °F", exact=True).input_value()
            assert float(shown_f) == 104.9  # 40.5 °C (common practice, no source)
            sidebar.get_by_text("°C", exact=True).click()
            peak = page.get_by_label("Peak daily high, °C", exact=True)
            peak.wait_for()
            _idle(page)
            assert float(peak.input_value()) == 40.5
            shot(page, "11_scenario_builder")
            _add(page, "July heat wave", 1)

            # That July's seasonal normal, warmer and cooler, last July by weekday, a long wave.
            _tick(page, "Add a heat wave", False)
            _add(page, "July normal", 2)
            _type(page, "Shift every day by (may be negative), °C", 2)
            _add(page, "July 2 °C warmer", 3)
            _type(page, "Shift every day by (may be negative), °C", -2)
            _add(page, "July 2 °C cooler", 4)
            _type(page, "Shift every day by (may be negative), °C", 0)
            _choose(page, "Base path", "the same days of the latest earlier year in the history")
            page.get_by_text("by weekday (weekends onto weekends", exact=False).click()
            page.get_by_text("Copied from Thu 02 Jul 2026").wait_for()
            _idle(page)
            _add(page, "Last July by weekday", 5)
            _choose(page, "Base path", "seasonal normal (average for these calendar days)")
            _tick(page, "Add a heat wave", True)
            _type(page, "Peak daily high, °C", 39)
            _type(page, "Days at the peak", 8)
            _add(page, "Long July heat wave", 6)

            # Compare the six against the seasonal normal; the CSV holds their July days.
            go(page, "Compare", "Compare")
            page.locator(".js-plotly-plot").first.wait_for()
            _idle(page)
            base = page.get_by_role("combobox", name="Compare against (base scenario)")
            assert base.input_value() == "July normal"
            shot(page, "12_compare_six")
            six = _download(page, tmp_path, "six.csv")
            _check_export(six, expected)

            # The meeting view shows the same six, large.
            sidebar.get_by_text("Meeting view").click()
            page.get_by_role("heading", name="Demand scenarios").wait_for()
            page.locator(".js-plotly-plot").first.wait_for()
            _idle(page)
            metrics = page.locator("[data-testid='stMetricLabel']").all_inner_texts()
            assert sorted(m.strip() for m in metrics) == sorted(JULY)  # in four columns
            shot(page, "13_meeting_view")
            page.get_by_role("button", name="Leave the meeting view").click()
            page.get_by_role("heading", name="Day by day").wait_for()

            # The next two weeks too; then a new history, four weeks longer, fitted.
            go(page, "Build a scenario", "Build a scenario")
            page.get_by_role(
                "button", name="Right after the history: from 30 November 2026"
            ).click()
            _idle(page)
            _tick(page, "Add a heat wave", False)
            _add(page, "Next two weeks", 7)
            go(page, "History", "History")
            page.get_by_text("Upload a history file").click()
            page.locator("input[type=file]").set_input_files(str(new_history))
            page.get_by_role("button", name="Check and use this file").click()
            sidebar.get_by_text("uploaded file next_month.csv").wait_for()
            go(page, "Model", "Model")
            page.get_by_role("button", name="Fit the model").click()
            sidebar.get_by_text("Model: fitted on data to 2026-12-27").wait_for()
            sidebar.get_by_text("(1 cannot be forecast with this model; see Compare)").wait_for()

            # Compare: the July six are forecast by the new model, the next two weeks marked.
            go(page, "Compare", "Compare")
            page.get_by_text("1 of the 7 scenarios in the set cannot be forecast").wait_for()
            page.locator(".js-plotly-plot").first.wait_for()
            _idle(page)
            shot(page, "14_after_new_history")
            after = _download(page, tmp_path, "after.csv")
            _check_export(after, expected)
            before = {(r["scenario"], r["date"]): r["mean"] for r in six}
            assert any(before[(r["scenario"], r["date"])] != r["mean"] for r in after)

            # Save the heat wave to the library.
            go(page, "Saved scenarios", "Saved scenarios")
            page.get_by_role("button", name="Save", exact=True).click()
            page.get_by_text("Saved 'July heat wave' (version 1).").wait_for()
            assert outside == [], outside
        finally:
            browser.close()
    saved = ScenarioLibrary(tmp_path / "library.sqlite").get("July heat wave")
    assert saved.scenario() == expected["July heat wave"]
