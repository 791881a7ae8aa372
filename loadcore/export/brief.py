"""The meeting brief: one self-contained HTML file for a planning meeting, opening offline.

The brief embeds the same comparison figure the app's Compare page draws
(:func:`loadcore.export.figures.comparison_figure`) with plotly.js inline, so nothing is fetched
from the network. Every piece of user text is HTML-escaped; the cautions come from
:mod:`loadcore.texts` and the colours from :mod:`loadcore.export.palette`.
"""

from __future__ import annotations

import html
import logging
import math
from collections.abc import Mapping, Sequence
from datetime import UTC, datetime
from typing import Any

import pandas as pd

from loadcore import texts, units
from loadcore.errors import InputError
from loadcore.export import palette
from loadcore.export.figures import comparison_figure, figure_html
from loadcore.export.forecasts import (
    ForecastLike,
    as_list,
    forecast_frame,
    history_series,
    parse_demand_kind,
    scenario_names,
)
from loadcore.export.tables import RESPONSE_NOTE_LABEL, comparison_summary, out_of_range_days
from loadcore.version import __version__

log = logging.getLogger(__name__)


def _fmt_number(value: Any, digits: int = 0, signed: bool = False) -> str:
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return "–"
    sign = "+" if signed else ""
    return f"{float(value):{sign},.{digits}f}"


def _table(headers: Sequence[str], rows: Sequence[Sequence[str]], css: str = "") -> str:
    head = "".join(f"<th>{html.escape(h)}</th>" for h in headers)
    body = "".join(
        "<tr>" + "".join(f"<td>{html.escape(str(c))}</td>" for c in row) + "</tr>" for row in rows
    )
    cls = f' class="{css}"' if css else ""
    return f"<table{cls}><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"


_STYLE = f"""
body {{ background: {palette.PAPER}; color: {palette.INK}; margin: 0;
  font-family: {palette.FONT_FAMILY}; line-height: 1.45; }}
main {{ max-width: 1080px; margin: 0 auto; padding: 28px 32px 48px; }}
h1 {{ font-size: 1.7rem; margin: 0 0 4px; letter-spacing: 0.01em; }}
h2 {{ font-size: 1.15rem; margin: 30px 0 8px; padding-bottom: 3px;
  border-bottom: 2px solid {palette.GRID}; }}
.period {{ color: {palette.MUTED}; margin: 0 0 14px; }}
.caution {{ border-left: 5px solid {palette.OUTSIDE}; background: {palette.CAUTION_FILL};
  padding: 10px 14px; margin: 12px 0; }}
table {{ border-collapse: collapse; width: 100%; font-size: 0.92rem; background: #fff; }}
th, td {{ padding: 5px 9px; border-bottom: 1px solid {palette.GRID}; text-align: left;
  vertical-align: top; }}
th {{ background: {palette.HEADING_FILL}; font-weight: 600; }}
table.numbers td:not(:first-child) {{ text-align: right; font-variant-numeric: tabular-nums;
  white-space: nowrap; }}
ul.plain {{ padding-left: 20px; }}
footer {{ margin-top: 36px; font-size: 0.82rem; color: {palette.MUTED}; }}
.note {{ color: {palette.MUTED}; font-size: 0.9rem; }}
"""


def meeting_brief_html(
    forecasts: Sequence[ForecastLike],
    *,
    history_tail: pd.DataFrame | None,
    model_summary: Mapping[str, Any],
    base_name: str,
    title: str,
    period_text: str,
    temp_unit: str = "C",
    demand_unit: str = "MW",
    demand_kind: str = "peak",
) -> str:
    """A self-contained HTML brief for a planning meeting; opens offline.

    The chart library is embedded inline and nothing is fetched from the network. All user text
    (titles, scenario names, notes, model summary values) is HTML-escaped.

    Parameters
    ----------
    forecasts : sequence of Forecast
        The scenarios to show, with distinct names.
    history_tail : pandas.DataFrame or None
        Recent recorded demand: a ``demand`` column on a date index (or a ``date`` column), as in
        ``History.frame``; drawn before the scenarios. ``None`` draws no history.
    model_summary : mapping of str to Any
        Label -> value pairs describing the model (see :func:`summarise_model`).
    base_name : str
        The scenario the others are compared with.
    title : str
        Heading of the brief.
    period_text : str
        The data period in words, e.g. "History 2019-01-01 to 2024-12-31".
    temp_unit : {"C", "F"}, default "C"
        Unit for temperatures shown in the brief.
    demand_unit : str, default "MW"
        Demand unit of the history.
    demand_kind : {"peak", "total"}, default "peak"
        Whether daily demand is a daily peak or a daily total (see :func:`comparison_summary`).

    Returns
    -------
    str
        A complete HTML document.
    """
    unit = units.parse_unit(temp_unit)
    items = as_list(forecasts)
    names = scenario_names(items)
    summary = comparison_summary(items, base_name, demand_unit=demand_unit, demand_kind=demand_kind)
    flagged = out_of_range_days(items, temp_unit=unit)
    history = history_series(history_tail)
    figure = comparison_figure(
        items,
        history_tail=history,
        temp_unit=unit,
        demand_unit=demand_unit,
        demand_kind=demand_kind,
    )
    chart = figure_html(figure, "demand-outlook")
    du = str(demand_unit)

    summary_rows = [
        [
            row.scenario + (" (base)" if row.scenario == base_name else ""),
            str(row.days),
            f"{row.peak_date:%Y-%m-%d}",
            _fmt_number(row.peak_mean),
            _fmt_number(row.peak_vs_base, signed=True),
            _fmt_number(row.peak_vs_base_pct, 1, signed=True),
            _fmt_number(row.sum_of_daily_means),
            _fmt_number(row.sum_vs_base_pct, 1, signed=True),
            str(row.days_out_of_range),
        ]
        for row in summary.itertuples(index=False)
    ]
    summary_table = _table(
        [
            "Scenario",
            "Days",
            "Peak day",
            f"Peak mean ({du})",
            f"Peak vs base ({du})",
            "Peak vs base (%)",
            f"Sum of daily means ({du}-days)"
            if parse_demand_kind(demand_kind) == "peak"
            else f"Sum of daily means ({du})",
            "Sum vs base (%)",
            "Days outside range",
        ],
        summary_rows,
        css="numbers",
    )
    notes = [summary.attrs["sum_note"]]
    if "horizon_note" in summary.attrs:
        notes.append(summary.attrs["horizon_note"])

    if flagged.empty:
        range_html = (
            "<p>No scenario day lies outside the temperature range the model was fitted on.</p>"
        )
    else:
        temp_col, by_col = units.temperature_column(unit), units.out_of_range_column(unit)
        range_rows = [
            [
                row["scenario"],
                f"{row['date']:%Y-%m-%d}",
                f"{row[temp_col]:.1f} {units.symbol(unit)}",
                f"{row[by_col]:.1f} {units.symbol(unit)}",
            ]
            for _, row in flagged.iterrows()
        ]
        range_html = f'<p class="caution">{html.escape(texts.RANGE_CAUTION)}</p>' + _table(
            ["Scenario", "Date", "Temperature", "How far outside"], range_rows
        )

    scenario_items = []
    for fc, name in zip(items, names, strict=True):
        note = str(getattr(fc, "note", "") or "")
        text = f"<li><strong>{html.escape(name)}</strong>"
        if note:
            text += f" - {html.escape(note)}"
        warnings_fn = getattr(fc, "warnings", None)
        messages: list[str] = []
        if callable(warnings_fn):
            try:
                messages = [str(w) for w in (warnings_fn(unit) or [])]
            except Exception:  # noqa: BLE001 - warnings are extra; never fail the brief on them
                log.exception("forecast warnings failed for %s", name)
        if messages:
            text += (
                '<ul class="plain">'
                + "".join(f"<li>{html.escape(m)}</li>" for m in messages)
                + "</ul>"
            )
        scenario_items.append(text + "</li>")

    if not isinstance(model_summary, Mapping):
        raise InputError(
            f"The model summary must be a mapping of labels to values, got {type(model_summary).__name__}",
            fix="Pass loadcore.export.summarise_model(model)",
        )
    model_rows = [[str(k), _summary_value(v)] for k, v in model_summary.items()]
    model_html = (
        _table(["Item", "Value"], model_rows) if model_rows else "<p>No model summary given.</p>"
    )
    response_note = model_summary.get(RESPONSE_NOTE_LABEL)
    if response_note:
        model_html = (
            f'<p class="caution" id="response-note">{html.escape(str(response_note))}</p>'
            + model_html
        )
    if history.empty:
        history_text = "No recorded demand is drawn."
    else:
        history_text = (
            f"Recorded demand drawn: {history.index.min():%Y-%m-%d} to "
            f"{history.index.max():%Y-%m-%d}."
        )
    forecast_dates = pd.concat([forecast_frame(fc, i)["date"] for i, fc in enumerate(items)])
    horizon_text = (
        f"Scenario days: {forecast_dates.min():%Y-%m-%d} to {forecast_dates.max():%Y-%m-%d}."
    )
    cautions = [texts.PLANNING_CAUTION, texts.INTERVAL_CAUTION, texts.RANGE_CAUTION, *notes]

    body = f"""<h2>Demand outlook</h2>
<p class="note">Lines are scenario means; shaded bands are prediction intervals; triangles mark
days whose temperature lies outside the fitted range.</p>
{chart}

<h2>Scenarios</h2>
<ul class="plain">{"".join(scenario_items)}</ul>

<h2>Comparison with the base scenario</h2>
{summary_table}
{"".join(f'<p class="note">{html.escape(n)}</p>' for n in notes)}

<h2>Days outside the fitted temperature range</h2>
{range_html}

<h2>Model</h2>
{model_html}

<h2>Data period</h2>
<p>{html.escape(str(period_text))}</p>
<p>{html.escape(history_text)} {html.escape(horizon_text)}</p>"""
    return html_document(title=title, period_line=str(period_text), body=body, cautions=cautions)


def html_document(*, title: Any, period_line: str, body: str, cautions: Sequence[str]) -> str:
    """A whole brief page: head with the one style, title, period line and the planning caution,
    then ``body`` (HTML, already escaped), then the cautions and the footer with the time made."""
    generated = datetime.now(UTC).strftime("%Y-%m-%d %H:%M UTC")
    return f"""<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="generator" content="loadcore {html.escape(__version__)}">
<title>{html.escape(str(title))}</title>
<style>{_STYLE}</style>
</head>
<body>
<main>
<h1>{html.escape(str(title))}</h1>
<p class="period">{html.escape(period_line)}</p>
<p class="caution" id="planning-caution">{html.escape(texts.PLANNING_CAUTION)}</p>

{body}

<h2>Read this before use</h2>
<ul class="plain" id="cautions">{"".join(f"<li>{html.escape(c)}</li>" for c in cautions)}</ul>

<footer>Prepared with loadcore {html.escape(__version__)} on {generated}.</footer>
</main>
</body>
</html>
"""


def _summary_value(value: Any) -> str:
    if isinstance(value, float):
        return f"{value:,.4g}" if math.isfinite(value) else "–"
    if isinstance(value, (list, tuple)):
        return ", ".join(str(v) for v in value)
    if isinstance(value, Mapping):
        return "; ".join(f"{k}: {v}" for k, v in value.items())
    return str(value)
