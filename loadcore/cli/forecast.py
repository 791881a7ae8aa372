"""``loadcore forecast``: forecast a scenario file with a saved model and write the forecast CSV."""

from __future__ import annotations

import argparse
from typing import Any

from loadcore import levels, texts, units
from loadcore.cli.common import (
    add_levels_option,
    add_scenario_unit_option,
    one_line,
    require_file,
    require_output,
    say,
    write_output,
)


def forecast_text(table: Any, unit: units.Unit) -> str:
    """The printed forecast: one line per day, flags in the last column."""
    shown = table.copy()
    shown["date"] = shown["date"].dt.strftime("%Y-%m-%d")
    temp_col = units.temperature_column(unit)
    by_col = units.out_of_range_column(unit)
    notes = []
    for row in shown.itertuples(index=False):
        marks = []
        if row.out_of_range:
            marks.append(
                f"{getattr(row, by_col):.1f} {units.symbol(unit)} outside the fitted range"
            )
        if row.sparse_temperature:
            marks.append("few past days this hot/cold")
        notes.append("; ".join(marks))
    found = levels.levels_in_columns(shown.columns)
    rename = {temp_col: f"temp {units.symbol(unit)}", "day_type": "day type"}
    for lv in found:
        rename[levels.lower_column(lv)] = f"{levels.level_label(lv)}% from"
        rename[levels.upper_column(lv)] = f"{levels.level_label(lv)}% to"
    keep = ["date", temp_col, "day_type", "mean", "median", *levels.interval_columns(found)]
    shown = shown[keep].rename(columns=rename)
    shown["notes"] = notes
    temp_head = f"temp {units.symbol(unit)}"
    return shown.to_string(
        index=False,
        formatters={
            temp_head: lambda v: f"{v:.1f}",
            **{
                c: (lambda v: f"{v:,.0f}")
                for c in shown.columns
                if c not in ("date", "day type", "notes", temp_head)
            },
        },
    )


def run(args: argparse.Namespace) -> int:
    from loadcore.export import forecast_table, to_csv_bytes
    from loadcore.model import load_model
    from loadcore.scenario import read_scenario_file

    require_file(args.model, "model file")
    require_file(args.scenario, "scenario file")
    require_output(args.out, args.model, args.scenario)
    unit = args.temp_unit
    model = load_model(args.model)
    scenario = read_scenario_file(
        args.scenario,
        temp_unit=unit,
        date_col=args.date_col,
        temp_col=args.temp_col,
        day_type_col=args.day_type_col,
        model_end=model.history_end,
    )
    forecast = model.forecast(scenario, levels=args.levels)
    table = forecast_table([forecast], temp_unit=unit)
    write_output(args.out, to_csv_bytes(table), what="forecast file")
    first = table["date"].iloc[0].strftime("%Y-%m-%d")
    last = table["date"].iloc[-1].strftime("%Y-%m-%d")
    lines = [
        f"Scenario '{forecast.scenario_name}': {len(table)} days, {first} to {last}; demand in "
        f"{forecast.demand_unit or 'MW'}.",
        forecast_text(table, unit),
        "",
    ]
    lines += [f"warning: {one_line(text)}" for text in forecast.warnings(unit)]
    lines.append(f"note: {texts.INTERVAL_CAUTION}")
    lines.append(f"Forecast written to {args.out}.")
    lines.append(texts.PLANNING_CAUTION)
    say("\n".join(lines))
    return 0


def add(sub: Any) -> None:
    parser = sub.add_parser(
        "forecast",
        help="forecast demand for a scenario file with a saved model",
        description="Forecast daily demand for the temperatures (and day types) in a scenario "
        "file. " + texts.INTERVAL_CAUTION + " " + texts.PLANNING_CAUTION,
    )
    parser.add_argument("model", metavar="MODEL.json", help="a model saved by loadcore fit")
    parser.add_argument(
        "scenario",
        metavar="SCENARIO.csv",
        help="scenario CSV file (date, temperature[, day_type]) or JSON scenario definition",
    )
    parser.add_argument(
        "--out", required=True, metavar="FORECAST.csv", help="where to write the CSV"
    )
    add_levels_option(parser)
    add_scenario_unit_option(parser)
    parser.add_argument("--date-col", default="date", metavar="NAME", help="date column (date)")
    parser.add_argument(
        "--temp-col", default="temperature", metavar="NAME", help="temperature column (temperature)"
    )
    parser.add_argument(
        "--day-type-col",
        default="day_type",
        metavar="NAME",
        help="optional day-type column; blank cells take the calendar's day type (day_type)",
    )
    parser.set_defaults(handler=run)
