"""Stand-ins shared by the scenario-library tests (tests/test_library_*.py, test_cli_scenarios.py).

The killed-writer test (tests/test_library_schema.py) imports :func:`make_entry` from here in a
separate process.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from loadcore.library import ScenarioEntry, settings_to_dict
from loadcore.scenario import constant_path, make_scenario

REPO_ROOT = Path(__file__).resolve().parent.parent
STALE_TEXT = "changed by someone else since you opened it"


@dataclass(frozen=True)
class FakeTerms:
    response: str = "quadratic"
    reference_temp_c: float = 18.0


@dataclass(frozen=True)
class FakeSettings:
    search: str = "quick"
    ar_up_to: int = 5
    terms: FakeTerms = field(default_factory=FakeTerms)
    holidays: tuple = ("US",)


@dataclass(frozen=True)
class FakeModel:
    fingerprint: str = "f" * 64
    settings: FakeSettings = field(default_factory=FakeSettings)


def forecast_table(start: str = "2031-07-01", days: int = 14, seed: int = 0) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    dates = pd.date_range(start, periods=days, freq="D")
    temps = 30.0 + rng.normal(0, 2, days)
    mean = 2000.0 + 20.0 * (temps - 25.0)
    flags = temps > 32.0
    return pd.DataFrame(
        {
            "date": dates,
            "temperature_c": temps,
            "day_type": ["midweek"] * days,
            "mean": mean,
            "median": mean - 2.0,
            "lower_80": mean - 50.0,
            "upper_80": mean + 50.0,
            "lower_95": mean - 80.0,
            "upper_95": mean + 80.0,
            "out_of_range": flags,
            "out_of_range_by_c": np.where(flags, temps - 32.0, 0.0),
            "sparse_temperature": np.zeros(days, dtype=bool),
        }
    )


def make_entry(name: str = "July base", *, days: int = 14, seed: int = 0, **kw) -> ScenarioEntry:
    scenario = make_scenario("as built", constant_path("2031-07-01", days, 30.0))
    args = {
        "name": name,
        "definition": scenario.to_dict(),
        "model_fingerprint": FakeModel().fingerprint,
        "model_settings": settings_to_dict(FakeSettings()),
        "forecast": forecast_table(days=days, seed=seed),
        "note": "seasonal normal",
        "author": "planner A",
        "context": {"levels": [80, 95], "demand_unit": "MW", "demand_kind": "peak"},
    }
    args.update(kw)
    return ScenarioEntry(**args)
