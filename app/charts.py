"""Plotly figures for the planner app's pages (history, response, paths, fans, bars, lines).

Each function takes loadcore results (already computed) and returns a ``plotly.graph_objects.Figure``;
nothing here computes a statistic. Colours and the chart style are loadcore's
(:mod:`loadcore.export.palette`, :func:`loadcore.export.style_figure`); the scenario comparison is
:func:`loadcore.export.comparison_figure`, the same figure the meeting brief embeds. Temperatures
arrive in °C and are converted for display with the ``to_unit`` callable the page passes (identity
for °C).
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence

import numpy as np
import pandas as pd
import plotly.graph_objects as go
from plotly.subplots import make_subplots

from loadcore.calendar import day_type_label
from loadcore.export import palette, style_figure

Convert = Callable[[np.ndarray], np.ndarray]


def _identity(values):
    return values


def _ordered_types(types: pd.Series) -> list[str]:
    """Day types present, in the palette's order (weekdays first), overrides after."""
    present = [str(t) for t in pd.unique(types)]
    known = [t for t in palette.DAY_TYPES if t in present]
    return known + [t for t in present if t not in known]


def history_figure(
    frame: pd.DataFrame,
    day_types: pd.Series,
    *,
    to_unit: Convert = _identity,
    unit: str = "°C",
    demand_unit: str = "MW",
) -> go.Figure:
    """Demand over time coloured by day type, with the temperature beneath on a shared time axis.

    Parameters
    ----------
    frame : pd.DataFrame
        ``History.frame`` (daily index; ``demand`` in ``demand_unit``, ``temperature_c`` in °C).
    day_types : pd.Series
        Day type for each date of ``frame``.
    demand_unit : str, default "MW"
        The history's demand unit (``HistorySettings.demand_unit``), for the axis and hover text.
    """
    fig = make_subplots(
        rows=2,
        cols=1,
        shared_xaxes=True,
        vertical_spacing=0.05,
        row_heights=[0.66, 0.34],
    )
    dates = frame.index
    fig.add_trace(
        go.Scattergl(
            x=dates,
            y=frame["demand"],
            mode="lines",
            line={"color": palette.GRID, "width": 1},
            name="daily demand",
            showlegend=False,
            hoverinfo="skip",
        ),
        row=1,
        col=1,
    )
    types = day_types.reindex(dates)
    colours = palette.day_type_colours(_ordered_types(types))
    for name, colour in colours.items():
        mask = (types == name).to_numpy()
        fig.add_trace(
            go.Scattergl(
                x=dates[mask],
                y=frame["demand"].to_numpy()[mask],
                mode="markers",
                marker={"color": colour, "size": 4},
                name=day_type_label(name),
                legendgroup=name,
                hovertemplate="%{x|%a %d %b %Y}: %{y:,.0f} "
                + demand_unit
                + "<extra>"
                + name
                + "</extra>",
            ),
            row=1,
            col=1,
        )
    fig.add_trace(
        go.Scattergl(
            x=dates,
            y=to_unit(frame["temperature_c"].to_numpy()),
            mode="lines",
            line={"color": palette.TEMPERATURE, "width": 1},
            name="daily maximum temperature",
            hovertemplate="%{y:.1f} " + unit + "<extra></extra>",
        ),
        row=2,
        col=1,
    )
    fig.update_yaxes(title_text=f"demand, {demand_unit}", row=1, col=1)
    fig.update_yaxes(title_text=f"temperature, {unit}", row=2, col=1)
    style_figure(fig, height=560)
    return fig


def response_figure(
    frame: pd.DataFrame,
    day_types: pd.Series,
    *,
    curve_c: np.ndarray | None = None,
    curve_mw: np.ndarray | None = None,
    range_c: tuple[float, float] | None = None,
    to_unit: Convert = _identity,
    unit: str = "°C",
    demand_unit: str = "MW",
    curve_name: str = "fitted response (reference day type)",
    other_curve_mw: np.ndarray | None = None,
    other_curve_name: str = "other response (reference day type)",
) -> go.Figure:
    """Demand against temperature coloured by day type, with the fitted response and range
    (``curve_mw`` and the demand axis in ``demand_unit``, the history's own unit), and the other
    temperature response's curve ``other_curve_mw`` (dashed, at ``curve_c``) when given."""
    fig = go.Figure()
    types = day_types.reindex(frame.index)
    colours = palette.day_type_colours(_ordered_types(types))
    temps = to_unit(frame["temperature_c"].to_numpy())
    for name, colour in colours.items():
        mask = (types == name).to_numpy()
        fig.add_trace(
            go.Scattergl(
                x=temps[mask],
                y=frame["demand"].to_numpy()[mask],
                mode="markers",
                marker={"color": colour, "size": 5, "opacity": 0.6},
                name=day_type_label(name),
            )
        )
    if range_c is not None:
        low, high = (float(v) for v in to_unit(np.asarray(range_c, dtype=float)))
        fig.add_vrect(
            x0=low,
            x1=high,
            fillcolor=palette.RANGE_BAND,
            line_width=0,
            layer="below",
            annotation_text="fitted temperature range",
            annotation_position="top left",
        )
    if curve_c is not None and curve_mw is not None:
        fig.add_trace(
            go.Scatter(
                x=to_unit(np.asarray(curve_c, dtype=float)),
                y=np.asarray(curve_mw, dtype=float),
                mode="lines",
                line={"color": palette.INK, "width": 3},
                name=curve_name,
            )
        )
    if curve_c is not None and other_curve_mw is not None:
        fig.add_trace(
            go.Scatter(
                x=to_unit(np.asarray(curve_c, dtype=float)),
                y=np.asarray(other_curve_mw, dtype=float),
                mode="lines",
                line={"color": palette.MUTED, "width": 3, "dash": "dash"},
                name=other_curve_name,
            )
        )
    fig.update_xaxes(title_text=f"daily maximum temperature, {unit}")
    fig.update_yaxes(title_text=f"demand, {demand_unit}")
    style_figure(fig, height=460)
    fig.update_layout(hovermode="closest")
    return fig


def path_figure(
    dates: pd.DatetimeIndex,
    temperature_c: np.ndarray,
    range_c: tuple[float, float],
    *,
    to_unit: Convert = _identity,
    unit: str = "°C",
) -> go.Figure:
    """A scenario's temperature path against the fitted temperature range (band shaded)."""
    temps_c = np.asarray(temperature_c, dtype=float)
    low_c, high_c = (float(v) for v in range_c)
    low, high = (float(v) for v in to_unit(np.array([low_c, high_c])))
    fig = go.Figure()
    fig.add_hrect(
        y0=low,
        y1=high,
        fillcolor=palette.RANGE_BAND,
        line_width=0,
        layer="below",
        annotation_text="fitted temperature range",
        annotation_position="top left",
    )
    for edge in (low, high):
        fig.add_hline(y=edge, line={"color": palette.RANGE_EDGE, "width": 1, "dash": "dot"})
    shown = to_unit(temps_c)
    fig.add_trace(
        go.Scatter(
            x=dates,
            y=shown,
            mode="lines+markers",
            line={"color": palette.TEMPERATURE, "width": 2},
            marker={"size": 5},
            name="scenario temperature",
            hovertemplate="%{x|%a %d %b}: %{y:.1f} " + unit + "<extra></extra>",
        )
    )
    outside = (temps_c > high_c) | (temps_c < low_c)
    if outside.any():
        fig.add_trace(
            go.Scatter(
                x=dates[outside],
                y=shown[outside],
                mode="markers",
                marker={"color": palette.OUTSIDE, "size": 11, "symbol": palette.OUTSIDE_SYMBOL},
                name="outside the fitted range",
            )
        )
    fig.update_yaxes(title_text=f"daily maximum temperature, {unit}")
    style_figure(fig, height=320)
    return fig


def fan_figure(
    daily: pd.DataFrame,
    *,
    history_tail: pd.Series | None = None,
    threshold_mw: float | None = None,
    demand_unit: str = "MW",
) -> go.Figure:
    """A fan chart of an ensemble's P10-P90 band with the median and an optional threshold line
    (demand and threshold in ``demand_unit``, the history's own unit)."""
    fig = go.Figure()
    dates = pd.DatetimeIndex(daily["date"])
    colour = palette.SCENARIOS[0]
    if history_tail is not None:
        fig.add_trace(
            go.Scatter(
                x=history_tail.index,
                y=history_tail.to_numpy(),
                mode="lines",
                line={"color": palette.HISTORY, "width": 2},
                name="history",
            )
        )
    fig.add_trace(
        go.Scatter(
            x=np.concatenate([dates, dates[::-1]]),
            y=np.concatenate([daily["p90"].to_numpy(), daily["p10"].to_numpy()[::-1]]),
            fill="toself",
            fillcolor=palette.band_fill(colour, 0.22),
            line={"width": 0},
            name="P10 to P90",
            hoverinfo="skip",
        )
    )
    fig.add_trace(
        go.Scatter(
            x=dates,
            y=daily["p50"].to_numpy(),
            mode="lines",
            line={"color": colour, "width": 2},
            name="P50",
        )
    )
    if threshold_mw is not None:
        fig.add_hline(
            y=float(threshold_mw),
            line={"color": palette.THRESHOLD, "width": 2, "dash": "dash"},
            annotation_text=f"threshold {threshold_mw:,.0f} {demand_unit}",
            annotation_position="top left",
        )
    fig.update_yaxes(title_text=f"daily peak demand, {demand_unit}")
    style_figure(fig, height=440)
    return fig


def _guide_lines(
    fig: go.Figure, hlines: Mapping[str, float] | None, *, colour: str, dash: str, position: str
) -> None:
    """Labelled horizontal guide lines (bounds, thresholds) on a figure."""
    for label, value in (hlines or {}).items():
        fig.add_hline(
            y=float(value),
            line={"color": colour, "width": 1, "dash": dash},
            annotation_text=label,
            annotation_position=position,
        )


def bars_figure(
    x: Sequence,
    y: Sequence,
    *,
    x_title: str,
    y_title: str,
    colour: str = palette.SCENARIOS[0],
    hlines: Mapping[str, float] | None = None,
    height: int = 320,
) -> go.Figure:
    """A plain bar chart (ACF bars, PIT histogram, peak distribution) with optional guide lines."""
    fig = go.Figure(go.Bar(x=list(x), y=list(y), marker={"color": colour}, showlegend=False))
    _guide_lines(fig, hlines, colour=palette.OUTSIDE, dash="dash", position="top right")
    fig.update_xaxes(title_text=x_title)
    fig.update_yaxes(title_text=y_title)
    style_figure(fig, height=height, legend_top=False)
    fig.update_layout(hovermode="closest")
    return fig


def histogram_figure(
    values: np.ndarray,
    *,
    x_title: str,
    y_title: str,
    bins: int = 40,
    height: int = 280,
) -> go.Figure:
    """A histogram of ``values``, binned by the chart library when it draws."""
    fig = go.Figure(
        go.Histogram(
            x=np.asarray(values, dtype=float),
            nbinsx=bins,
            marker={"color": palette.SCENARIOS[2]},
            showlegend=False,
        )
    )
    fig.update_xaxes(title_text=x_title)
    fig.update_yaxes(title_text=y_title)
    style_figure(fig, height=height, legend_top=False)
    fig.update_layout(hovermode="closest", bargap=0.04)
    return fig


def lines_figure(
    frame: pd.DataFrame,
    x: str,
    ys: Sequence[str],
    *,
    x_title: str,
    y_title: str,
    height: int = 320,
    hlines: Mapping[str, float] | None = None,
) -> go.Figure:
    """Several columns of ``frame`` against ``x`` as lines (residuals, scores by horizon)."""
    fig = go.Figure()
    for i, column in enumerate(ys):
        fig.add_trace(
            go.Scatter(
                x=frame[x],
                y=frame[column],
                mode="lines+markers" if len(frame) <= 120 else "lines",
                line={"color": palette.scenario_colour(i), "width": 2},
                name=column.replace("_", " "),
            )
        )
    _guide_lines(fig, hlines, colour=palette.MUTED, dash="dot", position="top left")
    fig.update_xaxes(title_text=x_title)
    fig.update_yaxes(title_text=y_title)
    style_figure(fig, height=height)
    return fig
