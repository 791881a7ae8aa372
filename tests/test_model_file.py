"""The model file: saving, loading, damaged files, format 2 and the reading of format 1."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from loadcore.errors import ModelError
from loadcore.model import MODEL_FILE_VERSION, Orders, build_state_space, load_model
from loadcore.model.statespace import own_name, statsmodels_name
from loadcore.scenario import Scenario

REPO = Path(__file__).resolve().parent.parent
DATA = Path(__file__).resolve().parent / "data"

# A version-1 model file and what that model gave, both written by loadcore at commit e3556dd
# (the last writer of format 1): a fit with fixed orders AR 1, weekly AR 2, weekly MA 1 to 420
# simulated days (tests/data/model_v1.json), and its forecast, sample paths, coefficient table
# and diagnostics for one scenario (tests/data/model_v1_expected.json).
V1_FILE = DATA / "model_v1.json"
V1_EXPECTED = DATA / "model_v1_expected.json"

#: The keys of a format-2 model file (loadcore.model.model_file).
V2_KEYS = {
    "kind",
    "format_version",
    "fitted_at",
    "versions",
    "settings",
    "history",
    "design",
    "errors",
    "parameter_names",
    "parameters",
    "covariance",
    "log_likelihood",
    "aicc",
    "observations_used",
    "converged",
    "differencing_tests",
    "end_state",
    "residuals",
    "candidates",
    "memory_selection",
}


def _v1_scenario(expected: dict) -> Scenario:
    return Scenario.from_dict(expected["scenario"])


def test_saved_model_forecasts_identically(demo_model, heat_wave_scenario, tmp_path):
    """A model saved to JSON and loaded again forecasts exactly as the fitted one, no refit."""
    path = demo_model.save(tmp_path / "model.json")
    text = path.read_text()
    assert "NaN" not in text and json.loads(text)["kind"] == "loadcore fitted model"
    loaded = load_model(path)
    a = demo_model.forecast(heat_wave_scenario).frame
    b = loaded.forecast(heat_wave_scenario).frame
    pd.testing.assert_frame_equal(a, b, check_exact=True)
    np.testing.assert_array_equal(
        demo_model.sample_paths(heat_wave_scenario, 20, seed=4),
        loaded.sample_paths(heat_wave_scenario, 20, seed=4),
    )
    assert loaded.order == demo_model.order and loaded.aicc == demo_model.aicc
    assert loaded.fingerprint == demo_model.fingerprint
    assert loaded.diagnostics().ljung_box_stat == pytest.approx(
        demo_model.diagnostics().ljung_box_stat
    )


def test_damaged_model_file_gives_a_clear_message(demo_model, tmp_path):
    data = demo_model.to_dict()
    data["history"]["demand"][5] = 1.0
    p = tmp_path / "edited.json"
    p.write_text(json.dumps(data))
    with pytest.raises(ModelError, match="fingerprint"):
        load_model(p)
    with pytest.raises(ModelError, match="not a loadcore model"):
        load_model('{"kind": "something else"}')
    with pytest.raises(ModelError, match="does not exist"):
        load_model(tmp_path / "missing.json")


def test_format_2_uses_names_of_our_own(demo_model):
    """Format 2: the error model as Orders.to_dict(), our parameter names, ``covariance``, the
    settings as FitSettings names them; none of format 1's library-style keys."""
    data = demo_model.to_dict()
    assert set(data) == V2_KEYS | {"response_comparison"}
    assert data["format_version"] == MODEL_FILE_VERSION == 2
    assert data["errors"] == demo_model.orders.to_dict()
    assert set(data["errors"]) == {
        "ar",
        "differencing",
        "ma",
        "weekly_ar",
        "weekly_differencing",
        "weekly_ma",
    }
    names = data["parameter_names"]
    columns = list(demo_model.columns)
    assert names[: len(columns)] == columns
    assert names[-1] == "shock_variance"
    assert all(n.startswith("error_") for n in names[len(columns) : -1])
    assert not any("." in n for n in names)
    k = len(names)
    assert len(data["parameters"]) == k
    assert np.asarray(data["covariance"]).shape == (k, k)
    assert {"ar_up_to", "ma_up_to", "ar_ma_up_to", "weekly_ar_up_to", "weekly_ma_up_to"} <= set(
        data["settings"]
    )
    text = demo_model.to_json()
    for old in ('"param_names"', '"cov_params"', '"orders"', '"max_p"', '"sigma2"', '"ar.L'):
        assert old not in text
    assert demo_model.to_json() == text, "the same model writes the same bytes"
    assert data["fitted_at"] == demo_model.fitted_at != ""


def test_own_parameter_names_translate_to_the_library_spelling():
    """Our error-parameter names map one to one onto statsmodels' SARIMAX ``param_names`` for
    the same orders (the reference library's spelling; weekly lags at 7 and 14 days)."""
    orders = Orders(2, 0, 2, 2, 0, 2)
    X = np.ones((60, 1))
    sm_names = build_state_space(np.zeros(60), X, orders).param_names
    ours = orders.parameter_names()
    assert len(sm_names) == 1 + len(ours)
    assert [statsmodels_name(n, 7) for n in ours] == list(sm_names[1:])
    assert [own_name(n, 7) for n in sm_names[1:]] == list(ours)
    assert "error_weekly_ar_2" in ours and statsmodels_name("error_weekly_ma_2", 7) == "ma.S.L14"
    with pytest.raises(ValueError):
        own_name("ar.S.L10", 7)


def test_version_1_file_still_loads_and_forecasts_as_it_did():
    """A format-1 file written by the previous writer loads: orders, parameter names, settings
    and state translated; the forecast, sample paths, coefficient table (wording included) and
    diagnostics equal what the writing version gave."""
    expected = json.loads(V1_EXPECTED.read_text())
    raw = json.loads(V1_FILE.read_text())
    assert raw["format_version"] == 1 and "param_names" in raw and "cov_params" in raw
    model = load_model(V1_FILE)
    assert model.orders == Orders(1, 0, 0, 2, 0, 1)
    assert model.param_names == (
        "const",
        "temp",
        "temp_sq",
        "type_non_working",
        "annual_cos1",
        "annual_sin1",
        "error_ar_1",
        "error_weekly_ar_1",
        "error_weekly_ar_2",
        "error_weekly_ma_1",
        "shock_variance",
    )
    assert model.fitted_at == raw["saved_at"]
    scenario = _v1_scenario(expected)
    fc = model.forecast(scenario, levels=expected["levels"]).frame
    for column, values in expected["forecast"].items():
        got = fc[column]
        want = pd.Series(values).sort_index(key=lambda i: i.astype(int)).to_numpy()
        if column == "date":
            assert [d.strftime("%Y-%m-%d") for d in got] == [w[:10] for w in want]
        elif isinstance(want[0], str | bool):
            assert list(got) == list(want)
        else:
            np.testing.assert_allclose(got.to_numpy(dtype=float), want.astype(float), rtol=1e-12)
    np.testing.assert_allclose(
        model.sample_paths(scenario, 3, seed=5), expected["paths_seed_5"], rtol=1e-12
    )
    table = model.coefficient_table()
    assert list(table["term"]) == expected["coefficient_terms"]
    assert list(table["meaning"]) == expected["coefficient_meanings"]
    np.testing.assert_allclose(table["estimate"], expected["estimates"], rtol=1e-12)
    np.testing.assert_allclose(table["std_error"], expected["std_errors"], rtol=1e-12)
    weekly_14 = table[table["term"] == "error weekly AR, lag 14"]["meaning"].iloc[0]
    assert "two weeks earlier" in weekly_14
    assert model.aicc == expected["aicc"]
    assert model.describe_errors() == expected["describe_errors"]
    assert model.diagnostics().ljung_box_stat == pytest.approx(expected["ljung_box_stat"])


def test_version_1_model_saved_again_is_format_2_and_forecasts_the_same(tmp_path):
    expected = json.loads(V1_EXPECTED.read_text())
    old = load_model(V1_FILE)
    path = old.save(tmp_path / "again.json")
    data = json.loads(path.read_text())
    assert data["format_version"] == 2 and set(data) == V2_KEYS
    again = load_model(path)
    scenario = _v1_scenario(expected)
    pd.testing.assert_frame_equal(
        old.forecast(scenario).frame, again.forecast(scenario).frame, check_exact=True
    )
    assert again.fingerprint == old.fingerprint


def test_version_1_with_the_oldest_setting_names_loads():
    """Files from before loadcore 0.2 named the search bounds max_p, max_q, max_pq, max_P and
    max_Q; they are read as ar_up_to ... weekly_ma_up_to."""
    raw = json.loads(V1_FILE.read_text())
    settings = raw["settings"]
    for old, new in [
        ("max_p", "ar_up_to"),
        ("max_q", "ma_up_to"),
        ("max_pq", "ar_ma_up_to"),
        ("max_P", "weekly_ar_up_to"),
        ("max_Q", "weekly_ma_up_to"),
    ]:
        settings[old] = settings.pop(new) - 1
    model = load_model(json.dumps(raw))
    assert (model.settings.ar_up_to, model.settings.weekly_ma_up_to) == (4, 1)


@pytest.mark.parametrize(
    "change, match",
    [
        (lambda d: d["param_names"].__setitem__(7, "ar.S.L10"), "damaged"),
        (lambda d: d["orders"].__setitem__(6, 12), "damaged"),
        (lambda d: d.pop("cov_params"), "damaged"),
        (lambda d: d["state"].pop("T"), "damaged"),
        (lambda d: d["param_names"].pop(), "do not match"),
        (lambda d: d.__setitem__("format_version", 3), "Unsupported model file version 3"),
        (lambda d: d.__setitem__("format_version", True), "Unsupported model file version"),
    ],
)
def test_damaged_version_1_files_give_one_clear_error(change, match):
    raw = json.loads(V1_FILE.read_text())
    change(raw)
    with pytest.raises(ModelError, match=match) as info:
        load_model(json.dumps(raw))
    assert "Refit" in str(info.value)


def test_damaged_version_2_files_give_one_clear_error(demo_model):
    good = demo_model.to_dict()
    for key, value, match in [
        ("errors", {"ar": -1}, "damaged|invalid"),
        ("parameter_names", ["const"], "do not match"),
        ("covariance", [[1.0]], "do not match"),
        ("candidates", [], "damaged"),
        ("converged", "yes", "damaged"),
        ("end_state", {"mean": [0.0]}, "damaged"),
    ]:
        data = json.loads(json.dumps(good))
        data[key] = value
        with pytest.raises(ModelError, match=match):
            load_model(json.dumps(data))


def test_a_model_file_with_a_byte_order_mark_loads(demo_model, tmp_path):
    """Issue 11, item 19: a model file saved by an editor with a UTF-8 byte-order mark was
    refused as 'JSONDecodeError'."""
    path = tmp_path / "bom.json"
    path.write_bytes("\ufeff".encode() + demo_model.to_json().encode())
    again = load_model(path)
    assert again.orders == demo_model.orders
    assert load_model(path.read_bytes()).orders == demo_model.orders
