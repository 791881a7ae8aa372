"""The History page's upload (issue 10, section 3, defect 9): the file's own column names in
select boxes with a best guess, the delimiter, date layout and unit hint it shows, and no
"No problems found" under a rejected file."""

from __future__ import annotations

import pandas as pd
from test_app_support import DEMO_CSV, assert_no_exception, new_app, texts

from loadcore.history import HistorySettings, read_history


def _file(at, data: bytes, name: str) -> None:
    at.file_uploader(key="history_upload").set_value((name, data, "text/csv"))
    at.run()


def test_the_columns_are_the_files_own_with_a_best_guess():
    frame = pd.read_csv(DEMO_CSV).iloc[-400:]
    frame = frame.rename(columns={"date": "Day", "demand": "Load (MW)", "temperature": "Tmax degF"})
    frame["Tmax degF"] = (frame["Tmax degF"] * 1.8 + 32).round(1)
    frame["Day"] = pd.to_datetime(frame["Day"]).dt.strftime("%d/%m/%Y")
    data = frame.to_csv(index=False, sep=";").encode()
    at = new_app(page="pages/history.py")
    _file(at, data, "export.csv")
    assert_no_exception(at)
    for key, guess in {
        "history_date_col": "Day",
        "history_demand_col": "Load (MW)",
        "history_temp_col": "Tmax degF",
    }.items():
        box = at.selectbox(key=key)
        assert list(box.options) == ["Day", "Load (MW)", "Tmax degF"]
        assert box.value == guess
    assert at.radio(key="history_file_unit").value == "F"
    shown = " ".join(texts(at, "caption"))
    assert "semicolon" in shown and "DD/MM/YYYY" in shown and "°F" in shown
    [b for b in at.button if b.label == "Check and use this file"][0].click()
    at.run()
    assert_no_exception(at)
    assert not texts(at, "error")
    settings = HistorySettings(
        date_col="Day", demand_col="Load (MW)", temp_col="Tmax degF", temp_unit="F"
    )
    assert at.session_state["history"].fingerprint == read_history(data, settings).fingerprint


def test_no_problems_found_never_shows_under_a_rejected_file():
    bad = b"date,demand,temperature\n2024-01-01,100,10\n2024-01-01,101,11\n2024-01-03,-5,abc\n"
    at = new_app(page="pages/history.py")
    _file(at, bad, "broken.csv")
    [b for b in at.button if b.label == "Check and use this file"][0].click()
    at.run()
    assert_no_exception(at)
    assert texts(at, "error")
    assert not any("No problems found" in s for s in texts(at, "success"))
    assert any("not of the file that was not used" in c for c in texts(at, "caption"))
