"""Tests for loadcore.history.table: the History's shape, the fingerprint, history_from_frame."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from history_support import (
    as_bytes,
    clean_bytes,
    table,
    to_csv,
)

from loadcore.errors import HistoryError
from loadcore.history import (
    History,
    history_from_frame,
    read_history,
)


def test_demo_history_shape(demo_history):
    frame = demo_history.frame
    assert isinstance(frame.index, pd.DatetimeIndex)
    assert frame.index.name == "date"
    assert frame.index.freq == "D"
    assert list(frame.columns) == ["demand", "temperature_c", "temperature_filled"]
    assert frame["demand"].dtype == float and frame["temperature_c"].dtype == float
    assert frame["temperature_filled"].dtype == bool
    assert frame["temperature_c"].notna().all()
    assert demo_history.start == pd.Timestamp("2021-01-01")
    assert demo_history.end == pd.Timestamp("2026-11-29")
    low, high = demo_history.temperature_range_c
    assert low == frame["temperature_c"].min() and high == frame["temperature_c"].max()
    assert demo_history.report.ok


def test_clean_file_has_no_issues_and_keeps_values():
    history = read_history(clean_bytes())
    assert history.report.issues == ()
    expected = table()
    np.testing.assert_allclose(history.frame["demand"], expected["demand"])
    np.testing.assert_allclose(history.frame["temperature_c"], expected["temperature"])
    assert history.frame.index.equals(pd.DatetimeIndex(expected["date"]))


def test_fingerprint_is_stable_and_sensitive():
    a = read_history(clean_bytes())
    b = read_history(clean_bytes())
    assert a.fingerprint == b.fingerprint and len(a.fingerprint) == 64
    frame = table()
    frame.loc[200, "demand"] += 0.1
    assert read_history(as_bytes(to_csv(frame))).fingerprint != a.fingerprint


def test_history_from_frame_matches_read_history():
    read = read_history(clean_bytes())
    built = history_from_frame(read.frame[["demand", "temperature_c"]])
    assert isinstance(built, History)
    assert built.fingerprint == read.fingerprint
    pd.testing.assert_frame_equal(built.frame, read.frame)


def test_history_from_frame_adds_missing_days_and_checks_values():
    frame = pd.DataFrame(
        {"demand": [100.0, 110.0, 120.0], "temperature_c": [1.0, 2.0, 3.0]},
        index=pd.to_datetime(["2024-01-01", "2024-01-02", "2024-01-04"]),
    )
    built = history_from_frame(frame)
    assert len(built.frame) == 4 and np.isnan(built.frame["demand"].iloc[2])
    assert built.frame["temperature_c"].iloc[2] == pytest.approx(2.5)
    assert list(built.frame["temperature_filled"]) == [False, False, True, False]
    with pytest.raises(HistoryError, match="Temperature is missing"):
        history_from_frame(frame.assign(temperature_c=[np.nan, 2.0, 3.0]))
    with pytest.raises(HistoryError, match="above zero"):
        history_from_frame(frame.assign(demand=[100.0, 0.0, 1.0]))
    with pytest.raises(HistoryError, match="temperature_c"):
        history_from_frame(frame[["demand"]])


def test_reading_the_demo_file_twice_is_deterministic(repo_root: Path, demo_history):
    again = read_history(repo_root / "demo_data" / "history.csv")
    assert again.fingerprint == demo_history.fingerprint
