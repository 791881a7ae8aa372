"""Outlying demand days (issue 11, item 10).

One demand of 1e9 (or 1e-6) used to pass ``check`` with no warning and ruin the fit. Such days
are now reported with their date and value, and ``--drop-outliers`` (the History page's box)
treats them as missing. Histories simulated from known truths with strong holidays, heat waves,
piecewise responses and high-order errors must raise no flag at all.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from hardening_support import SMALL_SEARCH, history_csv_text, simulated_frame, small_settings

from loadcore.calendar import CalendarSpec, day_types
from loadcore.cli import main
from loadcore.history import HistorySettings, check_history, read_history
from loadcore.history.outliers import find_outliers

DAY = 200  # the row that is spoiled


def _spoiled(value: float) -> pd.DataFrame:
    frame = simulated_frame(400)
    frame.loc[DAY, "demand"] = value
    return frame


def _outlier_warnings(report):
    return [i for i in report.warnings if "departs from the days around it" in i.message]


@pytest.mark.parametrize(("value", "shown"), [(1e9, "1,000,000,000"), (1e-6, "1e-06")])
def test_a_wild_demand_is_reported_with_its_date_and_value(value, shown):
    frame = _spoiled(value)
    report = check_history(frame)
    found = _outlier_warnings(report)
    assert len(found) == 1
    assert found[0].date == f"{frame.loc[DAY, 'date']:%Y-%m-%d}"
    assert f"The demand {shown} MW" in found[0].message


@pytest.mark.parametrize("factor", [10.0, 0.1, 2.2, 0.45])
def test_unit_and_typing_slips_are_caught(factor):
    frame = simulated_frame(400)
    frame.loc[DAY, "demand"] *= factor
    dates = [o.date for o in find_outliers(read_history(frame).frame["demand"])]
    assert dates == [frame.loc[DAY, "date"]]


def test_drop_outliers_makes_the_day_missing_and_keeps_the_rest(tmp_path):
    frame = _spoiled(1e9)
    kept = read_history(frame)
    dropped = read_history(frame, HistorySettings(drop_outliers=True))
    day = frame.loc[DAY, "date"]
    assert kept.frame.loc[day, "demand"] == 1e9
    assert np.isnan(dropped.frame.loc[day, "demand"])
    others = dropped.frame.index != day
    np.testing.assert_array_equal(
        dropped.frame["demand"][others].to_numpy(), kept.frame["demand"][others].to_numpy()
    )
    assert "treated as missing" in _outlier_warnings(dropped.report)[0].message


def test_the_fit_is_spared_when_the_outlier_is_dropped():
    """Truth: AR(1) errors with 2 % shocks (phi 0.6), so the typical shock is about 2 %."""
    from loadcore.model import fit

    frame = _spoiled(1e9)
    ruined = fit(read_history(frame), small_settings())
    spared = fit(read_history(frame, HistorySettings(drop_outliers=True)), small_settings())
    assert np.sqrt(ruined.shock_variance) > 0.1
    assert np.sqrt(spared.shock_variance) == pytest.approx(0.02, rel=0.25)


def test_check_and_fit_take_drop_outliers(tmp_path, capsys):
    frame = _spoiled(1e9)
    path = tmp_path / "h.csv"
    path.write_text(history_csv_text(frame))
    assert main(["check", str(path)]) == 0
    out = capsys.readouterr().out
    assert "1 warning(s)" in out and "1,000,000,000" in out
    assert f"{frame.loc[DAY, 'date']:%Y-%m-%d}" in out
    assert main(["check", str(path), "--drop-outliers"]) == 0
    assert "treated as missing" in capsys.readouterr().out
    model = tmp_path / "m.json"
    assert main(["fit", str(path), "--drop-outliers", *SMALL_SEARCH, "--out", str(model)]) == 0
    assert "typical shock about 2." in capsys.readouterr().out


def test_the_demo_history_has_no_outliers(demo_history):
    assert find_outliers(demo_history.frame["demand"]) == []


def _simulated_truth(seed: int, days: int = 1100) -> pd.Series:
    """Log demand with holidays at -28 %, weekends, 1-3 day heat spikes of +10 °C, a piecewise
    cooling/heating response and ARMA(2,1) errors with 3 % shocks."""
    rng = np.random.default_rng(seed)
    idx = pd.date_range("2020-01-01", periods=days, freq="D")
    temp = 15 + 12 * np.sin(2 * np.pi * (idx.day_of_year.to_numpy() - 110) / 365.25)
    temp = temp + rng.normal(0, 3.5, days)
    for start in rng.integers(0, days - 3, 8):
        temp[start : start + rng.integers(1, 4)] += 10
    effect = {"saturday": -0.12, "sunday": -0.18, "holiday": -0.28, "friday": -0.01}
    weekday = np.array([effect.get(t, 0.0) for t in day_types(idx, CalendarSpec("US"))])
    shocks = rng.normal(0, 0.03, days)
    errors = np.zeros(days)
    for i in range(2, days):
        errors[i] = 0.7 * errors[i - 1] - 0.1 * errors[i - 2] + shocks[i] + 0.3 * shocks[i - 1]
    response = 0.025 * np.maximum(temp - 22, 0) + 0.015 * np.maximum(15 - temp, 0)
    return pd.Series(np.exp(np.log(2000) + response + weekday + errors), index=idx)


@pytest.mark.parametrize("seed", range(12))
def test_no_flags_on_simulated_truths_with_holidays_and_heat_waves(seed):
    assert find_outliers(_simulated_truth(seed)) == []


def test_no_flags_on_an_hourly_fahrenheit_history():
    """Sub-daily readings in °F, aggregated to daily peaks: still no flag."""
    daily = _simulated_truth(99, days=400)
    hours = pd.date_range(daily.index[0], periods=len(daily) * 24, freq="h")
    shape = 0.85 + 0.15 * np.sin(2 * np.pi * (hours.hour.to_numpy() - 9) / 24)
    demand = np.repeat(daily.to_numpy(), 24) * shape
    temp_f = 59 + 20 * np.sin(2 * np.pi * (hours.day_of_year.to_numpy() - 110) / 365.25)
    frame = pd.DataFrame({"date": hours, "demand": demand.round(1), "temperature": temp_f})
    report = check_history(frame, HistorySettings(temp_unit="F"))
    assert report.ok and not _outlier_warnings(report)


def test_the_history_page_box_drops_outliers():
    """The History page's 'Treat outlying demand days as missing' box (AppTest)."""
    from test_app_history import _upload
    from test_app_support import assert_no_exception, new_app

    frame = _spoiled(1e9)
    data = history_csv_text(frame).encode()
    at = new_app(page="pages/history.py")
    _upload(at, data, "spoiled.csv", history_drop_outliers=True)
    assert_no_exception(at)
    used = at.session_state["history"]
    assert np.isnan(used.frame.loc[frame.loc[DAY, "date"], "demand"])
