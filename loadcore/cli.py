"""The ``loadcore`` command: check a history, fit a model, forecast a scenario, start the app.

Sub-commands::

    loadcore check HISTORY.csv
    loadcore fit HISTORY.csv --out MODEL.json
    loadcore forecast MODEL.json SCENARIO.csv --out FORECAST.csv
    loadcore app

Other modules add their own sub-commands through ``add_cli(subparsers)`` (see :func:`build_parser`).
A user's mistake is reported as one line on stderr starting ``error:`` with exit status 1; usage
mistakes exit with status 2; a traceback is shown only with ``--debug``.
"""

from __future__ import annotations

import argparse
import importlib
import json
import logging
import math
import os
import subprocess
import sys
import traceback
import warnings
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any, TextIO

from loadcore import __version__
from loadcore.errors import HistoryError, LoadcoreError

log = logging.getLogger(__name__)

CAUTION = (
    "loadcore is a planning aid, not an operating or reliability-compliance tool; defer to the "
    "system operator's procedures, local reliability standards and licensed engineering judgement."
)

KNOWN_TEMPERATURES_NOTE = (
    "The intervals treat the scenario temperatures as known: they cover the model's error, "
    "not the uncertainty of the weather itself."
)

# Modules that may add sub-commands, in the order their commands are listed.
PLUGIN_MODULES = ("loadcore.evaluate", "loadcore.weather", "loadcore.library")

# Interval levels printed and written when --levels is not given, % (common practice, no source).
DEFAULT_LEVELS = (80, 95)

# Port Streamlit listens on when --port is not given (Streamlit's usual port).
DEFAULT_PORT = 8501

Handler = Callable[[argparse.Namespace], int]


# ---------------------------------------------------------------------------------------------------
# Small helpers


def _say(text: str = "", stream: TextIO | None = None) -> None:
    print(text, file=stream or sys.stdout)


def _one_line(text: str) -> str:
    return " ".join(str(text).split())


def _error_line(text: str) -> None:
    print(f"error: {_one_line(text)}", file=sys.stderr)


class ProgressBar:
    """A plain-text progress bar on stderr for ``progress(done, total, text)`` callbacks.

    Parameters
    ----------
    label : str
        Word shown before the bar, e.g. ``"candidates"``.
    stream : file-like, optional
        Where to draw (stderr by default).
    width : int
        Characters in the bar.
    """

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
        note = _one_line(text)[:64]
        line = f"[{bar}] {done_n}/{total_n} {self.label}" + (f"  {note}" if note else "")
        pad = " " * max(len(self._last) - len(line), 0)
        self.stream.write("\r" + line + pad)
        self.stream.flush()
        self._last = line
        self.started = True

    def close(self) -> None:
        """End the bar's line (only if something was drawn)."""
        if self.started:
            self.stream.write("\n")
            self.stream.flush()
            self.started = False


def _levels_arg(text: str) -> tuple[float, ...]:
    """Parse ``"80,95"`` into interval levels in percent."""
    levels: list[float] = []
    for part in str(text).split(","):
        part = part.strip().rstrip("%")
        if not part:
            continue
        try:
            value = float(part)
        except ValueError:
            raise argparse.ArgumentTypeError(
                f"{part!r} is not a number; give levels in percent such as 80,95"
            ) from None
        if not 0 < value < 100 or not math.isfinite(value):
            raise argparse.ArgumentTypeError(
                f"level {part} is not between 0 and 100; give levels in percent such as 80,95"
            )
        levels.append(int(value) if value.is_integer() else value)
    if not levels:
        raise argparse.ArgumentTypeError("give at least one level, e.g. 80,95")
    return tuple(sorted(set(levels)))


def _positive_int(text: str) -> int:
    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a whole number") from None
    if value < 0:
        raise argparse.ArgumentTypeError(f"{text} is negative; give 0 or more")
    return value


def _port_arg(text: str) -> int:
    value = _positive_int(text)
    if not 1 <= value <= 65535:
        raise argparse.ArgumentTypeError(f"port {value} is not between 1 and 65535")
    return value


def _unit_arg(text: str) -> str:
    unit = str(text).strip().upper().lstrip("°")
    if unit not in ("C", "F"):
        raise argparse.ArgumentTypeError(f"{text!r} is not a unit; use C or F")
    return unit


def _label(level: float) -> str:
    value = float(level)
    return str(int(value)) if value.is_integer() else f"{value:g}"


def _jsonable(value: Any) -> Any:
    """Turn numpy scalars, tuples and Timestamps into plain JSON values."""
    if isinstance(value, dict):
        return {str(k): _jsonable(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [_jsonable(v) for v in value]
    if hasattr(value, "isoformat"):
        return value.isoformat()[:10] if hasattr(value, "hour") else value.isoformat()
    if hasattr(value, "item") and callable(value.item):
        return _jsonable(value.item())
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


# ---------------------------------------------------------------------------------------------------
# Shared options


def _history_options() -> argparse.ArgumentParser:
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
        "--temp-unit", type=_unit_arg, default=None, metavar="C|F", help="temperature unit (C)"
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
    return parent


def _history_settings(args: argparse.Namespace):
    from loadcore.history import HistorySettings

    given = {
        "date_col": args.date_col,
        "demand_col": args.demand_col,
        "temp_col": args.temp_col,
        "temp_unit": args.temp_unit,
        "subdaily_demand": args.subdaily,
        "date_format": args.date_format,
    }
    return HistorySettings(**{k: v for k, v in given.items() if v is not None})


# ---------------------------------------------------------------------------------------------------
# check


def _run_check(args: argparse.Namespace) -> int:
    from loadcore.history import check_history

    _require_file(args.history, "history file")
    report = check_history(args.history, _history_settings(args))
    _say(report.to_text())
    if report.ok:
        _say("The history can be used for fitting.")
        return 0
    _say("Fix the errors above, then run the check again.")
    return 1


def _require_file(path: str, what: str) -> None:
    p = Path(path)
    if not p.exists():
        raise FileNotFoundError(2, "No such file", str(p))
    if p.is_dir():
        raise LoadcoreError(
            f"The {what} is a folder, not a file", where=str(p), fix="Give the path of a file"
        )


def _require_folder(out: str) -> None:
    """Fail before long work when the output file's folder does not exist."""
    target = Path(out)
    if target.is_dir():
        raise LoadcoreError(
            "The output path is a folder", where=str(target), fix="Give a file name inside it"
        )
    if not target.parent.is_dir():
        raise LoadcoreError(
            "The folder for the output file does not exist",
            where=str(target.parent),
            fix="Create the folder first or write somewhere else",
        )


# ---------------------------------------------------------------------------------------------------
# fit


def _fit_settings(args: argparse.Namespace):
    from loadcore.calendar import CalendarSpec, overrides_from_text, parse_holidays
    from loadcore.model import FitSettings
    from loadcore.terms import TermSpec

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
    fit_kw: dict[str, Any] = {}
    for name, value in (
        ("search", args.search),
        ("max_p", args.max_p),
        ("max_q", args.max_q),
        ("max_pq", args.max_pq),
        ("max_P", args.max_seasonal_p),
        ("max_Q", args.max_seasonal_q),
    ):
        if value is not None:
            fit_kw[name] = value
    if args.no_log:
        fit_kw["log"] = False
    if calendar:
        fit_kw["calendar"] = CalendarSpec(**calendar)
    if terms:
        fit_kw["terms"] = TermSpec(**terms)
    return FitSettings(**fit_kw)


def _model_summary(model: Any, out: str) -> dict[str, Any]:
    history = model.history
    candidates = getattr(model, "candidates", None)
    evaluated = getattr(model, "candidates_evaluated", None)
    if evaluated is None:
        evaluated = len(candidates) if candidates is not None else 0
    summary = {
        "model_file": str(out),
        "order": list(model.order),
        "seasonal_order": list(model.seasonal_order),
        "error_model": model.describe_errors(),
        "aicc": float(model.aicc),
        "candidates_evaluated": int(evaluated),
        "converged": bool(model.converged),
        "history_start": history.start,
        "history_end": model.history_end,
        "temperature_range_c": list(model.temperature_range_c),
        "fingerprint": model.fingerprint,
    }
    return _jsonable(summary)


def _run_fit(args: argparse.Namespace) -> int:
    from loadcore.history import read_history
    from loadcore.model import fit

    _require_file(args.history, "history file")
    _require_folder(args.out)
    settings = _fit_settings(args)
    history = read_history(args.history, _history_settings(args))
    bar = ProgressBar("candidates")
    try:
        model = fit(history, settings, progress=bar)
    finally:
        bar.close()
    model.save(args.out)
    summary = _model_summary(model, args.out)
    if args.json:
        _say(json.dumps(summary))
        return 0
    low, high = summary["temperature_range_c"]
    lines = [
        f"Model fitted on {summary['history_start']} to {summary['history_end']} "
        f"({len(history.frame)} days) and saved to {args.out}.",
        _labelled("Error model", summary["error_model"]),
        f"AICc {summary['aicc']:,.1f}; {summary['candidates_evaluated']} candidate models "
        f"evaluated; estimation converged: {'yes' if summary['converged'] else 'NO'}.",
        f"Fitted temperature range: {low:.1f} °C to {high:.1f} °C.",
        "",
        "Coefficients:",
        _table_text(model.coefficient_table()),
        "",
        CAUTION,
    ]
    if not summary["converged"]:
        lines.insert(
            4,
            "warning: the estimation did not converge; treat the forecasts with care and try "
            "--search thorough or a shorter history.",
        )
    _say("\n".join(lines))
    return 0


def _labelled(label: str, text: str) -> str:
    text = str(text).strip()
    return text if text.lower().startswith(label.lower()) else f"{label}: {text}"


def _table_text(table: Any) -> str:
    """A coefficient table as text: numbers to 5 significant digits, text left-aligned."""
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


# ---------------------------------------------------------------------------------------------------
# forecast


def forecast_table(forecast: Any, temp_unit: str = "C"):
    """The forecast CSV table: ``date``, ``temperature`` (in ``temp_unit``), ``day_type``, ``mean``,
    ``median``, ``lower_L``/``upper_L`` per level, ``out_of_range``, ``out_of_range_by_c``,
    ``sparse_temperature``. Demand columns are in the history's demand unit (MW).
    """
    import pandas as pd

    from loadcore.scenario import c_to_f

    frame = forecast.frame
    if "date" not in frame.columns:
        frame = frame.rename_axis("date").reset_index()
    temps = frame["temperature_c"].astype(float)
    out = pd.DataFrame(
        {
            "date": pd.to_datetime(frame["date"]).to_numpy(),
            "temperature": (c_to_f(temps) if temp_unit == "F" else temps).to_numpy(),
            "day_type": frame["day_type"].astype(str).to_numpy(),
            "mean": frame["mean"].astype(float).to_numpy(),
            "median": frame["median"].astype(float).to_numpy(),
        }
    )
    for level in forecast.levels:
        for side in ("lower", "upper"):
            col = f"{side}_{_label(level)}"
            out[col] = frame[col].astype(float).to_numpy()
    out["out_of_range"] = frame["out_of_range"].astype(bool).to_numpy()
    out["out_of_range_by_c"] = frame["out_of_range_by_c"].astype(float).to_numpy()
    out["sparse_temperature"] = frame["sparse_temperature"].astype(bool).to_numpy()
    return out


def _forecast_text(table: Any, forecast: Any, unit: str) -> str:
    """The printed forecast: one line per day, flags in the last column."""
    shown = table.copy()
    shown["date"] = shown["date"].dt.strftime("%Y-%m-%d")
    flags = []
    temps_c = forecast.frame["temperature_c"].astype(float).to_numpy()
    top = max(getattr(forecast, "temperature_range_c", (0.0, 0.0)))
    for i, (_, row) in enumerate(shown.iterrows()):
        marks = []
        if row["out_of_range"]:
            by = abs(float(row["out_of_range_by_c"]))
            side = "above" if temps_c[i] > top else "below"
            marks.append(f"{by:.1f} °C {side} the fitted range")
        if row["sparse_temperature"]:
            marks.append("few past days this hot/cold")
        flags.append("; ".join(marks))
    rename = {"temperature": f"temp °{unit}", "day_type": "day type"}
    for level in forecast.levels:
        lab = _label(level)
        rename[f"lower_{lab}"] = f"{lab}% from"
        rename[f"upper_{lab}"] = f"{lab}% to"
    keep = ["date", "temperature", "day_type", "mean", "median"] + [
        f"{side}_{_label(level)}" for level in forecast.levels for side in ("lower", "upper")
    ]
    shown = shown[keep].rename(columns=rename)
    shown["notes"] = flags
    return shown.to_string(
        index=False,
        formatters={
            f"temp °{unit}": lambda v: f"{v:.1f}",
            **{
                c: (lambda v: f"{v:,.0f}")
                for c in shown.columns
                if c not in ("date", "day type", "notes", f"temp °{unit}")
            },
        },
    )


def _run_forecast(args: argparse.Namespace) -> int:
    from loadcore.export import to_csv_bytes
    from loadcore.model import load_model
    from loadcore.scenario import read_scenario_csv

    _require_file(args.model, "model file")
    _require_file(args.scenario, "scenario file")
    _require_folder(args.out)
    model = load_model(args.model)
    scenario = read_scenario_csv(
        args.scenario,
        temp_unit=args.temp_unit,
        date_col=args.date_col,
        temp_col=args.temp_col,
        day_type_col=args.day_type_col,
        model_end=model.history_end,
    )
    if scenario.day_types is not None and not all(scenario.day_types):
        scenario = scenario.fill_day_types(list(model.calendar_types(scenario.dates)))
    forecast = model.forecast(scenario, levels=args.levels)
    table = forecast_table(forecast, args.temp_unit)
    Path(args.out).write_bytes(to_csv_bytes(table))
    first = table["date"].iloc[0].strftime("%Y-%m-%d")
    last = table["date"].iloc[-1].strftime("%Y-%m-%d")
    lines = [
        f"Scenario {forecast.scenario_name!r}: {len(table)} days, {first} to {last}; demand in "
        f"{getattr(forecast, 'demand_unit', None) or 'MW'}.",
        _forecast_text(table, forecast, args.temp_unit),
        "",
    ]
    for text in forecast.warnings():
        lines.append(f"warning: {_one_line(text)}")
    note = str(getattr(forecast, "note", "") or "")
    lines.append(f"note: {_one_line(note)}" if note else f"note: {KNOWN_TEMPERATURES_NOTE}")
    if note and "known" not in note.lower():
        lines.append(f"note: {KNOWN_TEMPERATURES_NOTE}")
    lines.append(f"Forecast written to {args.out}.")
    lines.append(CAUTION)
    _say("\n".join(lines))
    return 0


# ---------------------------------------------------------------------------------------------------
# app


def app_script() -> Path:
    """Path of the Streamlit app's entry script, ``app/main.py`` next to the package's checkout."""
    return Path(__file__).resolve().parent.parent / "app" / "main.py"


def _run_app(args: argparse.Namespace) -> int:
    script = app_script()
    if not script.is_file():
        raise LoadcoreError(
            "The app is not found next to the loadcore package",
            where=str(script),
            fix="Run loadcore from a checkout of the repository (pip install -e .)",
        )
    env = dict(os.environ)
    if args.history is not None:
        history = Path(args.history)
        _require_file(str(history), "history file")
        env["LOADCORE_HISTORY"] = str(history.resolve())
    command = [
        sys.executable,
        "-m",
        "streamlit",
        "run",
        str(script),
        "--server.port",
        str(args.port),
        "--server.headless",
        "true",
        "--browser.gatherUsageStats",
        "false",
    ]
    print(f"Starting the app on http://localhost:{args.port} (Ctrl+C stops it).", file=sys.stderr)
    try:
        return subprocess.run(command, env=env, check=False).returncode
    except KeyboardInterrupt:
        return 0


# ---------------------------------------------------------------------------------------------------
# Parser and dispatch


def build_parser() -> argparse.ArgumentParser:
    """The ``loadcore`` argument parser, with plug-in sub-commands added.

    After its own sub-commands, each module in :data:`PLUGIN_MODULES` that can be imported and has
    ``add_cli(subparsers)`` adds its own; a plug-in sets ``set_defaults(handler=fn)`` where
    ``fn(args) -> int`` returns the exit status.
    """
    parser = argparse.ArgumentParser(
        prog="loadcore",
        description="Scenario planning for weather-driven daily electricity demand. " + CAUTION,
        epilog="Add --debug anywhere to see a full traceback when something unexpected fails.",
    )
    parser.add_argument("--version", action="version", version=f"loadcore {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    history_opts = _history_options()

    check = sub.add_parser(
        "check",
        parents=[history_opts],
        help="check a demand history file and list every problem",
        description="Read a daily (or sub-daily) demand history and print the check report. "
        "Exit status 1 when it has errors.",
    )
    check.add_argument("history", metavar="HISTORY", help="history CSV file")
    check.set_defaults(handler=_run_check)

    fitp = sub.add_parser(
        "fit",
        parents=[history_opts],
        help="fit a demand model on a history and save it as JSON",
        description="Fit the regression-with-ARIMA-errors demand model on a history file and save "
        "it. " + CAUTION,
    )
    fitp.add_argument("history", metavar="HISTORY", help="history CSV file")
    fitp.add_argument("--out", required=True, metavar="MODEL.json", help="where to save the model")
    fitp.add_argument(
        "--search", choices=("quick", "thorough"), default=None, help="order search (quick)"
    )
    fitp.add_argument(
        "--holidays",
        default=None,
        metavar="CODE",
        help="public-holiday calendar: a country code such as US, or US-TX (US)",
    )
    fitp.add_argument("--no-log", action="store_true", help="model demand itself, not its log")
    fitp.add_argument(
        "--scheme",
        choices=("simple", "detailed"),
        default=None,
        help="day types: working/non-working, or each weekday kind (detailed)",
    )
    fitp.add_argument(
        "--annual-harmonics",
        type=_positive_int,
        default=None,
        metavar="K",
        help="annual sine/cosine pairs (2)",
    )
    fitp.add_argument(
        "--response",
        choices=("quadratic", "degree-days"),
        default=None,
        help="temperature response shape (quadratic)",
    )
    limits = fitp.add_argument_group("order search limits")
    for flag, what in (
        ("--max-p", "highest AR order"),
        ("--max-q", "highest MA order"),
        ("--max-pq", "highest AR + MA order"),
        ("--max-seasonal-p", "highest weekly AR order"),
        ("--max-seasonal-q", "highest weekly MA order"),
    ):
        limits.add_argument(flag, type=_positive_int, default=None, metavar="N", help=what)
    fitp.add_argument(
        "--override",
        action="append",
        default=[],
        metavar='"START[..END] NAME"',
        help="set dates to a day type of their own, e.g. "
        '"2026-12-24..2027-01-01 year_end" (repeatable)',
    )
    fitp.add_argument("--json", action="store_true", help="print one JSON object instead of text")
    fitp.set_defaults(handler=_run_fit)

    fc = sub.add_parser(
        "forecast",
        help="forecast demand for a scenario file with a saved model",
        description="Forecast daily demand for the temperatures (and day types) in a scenario "
        "file. " + KNOWN_TEMPERATURES_NOTE + " " + CAUTION,
    )
    fc.add_argument("model", metavar="MODEL.json", help="a model saved by loadcore fit")
    fc.add_argument("scenario", metavar="SCENARIO.csv", help="scenario CSV file")
    fc.add_argument("--out", required=True, metavar="FORECAST.csv", help="where to write the CSV")
    fc.add_argument(
        "--levels",
        type=_levels_arg,
        default=DEFAULT_LEVELS,
        metavar="L1,L2",
        help="interval levels in percent (80,95)",
    )
    fc.add_argument(
        "--temp-unit",
        type=_unit_arg,
        default="C",
        metavar="C|F",
        help="unit of the scenario temperatures and of the output temperature column (C)",
    )
    fc.add_argument("--date-col", default="date", metavar="NAME", help="date column (date)")
    fc.add_argument(
        "--temp-col", default="temperature", metavar="NAME", help="temperature column (temperature)"
    )
    fc.add_argument(
        "--day-type-col",
        default="day_type",
        metavar="NAME",
        help="optional day-type column; blank cells take the calendar's day type (day_type)",
    )
    fc.set_defaults(handler=_run_forecast)

    appp = sub.add_parser(
        "app",
        help="start the planning app in the browser",
        description="Start the Streamlit app (app/main.py) without opening a browser window.",
    )
    appp.add_argument("--port", type=_port_arg, default=DEFAULT_PORT, help="port (8501)")
    appp.add_argument(
        "--history",
        default=None,
        metavar="FILE",
        help="history file to open instead of the demo (passed as LOADCORE_HISTORY)",
    )
    appp.set_defaults(handler=_run_app)

    _add_plugins(sub)
    return parser


def _add_plugins(sub: Any, modules: Sequence[str] | None = None) -> list[str]:
    added = []
    for name in PLUGIN_MODULES if modules is None else modules:
        try:
            module = importlib.import_module(name)
        except ModuleNotFoundError as exc:
            if exc.name == name:
                log.debug("plug-in %s is not installed", name)
                continue
            _plugin_warning(name, exc)
            continue
        except Exception as exc:  # noqa: BLE001 - a broken plug-in must not stop the others
            _plugin_warning(name, exc)
            continue
        add_cli = getattr(module, "add_cli", None)
        if not callable(add_cli):
            continue
        try:
            add_cli(sub)
        except Exception as exc:  # noqa: BLE001 - same reason
            _plugin_warning(name, exc)
            continue
        added.append(name)
    return added


def _plugin_warning(name: str, exc: BaseException) -> None:
    print(
        f"warning: the {name} commands are unavailable ({type(exc).__name__}: "
        f"{_one_line(str(exc))[:200]})",
        file=sys.stderr,
    )


def _exit_code(code: Any) -> int:
    if code is None:
        return 0
    if isinstance(code, int):
        return code
    print(code, file=sys.stderr)
    return 1


def _silence_stdout() -> None:
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
    except (OSError, ValueError, AttributeError):
        log.debug("stdout could not be redirected after a broken pipe")


def _os_error_text(exc: OSError) -> str:
    name = exc.filename or "the file"
    if isinstance(exc, FileNotFoundError):
        return f"File not found ({name}). Check the path"
    if isinstance(exc, IsADirectoryError):
        return f"This is a folder, not a file ({name}). Give the path of a file"
    if isinstance(exc, PermissionError):
        return f"Permission denied ({name}). Check the file's permissions"
    return f"Cannot read or write {name}: {exc.strerror or exc}"


def main(argv: Sequence[str] | None = None) -> int:
    """Run the ``loadcore`` command.

    Parameters
    ----------
    argv : sequence of str, optional
        Arguments after the program name (``sys.argv[1:]`` when None). ``--debug`` anywhere shows
        tracebacks for unexpected failures and debug logging.

    Returns
    -------
    int
        Exit status: 0 success, 1 a problem with the input or an unexpected failure, 2 a usage
        mistake.
    """
    args_in = list(sys.argv[1:] if argv is None else argv)
    debug = "--debug" in args_in
    args_in = [a for a in args_in if a != "--debug"]
    logging.basicConfig(
        level=logging.DEBUG if debug else logging.WARNING,
        format="%(levelname)s %(name)s: %(message)s",
    )
    parser = build_parser()
    try:
        args = parser.parse_args(args_in)
    except SystemExit as exc:
        return _exit_code(exc.code)
    handler = getattr(args, "handler", None) or getattr(args, "func", None)
    if handler is None:
        parser.print_help(sys.stderr)
        return 2
    try:
        with warnings.catch_warnings():
            if not debug:
                warnings.simplefilter("ignore")
            code = handler(args)
        return _exit_code(code)
    except HistoryError as err:
        text = str(err)
        report = getattr(err, "report", None)
        if report is not None and getattr(report, "errors", ()):
            text += " Run 'loadcore check' on the file for the full report"
        _error_line(text)
    except LoadcoreError as err:
        _error_line(str(err))
    except BrokenPipeError:
        # The reader of our output went away (e.g. `loadcore ... | head`): stop quietly.
        _silence_stdout()
        return 1
    except OSError as err:
        _error_line(_os_error_text(err))
    except json.JSONDecodeError as err:
        _error_line(
            f"The file is not valid JSON (line {err.lineno}, column {err.colno}). "
            "Give a model file saved by 'loadcore fit'"
        )
    except UnicodeDecodeError:
        _error_line("The file is not text (it may be a spreadsheet). Save it as CSV (UTF-8)")
    except KeyboardInterrupt:
        _error_line("Interrupted")
        return 130
    except Exception as err:  # noqa: BLE001 - the last line of defence for the user
        if debug:
            traceback.print_exc()
        _error_line(
            f"Unexpected failure ({type(err).__name__}: {_one_line(str(err))[:300]}); please "
            "report it with the command you ran"
            + ("" if debug else " (add --debug to see the details)")
        )
    return 1
