"""Every ``loadcore ...`` line of README.md runs as written, in order (issue 10, part 4).

The lines are taken from the README itself (its plain code blocks; a line ending in a backslash
goes on), and run by bash in a temporary folder holding a copy of demo_data/, with ``loadcore``
meaning ``python -m loadcore`` of this interpreter and the scenario library and home folder in the
temporary folder, so nothing in the project tree or the user's home changes. ``loadcore app``
lines start a server that runs until stopped: they are parsed, not run.
"""

from __future__ import annotations

import os
import shlex
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from loadcore.cli import build_parser

REPO = Path(__file__).resolve().parent.parent


def readme_commands(text: str) -> list[str]:
    """The ``loadcore`` command lines of the README's plain code blocks, in order."""
    commands: list[str] = []
    in_block = False
    plain = False
    pending = ""
    for raw in text.splitlines():
        line = raw.rstrip()
        if line.lstrip().startswith("```"):
            in_block = not in_block
            plain = in_block and line.strip() == "```"
            continue
        if not (in_block and plain):
            continue
        if pending:
            pending += " " + line.strip()
        elif line.startswith("loadcore "):
            pending = line.strip()
        else:
            continue
        if pending.endswith("\\"):
            pending = pending[:-1].rstrip()
            continue
        commands.append(pending)
        pending = ""
    return commands


def test_the_readme_commands_are_found():
    commands = readme_commands((REPO / "README.md").read_text(encoding="utf-8"))
    kinds = {shlex.split(c)[1] for c in commands}
    assert {
        "check",
        "fit",
        "scenario",
        "forecast",
        "backtest",
        "ensemble",
        "scenarios",
        "app",
    } <= kinds
    assert any("--start 2027-07-01" in c and "--heat-wave" in c for c in commands)
    joined = [c for c in commands if "--holidays US" in c]
    assert joined and joined[0].endswith("--json"), "a continued line is joined"


def test_the_readme_says_how_to_put_loadcore_on_the_path():
    text = (REPO / "README.md").read_text(encoding="utf-8")
    assert ". .venv/bin/activate" in text and ".venv/bin/loadcore" in text


def _tree_state() -> str:
    done = subprocess.run(
        ["git", "status", "--porcelain", "--untracked-files=all"],
        cwd=REPO,
        capture_output=True,
        text=True,
        check=False,
    )
    return done.stdout if done.returncode == 0 else ""


@pytest.mark.slow
def test_every_readme_command_runs_as_written(tmp_path):
    commands = readme_commands((REPO / "README.md").read_text(encoding="utf-8"))
    work = tmp_path / "project"
    (work / "demo_data").mkdir(parents=True)
    for name in ("history.csv", "overrides.txt"):
        shutil.copy(REPO / "demo_data" / name, work / "demo_data" / name)
    env = {
        **os.environ,
        "HOME": str(tmp_path / "home"),
        "LOADCORE_LIBRARY": str(tmp_path / "library.sqlite"),
        "PYTHONPATH": str(REPO),
    }
    before = _tree_state()
    loadcore = f"{shlex.quote(sys.executable)} -m loadcore"
    ran = 0
    for command in commands:
        words = shlex.split(command)
        if words[1] == "app":
            args = build_parser().parse_args(words[1:])
            assert callable(args.handler), command
            continue
        done = subprocess.run(
            ["bash", "-c", loadcore + command[len("loadcore") :]],
            cwd=work,
            env=env,
            capture_output=True,
            text=True,
            timeout=900,
        )
        assert done.returncode == 0, f"{command}\n{done.stdout[-2000:]}\n{done.stderr[-2000:]}"
        assert "error:" not in done.stderr, f"{command}\n{done.stderr[-2000:]}"
        ran += 1
    assert ran >= 20
    for name in ("july_heat_forecast.csv", "july_base_forecast.csv", "july_2027.html"):
        assert (work / name).stat().st_size > 0, name
    assert _tree_state() == before, "the README commands changed the project tree"
