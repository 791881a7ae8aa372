"""``loadcore zones``: fit one model per zone of a system and forecast the zones and their total.

``zones fit HISTORY --out FOLDER`` reads a zones file (long: ``--zone-col``; wide:
``--wide-demand``/``--wide-temp`` patterns) with every history option of ``fit``, validates each
zone as a single history, fits them with the same settings on Dask (``--cluster``) and writes the
zones folder. ``zones forecast FOLDER SCENARIO.csv --out F.csv`` forecasts every zone and the
system total.
"""

from __future__ import annotations

import argparse
from typing import Any

from loadcore import levels, texts
from loadcore.cli.common import (
    ProgressBar,
    add_levels_option,
    add_scenario_unit_option,
    history_options,
    history_settings,
    one_line,
    require_file,
    require_output,
    say,
    whole_number,
    write_output,
)
from loadcore.cli.fit import add_model_options, add_search_options, fit_settings
from loadcore.errors import InputError


def cluster_arg(text: str):
    """``--cluster local|none|ADDRESS`` through the one parser of cluster choices."""
    from loadcore.zones import parse_cluster

    try:
        return parse_cluster(text)
    except InputError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from None


def _layout(args: argparse.Namespace):
    from loadcore.zones import ZoneLayout

    return ZoneLayout(
        zone_col=args.zone_col,
        wide_demand=args.wide_demand,
        wide_temp=args.wide_temp,
        wide_temp_min=args.wide_temp_min,
    )


def _report_lines(zones: Any) -> list[str]:
    """One line per zone: its days and findings, or why it cannot be used."""
    lines = [f"note: {n}" for n in zones.notes]
    for zone in zones.zones:
        report = zones.reports.get(zone)
        if zone in zones.failures:
            lines.append(f"  {zone}: NOT USABLE: {one_line(zones.failures[zone])}")
            continue
        history = zones.histories[zone]
        n_warn = len(report.warnings) if report is not None else 0
        extra = f"; {n_warn} warning(s)" if n_warn else ""
        first = f": {one_line(report.warnings[0].message)}" if n_warn else ""
        lines.append(
            f"  {zone}: {history.days} days, {history.start:%Y-%m-%d} to "
            f"{history.end:%Y-%m-%d}{extra}{first}"
        )
    return lines


def run_fit(args: argparse.Namespace) -> int:
    from pathlib import Path

    from loadcore.zones import MANIFEST, fit_zones, read_zone_histories

    require_file(args.history, "zones history file")
    out = Path(args.out)
    if out.exists() and not out.is_dir():
        raise InputError(
            "The output is a file, not a folder", where=f"--out {out}", fix="Give a folder"
        )
    layout = _layout(args)
    settings = fit_settings(args)
    zones = read_zone_histories(args.history, layout, history_settings(args))
    say(f"{len(zones.zones)} zone(s) in {args.history}:")
    say("\n".join(_report_lines(zones)))
    if not zones.histories:
        raise InputError(
            "No zone has a usable history",
            where=args.history,
            fix="Run 'loadcore check' on one zone's rows for its full report",
        )
    bar = ProgressBar("zones")
    try:
        result = fit_zones(
            zones, settings, cluster=args.cluster or cluster_arg("local"), progress=bar
        )
    finally:
        bar.close()
    result.write(out)
    say(
        f"Fitted {len(result.fitted)} of {len(result.fits)} zone(s) {result.run.where} in "
        f"{result.run.wall_seconds:.1f} s."
    )
    for f in result.fits:
        if f.ok:
            s = f.summary
            say(
                f"  {f.zone}: {s['error_model']}; AICc {s['aicc']:,.1f}; converged: "
                f"{'yes' if s['converged'] else 'NO'}; {f.seconds:.1f} s"
            )
        else:
            say(f"  {f.zone}: FAILED: {one_line(f.reason)}")
    say(f"Zones folder written: {out} ({MANIFEST} lists the zones).")
    say(texts.PLANNING_CAUTION)
    return 0 if result.fitted else 1


def add(sub: Any) -> None:
    parser = sub.add_parser(
        "zones",
        help="fit and forecast every zone of a system, and the system total",
        description="Many zones: one model per zone with the same settings, fitted on a Dask "
        "cluster, and forecasts of every zone and of the system total. " + texts.PLANNING_CAUTION,
    )
    actions = parser.add_subparsers(dest="zones_command", metavar="ACTION")
    actions.required = True

    fit_p = actions.add_parser(
        "fit",
        parents=[history_options()],
        help="fit one model per zone and write a zones folder",
        description="Fit one model per zone of a zones history file, with the same settings, "
        "and write FOLDER/<zone>.json and FOLDER/zones.json. A zone that fails is reported "
        "and does not stop the others.",
    )
    fit_p.add_argument("history", metavar="HISTORY", help="zones history CSV file")
    fit_p.add_argument("--out", required=True, metavar="FOLDER", help="the zones folder")
    where = fit_p.add_argument_group("zones file layout (one of the two)")
    where.add_argument(
        "--zone-col",
        default=None,
        metavar="NAME",
        help="long file: the column naming each row's zone",
    )
    where.add_argument(
        "--wide-demand",
        default=None,
        metavar="PATTERN",
        help='wide file: demand columns, e.g. "{zone}_Demand"',
    )
    where.add_argument(
        "--wide-temp", default=None, metavar="PATTERN", help='wide file: e.g. "{zone}_Temp"'
    )
    where.add_argument(
        "--wide-temp-min",
        default=None,
        metavar="PATTERN",
        help="wide daily file: each zone's daily minimum temperature column (optional)",
    )
    fit_p.add_argument(
        "--cluster",
        type=cluster_arg,
        default=None,
        metavar="local|none|ADDRESS",
        help="where the fits run: a local Dask cluster of one worker per core (local), this "
        "process (none), or an existing Dask scheduler such as tcp://10.0.0.5:8786",
    )
    add_search_options(fit_p)
    add_model_options(fit_p)
    fit_p.set_defaults(handler=run_fit)
    add_forecast(actions)


def run_forecast(args: argparse.Namespace) -> int:
    from loadcore.export import to_csv_bytes
    from loadcore.zones.folder import load_zone_folder, zone_scenarios
    from loadcore.zones.forecast import forecast_zones

    require_file(args.scenario, "scenario file")
    require_output(args.out, args.scenario)
    unit = args.temp_unit
    zones = load_zone_folder(args.folder)
    scenarios = zone_scenarios(
        args.scenario,
        zones,
        temp_unit=unit,
        as_anomaly=args.as_anomaly,
        anomaly_col=args.temp_col,
        date_col=args.date_col,
        day_type_col=args.day_type_col,
    )
    result = forecast_zones(
        zones.models, scenarios, levels=args.levels, n_paths=args.paths, seed=args.seed
    )
    table = result.table(unit)
    write_output(args.out, to_csv_bytes(table), what="zones forecast file")
    if args.brief:
        from loadcore.export.zone_brief import zone_brief_html

        html_text = zone_brief_html(result, title="Zones outlook", temp_unit=unit)
        write_output(args.brief, html_text.encode("utf-8"), what="zones brief")
    system = result.system
    first, last = system["date"].iloc[0], system["date"].iloc[-1]
    cmp = result.band_comparison()
    label = levels.level_label(cmp["level"])
    lines = [
        f"{len(result.zones)} zone(s) and the system total, {len(system)} days, "
        f"{first:%Y-%m-%d} to {last:%Y-%m-%d}; demand in {result.demand_unit}.",
    ]
    if zones.failed:
        lines.append(
            "warning: not in the total (not fitted): " + ", ".join(sorted(zones.failed)[:20])
        )
    lv0 = cmp["level"]
    lo, hi = levels.lower_column(lv0), levels.upper_column(lv0)
    lines.append(f"System total by day (mean, and the {label} % band):")
    for row in system.itertuples(index=False):
        d = row._asdict()
        flag = "  some zone outside its fitted temperature range" if d["out_of_range"] else ""
        lines.append(
            f"  {d['date']:%Y-%m-%d}  {d['mean']:>12,.0f}  {d[lo]:>12,.0f} to {d[hi]:>12,.0f}{flag}"
        )
    for zone in result.zones:
        for text in result.zone_forecasts[zone].warnings(unit):
            lines.append(f"warning: {zone}: {one_line(text)}")
    lines += [
        "",
        f"note: {texts.ZONE_TOTAL_CAUTION}",
        f"note: the system's {label} % band is on average {cmp['system_width']:,.0f} "
        f"{result.demand_unit} wide; adding the zones' own bands would give "
        f"{cmp['sum_of_zone_widths']:,.0f} (the zones' daily shocks correlate "
        f"{cmp['mean_pairwise_correlation']:.2f} on average over {cmp['common_days']} common "
        f"days; {result.n_paths} joint paths, seed {result.seed}).",
        f"note: {texts.INTERVAL_CAUTION}",
        f"Forecast written to {args.out}.",
        texts.PLANNING_CAUTION,
    ]
    say("\n".join(lines))
    return 0


def add_forecast(actions: Any) -> None:
    """The ``zones forecast`` action."""
    p = actions.add_parser(
        "forecast",
        help="forecast every zone of a zones folder and the system total",
        description="Forecast every zone of a zones folder for a scenario file and the system "
        "total, with intervals from joint sample paths that keep the zones' correlation. "
        + texts.ZONE_TOTAL_CAUTION
        + " "
        + texts.INTERVAL_CAUTION,
    )
    p.add_argument("folder", metavar="FOLDER", help="a zones folder written by 'zones fit'")
    p.add_argument(
        "scenario",
        metavar="SCENARIO.csv",
        help="date, one temperature column per zone (named by the zone) [, day_type]; or with "
        "--as-anomaly one column of changes from every zone's seasonal normal",
    )
    p.add_argument("--out", required=True, metavar="FORECAST.csv", help="the long CSV to write")
    p.add_argument(
        "--brief",
        metavar="BRIEF.html",
        help="also write an offline HTML brief: the system total and the zone breakdown",
    )
    p.add_argument(
        "--as-anomaly",
        action="store_true",
        help="the scenario's one temperature column (--temp-col) is a change from each zone's "
        "own seasonal normal, in degrees of --temp-unit (e.g. +8 for a heat wave)",
    )
    add_levels_option(p)
    add_scenario_unit_option(p)
    p.add_argument("--date-col", default="date", metavar="NAME", help="date column (date)")
    p.add_argument(
        "--temp-col",
        default="temperature",
        metavar="NAME",
        help="with --as-anomaly: the column of changes (temperature)",
    )
    p.add_argument(
        "--day-type-col",
        default="day_type",
        metavar="NAME",
        help="optional day-type column; blank cells take the calendar's day type (day_type)",
    )
    p.add_argument(
        "--paths",
        type=whole_number,
        default=2000,
        metavar="N",
        help="joint sample paths for the system total (2000)",
    )
    p.add_argument(
        "--seed", type=whole_number, default=0, metavar="N", help="seed of the paths (0)"
    )
    p.set_defaults(handler=run_forecast)
