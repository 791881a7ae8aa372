"""loadcore.scenario.suggested_windows: the quick choices of window after a history."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from loadcore.scenario import suggested_windows


def _history(end: str, peak_doy: int, years: int = 3) -> pd.DataFrame:
    """A simulated daily history whose temperature peaks on day of year ``peak_doy``."""
    dates = pd.date_range(end=end, periods=365 * years, freq="D", name="date")
    rng = np.random.default_rng(4)
    temps = 15 + 12 * np.cos(2 * np.pi * (dates.day_of_year - peak_doy) / 365.25)
    return pd.DataFrame({"temperature_c": temps + rng.normal(0, 2, len(dates))}, index=dates)


def test_a_northern_history_ending_in_november():
    """Hottest in July, coldest in January (a cosine peaking on 20 July; calendar arithmetic,
    common practice, no source)."""
    windows = {w.key: w for w in suggested_windows(_history("2026-11-29", 201))}
    assert list(windows) == ["next", "hottest", "coldest", "year_end"]
    assert windows["next"].start == pd.Timestamp("2026-11-30") and windows["next"].days == 14
    assert windows["hottest"].start == pd.Timestamp("2027-07-01")
    assert windows["hottest"].days == 31 and "July 2027" in windows["hottest"].label
    assert windows["coldest"].start == pd.Timestamp("2027-01-01")
    assert windows["year_end"].start == pd.Timestamp("2026-12-20")
    assert windows["year_end"].days == 15


def test_a_southern_history_has_its_hottest_month_in_january():
    windows = {w.key: w for w in suggested_windows(_history("2026-03-15", 20))}
    assert windows["hottest"].start == pd.Timestamp("2027-01-01")
    assert windows["coldest"].start == pd.Timestamp("2026-07-01")
    assert windows["hottest"].days == 31 and windows["coldest"].days == 31


@pytest.mark.parametrize("end", ["2026-12-25", "2026-12-19"])
def test_the_year_end_window_is_always_after_the_history(end):
    start = {w.key: w for w in suggested_windows(_history(end, 201))}["year_end"].start
    assert start > pd.Timestamp(end)
    assert start == pd.Timestamp("2027-12-20" if end == "2026-12-25" else "2026-12-20")


def test_a_history_shorter_than_a_year_offers_no_hottest_month():
    short = _history("2026-11-29", 201).iloc[-120:]
    assert [w.key for w in suggested_windows(short)] == ["next", "year_end"]
