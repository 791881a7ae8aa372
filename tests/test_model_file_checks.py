"""A model file's numbers, shapes and settings are checked on load (issue 11, items 3, 12, 13).

Every damage below used to load (and then forecast blank, infinite or mean-below-median values, or
fail with a traceback at forecast time); each must now be refused with one ModelError line. The
settings a file carries are held to the same hard limits as settings built in code (workers at
most the machine's cores).
"""

from __future__ import annotations

import copy
import itertools
import json

import numpy as np
import pandas as pd
import pytest
from hardening_support import tiny_model

from loadcore import checks
from loadcore.errors import InputError, ModelError
from loadcore.model import FitSettings, TermSpec, load_model
from loadcore.model.orders import Orders
from loadcore.model.statespace import build_state_space, system_matrices
from loadcore.scenario import constant_path, make_scenario


@pytest.fixture(scope="module")
def doc():
    return json.loads(tiny_model().to_json())


def _load(document):
    return load_model(json.dumps(document))


def _set(path, value):
    def change(d):
        node = d
        for key in path[:-1]:
            node = node[key]
        node[path[-1]] = value

    return change


def _param(name, value):
    def change(d):
        d["parameters"][d["parameter_names"].index(name)] = value

    return change


def _matrix(name, fill):
    def change(d):
        m = np.array(d["end_state"][name], float)
        d["end_state"][name] = fill(m).tolist()

    return change


def _unknown_column(d):
    d["design"]["columns"][1] = "bogus"
    d["parameter_names"][1] = "bogus"


def _wrong_orders(d):
    d["errors"]["weekly_ar"] = 1  # the matrices and names still say no weekly AR term


def _state_dimension(d):
    for name in ("transition", "covariance"):
        m = np.array(d["end_state"][name])
        d["end_state"][name] = np.pad(m, ((0, 1), (0, 1))).tolist()
    d["end_state"]["mean"] = [*d["end_state"]["mean"], 0.0]
    d["end_state"]["observation"] = [[*d["end_state"]["observation"][0], 0.0]]
    d["end_state"]["selection"] = [*d["end_state"]["selection"], [0.0]]


DAMAGE = {
    "converged as text": _set(("converged",), "false"),
    "intercept as text": _set(("design", "intercept"), "true"),
    "a parameter missing": _set(("parameters", 0), None),
    "covariance not PSD": _set(("covariance", 0, 0), -1.0),
    "covariance not symmetric": _set(("covariance", 0, 1), 12345.0),
    "shock variance negative": _param("shock_variance", -1e-3),
    "explosive AR": _param("error_ar_1", 1.5),
    "AR on the unit circle": _param("error_ar_1", 1.0),
    "explosive transition": _matrix("transition", lambda m: m * 5.0),
    "transition 1e308": _matrix("transition", lambda m: m + 1e308),
    "state covariance negative": _matrix("covariance", lambda m: -np.abs(m) - 1.0),
    "state mean 1e300": _matrix("mean", lambda m: m + 1e300),
    "shock covariance negative": _matrix("shock_covariance", lambda m: -m),
    "observation variance": _set(("end_state", "observation_variance"), [[-5.0]]),
    "orders not the matrices": _wrong_orders,
    "state one too large": _state_dimension,
    "unknown design column": _unknown_column,
    "unknown day type": lambda d: d["design"]["day_type_levels"].append("zzz"),
    "day type not a name": _set(("design", "base_type"), 5),
    "intercept with differencing": _set(("errors", "differencing"), 1),
    "workers 1e9 as float": _set(("settings", "workers"), 1e9),
    "workers as text": _set(("settings", "workers"), "8"),
    "workers negative": _set(("settings", "workers"), -1),
    "log as text": _set(("settings", "log"), "false"),
    "bound as bool": _set(("settings", "ar_up_to"), True),
    "reference temperature text": _set(("settings", "terms", "reference_temp_c"), "abc"),
    "reference temperature 1e6": _set(("settings", "terms", "reference_temp_c"), 1e6),
    "harmonics 2.7": _set(("settings", "terms", "annual_harmonics"), 2.7),
    "trend as text": _set(("settings", "terms", "trend"), "no"),
    "unknown setting": _set(("settings", "max_processes"), 4),
    "calendar country number": _set(("settings", "calendar", "country"), 5),
    "overrides as text": _set(("settings", "calendar", "overrides"), "all"),
    "demand unit 100k chars": _set(("history", "demand_unit"), "x" * 100_000),
    "history temperature 900": _set(("history", "temperature_c", 3), 900.0),
    "days used 10**9": _set(("observations_used",), 10**9),
    "regression weights 1e300": _matrix("regression_weights", lambda m: m + 1e300),
    "regression weights one column short": _matrix("regression_weights", lambda m: m[:, :-1]),
    "differencing tests disagree": _set(("differencing_tests", "weekly_differencing"), 1),
}


@pytest.mark.parametrize("name", sorted(DAMAGE))
def test_damaged_model_files_are_refused_with_one_line(doc, name):
    damaged = copy.deepcopy(doc)
    DAMAGE[name](damaged)
    with pytest.raises(ModelError) as caught:
        _load(damaged)
    text = str(caught.value)
    assert "\n" not in text and len(text) < 600
    assert "Refit" in text or "loadcore" in text


def test_an_intact_model_file_loads_and_forecasts_as_the_fit(doc):
    model = tiny_model()
    loaded = _load(doc)
    scenario = make_scenario(
        "check", constant_path(model.history_end + pd.Timedelta(days=1), 10, 25.0)
    )
    a, b = model.forecast(scenario).frame, loaded.forecast(scenario).frame
    pd.testing.assert_frame_equal(a, b)
    assert (b["mean"] >= b["median"]).all()


def test_workers_above_the_cores_in_a_file_are_lowered(doc):
    """A file saved on a bigger machine still loads; its worker count cannot exceed ours."""
    damaged = copy.deepcopy(doc)
    damaged["settings"]["workers"] = 10**9
    assert _load(damaged).settings.workers == checks.machine_cores()


def test_settings_built_in_code_meet_the_same_limits():
    cores = checks.machine_cores()
    FitSettings(workers=cores)
    for bad in (cores + 1, -1, 2.0, "2", True, None):
        with pytest.raises(InputError):
            FitSettings(workers=bad)
    for bad in ("false", 0, None):
        with pytest.raises(InputError):
            FitSettings(log=bad)
    with pytest.raises(InputError):
        FitSettings(ar_up_to=True)
    for kw in (
        {"reference_temp_c": float("nan")},
        {"heating_base_c": "18"},
        {"cooling_base_c": 1e9},
        {"annual_harmonics": 1.5},
        {"annual_harmonics": True},
        {"trend": 1},
    ):
        with pytest.raises(InputError):
            TermSpec(**kw)


def test_the_worker_pool_never_exceeds_the_cores(monkeypatch):
    from loadcore.model import default_workers

    monkeypatch.setenv("LOADCORE_WORKERS", "1000000")
    assert default_workers() <= checks.machine_cores()


@pytest.mark.parametrize(
    "orders",
    [
        Orders(*o)
        for o in itertools.product(range(3), range(2), range(3), range(2), range(2), range(2))
    ],
    ids=str,
)
def test_system_matrices_are_those_of_statsmodels(orders):
    """Reference: statsmodels' SARIMAX state-space form (statsmodels.tsa.statespace.sarimax),
    Harvey's representation with the differencing states first (Durbin and Koopman, 2012)."""
    rng = np.random.default_rng(orders.n_arma + 10 * orders.d + 100 * orders.D)
    params = rng.uniform(-0.3, 0.3, orders.n_arma)
    sm = build_state_space(np.zeros(60), None, orders)
    sm.update(np.r_[params, 1.0])
    T, Z, R = system_matrices(orders, params)
    np.testing.assert_allclose(T, sm.ssm["transition"], atol=1e-15)
    np.testing.assert_allclose(Z, sm.ssm["design"], atol=1e-15)
    np.testing.assert_allclose(R, sm.ssm["selection"], atol=1e-15)


def test_forecast_with_a_damaged_model_is_one_error_line(doc, tmp_path, capsys):
    from loadcore.cli import main

    damaged = copy.deepcopy(doc)
    _unknown_column(damaged)
    model_path = tmp_path / "m.json"
    model_path.write_text(json.dumps(damaged))
    start = tiny_model().history_end + pd.Timedelta(days=1)
    scenario = tmp_path / "s.csv"
    scenario.write_text(f"date,temperature\n{start:%Y-%m-%d},20\n")
    code = main(["forecast", str(model_path), str(scenario), "--out", str(tmp_path / "f.csv")])
    assert code == 1
    err = capsys.readouterr().err.strip()
    assert err.startswith("error: ") and "\n" not in err and "bogus" in err
    assert "Unexpected" not in err
