"""``loadcore app``: start the browser app (Streamlit) without opening a window."""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
from pathlib import Path
from typing import Any

from loadcore.cli.common import port_arg, require_file
from loadcore.errors import LoadcoreError

#: Port Streamlit listens on when --port is not given (Streamlit's usual port).
DEFAULT_PORT = 8501


def app_script() -> Path:
    """Path of the Streamlit app's entry script, ``app/main.py`` next to the package's checkout."""
    return Path(__file__).resolve().parents[2] / "app" / "main.py"


def run(args: argparse.Namespace) -> int:
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
        require_file(str(history), "history file")
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


def add(sub: Any) -> None:
    parser = sub.add_parser(
        "app",
        help="start the planning app in the browser",
        description="Start the Streamlit app (app/main.py) without opening a browser window.",
    )
    parser.add_argument("--port", type=port_arg, default=DEFAULT_PORT, help="port (8501)")
    parser.add_argument(
        "--history",
        default=None,
        metavar="FILE",
        help="history file to open instead of the demo (passed as LOADCORE_HISTORY)",
    )
    parser.set_defaults(handler=run)
