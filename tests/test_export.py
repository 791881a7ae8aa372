"""Tests for loadcore.export: safe CSV, tidy tables, the offline meeting brief, upload limits."""

from __future__ import annotations

import io
import re
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
import pytest

from loadcore.errors import InputError
from loadcore.export import (
    FORMULA_PREFIXES,
    INTERVAL_CAUTION,
    PLANNING_CAUTION,
    check_upload_size,
    comparison_summary,
    describe_orders,
    forecast_table,
    meeting_brief_html,
    out_of_range_days,
    safe_cell,
    safe_frame,
    summarise_model,
    to_csv_bytes,
)


@dataclass(frozen=True)
class FakeForecast:
    """Forecast-shaped object (the contract's frame, levels, scenario_name, note, warnings())."""

    frame: pd.DataFrame
    levels: tuple = (80, 95)
    scenario_name: str = "base"
    note: str = ""
    notes: tuple = field(default=())

    def warnings(self, temp_unit: str = "C") -> list[str]:
        return list(self.notes)


def make_forecast(
    name: str = "base",
    *,
    start: str = "2031-07-01",
    days: int = 10,
    level_mw: float = 2000.0,
    slope_mw: float = 15.0,
    temps_c: np.ndarray | None = None,
    out_idx: tuple[int, ...] = (),
    note: str = "",
    seed: int = 0,
) -> FakeForecast:
    rng = np.random.default_rng(seed)
    dates = pd.date_range(start, periods=days, freq="D")
    temps = temps_c if temps_c is not None else 28.0 + rng.normal(0, 2, days)
    mean = level_mw + slope_mw * (temps - 25.0) + rng.normal(0, 5, days)
    flags = np.zeros(days, dtype=bool)
    flags[list(out_idx)] = True
    by_c = np.where(flags, 1.5, 0.0)
    frame = pd.DataFrame(
        {
            "date": dates,
            "temperature_c": temps,
            "day_type": ["midweek"] * days,
            "mean": mean,
            "median": mean - 3.0,
            "lower_80": mean - 60.0,
            "upper_80": mean + 60.0,
            "lower_95": mean - 95.0,
            "upper_95": mean + 95.0,
            "out_of_range": flags,
            "out_of_range_by_c": by_c,
            "sparse_temperature": np.zeros(days, dtype=bool),
        }
    )
    return FakeForecast(frame=frame, scenario_name=name, note=note)


# ---------------------------------------------------------------------------------------------
# safe_cell / safe_frame / to_csv_bytes


@pytest.mark.parametrize("prefix", ["=", "+", "-", "@", "\t", "\r"])
def test_safe_cell_neutralises_each_formula_prefix(prefix):
    """Prefix list from the OWASP "CSV Injection" page (owasp.org/www-community/attacks/CSV_Injection)."""
    text = prefix + 'HYPERLINK("x")'
    assert safe_cell(text) == "'" + text


def test_safe_cell_leaves_plain_text_and_numbers():
    """Numbers stay numbers, negative ones too (OWASP "CSV Injection": only text cells are at risk)."""
    assert safe_cell("heat wave") == "heat wave"
    assert safe_cell("a=b") == "a=b"
    assert safe_cell("") == ""
    for value in (-5, -5.25, np.float64(-3.5), np.int64(-7), True, 0):
        out = safe_cell(value)
        assert out == value and type(out) is type(value)
    assert safe_cell(None) is None
    assert np.isnan(safe_cell(float("nan")))
    ts = pd.Timestamp("2031-01-01")
    assert safe_cell(ts) is ts
    assert safe_cell(np.str_("=1+1")) == "'=1+1"
    assert set(FORMULA_PREFIXES) == {"=", "+", "-", "@", "\t", "\r"}


def test_safe_frame_touches_text_columns_only():
    frame = pd.DataFrame(
        {
            "scenario": ["=cmd|' /C calc'!A0", "normal", "-2+3"],
            "value": [-1.5, 2.0, -3.0],
            "count": [-1, 2, 3],
            "kind": pd.Categorical(["@SUM(A1)", "x", "y"]),
            "mixed": [1, "+bad", None],
        }
    )
    before = frame.copy()
    out = safe_frame(frame)
    pd.testing.assert_frame_equal(frame, before)  # input untouched
    assert out["scenario"].tolist() == ["'=cmd|' /C calc'!A0", "normal", "'-2+3"]
    assert out["value"].dtype == np.float64 and out["value"].tolist() == [-1.5, 2.0, -3.0]
    assert out["count"].dtype == np.int64
    assert out["kind"].tolist() == ["'@SUM(A1)", "x", "y"]
    assert out["mixed"].tolist()[:2] == [1, "'+bad"]
    assert out["mixed"].tolist()[2] is None


def test_safe_frame_neutralises_header_cells():
    out = safe_frame(pd.DataFrame({"=evil": [1]}))
    assert list(out.columns) == ["'=evil"]


def test_to_csv_bytes_reads_back_safely():
    frame = pd.DataFrame(
        {
            "date": pd.date_range("2031-07-01", periods=3, freq="D"),
            "scenario": ["=1+1", "Été chaud", "+SUM(A1:A2)"],
            "mean": [0.1 + 0.2, -1234.5678901234, 20000.0],
            "flag": [True, False, True],
            "blank": [np.nan, 1.0, 2.0],
        }
    )
    data = to_csv_bytes(frame)
    assert isinstance(data, bytes)
    text = data.decode("utf-8")
    assert not text.startswith("\ufeff")
    assert text.endswith("\r\n") and text.count("\r\n") == 4  # RFC 4180 line breaks
    lines = text.splitlines()
    assert lines[0] == "date,scenario,mean,flag,blank"
    assert lines[1].startswith("2031-07-01,'=1+1,0.3,True,")
    back = pd.read_csv(io.BytesIO(data))
    assert back["scenario"].tolist() == ["'=1+1", "Été chaud", "'+SUM(A1:A2)"]
    assert back["mean"].tolist() == pytest.approx([0.3, -1234.5679, 20000.0], abs=1e-4)
    assert back["mean"].dtype == np.float64  # negative numbers stay numbers
    assert np.isnan(back["blank"].iloc[0])
    # no data cell in the raw text begins with a formula prefix
    for line in lines[1:]:
        for cell in line.split(","):
            assert not cell.startswith(("=", "+", "@")), line


def test_to_csv_bytes_writes_index_and_timestamps():
    idx = pd.DatetimeIndex(["2031-01-01 06:30", "2031-01-02 00:00"], name="when")
    frame = pd.DataFrame({"demand": [1.0, 2.0]}, index=idx)
    text = to_csv_bytes(frame).decode()
    assert text.splitlines()[0] == "when,demand"
    assert "2031-01-01T06:30:00" in text
    with pytest.raises(InputError):
        to_csv_bytes("not a table")  # type: ignore[arg-type]


def test_check_upload_size():
    check_upload_size(0)
    check_upload_size(50 * 1024 * 1024)
    with pytest.raises(InputError, match="limit"):
        check_upload_size(50 * 1024 * 1024 + 1)
    with pytest.raises(InputError, match="limit"):
        check_upload_size(2_000_000, limit_mb=1)
    for bad in (-1, 1.5, "10", True, None):
        with pytest.raises(InputError):
            check_upload_size(bad)  # type: ignore[arg-type]
    with pytest.raises(InputError):
        check_upload_size(10, limit_mb=0)


# ---------------------------------------------------------------------------------------------
# forecast_table / comparison_summary


def test_forecast_table_columns_and_units():
    """°F = °C x 9/5 + 32 (the definition of the Fahrenheit scale; common practice, no source)."""
    a = make_forecast("base", temps_c=np.array([0.0, 100.0, -40.0, 25.0]), days=4, out_idx=(1,))
    b = make_forecast("hot", days=4, seed=1)
    table = forecast_table([a, b])
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
    assert table["scenario"].tolist() == ["base"] * 4 + ["hot"] * 4
    assert table.attrs["temp_unit"] == "C"
    f_table = forecast_table([a], temp_unit="F")
    assert f_table["temperature_f"].tolist() == pytest.approx([32.0, 212.0, -40.0, 77.0])
    assert f_table["out_of_range"].tolist() == [False, True, False, False]
    assert f_table["out_of_range_by_f"].tolist() == pytest.approx([0.0, 2.7, 0.0, 0.0])
    assert "temperature_c" not in f_table and "out_of_range_by_c" not in f_table
    np.testing.assert_allclose(f_table["mean"], a.frame["mean"])


def test_forecast_table_accepts_date_index_and_rejects_bad_input():
    fc = make_forecast("idx")
    indexed = FakeForecast(frame=fc.frame.set_index("date"), scenario_name="idx")
    assert len(forecast_table([indexed])) == len(fc.frame)
    with pytest.raises(InputError, match="share the scenario name"):
        forecast_table([fc, fc])
    with pytest.raises(InputError, match="temperature unit"):
        forecast_table([fc], temp_unit="K")
    with pytest.raises(InputError, match="no forecasts"):
        forecast_table([])
    broken = FakeForecast(frame=fc.frame.drop(columns=["upper_95"]), scenario_name="broken")
    with pytest.raises(InputError, match="upper_95"):
        forecast_table([broken])


def test_comparison_summary_against_hand_computation():
    base = make_forecast("base", seed=1)
    hot = make_forecast("hot", level_mw=2300.0, out_idx=(2, 5), seed=2)
    summary = comparison_summary([base, hot], "base")
    assert summary["scenario"].tolist() == ["base", "hot"]
    row = summary.set_index("scenario")
    for fc in (base, hot):
        m = fc.frame["mean"]
        r = row.loc[fc.scenario_name]
        assert r["peak_mean"] == pytest.approx(m.max())
        assert r["peak_date"] == fc.frame["date"][m.idxmax()]
        assert r["sum_of_daily_means"] == pytest.approx(m.sum())
        assert r["days"] == len(m)
    bm, hm = base.frame["mean"], hot.frame["mean"]
    assert row.loc["base", "peak_vs_base"] == 0.0
    assert row.loc["hot", "peak_vs_base"] == pytest.approx(hm.max() - bm.max())
    assert row.loc["hot", "peak_vs_base_pct"] == pytest.approx(100 * (hm.max() / bm.max() - 1))
    assert row.loc["hot", "sum_vs_base_pct"] == pytest.approx(100 * (hm.sum() / bm.sum() - 1))
    assert row.loc["hot", "days_out_of_range"] == 2
    assert row.loc["base", "days_out_of_range"] == 0
    assert "not energy" in row.loc["base", "sum_unit"]
    assert "not energy" in summary.attrs["sum_note"]


def test_comparison_summary_total_kind_and_errors():
    base = make_forecast("base")
    summary = comparison_summary([base], "base", demand_unit="MWh", demand_kind="total")
    assert summary["sum_unit"].iloc[0] == "MWh (sum of daily totals)"
    with pytest.raises(InputError, match="base scenario 'nope'"):
        comparison_summary([base], "nope")
    with pytest.raises(InputError, match="kind of daily demand"):
        comparison_summary([base], "base", demand_kind="average")
    empty = FakeForecast(frame=base.frame.assign(mean=np.nan), scenario_name="base")
    with pytest.raises(InputError, match="no demand values"):
        comparison_summary([empty], "base")


def test_comparison_summary_marks_unequal_horizons():
    summary = comparison_summary([make_forecast("a", days=5), make_forecast("b", days=9)], "a")
    assert "horizon_note" in summary.attrs


def test_out_of_range_days_lists_flagged_rows():
    fc = make_forecast("x", out_idx=(0, 3))
    flagged = out_of_range_days([fc], temp_unit="F")
    assert flagged["date"].tolist() == [fc.frame["date"][0], fc.frame["date"][3]]
    assert flagged["temperature_f"].tolist() == pytest.approx(
        (fc.frame["temperature_c"][[0, 3]] * 9 / 5 + 32).tolist()
    )


# ---------------------------------------------------------------------------------------------
# model summary helpers


def test_describe_orders_uses_plain_words():
    text = describe_orders((2, 1, 1), (1, 0, 1, 7))
    assert text == "AR 2 · MA 1 | weekly AR 1 · MA 1 | differencing 1, weekly 0"
    assert "(" not in text and "[" not in text


def test_summarise_model_reads_the_contract_attributes():
    @dataclass
    class FakeHistory:
        start: pd.Timestamp
        end: pd.Timestamp

    @dataclass
    class FakeModel:
        order: tuple = (1, 0, 1)
        seasonal_order: tuple = (1, 0, 0, 7)
        aicc: float = -1234.56
        converged: bool = True
        history: FakeHistory = field(
            default_factory=lambda: FakeHistory(
                pd.Timestamp("2026-01-01"), pd.Timestamp("2030-12-31")
            )
        )
        temperature_range_c: tuple = (-12.0, 38.5)
        fingerprint: str = "ab" * 32

        def describe_errors(self) -> str:
            return "today's error carries over to tomorrow"

    summary = summarise_model(FakeModel())
    assert summary["Error model"].startswith("AR 1 · MA 1 | weekly AR 1")
    assert summary["AICc"] == "-1,234.6"
    assert summary["History used"] == "2026-01-01 to 2030-12-31"
    assert summary["Fitted temperature range"] == "-12.0 °C to 38.5 °C"
    assert summary["Model fingerprint"] == "ab" * 8
    assert summary["Error model in words"].startswith("today's")
    assert not any(re.search(r"\(\d+,\s*\d+,\s*\d+\)", v) for v in summary.values())


# ---------------------------------------------------------------------------------------------
# meeting brief


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


def test_to_csv_bytes_quotes_embedded_line_breaks():
    """Cells holding CR or LF stay one cell (RFC 4180, section 2: such fields are quoted)."""
    import csv

    frame = pd.DataFrame({"note": ["one\rtwo", "three\nfour", "\rfive"], "x": [1.0, -2.0, 3.0]})
    rows = list(csv.reader(io.StringIO(to_csv_bytes(frame).decode(), newline="")))
    assert rows == [["note", "x"], ["one\rtwo", "1"], ["three\nfour", "-2"], ["'\rfive", "3"]]


def test_to_csv_bytes_handles_repeated_and_odd_column_names():
    frame = pd.DataFrame([[1.0, "=x", 3]], columns=["a", "a", 7])
    text = to_csv_bytes(frame).decode()
    assert text.splitlines() == ["a,a,7", "1,'=x,3"]
    assert to_csv_bytes(pd.DataFrame()).decode().strip() == ""
