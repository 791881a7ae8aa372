"""Real-browser test: `loadcore app` served on a loopback port, driven by headless Chromium.

Builds a heat-wave scenario above the fitted temperature range, checks the out-of-range warning and
the comparison chart, downloads the CSV and checks its columns. Screenshots go to test-artifacts/.
The model is the demo model fitted once through the app (tests/test_app_support.py), uploaded on the
Model page as a planner would upload a saved model. Helpers: tests/browser_support.py.
"""

from __future__ import annotations

import csv
import io

import pytest
from browser_support import (
    CHROMIUM_ARGS,
    STEP_TIMEOUT_MS,
    block_outside_requests,
    chromium_path,
    go,
    shot,
)
from test_app_support import demo_model

pytestmark = pytest.mark.browser


def test_heat_wave_scenario_in_a_real_browser(served_app, tmp_path):
    chromium = chromium_path()
    sync_api = pytest.importorskip("playwright.sync_api")
    model = demo_model()
    model_file = tmp_path / "demo_model.json"
    model.save(model_file)
    peak_c = round(float(model.temperature_range_c[1]) + 3.0, 1)

    with sync_api.sync_playwright() as pw:
        browser = pw.chromium.launch(executable_path=chromium, args=CHROMIUM_ARGS, headless=True)
        try:
            page = browser.new_page(viewport={"width": 1440, "height": 1000}, accept_downloads=True)
            page.set_default_timeout(STEP_TIMEOUT_MS)
            outside = block_outside_requests(page)
            page.goto(served_app)
            page.get_by_role("heading", name="History", exact=True).wait_for()
            page.locator(".js-plotly-plot").first.wait_for()
            shot(page, "01_history")

            # Model page: upload the saved demo model.
            go(page, "Model", "Model")
            page.get_by_text("Upload a saved model (JSON)").click()
            page.locator("input[type=file]").set_input_files(str(model_file))
            page.get_by_role("button", name="Use this model").click()
            page.get_by_role("heading", name="The fitted model").wait_for()
            shot(page, "02_model")

            # Build a heat wave above the fitted range.
            go(page, "Build a scenario", "Build a scenario")
            peak = page.get_by_label("Peak daily high, °C")
            peak.fill(f"{peak_c}")
            peak.press("Enter")
            warning = page.get_by_text("lie outside the fitted temperature range").first
            warning.wait_for()
            page.get_by_role("button", name="Add to the set").click()
            page.get_by_text("is in the set").first.wait_for()
            shot(page, "03_scenario")

            # Compare: the warning names the dates, the chart is drawn, the CSV downloads.
            go(page, "Compare", "Compare")
            page.locator(".js-plotly-plot").first.wait_for()
            alert = page.locator("[data-testid='stAlert']", has_text="fitted temperature range")
            text = alert.first.inner_text()
            forecast = model.forecast(_scenario_like_the_app(model, peak_c))
            for day in forecast.frame.loc[forecast.frame["out_of_range"], "date"]:
                assert f"{day:%Y-%m-%d}" in text
            shot(page, "04_compare")
            with page.expect_download() as info:
                page.get_by_role("button", name="Download the forecasts shown (CSV)").click()
            saved = tmp_path / "download.csv"
            info.value.save_as(saved)
            rows = list(csv.DictReader(io.StringIO(saved.read_text(encoding="utf-8"))))
            assert rows, "the downloaded CSV is empty"
            expected = {  # the one forecast table (loadcore.export.forecast_table), in °C
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
            }
            assert set(rows[0]) == expected
            assert {r["scenario"] for r in rows} == {"Heat wave"}
            assert sum(r["out_of_range"] == "True" for r in rows) == int(
                forecast.frame["out_of_range"].sum()
            )

            # Meeting view for a projector.
            page.get_by_text("Meeting view").first.click()
            page.get_by_role("heading", name="Demand scenarios").wait_for()
            page.get_by_role("button", name="Leave the meeting view").wait_for()
            page.get_by_role("heading", name="Day by day").wait_for(state="detached")
            page.locator(".js-plotly-plot").first.wait_for()
            assert page.locator("[data-testid='stSidebar']").is_hidden()
            shot(page, "05_meeting_view")
            # Leaving it from the page turns the sidebar's toggle off too (app/state.py).
            page.get_by_role("button", name="Leave the meeting view").click()
            page.get_by_role("heading", name="Day by day").wait_for()
            toggle = page.locator("[data-testid='stSidebar'] input[type='checkbox']").first
            assert not toggle.is_checked()
            # The app works offline: no font, icon or script is fetched from outside.
            assert outside == [], outside
        finally:
            browser.close()


def _scenario_like_the_app(model, peak_c: float):
    from test_app_support import heat_wave_by_loadcore, heat_wave_settings

    settings = {**heat_wave_settings(model), "peak_c": peak_c}
    return heat_wave_by_loadcore(model, settings)
