"""``loadcore scenario``: build a scenario file from a saved model, without the app.

A window (``--start``, ``--days``), a base path (the history's seasonal normal, a constant, a
copy of a past period or of the same days of an earlier year), optional heat wave and cold snap,
an optional shift, written as a scenario CSV that ``loadcore forecast`` and ``loadcore scenarios
save`` read (or as the JSON scenario definition, for a ``.json`` output).
"""

from __future__ import annotations

import argparse
from dataclasses import dataclass
from typing import Any

from loadcore import texts, units
from loadcore.cli.common import (
    clip,
    number,
    require_file,
    require_output,
    say,
    unit_arg,
    whole_number,
    write_output,
)
from loadcore.errors import InputError

# --------------------------------------------------------------------------- typed option values


@dataclass(frozen=True)
class BaseChoice:
    """The base path: ``normal``, ``constant`` (``value`` in the chosen unit), ``copy`` (``date``
    the first copied day), ``same-days`` / ``same-weekdays`` (the same days of the latest earlier
    year in the history, aligned by date or by weekday)."""

    kind: str
    value: float | None = None
    date: str | None = None


@dataclass(frozen=True)
class EventChoice:
    """A heat wave or cold snap: its peak (or lowest) temperature in the chosen unit, the days
    at that temperature, and the window day (1 = the window's first day) it begins on, or None
    to centre it in the window."""

    level: float
    days_at_level: int
    start_day: int | None


BASE_FORMS = "normal, constant:T, copy:YYYY-MM-DD, same-days or same-weekdays"


def base_arg(text: str) -> BaseChoice:
    """``--base normal|constant:T|copy:YYYY-MM-DD|same-days|same-weekdays``."""
    raw = text.strip()
    kind, _, rest = raw.partition(":")
    kind = kind.strip().lower()
    if kind in ("normal", "same-days", "same-weekdays") and not rest:
        return BaseChoice(kind)
    if kind == "constant" and rest:
        try:
            value = float(rest)
        except ValueError:
            value = float("nan")
        if value == value and abs(value) != float("inf"):
            return BaseChoice("constant", value=value)
        raise argparse.ArgumentTypeError(
            f"'{clip(rest, 20)}' in --base constant:T is not a temperature. Give e.g. constant:25"
        )
    if kind == "copy" and rest:
        return BaseChoice("copy", date=rest.strip())
    raise argparse.ArgumentTypeError(
        f"'{clip(raw, 30)}' is not a base path. Give one of {BASE_FORMS}"
    )


def event_arg(text: str) -> EventChoice:
    """``PEAK,DAYS[,START_DAY]``: a temperature, whole days at it (1 or more), and optionally
    the window day the event begins on (1 or more)."""
    parts = [p.strip() for p in text.split(",")]
    if len(parts) not in (2, 3):
        raise argparse.ArgumentTypeError(
            f"'{clip(text, 30)}' needs 2 or 3 values separated by commas. Give "
            "TEMPERATURE,DAYS[,START_DAY], e.g. 41,6 or 41,6,10"
        )
    try:
        level = float(parts[0])
    except ValueError:
        level = float("nan")
    if level != level or abs(level) == float("inf"):
        raise argparse.ArgumentTypeError(
            f"'{clip(parts[0], 20)}' is not a temperature. Give a number such as 41"
        )

    def whole(value: str, what: str) -> int:
        try:
            n = int(value)
        except ValueError:
            n = 0
        if n < 1:
            raise argparse.ArgumentTypeError(
                f"'{clip(value, 20)}' is not a valid {what}. Give a whole number of 1 or more"
            )
        return n

    days = whole(parts[1], "number of days at the peak")
    start = whole(parts[2], "start day") if len(parts) == 3 else None
    return EventChoice(level, days, start)


def ramp_arg(text: str) -> int:
    """``--ramp-days N``: 0 or more."""
    try:
        n = int(text)
    except ValueError:
        n = -1
    if n < 0:
        raise argparse.ArgumentTypeError(
            f"'{clip(text, 20)}' is not a number of ramp days. Give 0 or more"
        )
    return n


#: Options whose value may start with a minus sign (a temperature below zero).
SIGNED_OPTIONS = ("--heat-wave", "--cold-snap", "--base")


def join_signed_values(argv: list[str]) -> list[str]:
    """``--cold-snap -10,3`` as ``--cold-snap=-10,3``: argparse would take ``-10,3`` for an
    option of its own (only plain negative numbers are let through), and a cold snap below
    zero is the usual case."""
    out: list[str] = []
    i = 0
    while i < len(argv):
        arg = argv[i]
        nxt = argv[i + 1] if i + 1 < len(argv) else ""
        if arg in SIGNED_OPTIONS and nxt[:1] == "-" and nxt[1:2].isdigit():
            out.append(f"{arg}={nxt}")
            i += 2
            continue
        out.append(arg)
        i += 1
    return out


# ------------------------------------------------------------------------------------ the work


def _base_path(model: Any, choice: BaseChoice, start: Any, days: int, unit: units.Unit):
    from loadcore.scenario import (
        Alignment,
        constant_path,
        copy_period,
        copy_same_days,
        seasonal_normal_path,
    )

    history = model.history
    if choice.kind == "normal":
        return seasonal_normal_path(history, start, days), "seasonal normal"
    if choice.kind == "constant":
        value_c = float(units.from_unit(choice.value, unit))
        return constant_path(start, days, value_c), (f"constant {units.format_temp(value_c, unit)}")
    if choice.kind == "copy":
        path = copy_period(history, choice.date, start, days)
        return path, f"a copy of the {days} days from {clip(choice.date, 12)}"
    alignment = Alignment.BY_WEEKDAY if choice.kind == "same-weekdays" else Alignment.BY_DATE
    path = copy_same_days(history, start, days, alignment)
    return path, f"the same days of an earlier year ({alignment.value})"


def _event_days(event: EventChoice, ramp: int, days: int, what: str, option: str) -> int:
    """The 1-based window day the event begins on, checked to fit inside the window."""
    length = event.days_at_level + 2 * ramp
    if length > days:
        raise InputError(
            f"The {what} lasts {length} days ({ramp} ramp day(s), {event.days_at_level} at the "
            f"{'peak' if what == 'heat wave' else 'lowest'}, {ramp} ramp day(s)), longer than "
            f"the {days}-day window",
            where=option,
            fix="Give fewer days at the peak, fewer --ramp-days or a longer --days",
        )
    first = event.start_day if event.start_day is not None else (days - length) // 2 + 1
    if first + length - 1 > days:
        raise InputError(
            f"The {what} begins on window day {first} and lasts {length} days, past the "
            f"window's last day ({days})",
            where=option,
            fix=f"Begin it on day {days - length + 1} or earlier",
        )
    return first


def _describe_event(
    what: str, level_c: float, first: int, at_level: int, ramp: int, dates: Any, unit: units.Unit
) -> str:
    """``Heat wave: 6 day(s) at the peak 41.0 °C (2027-07-12 to 2027-07-17); ramp days ...``."""

    def span(a: int, b: int) -> str:
        return f"{dates[a - 1]:%Y-%m-%d}" + ("" if a == b else f" to {dates[b - 1]:%Y-%m-%d}")

    peak_from, peak_to = first + ramp, first + ramp + at_level - 1
    word = "peak" if what == "heat wave" else "lowest"
    text = (
        f"{what.capitalize()}: {at_level} day(s) at the {word} {units.format_temp(level_c, unit)}"
        f" ({span(peak_from, peak_to)})"
    )
    if ramp:
        text += (
            f"; {ramp} ramp day(s) before ({span(first, peak_from - 1)}) and {ramp} after "
            f"({span(peak_to + 1, peak_to + ramp)})"
        )
    return text + "."


def run(args: argparse.Namespace) -> int:
    from loadcore.model import load_model
    from loadcore.scenario import (
        cold_snap,
        heat_wave,
        make_scenario,
        shift_path,
        write_scenario_csv,
    )
    from loadcore.scenario.values import (
        check_length,
        check_start,
        earliest_start,
        gap_days,
        parse_date,
    )

    require_file(args.model, "model file")
    require_output(args.out, args.model)
    unit = args.temp_unit
    model = load_model(args.model)
    start = (
        earliest_start(model.history_end)
        if args.start is None
        else parse_date(args.start, "--start")
    )
    days = args.days
    # The window's limits (1 to MAX_DAYS days, the start inside the lead limit) come first.
    check_length(days, "--days")
    check_start(start, model.history_end, "--start")
    base, base_words = _base_path(model, args.base, start, days, unit)
    path = base
    if args.shift:
        path = shift_path(path, float(units.delta_from_unit(args.shift, unit)))
    lines = []
    events = (
        (args.heat_wave, "heat wave", "--heat-wave", heat_wave),
        (args.cold_snap, "cold snap", "--cold-snap", cold_snap),
    )
    for event, what, option, build in events:
        if event is None:
            continue
        level_c = float(units.from_unit(event.level, unit))
        first = _event_days(event, args.ramp_days, days, what, option)
        length = event.days_at_level + 2 * args.ramp_days
        path = build(path, level_c, length, args.ramp_days, first - 1)
        lines.append(
            _describe_event(
                what, level_c, first, event.days_at_level, args.ramp_days, path.index, unit
            )
        )
        if what == "heat wave" and level_c >= texts.HEAT_HEALTH_C:
            lines.append(texts.heat_note(level_c, unit))
    name = args.name or _default_name(args)
    scenario = make_scenario(name, path, model_end=model.history_end)
    if str(args.out).lower().endswith(".json"):
        write_output(args.out, scenario.to_json() + "\n", what="scenario definition")
    else:
        write_output(args.out, write_scenario_csv(scenario, temp_unit=unit), what="scenario file")
    gap = gap_days(start, model.history_end)
    after = "right after the history" if gap == 0 else f"{gap} days after the history ends"
    head = [
        f"Scenario '{scenario.name}': {scenario.horizon} days, {scenario.start:%Y-%m-%d} to "
        f"{scenario.end:%Y-%m-%d} ({after}); base: {base_words}"
        + (
            f", shifted by {units.format_delta(float(units.delta_from_unit(args.shift, unit)), unit)}"
            if args.shift
            else ""
        )
        + ".",
    ]
    low, high = model.temperature_range_c
    temps = scenario.temperature_c
    outside = int(((temps < low) | (temps > high)).sum())
    tail = []
    if outside:
        tail.append(
            f"warning: {outside} day(s) lie outside the fitted temperature range "
            f"({units.format_range(low, high, unit)}); their forecasts are extrapolated."
        )
    read_as = (
        " --temp-unit F" if unit == "F" and not str(args.out).lower().endswith(".json") else ""
    )
    tail.append(f"Scenario written to {args.out}; forecast it with 'loadcore forecast{read_as}'.")
    tail.append(texts.PLANNING_CAUTION)
    say("\n".join(head + lines + tail))
    return 0


def _default_name(args: argparse.Namespace) -> str:
    parts = []
    if args.heat_wave is not None:
        parts.append("heat wave")
    if args.cold_snap is not None:
        parts.append("cold snap")
    if not parts:
        parts.append(
            {"normal": "seasonal normal", "constant": "constant", "copy": "copied period"}.get(
                args.base.kind, "same days of an earlier year"
            )
        )
    text = " and ".join(parts)
    return text[:1].upper() + text[1:]


def add(sub: Any) -> None:
    from loadcore.scenario import MAX_DAYS, MAX_LEAD_MONTHS

    parser = sub.add_parser(
        "scenario",
        help="build a scenario file (window, base path, heat wave, cold snap, shift)",
        description=(
            f"Write a scenario file for a saved model: a window of 1 to {MAX_DAYS} days starting "
            f"any day from the day after the model's history to {MAX_LEAD_MONTHS} months after "
            "it, a base path, and optionally a heat wave, a cold snap and a shift (applied to "
            "the base before the events). A heat wave or cold snap is RAMP days building up, "
            "DAYS days at the peak (or lowest) temperature, then RAMP days easing off; it begins "
            "on window day START_DAY (1 = the window's first day; centred when not given). "
            "Day types are left to the model's calendar. " + texts.PLANNING_CAUTION
        ),
    )
    parser.add_argument("model", metavar="MODEL.json", help="a model saved by loadcore fit")
    parser.add_argument(
        "--start",
        default=None,
        metavar="YYYY-MM-DD",
        help="first day of the window (the day after the model's history ends)",
    )
    parser.add_argument(
        "--days",
        type=whole_number,
        default=14,
        metavar="N",
        help=f"days in the window, 1 to {MAX_DAYS} (14)",
    )
    parser.add_argument(
        "--base",
        type=base_arg,
        default=BaseChoice("normal"),
        metavar="KIND",
        help="base path: normal (the history's seasonal normal), constant:T (T every day), "
        "copy:YYYY-MM-DD (the history's days from that date), same-days (the same calendar "
        "days of the latest earlier year in the history) or same-weekdays (the same, moved up "
        "to 3 days so weekdays match) (normal)",
    )
    parser.add_argument(
        "--heat-wave",
        type=event_arg,
        default=None,
        metavar="PEAK,DAYS[,START_DAY]",
        help="a heat wave: DAYS days at PEAK (ramp days not counted), beginning on window day "
        "START_DAY with its first ramp day",
    )
    parser.add_argument(
        "--cold-snap",
        type=event_arg,
        default=None,
        metavar="LOWEST,DAYS[,START_DAY]",
        help="a cold snap: DAYS days at LOWEST (ramp days not counted), beginning on window day "
        "START_DAY with its first ramp day",
    )
    parser.add_argument(
        "--ramp-days",
        type=ramp_arg,
        default=1,
        metavar="N",
        help="ramp days before and after the days at the peak or lowest, each side (1)",
    )
    parser.add_argument(
        "--shift",
        type=number,
        default=0.0,
        metavar="DELTA",
        help="degrees added to every day of the base path, in --temp-unit (0)",
    )
    parser.add_argument(
        "--temp-unit",
        type=unit_arg,
        default="C",
        metavar="C|F",
        help="unit of T, PEAK, LOWEST, DELTA and of the file's temperatures (C)",
    )
    parser.add_argument("--name", default=None, help="scenario name (from the options)")
    parser.add_argument(
        "--out",
        required=True,
        metavar="FILE.csv",
        help="where to write the scenario: a CSV file, or the JSON definition for a .json name",
    )
    parser.set_defaults(handler=run)
