"""``loadcore check``: read a history file and print every problem found."""

from __future__ import annotations

import argparse
from typing import Any

from loadcore.cli.common import history_options, history_settings, require_file, say


def run(args: argparse.Namespace) -> int:
    from loadcore.history import check_history

    require_file(args.history, "history file")
    report = check_history(args.history, history_settings(args))
    say(report.to_text())
    if report.ok:
        say("The history can be used for fitting.")
        return 0
    say("Fix the errors above, then run the check again.")
    return 1


def add(sub: Any) -> None:
    parser = sub.add_parser(
        "check",
        parents=[history_options()],
        help="check a demand history file and list every problem",
        description="Read a daily (or sub-daily) demand history and print the check report. "
        "Exit status 1 when it has errors.",
    )
    parser.add_argument("history", metavar="HISTORY", help="history CSV file")
    parser.set_defaults(handler=run)
