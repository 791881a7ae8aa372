"""``loadcore backtest``: score the model on the recent past from rolling forecast origins."""

from __future__ import annotations

import argparse
from typing import Any

from loadcore import plainjson, texts
from loadcore.cli.common import (
    ProgressBar,
    add_levels_option,
    history_options,
    history_settings,
    require_file,
    say,
    whole_number,
)
from loadcore.cli.fit import add_model_options, add_search_options, fit_settings
from loadcore.evaluate import DEFAULT_ORIGINS


def run(args: argparse.Namespace) -> int:
    from loadcore.evaluate import backtest
    from loadcore.history import read_history

    require_file(args.history, "history file")
    history = read_history(args.history, history_settings(args))
    if args.search is None:
        args.search = "quick"
    bar = None if args.json else ProgressBar("origins")
    try:
        result = backtest(
            history,
            fit_settings(args),
            horizon=args.horizon,
            origins=args.origins,
            mode=args.mode,
            levels=args.levels,
            seed=args.seed,
            progress=bar,
        )
    finally:
        if bar is not None:
            bar.close()
    if args.json:
        payload = {
            "summary": result.summary,
            "by_horizon": result.by_horizon.to_dict(orient="records"),
        }
        say(plainjson.dumps(payload, indent=2))
    else:
        say(result.to_text())
    return 0


def add(sub: Any) -> None:
    parser = sub.add_parser(
        "backtest",
        parents=[history_options()],
        help="score the model on the recent past from rolling forecast origins",
        description=(
            "Choose the error model on the older part of a history, then forecast the last year "
            "from evenly spaced origins and score the forecasts by days ahead, beside the "
            "same-weekday-last-week forecast. " + texts.PLANNING_CAUTION
        ),
    )
    parser.add_argument(
        "history", metavar="HISTORY", help="daily history CSV (date, demand, temperature)"
    )
    parser.add_argument("--horizon", type=whole_number, default=14, help="days ahead (14)")
    parser.add_argument(
        "--origins",
        type=whole_number,
        default=DEFAULT_ORIGINS,
        help=f"number of origins ({DEFAULT_ORIGINS}: one a week over the last year)",
    )
    parser.add_argument(
        "--mode",
        choices=("ex-post", "ex-ante"),
        default="ex-post",
        help="actual temperatures (ex-post) or weather ensembles (ex-ante); default ex-post",
    )
    add_levels_option(parser)
    add_search_options(parser)
    add_model_options(parser)
    parser.add_argument("--seed", type=int, default=0, help="random seed (0)")
    parser.add_argument("--json", action="store_true", help="print the results as JSON")
    parser.set_defaults(handler=run)
