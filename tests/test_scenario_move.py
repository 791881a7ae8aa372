"""Moving a scenario to other dates (the app's "move" for windows a newer model cannot use)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from loadcore.errors import ScenarioError
from loadcore.scenario import Scenario, constant_path, make_scenario, same_days_after


def test_moved_to_keeps_name_temperatures_and_own_day_types():
    path = constant_path("2025-07-01", 4, 30.0).to_numpy() + np.arange(4)
    old = Scenario("July", pd.date_range("2025-07-01", periods=4), path, ("", "holiday", "", ""))
    new = old.moved_to("2026-07-01")
    assert new.name == "July" and new.horizon == 4
    assert new.start == pd.Timestamp("2026-07-01") and new.end == pd.Timestamp("2026-07-04")
    np.testing.assert_array_equal(new.temperature_c, old.temperature_c)
    assert new.day_types == old.day_types
    with pytest.raises(ScenarioError, match="new first date"):
        old.moved_to("not a date")


@pytest.mark.parametrize(
    ("start", "end", "expected"),
    [
        ("2025-07-01", "2025-11-30", "2026-07-01"),  # next year's July
        ("2025-12-10", "2025-11-30", "2026-12-10"),  # at least one year on
        ("2023-07-01", "2025-11-30", "2026-07-01"),  # two years behind: three years on
        ("2024-02-29", "2024-11-30", "2025-02-28"),  # 29 February in a common year
        ("2025-11-30", "2025-11-30", "2026-11-30"),
    ],
)
def test_same_days_after_moves_by_whole_years(start, end, expected):
    """Calendar arithmetic (common practice, no source)."""
    assert same_days_after(start, end) == pd.Timestamp(expected)


def test_a_moved_scenario_is_a_valid_scenario_for_the_new_history_end():
    old = make_scenario("Cold", constant_path("2025-01-10", 5, -5.0))
    new = old.moved_to(same_days_after(old.start, "2025-11-30"))
    assert new.start == pd.Timestamp("2026-01-10")
    assert new == make_scenario("Cold", constant_path("2026-01-10", 5, -5.0))
