"""``loadcore ensemble``: demand quantiles for the coming days from past years' weather."""

from __future__ import annotations

import argparse
from typing import Any

from loadcore import plainjson, texts, units
from loadcore.cli.common import (
    ProgressBar,
    number,
    require_file,
    require_output,
    say,
    unit_arg,
    whole_number,
    write_output,
)


def run(args: argparse.Namespace) -> int:
    from loadcore.export import to_csv_bytes
    from loadcore.model import load_model
    from loadcore.weather import DEFAULT_SHIFT_DAYS, ensemble_forecast, ensemble_table

    require_file(args.model, "model file")
    require_output(args.out, args.model)
    unit = args.temp_unit
    model = load_model(args.model)
    bar = None if args.json else ProgressBar("traces")
    try:
        result = ensemble_forecast(
            model,
            days=args.days,
            start=args.start,
            shift_days=DEFAULT_SHIFT_DAYS if args.shift_days is None else args.shift_days,
            warming_c=float(units.delta_from_unit(args.warming, unit)),
            paths_per_trace=args.paths,
            seed=args.seed,
            threshold_mw=args.threshold,
            progress=bar,
        )
    finally:
        if bar is not None:
            bar.close()
    write_output(args.out, to_csv_bytes(ensemble_table(result)), what="ensemble table")
    if args.json:
        say(plainjson.dumps(result.summary(), indent=2))
        return 0
    summary = result.summary()
    peak = result.peak_distribution.quantiles
    lines = [
        f"Weather ensemble {summary['start']} to {summary['end']}: "
        f"{result.n_traces} traces, {result.n_paths} paths.",
        f"Window peak (MW): p10 {peak['p10']:.0f}, p50 {peak['p50']:.0f}, p90 {peak['p90']:.0f}.",
        f"Share of daily variance from weather: {result.weather_share:.0%}.",
    ]
    if result.threshold_mw is not None:
        lines.append(
            f"Above {result.threshold_mw:.0f} MW: chance of at least one day "
            f"{result.prob_any_above:.1%}, expected days {result.expected_days_above:.2f}."
        )
    if result.out_of_range_share > 0:
        lines.append(
            f"{result.out_of_range_share:.1%} of trace temperatures lie outside the range the "
            "model was fitted on; treat those days with care."
        )
    lines.append(texts.ENSEMBLE_CAUTION)
    lines.append(f"Table written to {args.out}.")
    lines.append(texts.PLANNING_CAUTION)
    say("\n".join(lines))
    return 0


def add(sub: Any) -> None:
    parser = sub.add_parser(
        "ensemble",
        help="demand quantiles for the coming days from past years' weather",
        description=(
            "Forecast a window of days after a saved model's history with temperature traces taken from "
            "the same weeks of past years (shifted by a few days), plus the model's error paths. "
            + texts.PLANNING_CAUTION
        ),
    )
    parser.add_argument("model", metavar="MODEL.json", help="a model saved by loadcore")
    parser.add_argument("--days", type=whole_number, default=30, help="window length in days (30)")
    parser.add_argument(
        "--start",
        default=None,
        metavar="YYYY-MM-DD",
        help="first day of the window, up to 24 months after the history (the day after it)",
    )
    parser.add_argument(
        "--shift-days",
        type=whole_number,
        default=None,
        help="largest day shift of the past-year traces (3)",
    )
    parser.add_argument(
        "--warming",
        type=number,
        default=0.0,
        metavar="DEGREES",
        help="degrees added to every trace temperature, in --temp-unit (0)",
    )
    parser.add_argument(
        "--temp-unit",
        type=unit_arg,
        default="C",
        metavar="C|F",
        help="unit of --warming (C)",
    )
    parser.add_argument(
        "--threshold", type=number, default=None, metavar="MW", help="demand level in MW"
    )
    parser.add_argument(
        "--paths", type=whole_number, default=200, metavar="M", help="error paths per trace (200)"
    )
    parser.add_argument("--seed", type=int, default=0, help="random seed (0)")
    parser.add_argument("--out", required=True, metavar="OUT.csv", help="where to write the table")
    parser.add_argument(
        "--json", action="store_true", help="print the window figures as JSON instead of text"
    )
    parser.set_defaults(handler=run)
