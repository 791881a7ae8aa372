"""``loadcore fit``: choose and fit the demand model on a history and save it as JSON."""

from __future__ import annotations

import argparse
import sys
from typing import Any

from loadcore import plainjson, texts, units
from loadcore.cli.common import (
    ProgressBar,
    history_options,
    history_settings,
    number,
    one_line,
    require_file,
    require_output,
    say,
    shown_unit,
    table_text,
    whole_number,
)

#: The order-search limits: (option, FitSettings field, help, spelling kept for one release).
SEARCH_LIMITS = (
    ("--ar-up-to", "ar_up_to", "highest AR order (5)", "--max-p"),
    ("--ma-up-to", "ma_up_to", "highest MA order (5)", "--max-q"),
    ("--ar-ma-up-to", "ar_ma_up_to", "highest AR + MA order (8)", "--max-pq"),
    ("--weekly-ar-up-to", "weekly_ar_up_to", "highest weekly AR order (2)", "--max-seasonal-p"),
    ("--weekly-ma-up-to", "weekly_ma_up_to", "highest weekly MA order (2)", "--max-seasonal-q"),
)


class _Renamed(argparse.Action):
    """An old option spelling: stores the value and notes on stderr that it was renamed."""

    def __init__(self, *args: Any, new: str = "", **kwargs: Any):
        self.new = new
        super().__init__(*args, **kwargs)

    def __call__(self, parser, namespace, values, option_string=None):  # noqa: D401
        setattr(namespace, self.dest, values)
        print(
            f"note: {option_string} is now {self.new}; the old spelling will be removed in the "
            "next release",
            file=sys.stderr,
        )


def add_search_options(parser: argparse.ArgumentParser) -> None:
    """``--search`` and the order-search limits (shared with ``backtest``)."""
    parser.add_argument(
        "--search", choices=("quick", "thorough"), default=None, help="order search (quick)"
    )
    limits = parser.add_argument_group("order search limits")
    for flag, dest, what, old in SEARCH_LIMITS:
        limits.add_argument(
            flag, dest=dest, type=whole_number, default=None, metavar="N", help=what
        )
        limits.add_argument(
            old, dest=dest, type=whole_number, action=_Renamed, new=flag, help=argparse.SUPPRESS
        )


def add_model_options(parser: argparse.ArgumentParser) -> None:
    """Calendar and regressor options (shared with ``backtest``)."""
    parser.add_argument(
        "--holidays",
        default=None,
        metavar="CODE",
        help="public-holiday calendar: a country code such as US, or US-TX; 'none' for no "
        "public holidays (US)",
    )
    parser.add_argument("--no-log", action="store_true", help="model demand itself, not its log")
    parser.add_argument(
        "--scheme",
        choices=("simple", "detailed"),
        default=None,
        help="day types: working/non-working, or each weekday kind (detailed)",
    )
    parser.add_argument(
        "--annual-harmonics",
        type=whole_number,
        default=None,
        metavar="K",
        help="annual sine/cosine pairs (2)",
    )
    parser.add_argument(
        "--response",
        choices=("quadratic", "degree-days", "auto"),
        default=None,
        help="temperature response shape (quadratic); auto fits both with the same error model "
        "and keeps the one with the lower AICc (degree-day bases estimated)",
    )
    parser.add_argument(
        "--heating-base",
        type=number,
        default=None,
        metavar="DEGREES",
        help="degree-day heating base, in --temp-unit (18 °C)",
    )
    parser.add_argument(
        "--cooling-base",
        type=number,
        default=None,
        metavar="DEGREES",
        help="degree-day cooling base, in --temp-unit (24 °C)",
    )
    parser.add_argument(
        "--no-memory",
        action="store_true",
        help="do not try the temperature memory terms (smoothed past temperature, daily "
        "minimum); by default each is kept only when it improves AICc",
    )
    parser.add_argument(
        "--override",
        action="append",
        default=[],
        metavar='"START[..END] NAME"',
        help="set dates to a day type of their own, e.g. "
        '"2026-12-24..2027-01-01 year_end" (repeatable)',
    )


def fit_settings(args: argparse.Namespace):
    """``FitSettings`` from the fit options."""
    from loadcore.calendar import CalendarSpec, overrides_from_text, parse_holidays
    from loadcore.model import FitSettings, TermSpec

    calendar: dict[str, Any] = {}
    if args.holidays is not None:
        country, subdivision = parse_holidays(args.holidays)
        calendar.update(country=country, subdivision=subdivision)
    if args.scheme is not None:
        calendar["scheme"] = args.scheme
    if args.override:
        calendar["overrides"] = overrides_from_text("\n".join(args.override))
    terms: dict[str, Any] = {}
    if args.response is not None:
        terms["response"] = args.response.replace("-", "_")
    if args.annual_harmonics is not None:
        terms["annual_harmonics"] = args.annual_harmonics
    if getattr(args, "no_memory", False):
        terms["memory"] = False
    unit = shown_unit(args)
    for option, field in (("heating_base", "heating_base_c"), ("cooling_base", "cooling_base_c")):
        value = getattr(args, option, None)
        if value is not None:
            terms[field] = float(units.from_unit(value, unit))
    fit_kw: dict[str, Any] = {}
    if getattr(args, "search", None) is not None:
        fit_kw["search"] = args.search
    for _, dest, _, _ in SEARCH_LIMITS:
        value = getattr(args, dest, None)
        if value is not None:
            fit_kw[dest] = value
    if args.no_log:
        fit_kw["log"] = False
    if calendar:
        fit_kw["calendar"] = CalendarSpec(**calendar)
    if terms:
        fit_kw["terms"] = TermSpec(**terms)
    return FitSettings(**fit_kw)


def model_summary(model: Any, out: str, unit: units.Unit) -> dict[str, Any]:
    """The ``fit --json`` object."""
    low, high = model.temperature_range_c
    summary: dict[str, Any] = {
        "model_file": str(out),
        "errors": model.orders.to_dict(),
        "error_model": model.describe_errors(),
        "aicc": float(model.aicc),
        "candidates_evaluated": int(model.candidates_evaluated),
        "converged": bool(model.converged),
        "history_start": model.history.start,
        "history_end": model.history_end,
        "temperature_range_c": [round(low, 2), round(high, 2)],
        "fingerprint": model.fingerprint,
        "calendar_warnings": model.calendar_warnings(),
    }
    if unit == "F":
        summary["temperature_range_f"] = [round(float(units.c_to_f(v)), 2) for v in (low, high)]
    summary["memory_terms"] = {
        "kept": list(model.memory_terms),
        "tried": [t.to_dict() for t in model.memory_trials],
        "text": model.describe_memory(),
    }
    comparison = model.response_comparison
    if comparison is not None:
        summary["temperature_response"] = {
            "asked": comparison.asked,
            "fitted": _response_summary(comparison.fitted, unit),
            "other": _response_summary(comparison.other, unit),
            "other_is_better": comparison.other_is_better,
            "note": model.response_note(unit, medium="command"),
        }
    return plainjson.to_plain(summary)


def _response_summary(side: Any, unit: units.Unit) -> dict[str, Any]:
    out: dict[str, Any] = {"response": side.response, "aicc": round(float(side.aicc), 2)}
    if side.response == "degree_days":
        letter = unit.lower()
        out[f"heating_base_{letter}"] = round(
            float(units.to_unit(side.terms.heating_base_c, unit)), 2
        )
        out[f"cooling_base_{letter}"] = round(
            float(units.to_unit(side.terms.cooling_base_c, unit)), 2
        )
        out["bases_estimated"] = bool(side.bases_estimated)
    return out


def run(args: argparse.Namespace) -> int:
    from loadcore.history import read_history
    from loadcore.model import fit

    require_file(args.history, "history file")
    require_output(args.out, args.history)
    unit = shown_unit(args)
    settings = fit_settings(args)
    history = read_history(args.history, history_settings(args))
    bar = ProgressBar("candidates")
    try:
        model = fit(history, settings, progress=bar)
    finally:
        bar.close()
    model.save(args.out)
    summary = model_summary(model, args.out, unit)
    if args.json:
        say(plainjson.dumps(summary))
        return 0
    low, high = model.temperature_range_c
    lines = [
        f"Model fitted on {summary['history_start']} to {summary['history_end']} "
        f"({len(history.frame)} days) and saved to {args.out}.",
        summary["error_model"],
        f"AICc {summary['aicc']:,.1f}; {summary['candidates_evaluated']} candidate models "
        f"evaluated; estimation converged: {'yes' if summary['converged'] else 'NO'}.",
        texts.fitted_range_text(low, high, unit),
        model.describe_lowest_demand(unit),
        *_response_lines(model, unit),
        model.describe_memory(),
        "",
        "Coefficients:",
        table_text(model.coefficient_table(unit)),
        "",
        texts.PLANNING_CAUTION,
    ]
    for text in reversed(model.calendar_warnings()):
        lines.insert(3, f"warning: {one_line(text)}.")
    if not summary["converged"]:
        lines.insert(
            3,
            "warning: the estimation did not converge; treat the forecasts with care and try "
            "--search thorough or a shorter history.",
        )
    say("\n".join(lines))
    return 0


def _response_lines(model: Any, unit: units.Unit) -> list[str]:
    """Both responses' AICc, and the note when the other one is clearly better."""
    from loadcore.model.wording import describe_comparison

    comparison = model.response_comparison
    if comparison is None:
        return []
    lines = [describe_comparison(comparison, unit)]
    note = model.response_note(unit, medium="command")
    if note:
        lines.append(f"note: {note}")
    return lines


def add(sub: Any) -> None:
    parser = sub.add_parser(
        "fit",
        parents=[history_options()],
        help="fit a demand model on a history and save it as JSON",
        description="Fit the regression-with-ARIMA-errors demand model on a history file and save "
        "it. " + texts.PLANNING_CAUTION,
    )
    parser.add_argument("history", metavar="HISTORY", help="history CSV file")
    parser.add_argument(
        "--out", required=True, metavar="MODEL.json", help="where to save the model"
    )
    add_search_options(parser)
    add_model_options(parser)
    parser.add_argument("--json", action="store_true", help="print one JSON object instead of text")
    parser.set_defaults(handler=run)
