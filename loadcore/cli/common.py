"""What every command shares: output helpers, the progress bar, argument types, history options.

Handlers receive the parsed ``argparse.Namespace`` and return the exit status; they let
:class:`~loadcore.errors.LoadcoreError` propagate, and :func:`loadcore.cli.main` prints it as one
``error:`` line.
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Callable
from pathlib import Path
from typing import Any, TextIO

from loadcore import files, levels, units
from loadcore.errors import InputError, LoadcoreError, clip

Handler = Callable[[argparse.Namespace], int]


def say(text: str = "", stream: TextIO | None = None) -> None:
    """Print a line of the command's normal output (stdout unless told)."""
    print(text, file=stream or sys.stdout)


def one_line(text: Any) -> str:
    """Text folded onto one line."""
    return " ".join(str(text).split())


class ProgressBar:
    """A plain-text progress bar on stderr for ``progress(done, total, text)`` callbacks.

    Parameters
    ----------
    label : str
        Word shown after the count, e.g. ``"candidates"``.
    stream : file-like, optional
        Where to draw (stderr by default).
    width : int
        Characters in the bar.
    """

    #: Bars that have drawn and not yet ended their line; an error message ends them first.
    _open: list[ProgressBar] = []

    def __init__(self, label: str, stream: TextIO | None = None, width: int = 28):
        self.label = label
        self.stream = stream or sys.stderr
        self.width = width
        self.started = False
        self._last = ""

    def __call__(self, done: int, total: int, text: str = "") -> None:
        total_n = max(int(total), 1)
        done_n = min(max(int(done), 0), total_n)
        filled = round(self.width * done_n / total_n)
        bar = "#" * filled + "." * (self.width - filled)
        note = one_line(text)[:64]
        line = f"[{bar}] {done_n}/{total_n} {self.label}" + (f"  {note}" if note else "")
        pad = " " * max(len(self._last) - len(line), 0)
        self.stream.write("\r" + line + pad)
        self.stream.flush()
        self._last = line
        if not self.started:
            self.started = True
            ProgressBar._open.append(self)

    def close(self) -> None:
        """End the bar's line (only if something was drawn)."""
        if self.started:
            self.stream.write("\n")
            self.stream.flush()
            self.started = False
        if self in ProgressBar._open:
            ProgressBar._open.remove(self)

    @classmethod
    def close_all(cls) -> None:
        """End the line of every bar still drawing (before an error message is printed)."""
        for bar in list(cls._open):
            bar.close()


# ------------------------------------------------------------------------------- argument types


def levels_arg(text: str) -> tuple[float, ...]:
    """``--levels 80,95`` through the one level parser."""
    try:
        return levels.parse_levels(text, where="--levels")
    except InputError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from None


def unit_arg(text: str) -> str:
    """``--temp-unit C|F`` through the one unit parser."""
    try:
        return units.parse_unit(text, where="--temp-unit")
    except InputError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from None


def whole_number(text: str) -> int:
    """A whole number of 0 or more."""
    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"'{clip(text, 20)}' is not a whole number") from None
    if value < 0:
        raise argparse.ArgumentTypeError(f"{value} is negative; give 0 or more")
    return value


def number(text: str) -> float:
    """A finite number."""
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"'{clip(text, 20)}' is not a number") from None
    if value != value or value in (float("inf"), float("-inf")):
        raise argparse.ArgumentTypeError(f"'{clip(text, 20)}' is not a finite number")
    return value


def port_arg(text: str) -> int:
    value = whole_number(text)
    if not 1 <= value <= 65535:
        raise argparse.ArgumentTypeError(f"port {value} is not between 1 and 65535")
    return value


# ------------------------------------------------------------------------------ history options


def add_levels_option(parser: argparse.ArgumentParser) -> None:
    """``--levels``: the interval levels of a forecast or backtest, through the one parser."""
    parser.add_argument(
        "--levels",
        type=levels_arg,
        default=levels.DEFAULT_LEVELS,
        metavar="L1,L2",
        help="prediction-interval levels in percent, 1 to 99.9 (80,95)",
    )


def add_scenario_unit_option(parser: argparse.ArgumentParser) -> None:
    """``--temp-unit`` of a command that reads a scenario and writes a forecast."""
    parser.add_argument(
        "--temp-unit",
        type=unit_arg,
        default="C",
        metavar="C|F",
        help="unit of the scenario temperatures and of every temperature written or printed (C)",
    )


def history_options() -> argparse.ArgumentParser:
    """The options that say how to read a history file (a parent parser)."""
    parent = argparse.ArgumentParser(add_help=False)
    group = parent.add_argument_group("history file")
    group.add_argument("--date-col", default=None, metavar="NAME", help="date column (date)")
    group.add_argument(
        "--demand-col", default=None, metavar="NAME", help="demand column, MW (demand)"
    )
    group.add_argument(
        "--temp-col", default=None, metavar="NAME", help="temperature column (temperature)"
    )
    group.add_argument(
        "--hour-col",
        default=None,
        metavar="NAME",
        help="column with the hour (1-24 hour ending or 0-23 hour beginning, detected) or the "
        "time of day (HH:MM), when the date column holds only the date",
    )
    group.add_argument(
        "--temp-min-col",
        default=None,
        metavar="NAME",
        help="column with the daily minimum temperature, in a daily file (sub-daily readings "
        "give it without this)",
    )
    group.add_argument(
        "--temp-unit",
        type=unit_arg,
        default=None,
        metavar="C|F",
        help="unit of the file's temperatures, and of the temperatures printed (C)",
    )
    group.add_argument(
        "--subdaily",
        choices=("peak", "total"),
        default=None,
        help="for readings within the day: daily demand is the peak or the total (peak)",
    )
    group.add_argument(
        "--date-format",
        default=None,
        metavar="PATTERN",
        help="strftime pattern such as %%d/%%m/%%Y (detected when not given)",
    )
    group.add_argument(
        "--decimal",
        choices=(".", ","),
        default=None,
        help="decimal mark of the file's numbers (decided from the values when not given)",
    )
    group.add_argument(
        "--drop-outliers",
        action="store_true",
        default=None,
        help="treat days whose demand departs far from the days around them and from their "
        "weekday pattern (likely data errors) as missing; they are reported either way",
    )
    return parent


def history_settings(args: argparse.Namespace):
    """``HistorySettings`` from the history options (defaults where an option is not given)."""
    from loadcore.history import HistorySettings

    given = {
        "date_col": args.date_col,
        "demand_col": args.demand_col,
        "temp_col": args.temp_col,
        "hour_col": args.hour_col,
        "temp_min_col": args.temp_min_col,
        "temp_unit": args.temp_unit,
        "subdaily_demand": args.subdaily,
        "date_format": args.date_format,
        "decimal": args.decimal,
        "drop_outliers": args.drop_outliers,
    }
    return HistorySettings(**{k: v for k, v in given.items() if v is not None})


def shown_unit(args: argparse.Namespace) -> units.Unit:
    """The unit the user reads temperatures in: ``--temp-unit`` when given, else °C."""
    return getattr(args, "temp_unit", None) or "C"


# ------------------------------------------------------------------------------------ files


def require_file(path: str, what: str) -> None:
    """Fail early, with a message, when an input path is missing or not a regular file."""
    p = Path(path)
    if not p.exists():
        raise InputError(f"The {what} does not exist", where=str(p), fix="Check the path")
    if p.is_dir():
        raise InputError(f"The {what} is a folder, not a file", where=str(p), fix="Give a file")


def require_output(out: str, *inputs: Any, option: str = "--out") -> None:
    """Fail before long work when the output cannot be written or would overwrite an input."""
    try:
        files.output_target(out, what="output file")
    except InputError as exc:
        raise InputError(exc.problem, where=f"{option} {out}", fix=exc.fix) from None
    files.refuse_overwriting_inputs(out, *inputs, option=option)


def write_output(path: str, data: bytes | str, what: str = "output file") -> None:
    """Write a command's output file all at once (see :func:`loadcore.files.write_atomic`)."""
    files.write_atomic(path, data, what=what)


def table_text(table: Any) -> str:
    """A table as text: numbers to 5 significant digits, text left-aligned."""
    import pandas as pd

    if not isinstance(table, pd.DataFrame):
        return str(table)
    formatters: dict[str, Callable[[Any], str]] = {}
    for col in table.columns:
        if pd.api.types.is_numeric_dtype(table[col]) and not pd.api.types.is_bool_dtype(table[col]):
            formatters[col] = lambda v: f"{v:.5g}"
        else:
            width = max([len(str(col)), *(len(str(v)) for v in table[col])])
            formatters[col] = lambda v, w=width: f"{str(v):<{w}}"
    return table.to_string(index=False, formatters=formatters, justify="left")


__all__ = [
    "Handler",
    "LoadcoreError",
    "ProgressBar",
    "clip",
    "history_options",
    "history_settings",
    "levels_arg",
    "number",
    "one_line",
    "port_arg",
    "require_file",
    "require_output",
    "say",
    "shown_unit",
    "table_text",
    "unit_arg",
    "whole_number",
    "write_output",
]
