"""Tests for loadcore.export.brief: the offline meeting brief (self-contained, escaped, cautions)."""

from __future__ import annotations

import re

import numpy as np
import pandas as pd
import pytest
from export_support import make_forecast

from loadcore.errors import InputError
from loadcore.export import describe_orders, meeting_brief_html
from loadcore.texts import INTERVAL_CAUTION, PLANNING_CAUTION


def _brief(forecasts, **kw):
    history = pd.DataFrame(
        {"demand": np.linspace(1800, 2100, 28)},
        index=pd.date_range("2031-06-03", periods=28, freq="D", name="date"),
    )
    args = {
        "history_tail": history,
        "model_summary": {"Error model": describe_orders((1, 0, 1), (1, 0, 0, 7)), "AICc": 12.5},
        "base_name": forecasts[0].scenario_name,
        "title": "Calder Basin Power & Light - July outlook",
        "period_text": "History 2026-01-01 to 2031-06-30",
    }
    args.update(kw)
    return meeting_brief_html(forecasts, **args)


def test_meeting_brief_is_self_contained():
    text = _brief([make_forecast("base"), make_forecast("hot", level_mw=2200, out_idx=(4,))])
    assert text.startswith("<!DOCTYPE html>")
    # the whole plotly.js bundle is inline: several MB, and its licence banner is present
    assert len(text) > 3_000_000
    assert "plotly.js" in text
    # nothing is loaded from elsewhere
    assert not re.search(r"<script[^>]+src\s*=", text, re.I)
    assert not re.search(r"<link[^>]+href\s*=", text, re.I)
    assert not re.search(r"<img[^>]+src\s*=\s*[\"']?https?:", text, re.I)
    assert "@import" not in text.split("</style>")[0]


def test_meeting_brief_content_and_cautions():
    hot = make_forecast("hot", level_mw=2200, out_idx=(4,), note="plus 3 °C on every day")
    base = make_forecast("base")
    text = _brief([base, hot], temp_unit="F")
    head = text[: text.index("<h2>Demand outlook")]
    assert "Calder Basin Power &amp; Light - July outlook" in head
    assert PLANNING_CAUTION.replace("'", "&#x27;") in text
    assert INTERVAL_CAUTION.replace("'", "&#x27;") in text
    assert "system operator" in text and "licensed engineering judgement" in text
    day = hot.frame["date"][4].strftime("%Y-%m-%d")
    t_f = hot.frame["temperature_c"][4] * 9 / 5 + 32
    assert f"<td>{day}</td><td>{t_f:.1f} °F</td><td>2.7 °F</td>" in text
    assert "plus 3 °C on every day" in text
    assert "AR 1 · MA 1 | weekly AR 1" in text
    assert "History 2026-01-01 to 2031-06-30" in text
    assert "2031-06-03" in text  # history tail start
    assert "hot (base)" not in text and "base (base)" in text


def test_meeting_brief_escapes_user_text():
    evil = '<script>alert("x")</script><img src=x onerror=alert(1)>'
    fc = make_forecast(evil, note="<b>bold</b> & =HYPERLINK()")
    text = _brief([fc], title=evil, period_text=evil, model_summary={evil: evil})
    body = text.split("<body>", 1)[1]
    assert "<script>alert" not in body
    assert "<img src=x" not in body
    assert "&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt;" in body
    assert "&lt;b&gt;bold&lt;/b&gt; &amp; =HYPERLINK()" in body
    # the chart's data block cannot close its script element early
    chart = body[body.index('id="demand-outlook"') :]
    assert "</script><img" not in chart


def test_meeting_brief_without_history_and_errors():
    text = _brief([make_forecast("base")], history_tail=None, model_summary={})
    assert "No recorded demand is drawn." in text
    assert "No model summary given." in text
    with pytest.raises(InputError):
        _brief([make_forecast("base")], history_tail=pd.DataFrame({"x": [1]}))
    with pytest.raises(InputError):
        _brief([make_forecast("base")], model_summary=["not", "a", "mapping"])
    with pytest.raises(InputError, match="base scenario"):
        _brief([make_forecast("base")], base_name="other")


@pytest.mark.browser
def test_meeting_brief_renders_offline_in_chromium(tmp_path):
    """Open the brief in headless Chromium with every network request blocked."""
    sync_api = pytest.importorskip("playwright.sync_api")
    import os

    chromium = "/usr/bin/chromium"
    if not os.path.exists(chromium):
        pytest.skip("Debian chromium is not installed")
    evil = "<script>window.__pwned=1</script>"
    path = tmp_path / "brief.html"
    path.write_text(
        _brief([make_forecast("base"), make_forecast(evil, out_idx=(1,))]), encoding="utf-8"
    )
    requested: list[str] = []
    dialogs: list[str] = []
    with sync_api.sync_playwright() as p:
        browser = p.chromium.launch(executable_path=chromium, args=["--no-sandbox"])
        try:
            context = browser.new_context(offline=True)
            page = context.new_page()

            def block(route):
                requested.append(route.request.url)
                route.abort()

            page.route(re.compile(r"^(?!file:).*"), block)
            page.on("dialog", lambda d: (dialogs.append(d.message), d.dismiss()))
            page.goto(path.as_uri())
            page.wait_for_selector("#demand-outlook .main-svg", timeout=20_000)
            traces = page.evaluate("document.getElementById('demand-outlook').data.length")
            legend = page.evaluate("document.querySelector('#demand-outlook .legend').textContent")
            pwned = page.evaluate("window.__pwned === 1")
        finally:
            browser.close()
    assert requested == []
    assert dialogs == []
    assert not pwned
    # history + 2 scenarios x (2 levels x 2 band edges + mean) + 1 out-of-range marker trace
    assert traces == 1 + 2 * 5 + 1
    assert "<script>window.__pwned=1</script>: mean" in legend


def test_brief_says_when_the_other_response_is_better(demo_model, demo_history):
    """On the demo (invented degree-day truth, demo_data/truth.json) the brief of a quadratic
    model carries the one note that degree days fit better, as a caution beside the model
    table, and the degree-day model's brief does not."""
    import html as html_module

    from loadcore.export import summarise_model
    from loadcore.model import fit

    summary = summarise_model(demo_model, temp_unit="C")
    assert summary["Temperature response"].startswith("Temperature response in use")
    text = _brief([make_forecast("base")], model_summary=summary)
    note = html_module.escape(demo_model.response_note("C", medium="brief"))
    assert f'<p class="caution" id="response-note">{note}</p>' in text
    assert "refitting with the degree-day response (heating base 18 °C" in text
    switched = fit(demo_history, demo_model.response_settings())
    assert switched.settings.terms.response == "degree_days"
    text = _brief([make_forecast("base")], model_summary=summarise_model(switched))
    assert 'id="response-note"' not in text and "Temperature response in use" in text
