"""Tests for loadcore.export.figures: the one comparison figure (app pages and meeting brief)."""

from __future__ import annotations

import json
from dataclasses import replace

import numpy as np
import pandas as pd
import pytest
from export_support import make_forecast

from loadcore.errors import InputError
from loadcore.export import comparison_figure, describe_orders, meeting_brief_html, palette


def _history() -> pd.Series:
    return pd.Series(
        np.linspace(1800, 2100, 28),
        index=pd.date_range("2031-06-03", periods=28, freq="D", name="date"),
    )


def test_traces_follow_the_forecasts_in_order():
    base = make_forecast("base")
    hot = make_forecast("hot", level_mw=2200, out_idx=(2, 4), seed=1)
    fig = comparison_figure([base, hot], history_tail=_history())
    names = [t.name for t in fig.data]
    # history + 2 scenarios x (2 levels x 2 band edges + mean) + 1 out-of-range marker trace
    assert len(fig.data) == 1 + 2 * 5 + 1
    assert names[0] == "recorded demand"
    assert names[1:6] == [None, "base: 95% interval", None, "base: 80% interval", "base: mean"]
    assert names[-1] == "hot: outside the fitted range"
    np.testing.assert_allclose(fig.data[0].y, _history().to_numpy())
    for offset, fc in ((1, base), (6, hot)):
        upper95, lower95, upper80, lower80, mean = fig.data[offset : offset + 5]
        np.testing.assert_allclose(upper95.y, fc.frame["upper_95"])
        np.testing.assert_allclose(lower95.y, fc.frame["lower_95"])
        np.testing.assert_allclose(upper80.y, fc.frame["upper_80"])
        np.testing.assert_allclose(lower80.y, fc.frame["lower_80"])
        np.testing.assert_allclose(mean.y, fc.frame["mean"])
        assert lower95.fill == lower80.fill == "tonexty"  # each band fills to its own upper edge
    assert fig.data[1].line.color == palette.scenario_colour(0)
    assert fig.data[6].line.color == palette.scenario_colour(1)
    marked = fig.data[-1]
    np.testing.assert_allclose(marked.y, hot.frame["mean"].iloc[[2, 4]])
    assert marked.marker.color == palette.OUTSIDE


def test_out_of_range_days_hover_in_the_chosen_unit():
    """°F = °C x 9/5 + 32, a 1.5 °C step is 2.7 °F (the Fahrenheit scale; common practice)."""
    hot = make_forecast("hot", out_idx=(1,))
    fig = comparison_figure([hot], temp_unit="F")
    marked = fig.data[-1]
    t_c = hot.frame["temperature_c"].iloc[1]
    np.testing.assert_allclose(marked.customdata[0], [t_c * 9 / 5 + 32, 2.7])
    assert "°F" in marked.hovertemplate and "°C" not in marked.hovertemplate
    with pytest.raises(InputError, match="temperature unit"):
        comparison_figure([hot], temp_unit="K")


def test_each_forecast_is_drawn_with_its_own_levels():
    fc = make_forecast("ninety")
    frame = fc.frame.drop(columns=["lower_80", "upper_80", "lower_95", "upper_95"])
    frame = frame.assign(lower_90=frame["mean"] - 70, upper_90=frame["mean"] + 70)
    fig = comparison_figure([replace(fc, frame=frame, levels=(90,))])
    assert [t.name for t in fig.data] == [None, "ninety: 90% interval", "ninety: mean"]


def test_names_are_escaped_and_an_empty_set_draws_the_history_only():
    evil = make_forecast("<b>x</b> & y")
    fig = comparison_figure([evil], demand_unit="<i>MW</i>")
    assert fig.data[-1].name == "&lt;b&gt;x&lt;/b&gt; &amp; y: mean"
    assert "<i>" not in fig.data[-1].hovertemplate
    assert "<i>" not in fig.layout.yaxis.title.text
    alone = comparison_figure([], history_tail=_history())
    assert [t.name for t in alone.data] == ["recorded demand"]
    with pytest.raises(InputError, match="share the scenario name"):
        comparison_figure([evil, evil])


def test_meeting_view_is_tall_with_the_bands_out_of_the_legend():
    fc = make_forecast("base", out_idx=(0,))
    screen = comparison_figure([fc])
    meeting = comparison_figure([fc], meeting=True)
    assert meeting.layout.height > screen.layout.height
    assert meeting.layout.font.size > screen.layout.font.size
    shown = [t.name for t in meeting.data if t.showlegend is not False]
    assert shown == ["base: mean", "base: outside the fitted range"]
    assert screen.layout.yaxis.title.text == "daily peak demand, MW"
    total = comparison_figure([fc], demand_unit="MWh", demand_kind="total")
    assert total.layout.yaxis.title.text == "daily total demand, MWh"


def test_the_brief_embeds_the_same_figure():
    """The brief draws comparison_figure's traces: same names, same values, in the same order."""
    forecasts = [make_forecast("base"), make_forecast("hot", level_mw=2200, out_idx=(3,))]
    history = _history().rename("demand").to_frame()
    fig = comparison_figure(forecasts, history_tail=history, temp_unit="F")
    text = meeting_brief_html(
        forecasts,
        history_tail=history,
        model_summary={"Error model": describe_orders((1, 0, 1), (1, 0, 0, 7))},
        base_name="base",
        title="Outlook",
        period_text="History 2026-01-01 to 2031-06-30",
        temp_unit="F",
    )
    call = text[text.index("Plotly.newPlot(") :]
    embedded, _ = json.JSONDecoder().raw_decode(call[call.index("[") :])
    expected = json.loads(fig.to_json())["data"]
    assert len(embedded) == len(expected)
    for got, want in zip(embedded, expected, strict=True):
        # the HTML writer spells times without microseconds; the values are the same
        assert list(pd.to_datetime(got.pop("x"))) == list(pd.to_datetime(want.pop("x")))
        assert got == want


def test_the_legend_has_one_entry_per_scenario_below_the_chart():
    """Five scenarios give five legend entries (their means), plus the recorded demand and one
    entry for the out-of-range marker; bands and markers share their scenario's legend group."""
    forecasts = [
        make_forecast(f"s{i}", level_mw=1900 + 60 * i, out_idx=(1,) if i in (2, 4) else (), seed=i)
        for i in range(5)
    ]
    fig = comparison_figure(forecasts, history_tail=_history())
    shown = [t.name for t in fig.data if t.showlegend is not False]
    assert shown == [
        "recorded demand",
        "s0: mean",
        "s1: mean",
        "s2: mean",
        "s2: outside the fitted range",
        "s3: mean",
        "s4: mean",
    ]
    for trace in fig.data[1:]:
        assert trace.legendgroup and trace.legendgroup.startswith("scenario-")
    assert fig.layout.legend.y < 0  # below the plot, clear of the toolbar
    means = [t for t in fig.data if t.name and t.name.endswith(": mean")]
    assert len({(t.line.color, t.line.dash) for t in means}) == 5
