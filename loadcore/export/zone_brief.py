"""The zones brief: one self-contained HTML file on a system's zones and their total, offline.

It reads a :class:`loadcore.zones.forecast.SystemForecast` and carries the system total with its
bands, a table per zone (mean over the window, peak day, days outside the fitted range, share
of the system), the comparison of the system band with the sum of the zones' bands, and the
cautions of :mod:`loadcore.texts`. Style, table helper and palette are the meeting brief's
(:mod:`loadcore.export.brief`); every piece of user text is HTML-escaped.
"""

from __future__ import annotations

import html
from typing import Any

import numpy as np
import pandas as pd

from loadcore import levels as interval_levels
from loadcore import texts, units
from loadcore.errors import InputError
from loadcore.export import palette
from loadcore.export.brief import _fmt_number, _table, html_document
from loadcore.export.figures import SCREEN_HEIGHT, _add_scenario, figure_html, style_figure


def zone_breakdown(system_forecast: Any) -> pd.DataFrame:
    """Per zone, then the system: ``zone``, ``mean`` (average daily mean over the window),
    ``peak_date``, ``peak_mean``, ``days_out_of_range``, ``share_pct`` (of the system's mean)."""
    sf = system_forecast
    system_mean = float(sf.system["mean"].astype(float).mean())
    rows = []
    for zone in sf.zones:
        f = sf.zone_forecasts[zone].frame
        rows.append(_row(zone, f, system_mean))
    rows.append(_row("System total", sf.system, system_mean))
    return pd.DataFrame(rows)


def _row(name: str, frame: pd.DataFrame, system_mean: float) -> dict:
    mean = frame["mean"].astype(float)
    top = int(np.argmax(mean.to_numpy()))
    avg = float(mean.mean())
    return {
        "zone": str(name),
        "mean": avg,
        "peak_date": pd.Timestamp(frame["date"].iloc[top]),
        "peak_mean": float(mean.iloc[top]),
        "days_out_of_range": int(frame["out_of_range"].astype(bool).sum()),
        "share_pct": 100.0 * avg / system_mean if system_mean else float("nan"),
    }


def _system_figure(sf: Any, unit: units.Unit):
    import plotly.graph_objects as go

    frame = sf.system.copy()
    flags = frame["out_of_range"].astype(bool).to_numpy()
    frame["out_of_range"] = False
    fig = go.Figure()
    _add_scenario(
        fig,
        frame,
        tuple(sf.levels),
        0,
        "System total",
        unit,
        sf.demand_unit,
        False,
        marker_legend=False,
    )
    if flags.any():
        fig.add_trace(
            go.Scatter(
                x=frame["date"][flags],
                y=frame["mean"][flags].astype(float),
                mode="markers",
                marker={
                    "color": palette.OUTSIDE,
                    "size": 10,
                    "symbol": palette.OUTSIDE_SYMBOL,
                    "line": {"color": "white", "width": 1},
                },
                name="some zone outside its fitted range",
            )
        )
    style_figure(fig, height=SCREEN_HEIGHT)
    fig.update_yaxes(title_text=f"System total ({sf.demand_unit})")
    return fig


def zone_brief_html(
    system_forecast: Any,
    *,
    title: str,
    period_text: str = "",
    temp_unit: str = "C",
) -> str:
    """A self-contained HTML brief on a system's zones and total; opens offline.

    Parameters
    ----------
    system_forecast : SystemForecast
        From :func:`loadcore.zones.forecast.forecast_zones`.
    title : str
        Heading of the brief.
    period_text : str, default ""
        The data period in words; blank leaves it out.
    temp_unit : {"C", "F"}, default "C"
        Unit for temperatures in the zones' notes.

    Returns
    -------
    str
        A complete HTML document.

    Raises
    ------
    InputError
        When ``system_forecast`` is not a system forecast.
    """
    unit = units.parse_unit(temp_unit)
    sf = system_forecast
    if not all(hasattr(sf, a) for a in ("zones", "zone_forecasts", "system", "band_comparison")):
        raise InputError(
            f"The zones brief needs a system forecast, got {type(sf).__name__}",
            fix="Pass the result of loadcore.zones.forecast.forecast_zones",
        )
    du = str(sf.demand_unit)
    chart = figure_html(_system_figure(sf, unit), "system-outlook")
    breakdown = zone_breakdown(sf)
    rows = [
        [
            r.zone,
            _fmt_number(r.mean),
            f"{r.peak_date:%Y-%m-%d}",
            _fmt_number(r.peak_mean),
            str(r.days_out_of_range),
            _fmt_number(r.share_pct, 1),
        ]
        for r in breakdown.itertuples(index=False)
    ]
    table = _table(
        [
            "Zone",
            f"Mean daily value ({du})",
            "Peak day",
            f"Peak day mean ({du})",
            "Days outside range",
            "Share of system (%)",
        ],
        rows,
        css="numbers",
    )
    cmp = sf.band_comparison()
    label = interval_levels.level_label(cmp["level"])
    band_table = _table(
        ["Band", f"Average width ({du})"],
        [
            [f"System total, {label} % (joint paths)", _fmt_number(cmp["system_width"])],
            [f"Sum of the zones' {label} % bands", _fmt_number(cmp["sum_of_zone_widths"])],
        ],
        css="numbers",
    )
    band_note = (
        f"The zones' daily shocks correlate {cmp['mean_pairwise_correlation']:.2f} on average "
        f"over {cmp['common_days']} common days; the system band comes from {sf.n_paths} joint "
        f"sample paths (seed {sf.seed}). Adding the zones' bands would be right only if the "
        "zones moved in lockstep."
    )
    warnings = []
    for zone in sf.zones:
        fn = getattr(sf.zone_forecasts[zone], "warnings", None)
        for w in (fn(unit) if callable(fn) else None) or []:
            warnings.append(
                f"<li><strong>{html.escape(str(zone))}</strong>: {html.escape(str(w))}</li>"
            )
    warnings_html = f'<ul class="plain">{"".join(warnings)}</ul>' if warnings else ""
    s = sf.system
    horizon = f"Forecast days: {s['date'].min():%Y-%m-%d} to {s['date'].max():%Y-%m-%d}."
    period = f"{period_text} " if period_text else ""
    cautions = [texts.PLANNING_CAUTION, texts.ZONE_TOTAL_CAUTION, texts.INTERVAL_CAUTION]
    cautions += [texts.RANGE_CAUTION]
    body = f"""<h2>System total</h2>
<p class="caution" id="zone-total-caution">{html.escape(texts.ZONE_TOTAL_CAUTION)}</p>
<p class="note">The line is the system's mean; shaded bands are prediction intervals from joint
sample paths; triangles mark days on which some zone lies outside its fitted range.</p>
{chart}

<h2>Zone breakdown</h2>
{table}
{warnings_html}

<h2>System band and the sum of the zones' bands</h2>
{band_table}
<p class="note">{html.escape(band_note)}</p>"""
    return html_document(title=title, period_line=period + horizon, body=body, cautions=cautions)
