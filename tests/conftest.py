"""Shared fixtures for the whole suite (keep this file small)."""

from __future__ import annotations

from pathlib import Path

import pandas as pd
import pytest

from loadcore.history import History, read_history

REPO_ROOT = Path(__file__).resolve().parent.parent


@pytest.fixture(scope="session")
def repo_root() -> Path:
    """The repository root folder."""
    return REPO_ROOT


@pytest.fixture(scope="session")
def demo_history() -> History:
    """The synthetic Calder Basin demo history, read once per test session."""
    return read_history(REPO_ROOT / "demo_data" / "history.csv")


@pytest.fixture(scope="session")
def demo_model(demo_history):
    """The demo model, fitted once per test session with the quick search."""
    from loadcore.model import FitSettings, fit

    return fit(demo_history, FitSettings(search="quick"))


@pytest.fixture(scope="session")
def heat_wave_scenario(demo_model):
    """A 14-day seasonal-normal path with a heat wave peaking 3 °C above the fitted range."""
    from loadcore.scenario import heat_wave, make_scenario, seasonal_normal_path

    start = demo_model.history_end + pd.Timedelta(days=1)
    path = seasonal_normal_path(demo_model.history, start, 14)
    peak = demo_model.temperature_range_c[1] + 3.0
    path = heat_wave(path, peak_c=peak, length_days=5, ramp_days=2, start_day=4)
    return make_scenario("heat wave", path, model_end=demo_model.history_end)


@pytest.fixture
def served_app(tmp_path):
    """The app served on a free loopback port for a browser test (tests/browser_support.py)."""
    from browser_support import serve_app

    yield from serve_app(tmp_path)
