"""Tests for loadcore.weather: temperature traces, pooling and the variance split."""

from __future__ import annotations

from types import SimpleNamespace

import numpy as np
import pandas as pd
import pytest

from loadcore.errors import InputError, ScenarioError
from loadcore.weather import (
    quantile_column,
    temperature_traces,
    variance_split,
)


def _temps_history(start="2019-01-01", end="2023-12-31"):
    """A stand-in with a ``frame``: temperature_c equals a day counter, so values locate dates."""
    index = pd.date_range(start, end, freq="D", name="date")
    frame = pd.DataFrame(
        {"demand": 1000.0, "temperature_c": np.arange(len(index), dtype=float)}, index=index
    )
    return SimpleNamespace(frame=frame)


def _value(history, date):
    return history.frame.loc[pd.Timestamp(date), "temperature_c"]


def test_traces_names_shape_and_alignment():
    history = _temps_history()
    traces = temperature_traces(history, "2024-01-10", 30, shift_days=3)
    # Years 2019..2023: 2019 needs 2019-01-07, inside the history.
    assert traces.shape == (30, 5 * 7)
    assert list(traces.columns[:7]) == [f"2019{s:+d}" for s in range(-3, 4)]
    assert "2023+0" in traces.columns and "2023-3" in traces.columns
    assert traces.index[0] == pd.Timestamp("2024-01-10") and traces.index.name == "date"
    # 2021+2 starts on 2021-01-12 and runs 30 consecutive days.
    assert traces["2021+2"].iloc[0] == _value(history, "2021-01-12")
    assert traces["2021-3"].iloc[29] == _value(history, "2021-02-05")
    np.testing.assert_array_equal(np.diff(traces["2020+1"].to_numpy()), 1.0)


def test_traces_skip_years_without_the_whole_window():
    history = _temps_history(start="2019-01-05")
    traces = temperature_traces(history, "2024-01-10", 30, shift_days=3)
    # 2019 needs 2019-01-07 onwards: inside; a history from 2019-01-08 drops it.
    assert traces.shape[1] == 35
    history = _temps_history(start="2019-01-08")
    traces = temperature_traces(history, "2024-01-10", 30, shift_days=3)
    assert traces.shape[1] == 28 and not any(c.startswith("2019") for c in traces.columns)


def test_traces_never_use_data_on_or_after_start():
    history = _temps_history(end="2023-12-31")
    # A window starting inside the history: traces from 2023 would overlap the start.
    traces = temperature_traces(history, "2023-12-20", 20, shift_days=2)
    assert not any(c.startswith("2023") for c in traces.columns)
    start_value = _value(history, "2023-12-20")
    assert (traces.to_numpy() < start_value).all()


def test_traces_cross_the_year_end():
    history = _temps_history()
    traces = temperature_traces(history, "2023-12-25", 14, shift_days=0)
    # Last usable year 2022: 2022-12-25 .. 2023-01-07.
    assert "2022+0" in traces.columns
    assert traces["2022+0"].iloc[-1] == _value(history, "2023-01-07")


def test_traces_feb_29_start_uses_feb_28_in_common_years():
    history = _temps_history(end="2024-02-28")
    traces = temperature_traces(history, "2024-02-29", 10, shift_days=0)
    assert traces["2023+0"].iloc[0] == _value(history, "2023-02-28")
    assert traces["2020+0"].iloc[0] == _value(history, "2020-02-29")
    # A window crossing a leap day in the trace year stays consecutive.
    traces = temperature_traces(history, "2023-02-20", 15, shift_days=1)
    assert traces["2020+0"].iloc[9] == _value(history, "2020-02-29")
    np.testing.assert_array_equal(np.diff(traces["2020+0"].to_numpy()), 1.0)


def test_traces_warming_and_blend():
    history = _temps_history()
    base = temperature_traces(history, "2024-01-10", 7, shift_days=1)
    warm = temperature_traces(history, "2024-01-10", 7, shift_days=1, warming_c=2.5)
    np.testing.assert_allclose(warm.to_numpy(), base.to_numpy() + 2.5)
    path = pd.Series(np.linspace(30, 36, 7), index=base.index)
    mixed = temperature_traces(
        history, "2024-01-10", 7, shift_days=1, warming_c=2.5, blend_path=path, blend_weight=0.25
    )
    want = 0.75 * (base.to_numpy() + 2.5) + 0.25 * path.to_numpy()[:, None]
    np.testing.assert_allclose(mixed.to_numpy(), want)
    only_path = temperature_traces(
        history, "2024-01-10", 7, blend_path=path.to_numpy(), blend_weight=1.0
    )
    np.testing.assert_allclose(only_path.to_numpy(), np.repeat(path.to_numpy()[:, None], 35, 1))


def test_traces_input_errors():
    history = _temps_history(start="2023-06-01")
    with pytest.raises(ScenarioError, match="no past year") as info:
        temperature_traces(history, "2024-01-10", 30)
    assert info.value.fix and info.value.where
    history = _temps_history()
    with pytest.raises(InputError, match="blend weight"):
        temperature_traces(history, "2024-01-10", 7, blend_path=np.zeros(7), blend_weight=1.5)
    with pytest.raises(ScenarioError, match="7 days"):
        temperature_traces(history, "2024-01-10", 7, blend_path=np.zeros(5), blend_weight=0.5)
    with pytest.raises(InputError, match="without a blend path"):
        temperature_traces(history, "2024-01-10", 7, blend_weight=0.5)
    with pytest.raises(InputError, match="days"):
        temperature_traces(history, "2024-01-10", 0)
    with pytest.raises(InputError, match="not a date"):
        temperature_traces(history, "next tuesday", 5)


def test_variance_split_adds_up_to_total_variance():
    """Law of total variance: pooled variance = mean within-trace variance + variance of means.

    Common practice, no source (a textbook identity; exact for equal group sizes, ddof 0).
    """
    rng = np.random.default_rng(4)
    cube = rng.normal(size=(9, 50, 12)) * 3 + rng.normal(size=(9, 1, 12)) * 10
    split = variance_split(cube)
    pooled = cube.reshape(-1, 12).var(axis=0)
    np.testing.assert_allclose(split["within"] + split["between"], pooled, rtol=1e-12)
    np.testing.assert_allclose(split["total"], pooled, rtol=1e-12)
    assert ((split["share"] > 0.7) & (split["share"] < 1.0)).all()


def test_variance_split_without_weather_spread():
    cube = np.repeat(np.random.default_rng(2).normal(size=(1, 40, 5)), 6, axis=0)
    split = variance_split(cube)
    np.testing.assert_allclose(split["share"], 0.0, atol=1e-12)


def test_quantile_column_names():
    assert quantile_column(0.1) == "p10"
    assert quantile_column(0.5) == "p50"
    assert quantile_column(0.025) == "p2.5"
    assert quantile_column(0.975) == "p97.5"
