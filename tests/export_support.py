"""Forecast-shaped stand-ins shared by the export tests (tests/test_export_*.py)."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd


@dataclass(frozen=True)
class FakeForecast:
    """Forecast-shaped object (the contract's frame, levels, scenario_name, note, warnings())."""

    frame: pd.DataFrame
    levels: tuple = (80, 95)
    scenario_name: str = "base"
    note: str = ""
    notes: tuple = field(default=())

    def warnings(self, temp_unit: str = "C") -> list[str]:
        return list(self.notes)


def make_forecast(
    name: str = "base",
    *,
    start: str = "2031-07-01",
    days: int = 10,
    level_mw: float = 2000.0,
    slope_mw: float = 15.0,
    temps_c: np.ndarray | None = None,
    out_idx: tuple[int, ...] = (),
    note: str = "",
    seed: int = 0,
) -> FakeForecast:
    rng = np.random.default_rng(seed)
    dates = pd.date_range(start, periods=days, freq="D")
    temps = temps_c if temps_c is not None else 28.0 + rng.normal(0, 2, days)
    mean = level_mw + slope_mw * (temps - 25.0) + rng.normal(0, 5, days)
    flags = np.zeros(days, dtype=bool)
    flags[list(out_idx)] = True
    by_c = np.where(flags, 1.5, 0.0)
    frame = pd.DataFrame(
        {
            "date": dates,
            "temperature_c": temps,
            "day_type": ["midweek"] * days,
            "mean": mean,
            "median": mean - 3.0,
            "lower_80": mean - 60.0,
            "upper_80": mean + 60.0,
            "lower_95": mean - 95.0,
            "upper_95": mean + 95.0,
            "out_of_range": flags,
            "out_of_range_by_c": by_c,
            "sparse_temperature": np.zeros(days, dtype=bool),
        }
    )
    return FakeForecast(frame=frame, scenario_name=name, note=note)
