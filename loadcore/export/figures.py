"""The one comparison figure, drawn alike on the app's pages and in the offline meeting brief.

:func:`comparison_figure` draws recent recorded demand, then each scenario's mean with its
prediction-interval bands and markers on the days outside the fitted temperature range.
:func:`style_figure` is the one chart style (palette colours and type) that every app figure uses
too. Nothing here computes a statistic: the figure draws forecast tables as they are.
"""

from __future__ import annotations

import html
from collections.abc import Sequence
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from loadcore import levels as interval_levels
from loadcore import units
from loadcore.export import palette
from loadcore.export.forecasts import (
    ForecastLike,
    as_list,
    forecast_frame,
    forecast_levels,
    history_series,
    parse_demand_kind,
    scenario_names,
)

if TYPE_CHECKING:  # plotly is imported when a figure is drawn, not when loadcore.export is
    import plotly.graph_objects as go

# Band opacity by interval width: the narrowest level darkest (our choice).
BAND_ALPHAS = (0.30, 0.14, 0.08)
# Chart size on a screen and on a projector (the meeting view), pixels and points.
SCREEN_HEIGHT, SCREEN_FONT = 480, 14
MEETING_HEIGHT, MEETING_FONT = 720, 22


def style_figure(
    fig: go.Figure, *, height: int, font_size: int = SCREEN_FONT, legend_top: bool = True
) -> None:
    """Apply the one chart style to ``fig`` (in place): palette colours, type, grid and margins.

    Parameters
    ----------
    fig : plotly.graph_objects.Figure
        The figure to style.
    height : int
        Figure height, pixels.
    font_size : int, default 14
        Base font size, points; above 16 the margins widen for a projector.
    legend_top : bool, default True
        A horizontal legend (above the plot; :func:`comparison_figure` moves its own below, clear
        of the chart's toolbar).
    """
    big = font_size > 16
    fig.update_layout(
        height=height,
        margin={"l": 110 if big else 70, "r": 40, "t": 40, "b": 90 if big else 50},
        paper_bgcolor=palette.PAPER,
        plot_bgcolor="white",
        font={"family": palette.FONT_FAMILY, "size": font_size, "color": palette.INK},
        hovermode="x unified",
    )
    if legend_top:
        fig.update_layout(
            legend={"orientation": "h", "yanchor": "bottom", "y": 1.02, "xanchor": "left", "x": 0}
        )
    fig.update_xaxes(gridcolor=palette.GRID, zeroline=False, automargin=True)
    fig.update_yaxes(gridcolor=palette.GRID, zeroline=False, automargin=True)


def comparison_figure(
    forecasts: Sequence[ForecastLike],
    *,
    history_tail: pd.DataFrame | pd.Series | None = None,
    temp_unit: units.Unit = "C",
    demand_unit: str = "MW",
    demand_kind: str = "peak",
    meeting: bool = False,
) -> go.Figure:
    """Recent recorded demand, then each scenario's mean, interval bands and out-of-range days.

    Parameters
    ----------
    forecasts : sequence of ForecastLike
        Forecasts with distinct scenario names (a model Forecast or one reloaded from the
        library); each is drawn with its own interval levels. May be empty (history only).
    history_tail : pandas.Series or pandas.DataFrame, optional
        Recent recorded demand (a Series, or a table with a ``demand`` column on a date index),
        demand unit; drawn before the scenarios.
    temp_unit : {"C", "F"}, default "C"
        Unit of the temperatures shown when hovering over an out-of-range day.
    demand_unit : str, default "MW"
        Demand unit of the history, for the axis title and hover text.
    demand_kind : {"peak", "total"}, default "peak"
        Whether daily demand is the daily peak or the daily total (axis title only).
    meeting : bool, default False
        Large type and a tall chart for a projector.

    Returns
    -------
    plotly.graph_objects.Figure
        Traces in order: recorded demand (when given); then per scenario, for each level from the
        widest, the band's upper edge and its lower edge (filled to the upper), the mean, and the
        out-of-range markers when the scenario has such days. The legend, below the chart, has
        one entry per scenario (its mean; its bands and markers belong to the same legend group,
        so they follow it when it is hidden) and one entry for the out-of-range marker, on the
        first scenario that has such days. Each scenario has its colour and line pattern
        (:mod:`loadcore.export.palette`). User text (scenario names, the demand unit) is
        HTML-escaped.
    """
    import plotly.graph_objects as go

    unit = units.parse_unit(temp_unit)
    kind = parse_demand_kind(demand_kind)
    items = as_list(forecasts)
    names = scenario_names(items, allow_empty=True)
    history = history_series(history_tail)
    du = html.escape(str(demand_unit).strip() or "MW")
    fig = go.Figure()
    if not history.empty:
        fig.add_trace(
            go.Scatter(
                x=history.index,
                y=history.to_numpy(),
                mode="lines",
                line={"color": palette.HISTORY, "width": 2},
                name="recorded demand",
                hovertemplate="%{x|%Y-%m-%d}: %{y:,.0f} " + du + "<extra>recorded</extra>",
            )
        )
    first_days = []
    marker_in_legend = False
    for i, (fc, name) in enumerate(zip(items, names, strict=True)):
        frame = forecast_frame(fc, i)
        first_days.append(frame["date"].min())
        marker_in_legend |= _add_scenario(
            fig,
            frame,
            forecast_levels(fc),
            i,
            html.escape(name),
            unit,
            du,
            meeting,
            marker_legend=not marker_in_legend,
        )
    if first_days and not history.empty:
        first = min(first_days)
        fig.add_shape(
            type="line",
            xref="x",
            yref="paper",
            x0=first,
            x1=first,
            y0=0,
            y1=1,
            line={"color": palette.MUTED, "width": 1, "dash": "dot"},
        )
        fig.add_annotation(
            x=first,
            y=1,
            xref="x",
            yref="paper",
            text="scenarios start",
            showarrow=False,
            xanchor="left",
            yanchor="top",
            font={"size": 11, "color": palette.MUTED},
        )
    fig.update_yaxes(title_text=f"daily {kind} demand, {du}")
    style_figure(
        fig,
        height=MEETING_HEIGHT if meeting else SCREEN_HEIGHT,
        font_size=MEETING_FONT if meeting else SCREEN_FONT,
        legend_top=False,
    )
    # The legend below the plot, clear of the toolbar in the chart's top right corner.
    fig.update_layout(
        legend={
            "orientation": "h",
            "yanchor": "top",
            "y": -0.14 if meeting else -0.12,
            "xanchor": "left",
            "x": 0,
            "groupclick": "togglegroup",
        },
        margin={"b": 170 if meeting else 110},
    )
    return fig


def _add_scenario(
    fig: go.Figure,
    frame: pd.DataFrame,
    levels: tuple[float, ...],
    position: int,
    label: str,
    unit: units.Unit,
    demand_unit: str,
    meeting: bool,
    *,
    marker_legend: bool,
) -> bool:
    """One scenario's bands (widest first), mean line and out-of-range markers; True when the
    markers were drawn with a legend entry (``marker_legend`` and days outside the range)."""
    import plotly.graph_objects as go

    colour = palette.scenario_colour(position)
    group = f"scenario-{position}"
    alphas = dict(zip(sorted(levels), BAND_ALPHAS, strict=False))
    for level in sorted(levels, reverse=True):
        fig.add_trace(
            go.Scatter(
                x=frame["date"],
                y=frame[interval_levels.upper_column(level)].astype(float),
                mode="lines",
                line={"width": 0, "color": colour},
                legendgroup=group,
                showlegend=False,
                hoverinfo="skip",
            )
        )
        fig.add_trace(
            go.Scatter(
                x=frame["date"],
                y=frame[interval_levels.lower_column(level)].astype(float),
                mode="lines",
                line={"width": 0, "color": colour},
                fill="tonexty",
                fillcolor=palette.band_fill(colour, alphas.get(level, BAND_ALPHAS[-1])),
                legendgroup=group,
                name=f"{label}: {interval_levels.level_label(level)}% interval",
                showlegend=False,
                hoverinfo="skip",
            )
        )
    fig.add_trace(
        go.Scatter(
            x=frame["date"],
            y=frame["mean"].astype(float),
            mode="lines",
            line={
                "color": colour,
                "width": 3 if meeting else 2,
                "dash": palette.scenario_dash(position),
            },
            legendgroup=group,
            name=f"{label}: mean",
            hovertemplate="%{x|%Y-%m-%d}: %{y:,.0f} "
            + demand_unit
            + "<extra>"
            + label
            + "</extra>",
        )
    )
    flagged = frame[frame["out_of_range"].astype(bool)]
    if flagged.empty:
        return False
    shown = units.to_unit(flagged["temperature_c"].astype(float), unit)
    by = units.delta_to_unit(flagged["out_of_range_by_c"].astype(float).abs(), unit)
    sign = units.symbol(unit)
    fig.add_trace(
        go.Scatter(
            x=flagged["date"],
            y=flagged["mean"].astype(float),
            mode="markers",
            marker={
                "color": palette.OUTSIDE,
                "size": 14 if meeting else 10,
                "symbol": palette.OUTSIDE_SYMBOL,
                "line": {"color": "white", "width": 1},
            },
            legendgroup=group,
            name=f"{label}: outside the fitted range",
            showlegend=marker_legend,
            customdata=np.column_stack([np.asarray(shown), np.asarray(by)]),
            hovertemplate=(
                "%{x|%Y-%m-%d}: %{customdata[0]:.1f} "
                + sign
                + ", %{customdata[1]:.1f} "
                + sign
                + " outside the fitted range<extra>"
                + label
                + "</extra>"
            ),
        )
    )
    return marker_legend


def figure_html(fig: go.Figure, div_id: str) -> str:
    """The figure as an HTML fragment with plotly.js inline, so it draws with no network."""
    import plotly.io as pio

    return pio.to_html(
        fig,
        include_plotlyjs=True,
        include_mathjax=False,
        full_html=False,
        config={"displaylogo": False, "responsive": True},
        div_id=div_id,
    )
