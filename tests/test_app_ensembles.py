"""AppTest of the Weather-ensembles page: the figures shown are loadcore's ensemble_forecast."""

from __future__ import annotations

from test_app_support import assert_no_exception, demo_model, new_app, texts

from loadcore.weather import ensemble_forecast

SMALL = {"days": 10, "shift": 1, "paths": 20, "threshold": 2000.0, "seed": 3}


def _run(at, values: dict) -> None:
    at.number_input(key="ens_days").set_value(values["days"])
    at.number_input(key="ens_shift").set_value(values["shift"])
    at.number_input(key="ens_paths").set_value(values["paths"])
    at.number_input(key="ens_threshold").set_value(values["threshold"])
    at.number_input(key="ens_seed").set_value(values["seed"])
    [b for b in at.get("button") if getattr(b, "label", "") == "Run the ensemble"][0].click()
    at.run()


def test_the_ensemble_figures_are_loadcores():
    model = demo_model()
    at = new_app(page="pages/ensembles.py", model=model)
    assert_no_exception(at)
    assert any("Run the ensemble" in i for i in texts(at, "info"))
    _run(at, SMALL)
    assert_no_exception(at)
    assert not texts(at, "error")
    expected = ensemble_forecast(
        model,
        days=SMALL["days"],
        shift_days=SMALL["shift"],
        paths_per_trace=SMALL["paths"],
        seed=SMALL["seed"],
        threshold_mw=SMALL["threshold"],
    )
    metrics = {m.label: m.value for m in at.metric}
    assert metrics["Share of the spread due to weather"] == f"{100 * expected.weather_share:.0f} %"
    assert metrics["Odds of any day above 2,000 MW"] == f"{100 * expected.prob_any_above:.0f} %"
    assert metrics["Expected days above"] == f"{expected.expected_days_above:.1f}"
    shown = at.dataframe[0].value
    assert list(shown["p90"].round(6)) == list(expected.daily["p90"].round(6))
    # fan chart and the window-peak distribution
    assert len(at.get("plotly_chart")) == 2


def test_without_a_threshold_no_odds_are_shown():
    model = demo_model()
    at = new_app(page="pages/ensembles.py", model=model)
    _run(at, {**SMALL, "days": 5, "threshold": 0.0})
    assert_no_exception(at)
    labels = [m.label for m in at.metric]
    assert "Expected days above" not in labels
    assert at.session_state["ensemble"]["result"].threshold_mw is None
