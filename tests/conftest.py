"""Shared fixtures for the whole suite (keep this file small)."""

from __future__ import annotations

from pathlib import Path

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
