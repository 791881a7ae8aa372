"""``loadcore scenarios``: save, list and export scenarios in the scenario library."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path
from typing import Any

from loadcore import files, plainjson, texts
from loadcore.cli.common import (
    require_file,
    require_output,
    say,
    unit_arg,
    write_output,
)
from loadcore.errors import InputError, clip, quote


def _library_path(args: argparse.Namespace) -> Path:
    from loadcore.library import default_library_path

    return Path(args.db).expanduser() if args.db is not None else default_library_path()


def _library(args: argparse.Namespace, read_only: bool = False):
    from loadcore.library import ScenarioLibrary

    return ScenarioLibrary(_library_path(args), read_only=read_only)


def run_save(args: argparse.Namespace) -> int:
    from loadcore.library import entry_from_forecast
    from loadcore.model import load_model
    from loadcore.scenario import read_scenario_file

    require_file(args.scenario_csv, "scenario file")
    files.refuse_overwriting_inputs(
        _library_path(args), args.scenario_csv, args.model, option="--db"
    )
    library = _library(args)
    if args.name in library:  # refuse before the forecast work; save() checks again
        raise InputError(
            f"A saved scenario named '{args.name}' already exists",
            where=f"library {library.path}",
            fix="Choose another --name",
        )
    model = load_model(args.model)
    scenario = read_scenario_file(
        args.scenario_csv, temp_unit=args.temp_unit, name=args.name, model_end=model.history_end
    )
    forecast = model.forecast(scenario)
    entry = entry_from_forecast(
        forecast, scenario=scenario, model=model, name=args.name, note=args.note, author=args.author
    )
    saved = library.save(entry)
    say(
        f"Saved '{saved.name}' (version {saved.version}, {len(saved.forecast)} days) "
        f"to {library.path}."
    )
    return 0


def run_list(args: argparse.Namespace) -> int:
    if not _library_path(args).exists():
        say("The library holds no saved scenarios.")
        return 0
    listing = _library(args, read_only=True).scan(args.search)
    items = listing.items
    for row in listing.damaged:
        print(
            f"warning: the saved scenario {quote(row.name)} is damaged and was left out "
            f"({clip(row.reason)})",
            file=sys.stderr,
        )
    if args.json:
        say(plainjson.dumps([item.to_dict() for item in items], indent=2, ensure_ascii=False))
        return 0
    if not items:
        say("The library holds no saved scenarios." if not args.search else "No match.")
        return 0
    width = min(max(len(item.name) for item in items), 40)
    for item in items:
        say(
            f"{item.name:<{width}}  v{item.version:<3} {item.first_date} to {item.last_date}  "
            f"changed {item.changed_utc}" + (f"  by {item.author}" if item.author else "")
        )
    return 0


def run_export(args: argparse.Namespace) -> int:
    from loadcore.export import forecast_table, meeting_brief_html, to_csv_bytes

    out = Path(args.out)
    suffix = out.suffix.lower()
    if suffix not in (".csv", ".html", ".htm"):
        raise InputError(
            f"Cannot tell the export format from '{out.name}'",
            where="--out",
            fix="End the file name with .csv or .html",
        )
    require_output(args.out, _library_path(args))
    library = _library(args, read_only=True)
    saved = [library.get(name) for name in args.names]
    forecasts = [s.to_forecast() for s in saved]
    if suffix == ".csv":
        data: bytes | str = to_csv_bytes(forecast_table(forecasts, temp_unit=args.temp_unit))
    else:
        first = saved[0]
        period = first.context.get("history_period") or []
        period_text = (
            f"Model history {period[0]} to {period[1]}; scenarios from "
            f"{min(s.forecast['date'].min() for s in saved):%Y-%m-%d} to "
            f"{max(s.forecast['date'].max() for s in saved):%Y-%m-%d}."
            if len(period) == 2
            else "Model history period not recorded."
        )
        data = meeting_brief_html(
            forecasts,
            history_tail=first.history_tail(),
            model_summary=first.context.get("model_summary") or {},
            base_name=first.name,
            title=args.title or f"Demand scenarios: {', '.join(s.name for s in saved)}",
            period_text=period_text,
            temp_unit=args.temp_unit,
            demand_unit=str(first.context.get("demand_unit", "MW")),
            demand_kind=str(first.context.get("demand_kind", "peak")),
        )
    write_output(args.out, data, what="export")
    say(f"Wrote {out}.")
    return 0


def add(sub: Any) -> None:
    from loadcore.library import ENV_VAR

    parser = sub.add_parser(
        "scenarios",
        help="save, list and export scenarios in the scenario library",
        description=(
            f"Keep scenarios and their forecasts in a library file (default ${ENV_VAR} or "
            "~/.loadcore/scenarios.sqlite). " + texts.PLANNING_CAUTION
        ),
    )
    actions = parser.add_subparsers(dest="scenarios_command", metavar="ACTION")
    actions.required = True

    def add_db(p: argparse.ArgumentParser) -> None:
        p.add_argument("--db", metavar="FILE", default=None, help="the library file")

    save = actions.add_parser("save", help="forecast a scenario file and store it")
    save.add_argument(
        "scenario_csv",
        metavar="SCENARIO.csv",
        help="scenario CSV file (date, temperature[, day_type]) or JSON scenario definition",
    )
    save.add_argument("--name", required=True, help="name in the library")
    save.add_argument("--model", required=True, metavar="MODEL.json", help="a saved model")
    add_db(save)
    save.add_argument("--note", default="", help="free text kept with the scenario")
    save.add_argument("--author", default="", help="who saved it")
    save.add_argument(
        "--temp-unit", type=unit_arg, default="C", metavar="C|F", help="unit of the temperatures"
    )
    save.set_defaults(handler=run_save)

    listing = actions.add_parser("list", help="list saved scenarios")
    add_db(listing)
    listing.add_argument("--json", action="store_true", help="print a JSON list")
    listing.add_argument("--search", default=None, help="only names, notes or authors with this")
    listing.set_defaults(handler=run_list)

    export = actions.add_parser("export", help="write saved scenarios as CSV or an HTML brief")
    export.add_argument("names", nargs="+", metavar="NAME", help="saved scenario(s); first = base")
    add_db(export)
    export.add_argument("--out", required=True, metavar="FILE", help="FILE.csv or FILE.html")
    export.add_argument(
        "--temp-unit", type=unit_arg, default="C", metavar="C|F", help="unit of temperatures shown"
    )
    export.add_argument("--title", default=None, help="heading of the HTML brief")
    export.set_defaults(handler=run_export)
