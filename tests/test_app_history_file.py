"""``loadcore app --history FILE`` takes the same column and unit options as ``fit``
(issue 10, section 3, defect 9): the command checks them and the app reads the file with them."""

from __future__ import annotations

import json
import subprocess

import pandas as pd
from test_app_support import DEMO_CSV, assert_no_exception, new_app

from loadcore.cli import main
from loadcore.history import HistorySettings, read_history


def _fahrenheit_file(tmp_path):
    frame = pd.read_csv(DEMO_CSV).iloc[-500:]
    frame = frame.rename(columns={"date": "day", "demand": "load_mw", "temperature": "tmax"})
    frame["tmax"] = (frame["tmax"] * 9 / 5 + 32).round(2)
    path = tmp_path / "plant.csv"
    frame.to_csv(path, index=False, sep=";")
    return path


OPTIONS = ["--date-col", "day", "--demand-col", "load_mw", "--temp-col", "tmax", "--temp-unit", "F"]
SETTINGS = HistorySettings(date_col="day", demand_col="load_mw", temp_col="tmax", temp_unit="F")


def test_the_command_passes_the_history_options_to_the_app(tmp_path, monkeypatch):
    path = _fahrenheit_file(tmp_path)
    seen = {}

    def fake_run(command, env, check, cwd):
        seen["env"] = env
        return subprocess.CompletedProcess(command, 0)

    monkeypatch.setattr(subprocess, "run", fake_run)
    assert main(["app", "--history", str(path), *OPTIONS]) == 0
    given = json.loads(seen["env"]["LOADCORE_HISTORY_SETTINGS"])
    assert HistorySettings(**given) == SETTINGS


def test_the_app_reads_the_file_with_those_options(tmp_path, monkeypatch):
    import app.state as app_state

    path = _fahrenheit_file(tmp_path)
    monkeypatch.setenv("LOADCORE_HISTORY", str(path))
    monkeypatch.setenv(
        "LOADCORE_HISTORY_SETTINGS",
        json.dumps(
            {"date_col": "day", "demand_col": "load_mw", "temp_col": "tmax", "temp_unit": "F"}
        ),
    )
    app_state.file_history.clear()
    try:
        at = new_app(page="pages/history.py")
        assert_no_exception(at)
        assert not at.error, [e.value for e in at.error]
        expected = read_history(path, SETTINGS)
        assert at.session_state["history"].fingerprint == expected.fingerprint
        assert "plant.csv" in at.session_state["history_source"]
    finally:
        app_state.file_history.clear()
