"""The ``loadcore`` command: one module per sub-command, this one parses and dispatches.

Sub-commands::

    loadcore check HISTORY.csv
    loadcore fit HISTORY.csv --out MODEL.json
    loadcore scenario MODEL.json --start DATE --days N --out SCENARIO.csv
    loadcore forecast MODEL.json SCENARIO.csv --out FORECAST.csv
    loadcore backtest HISTORY.csv
    loadcore ensemble MODEL.json --out ENSEMBLE.csv
    loadcore scenarios save|list|export ...
    loadcore app

Every command module has ``add(subparsers)``, which sets ``handler`` (``handler(args) -> int``)
as its parser default. A user's mistake is reported as one line on stderr starting ``error:``
with exit status 1; usage mistakes exit with status 2; a traceback is shown only with ``--debug``.
Nothing outside this package imports it.
"""

from __future__ import annotations

import argparse
import json
import logging
import os
import sys
import traceback
import warnings
from collections.abc import Sequence
from typing import Any

from loadcore import texts
from loadcore.cli import app, backtest, check, ensemble, fit, forecast, scenario, scenarios, zones
from loadcore.cli.common import ProgressBar, clip, one_line
from loadcore.errors import HistoryError, LoadcoreError
from loadcore.version import __version__

log = logging.getLogger(__name__)

#: The sub-commands, in the order ``loadcore --help`` lists them.
COMMANDS = (check, fit, scenario, forecast, backtest, ensemble, scenarios, zones, app)


def _error_line(text: str) -> None:
    ProgressBar.close_all()
    print(f"error: {one_line(text)}", file=sys.stderr)


def build_parser() -> argparse.ArgumentParser:
    """The ``loadcore`` argument parser with every sub-command."""
    parser = argparse.ArgumentParser(
        prog="loadcore",
        description="Scenario planning for weather-driven daily electricity demand. "
        + texts.PLANNING_CAUTION,
        epilog="Add --debug anywhere to see a full traceback when something unexpected fails.",
    )
    parser.add_argument("--version", action="version", version=f"loadcore {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for command in COMMANDS:
        command.add(sub)
    return parser


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
    if args_in[:1] == ["scenario"]:
        args_in = scenario.join_signed_values(args_in)
    logging.basicConfig(
        level=logging.DEBUG if debug else logging.WARNING,
        format="%(levelname)s %(name)s: %(message)s",
    )
    parser = build_parser()
    try:
        args = parser.parse_args(args_in)
    except SystemExit as exc:
        return _exit_code(exc.code)
    handler = getattr(args, "handler", None)
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
            f"Unexpected failure ({type(err).__name__}: {clip(str(err), 300)}); please "
            "report it with the command you ran"
            + ("" if debug else " (add --debug to see the details)")
        )
    return 1


__all__ = ["COMMANDS", "ProgressBar", "build_parser", "main"]
