"""Pieces the benchmarks share."""

from __future__ import annotations

from pathlib import Path

from loadcore.model import FitSettings, fit, load_model

REPO = Path(__file__).resolve().parent.parent


def benchmark_model(history):
    """The demo model: demo_data/demo_model.json when it matches the history, else a quick fit.

    Returns the model and a note of where it came from (the timed work does not depend on how the
    orders were found).
    """
    path = REPO / "demo_data" / "demo_model.json"
    if path.exists():
        model = load_model(path)
        if model.history.fingerprint == history.fingerprint:
            return model, "demo_data/demo_model.json"
    return fit(history, FitSettings(search="quick")), "fitted for the benchmark (quick search)"
