"""Tests for the synthetic Calder Basin demo data and its generator."""

from __future__ import annotations

import importlib.util
import json
import subprocess
import sys

import numpy as np
import pandas as pd
import pytest

from loadcore.calendar import CalendarSpec, day_types
from loadcore.history import check_history


@pytest.fixture(scope="module")
def generator(repo_root):
    spec = importlib.util.spec_from_file_location(
        "demo_generate", repo_root / "demo_data" / "generate.py"
    )
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


@pytest.fixture(scope="module")
def truth(repo_root):
    return json.loads((repo_root / "demo_data" / "truth.json").read_text())


@pytest.fixture(scope="module")
def demo_frame(demo_history, generator):
    frame = demo_history.frame.copy()
    frame["log_demand"] = np.log(frame["demand"])
    frame["true_type"] = generator.true_day_types(frame.index)
    return frame


def test_regenerating_gives_the_same_bytes(repo_root, tmp_path):
    subprocess.run(
        [sys.executable, str(repo_root / "demo_data" / "generate.py"), "--out-dir", str(tmp_path)],
        check=True,
        capture_output=True,
    )
    for name in ("history.csv", "truth.json", "overrides.txt"):
        assert (tmp_path / name).read_bytes() == (repo_root / "demo_data" / name).read_bytes()


def test_a_different_seed_gives_different_data(generator):
    a = generator.make_history(1)
    b = generator.make_history(2)
    assert not np.allclose(a["demand"], b["demand"])


def test_truth_json_is_the_dict_in_the_generator(generator, truth):
    expected = {
        **generator.TRUTH,
        "start": generator.START,
        "end": generator.END,
        "seed": generator.SEED,
    }
    assert truth == json.loads(json.dumps(expected))
    for key in (
        "base_mw",
        "growth_per_year",
        "heating_base_c",
        "cooling_base_c",
        "heating_per_degc",
        "cooling_per_degc",
        "day_type_effects",
        "year_end",
        "annual_cos",
        "annual_sin",
        "ar1",
        "seasonal_ar1",
        "sigma",
        "country",
    ):
        assert key in truth
    assert truth["country"] == "US"
    assert truth["year_end"] == {"start": "12-24", "end": "01-01"}


def test_csv_reads_cleanly(repo_root, demo_history, truth):
    report = check_history(repo_root / "demo_data" / "history.csv")
    assert report.issues == ()
    frame = demo_history.frame
    assert frame.index[0] == pd.Timestamp(truth["start"])
    assert frame.index[-1] == pd.Timestamp(truth["end"])
    assert len(frame) == (frame.index[-1] - frame.index[0]).days + 1
    assert frame["demand"].notna().all()
    assert not frame["temperature_filled"].any()


def test_csv_layout(repo_root):
    lines = (repo_root / "demo_data" / "history.csv").read_text().splitlines()
    assert lines[0] == "date,demand,temperature"
    date, demand, temp = lines[1].split(",")
    assert date == "2021-01-01"
    assert len(demand.split(".")[1]) == 1 and len(temp.split(".")[1]) == 1


def test_extreme_summer_and_winter_days(demo_history):
    temps = demo_history.frame["temperature_c"]
    summer = temps[temps.index.month.isin([6, 7, 8])]
    winter = temps[temps.index.month.isin([12, 1, 2])]
    assert (summer >= 40).sum() >= 6
    assert (winter <= 0).sum() >= 6
    every_summer = summer.groupby(summer.index.year).max()
    assert (every_summer >= 40).all()


def test_seasonal_climate(demo_history):
    temps = demo_history.frame["temperature_c"]
    by_month = temps.groupby(temps.index.month).mean()
    assert 0 < by_month[1] < 8
    assert 30 < by_month[7] < 38


def test_weekend_demand_is_lower_than_midweek(demo_frame, truth):
    ordinary = demo_frame[demo_frame["true_type"] != "holiday"]
    means = ordinary.groupby("true_type")["log_demand"].mean()
    assert means["saturday"] < means["midweek"]
    assert means["sunday"] < means["saturday"]
    for day in ("saturday", "sunday"):
        gap = means[day] - means["midweek"]
        assert gap == pytest.approx(truth["day_type_effects"][day], abs=0.03)


def test_year_end_only_on_ordinary_weekdays(generator):
    dates = pd.date_range("2024-12-20", "2025-01-03")
    types = pd.Series(generator.true_day_types(dates), index=dates)
    assert types["2024-12-24"] == "year_end"
    assert types["2024-12-25"] == "holiday"
    assert types["2024-12-28"] == "saturday"
    assert types["2025-01-01"] == "holiday"
    assert types["2024-12-23"] == "monday"
    assert types["2025-01-02"] == "midweek"


def test_generator_day_types_agree_with_the_calendar(demo_frame):
    """Outside the year-end period the generator's day types are loadcore's detailed types."""
    calendar = day_types(demo_frame.index, CalendarSpec())
    ordinary = demo_frame["true_type"] != "year_end"
    assert (calendar[ordinary] == demo_frame.loc[ordinary, "true_type"]).all()


def _demo_overrides(repo_root):

    return (repo_root / "demo_data" / "overrides.txt").read_text(encoding="utf-8")


def test_the_demo_overrides_are_the_generators_year_end_days(repo_root, generator):
    """Issue 10, defect 11: with demo_data/overrides.txt loadcore's day types are the
    generator's on every day, the year-end period included, from the history's start to the
    last year-end period a scenario window can reach (24 months on)."""
    from loadcore.calendar import overrides_from_text

    spec = CalendarSpec(overrides=overrides_from_text(_demo_overrides(repo_root)))
    dates = pd.date_range(generator.START, "2029-01-31", freq="D")
    ours = day_types(dates, spec).to_numpy()
    theirs = generator.true_day_types(dates)
    assert (ours == theirs).all(), dates[ours != theirs][:5]
    assert (theirs == "year_end").sum() > 20


def test_the_demo_model_has_the_year_end_period(repo_root, demo_history, tmp_path, capsys):
    """The demo model is fitted as ``make demo`` fits it (with the overrides file), and then
    has a year-end effect near the generator's -0.10 (within three standard errors), no
    warning, and forecasts the coming year-end period with it."""
    from loadcore.cli import main
    from loadcore.model import load_model
    from loadcore.scenario import make_scenario, seasonal_normal_path

    recipe = (repo_root / "Makefile").read_text()
    assert "$(DEMO_MODEL): $(STAMP) $(DEMO_HISTORY) $(DEMO_OVERRIDES)" in recipe
    assert '--override "$$(cat $(DEMO_OVERRIDES))"' in recipe
    out = tmp_path / "demo_model.json"
    history = str(repo_root / "demo_data" / "history.csv")
    argv = ["fit", history, "--out", str(out), "--search", "quick"]
    assert main([*argv, "--override", _demo_overrides(repo_root)]) == 0
    assert "warning" not in capsys.readouterr().out
    model = load_model(out)
    assert "type_year_end" in model.columns and not model.calendar_warnings()
    table = model.coefficient_table()
    row = table[table["term"].str.contains("year-end")].iloc[0]
    assert abs(row["estimate"] - (-0.10)) < 3 * row["std_error"]
    start = pd.Timestamp("2026-12-20")
    fc = model.forecast(make_scenario("year end", seasonal_normal_path(model.history, start, 18)))
    frame = fc.frame.set_index("date")
    assert frame.loc["2026-12-28", "day_type"] == "year_end"
    assert frame.loc["2026-12-25", "day_type"] == "holiday"


def _true_regressors(frame: pd.DataFrame, truth: dict) -> pd.DataFrame:
    years = (frame.index - frame.index[0]).days / 365.25
    temp = frame["temperature_c"]
    doy = frame.index.day_of_year
    columns = {
        "const": np.ones(len(frame)),
        "growth": np.asarray(years, dtype=float),
        "heating": np.maximum(truth["heating_base_c"] - temp, 0.0).to_numpy(),
        "cooling": np.maximum(temp - truth["cooling_base_c"], 0.0).to_numpy(),
        "annual_cos": np.cos(2 * np.pi * doy / 365.25),
        "annual_sin": np.sin(2 * np.pi * doy / 365.25),
    }
    for name in truth["day_type_effects"]:
        if name != "midweek":
            columns[name] = (frame["true_type"] == name).to_numpy().astype(float)
    return pd.DataFrame(columns, index=frame.index)


def test_least_squares_recovers_the_true_parameters(demo_frame, truth):
    """Ordinary least squares on the true regressors is unbiased under autocorrelated errors,
    so with six years of data it lands near every true coefficient."""
    x = _true_regressors(demo_frame, truth)
    beta, *_ = np.linalg.lstsq(x.to_numpy(), demo_frame["log_demand"].to_numpy(), rcond=None)
    got = dict(zip(x.columns, beta, strict=True))
    assert got["const"] == pytest.approx(np.log(truth["base_mw"]), abs=0.02)
    assert got["growth"] == pytest.approx(truth["growth_per_year"], abs=0.004)
    assert got["heating"] == pytest.approx(truth["heating_per_degc"], abs=0.0015)
    assert got["cooling"] == pytest.approx(truth["cooling_per_degc"], abs=0.002)
    assert got["annual_cos"] == pytest.approx(truth["annual_cos"], abs=0.015)
    assert got["annual_sin"] == pytest.approx(truth["annual_sin"], abs=0.015)
    for name, effect in truth["day_type_effects"].items():
        if name != "midweek":
            assert got[name] == pytest.approx(effect, abs=0.02), name


def test_errors_follow_the_stated_process(demo_frame, truth):
    """With the true mean removed, regressing u_t on u_{t-1}, u_{t-7}, u_{t-8} gives about
    ar1, seasonal_ar1 and -ar1*seasonal_ar1, and the innovations have about sigma."""
    x = _true_regressors(demo_frame, truth)
    true_beta = np.array(
        [
            np.log(truth["base_mw"]),
            truth["growth_per_year"],
            truth["heating_per_degc"],
            truth["cooling_per_degc"],
            truth["annual_cos"],
            truth["annual_sin"],
        ]
        + [truth["day_type_effects"][c] for c in x.columns[6:]]
    )
    u = demo_frame["log_demand"].to_numpy() - x.to_numpy() @ true_beta
    design = np.column_stack([u[7:-1], u[1:-7], u[:-8]])
    coef, *_ = np.linalg.lstsq(design, u[8:], rcond=None)
    phi, big_phi = truth["ar1"], truth["seasonal_ar1"]
    assert coef[0] == pytest.approx(phi, abs=0.05)
    assert coef[1] == pytest.approx(big_phi, abs=0.06)
    assert coef[2] == pytest.approx(-phi * big_phi, abs=0.07)
    innovations = u[8:] - design @ coef
    assert innovations.std() == pytest.approx(truth["sigma"], rel=0.1)
