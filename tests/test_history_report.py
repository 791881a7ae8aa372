"""Tests for loadcore.history.report: capped repeats, the report as a table and as text."""

from __future__ import annotations

import pandas as pd
from history_support import (
    as_bytes,
    table,
    to_csv,
)

from loadcore.history import (
    MAX_LISTED,
    HistoryReport,
    check_history,
)


def test_repeated_issues_are_capped_with_a_count():
    """A 50,000-row file with a bad value on every row still gives a short report."""
    dates = pd.date_range("1900-01-01", periods=50_000, freq="D")
    lines = ["date,demand,temperature"] + [f"{d:%Y-%m-%d},n/a?,12" for d in dates]
    report = check_history(as_bytes(lines))
    errors = report.errors
    assert len(errors) == MAX_LISTED + 1
    assert [e.row for e in errors[:MAX_LISTED]] == list(range(1, MAX_LISTED + 1))
    assert "49980 more" in errors[-1].message and "50000 in all" in errors[-1].message
    assert "rows 21 to 50000" in errors[-1].message
    assert len(report.to_text().splitlines()) == MAX_LISTED + 2


def test_report_frame_and_text():
    frame = table()
    frame.loc[4, "demand"] = -1.0
    report = check_history(as_bytes(to_csv(frame)))
    table_ = report.to_frame()
    assert list(table_.columns) == ["severity", "row", "date", "column", "message", "fix"]
    assert table_.loc[0, "row"] == 5 and table_.loc[0, "severity"] == "error"
    text = report.to_text()
    assert text.startswith("History check: 1 error(s)")
    assert "row 5, date 2023-01-05, column demand" in text
    assert HistoryReport().to_frame().empty
