"""Outputs a planner takes away: spreadsheet-safe CSV, the tables, one comparison figure, the brief.

- :mod:`~loadcore.export.safe_csv`: :func:`safe_cell`, :func:`safe_frame`, :func:`to_csv_bytes`
  (every CSV download and CLI export goes through it);
- :mod:`~loadcore.export.forecasts`: how a forecast is read (``frame``, ``levels``,
  ``scenario_name``, ``note``, optional ``warnings()``), so a model ``Forecast`` and a library
  ``StoredForecast`` are treated alike;
- :mod:`~loadcore.export.tables`: the one forecast table, the comparison summary, the days
  outside the fitted range, the model summary;
- :mod:`~loadcore.export.palette` and :mod:`~loadcore.export.figures`: the one palette and chart
  style, and the one comparison figure that the app's pages and the brief both draw;
- :mod:`~loadcore.export.brief`: the offline HTML meeting brief.

The upload-size check lives with the file policy (:func:`loadcore.files.check_upload_size`).
"""

from loadcore.export.brief import meeting_brief_html
from loadcore.export.figures import comparison_figure, figure_html, style_figure
from loadcore.export.forecasts import ForecastLike
from loadcore.export.safe_csv import (
    FORMULA_PREFIXES,
    round_for_planners,
    safe_cell,
    safe_frame,
    starts_formula,
    to_csv_bytes,
)
from loadcore.export.tables import (
    comparison_summary,
    describe_orders,
    forecast_table,
    out_of_range_days,
    summarise_model,
)

__all__ = [
    "FORMULA_PREFIXES",
    "ForecastLike",
    "comparison_figure",
    "comparison_summary",
    "describe_orders",
    "figure_html",
    "forecast_table",
    "meeting_brief_html",
    "out_of_range_days",
    "safe_cell",
    "safe_frame",
    "starts_formula",
    "style_figure",
    "summarise_model",
    "to_csv_bytes",
    "round_for_planners",
]
