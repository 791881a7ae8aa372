"""``loadcore app``: start the browser app (Streamlit) without opening a window."""

from __future__ import annotations

import argparse
import dataclasses
import ipaddress
import os
import subprocess
import sys
import tomllib
from pathlib import Path
from typing import Any

from loadcore import plainjson
from loadcore.cli.common import history_options, history_settings, port_arg, require_file
from loadcore.errors import LoadcoreError

#: Port Streamlit listens on when --port is not given (Streamlit's usual port).
DEFAULT_PORT = 8501

#: The app has no login, so by default it listens on this machine's loopback address only.
DEFAULT_ADDRESS = "127.0.0.1"

NO_LOGIN_WARNING = (
    "warning: the app has no login; anyone who can reach {address}:{port} can read and change "
    "your histories, models and scenarios. Open it beyond this machine only on a network you trust."
)


def project_root() -> Path:
    """The checkout that holds the package, ``app/`` and ``.streamlit/``."""
    return Path(__file__).resolve().parents[2]


def app_script() -> Path:
    """Path of the Streamlit app's entry script, ``app/main.py`` next to the package's checkout."""
    return project_root() / "app" / "main.py"


def _flag_value(value: Any) -> str:
    return str(value).lower() if isinstance(value, bool) else str(value)


def project_settings() -> dict[str, str]:
    """The project's Streamlit settings (``.streamlit/config.toml``) as ``--section.key`` flags, so
    the app runs with them from any working directory (Streamlit itself only reads the config of
    the folder it is started in)."""
    path = project_root() / ".streamlit" / "config.toml"
    try:
        config = tomllib.loads(path.read_text(encoding="utf-8"))
    except (OSError, tomllib.TOMLDecodeError):
        return {}
    return {
        f"--{section}.{key}": _flag_value(value)
        for section, values in config.items()
        if isinstance(values, dict)
        for key, value in values.items()
    }


def _address_arg(text: str) -> str:
    value = str(text).strip()
    if value in ("localhost", "0.0.0.0", "::"):
        return value
    try:
        return str(ipaddress.ip_address(value))
    except ValueError:
        raise argparse.ArgumentTypeError(
            f"'{value[:40]}' is not an IP address; use 127.0.0.1 (this machine only), "
            "0.0.0.0 (every interface) or one of this machine's addresses"
        ) from None


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
        # The same column and unit options as `fit`, checked here and passed to the app.
        settings = history_settings(args)
        env["LOADCORE_HISTORY_SETTINGS"] = plainjson.dumps(dataclasses.asdict(settings))
    library = env.get("LOADCORE_LIBRARY", "").strip()
    if library:
        env["LOADCORE_LIBRARY"] = str(Path(library).expanduser().resolve())
    flags = project_settings()
    flags.update(
        {
            "--server.address": args.address,
            "--server.port": str(args.port),
            "--server.headless": "true",
            "--browser.gatherUsageStats": "false",
        }
    )
    command = [sys.executable, "-m", "streamlit", "run", str(script)]
    for flag, value in flags.items():
        command += [flag, value]
    shown = "localhost" if args.address in ("127.0.0.1", "localhost", "::1") else args.address
    if shown != "localhost":
        print(NO_LOGIN_WARNING.format(address=args.address, port=args.port), file=sys.stderr)
    print(f"Starting the app on http://{shown}:{args.port} (Ctrl+C stops it).", file=sys.stderr)
    try:
        return subprocess.run(command, env=env, check=False, cwd=project_root()).returncode
    except KeyboardInterrupt:
        return 0


def add(sub: Any) -> None:
    parser = sub.add_parser(
        "app",
        parents=[history_options()],
        help="start the planning app in the browser",
        description="Start the Streamlit app (app/main.py) without opening a browser window.",
    )
    parser.add_argument("--port", type=port_arg, default=DEFAULT_PORT, help="port (8501)")
    parser.add_argument(
        "--address",
        type=_address_arg,
        default=DEFAULT_ADDRESS,
        metavar="IP",
        help="address to listen on (127.0.0.1: this machine only). The app has no login: open it "
        "to others (e.g. 0.0.0.0) only on a network you trust",
    )
    parser.add_argument(
        "--history",
        default=None,
        metavar="FILE",
        help="history file to open instead of the demo, read with the history options below "
        "(as `fit` reads it)",
    )
    parser.set_defaults(handler=run)
