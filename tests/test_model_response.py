"""The other temperature response: fitted beside the chosen one, reported, chosen by ``auto``."""

from __future__ import annotations

import json

import numpy as np
import pytest

from loadcore.errors import ModelError
from loadcore.model import FitSettings, Orders, TermSpec, fit, load_model
from loadcore.model.response import BASE_STEP_C, MARGIN_AICC, profile_bases
from loadcore.model.simulate import ErrorTruth, simulated_history

#: A simple error truth for the response tests (daily and weekly carry-over; our choice).
SIMPLE_TRUTH = ErrorTruth(Orders(1, 0, 0, 1, 0, 0), (0.7, 0.2), sigma=0.015)

#: Bases of the simulated degree-day truth, °C, between grid points on purpose (our choice).
TRUE_HEATING_C, TRUE_COOLING_C = 15.5, 21.5


@pytest.fixture(scope="module")
def degree_day_history():
    """Simulated 1,500 days whose true response is degree days at 15.5 / 21.5 °C."""
    terms = TermSpec(
        response="degree_days", heating_base_c=TRUE_HEATING_C, cooling_base_c=TRUE_COOLING_C
    )
    return simulated_history(SIMPLE_TRUTH, n_days=1500, seed=7, terms=terms).to_history()


@pytest.fixture(scope="module")
def quadratic_history():
    """Simulated 1,500 days whose true response is the quadratic (simulate.TRUE_RESPONSE)."""
    return simulated_history(SIMPLE_TRUTH, n_days=1500, seed=11).to_history()


def test_demo_comparison_picks_degree_days_and_says_so(demo_model):
    """The demo's invented utility has a degree-day response (demo_data/truth.json: bases 18
    and 24 °C): the quadratic model reports degree days as better by far more than the margin,
    at bases within a grid step of the truth, and its note says how to switch."""
    comparison = demo_model.response_comparison
    assert comparison.fitted.response == "quadratic"
    assert comparison.other.response == "degree_days"
    assert comparison.other_is_better and comparison.aicc_gain > 100 * MARGIN_AICC
    assert comparison.other.bases_estimated
    assert abs(comparison.other.terms.heating_base_c - 18.0) <= BASE_STEP_C
    assert abs(comparison.other.terms.cooling_base_c - 24.0) <= BASE_STEP_C
    note = demo_model.response_note("C")
    assert note.startswith("The degree-day response fits this history clearly better")
    assert "--response auto" in note and "--response degree-days --heating-base" in note
    low, _high = demo_model.temperature_range_c
    assert f"{low:.1f} °C" in note
    contrast = demo_model.response_contrast()
    # The quadratic overstates cold-day demand against the degree-day curve on the demo.
    assert contrast.fitted_demand[0] > contrast.other_demand[0]
    note_f = demo_model.response_note("F", medium="app")
    assert "°F" in note_f and "press 'Refit with the degree-day response'" in note_f


def test_demo_curves_both_drawn(demo_model):
    curve = demo_model.response_curve(np.linspace(-5, 40, 10))
    assert {"demand", "other_demand"} <= set(curve.columns)
    assert np.all(np.isfinite(curve["other_demand"])) and np.all(curve["other_demand"] > 0)


def test_quadratic_truth_does_not_nag(quadratic_history):
    """On a simulated quadratic truth the degree-day alternative is not reported as better."""
    model = fit(quadratic_history, orders=Orders(1, 0, 0, 1, 0, 0))
    comparison = model.response_comparison
    assert comparison.other.response == "degree_days"
    assert not comparison.other_is_better
    assert model.response_note("C") is None


def test_profile_recovers_simulated_bases(degree_day_history):
    """Profile likelihood over the grid of bases recovers a simulated truth's heating and cooling
    bases within one grid step (the truth lies between two grid points)."""
    model = fit(
        degree_day_history,
        FitSettings(terms=TermSpec(response="auto")),
        orders=Orders(1, 0, 0, 1, 0, 0),
    )
    assert model.settings.terms.response == "degree_days"
    assert abs(model.settings.terms.heating_base_c - TRUE_HEATING_C) <= BASE_STEP_C
    assert abs(model.settings.terms.cooling_base_c - TRUE_COOLING_C) <= BASE_STEP_C
    # The profile itself peaks next to the truth as well.
    quadratic = fit(degree_day_history, orders=Orders(1, 0, 0, 1, 0, 0))
    other = quadratic.response_comparison.other
    assert abs(other.terms.heating_base_c - TRUE_HEATING_C) <= BASE_STEP_C
    assert abs(other.terms.cooling_base_c - TRUE_COOLING_C) <= BASE_STEP_C


def test_profile_table_peaks_at_the_chosen_pair(degree_day_history):
    """profile_bases returns every grid pair (cooling at or above heating) and its best one."""
    from loadcore.model.fitting import _identified, _regression

    settings = FitSettings(terms=TermSpec(response="degree_days"))
    design, _ = _regression(degree_day_history, settings)
    temps = degree_day_history.frame["temperature_c"].to_numpy(float)
    profile = profile_bases(
        design.y,
        lambda terms: _identified(design.columns(degree_day_history, terms), 0, 0),
        settings.terms,
        temps,
        Orders(1, 0, 0, 1, 0, 0),
        np.array([0.7, 0.2]),
    )
    table = profile.table
    assert (table["cooling_base_c"] >= table["heating_base_c"]).all()
    best = table.loc[table["loglik"].idxmax()]
    assert (best["heating_base_c"], best["cooling_base_c"]) == (
        profile.heating_base_c,
        profile.cooling_base_c,
    )


def test_auto_chooses_the_lower_aicc(demo_history, demo_model):
    """``auto`` keeps the response with the lower AICc: degree days on the demo, whose
    comparison then names the quadratic as the other (and worse) one."""
    auto = fit(demo_history, FitSettings(terms=TermSpec(response="auto")))
    comparison = auto.response_comparison
    assert comparison.asked == "auto"
    assert auto.settings.terms.response == "degree_days"
    assert comparison.fitted.aicc < comparison.other.aicc
    assert comparison.other.response == "quadratic"
    assert auto.response_note("C") is None
    assert auto.aicc < demo_model.aicc


def test_auto_keeps_the_quadratic_on_a_quadratic_truth(quadratic_history):
    model = fit(
        quadratic_history,
        FitSettings(terms=TermSpec(response="auto")),
        orders=Orders(1, 0, 0, 1, 0, 0),
    )
    comparison = model.response_comparison
    assert model.settings.terms.response == "quadratic"
    assert comparison.fitted.aicc <= comparison.other.aicc


def test_degree_day_fit_compares_with_the_quadratic(demo_history):
    model = fit(demo_history, FitSettings(terms=TermSpec(response="degree_days")))
    comparison = model.response_comparison
    assert comparison.other.response == "quadratic" and not comparison.other.bases_estimated
    assert not comparison.other_is_better


def test_comparison_survives_the_model_file(demo_model):
    loaded = load_model(demo_model.to_json())
    a, b = demo_model.response_comparison, loaded.response_comparison
    assert b.to_dict() == a.to_dict()
    assert loaded.response_note("C") == demo_model.response_note("C")


def test_model_file_without_comparison_still_loads(demo_model):
    """Files written before the comparison existed have no such key: they load without one."""
    data = demo_model.to_dict()
    del data["response_comparison"]
    loaded = load_model(json.dumps(data))
    assert loaded.response_comparison is None
    assert loaded.response_note("C") is None
    assert "other_demand" not in loaded.response_curve([0.0, 30.0]).columns


@pytest.mark.parametrize(
    ("path", "value"),
    [
        (("other", "coefficients", 0), "text"),
        (("other", "columns"), ["const"]),
        (("other", "aicc"), None),
        (("fitted", "terms", "response"), "degree_days"),
        (("asked",), "cubic"),
        (("other", "bases_estimated"), "yes"),
    ],
)
def test_damaged_comparison_is_refused(demo_model, path, value):
    data = demo_model.to_dict()
    target = data["response_comparison"]
    for key in path[:-1]:
        target = target[key]
    target[path[-1]] = value
    with pytest.raises(ModelError):
        load_model(json.dumps(data))
