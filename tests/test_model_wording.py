"""The model in a planner's words: coefficient meanings, units, diagnostics."""

from __future__ import annotations

import numpy as np
import pytest


def test_coefficient_table_gives_plain_meanings(demo_model):
    table = demo_model.coefficient_table()
    assert {"term", "estimate", "std_error", "meaning"} <= set(table.columns)
    holiday = table[table["term"] == "day type: public holiday"].iloc[0]
    assert "a public holiday lowers demand by" in holiday["meaning"]
    assert holiday["std_error"] > 0
    t = demo_model.lowest_demand_temperature_c()
    lo, hi = demo_model.temperature_range_c
    assert lo < t < hi
    curve = demo_model.response_curve([t - 10, t, t + 10])
    assert curve["demand"].iloc[1] < curve["demand"].iloc[0]
    assert curve["demand"].iloc[1] < curve["demand"].iloc[2]


def test_diagnostics_use_lag_14_with_model_degrees_of_freedom(demo_model):
    d = demo_model.diagnostics()
    assert d.ljung_box_lag == 14
    assert d.ljung_box_dof == 14 - demo_model.orders.n_arma
    assert d.acf_bound == pytest.approx(1.96 / np.sqrt(len(d.residuals)))
    assert len(d.acf) == 28 and np.all(np.abs(d.acf) < 1)


def test_meanings_can_be_worded_in_fahrenheit(demo_model):
    """Per-degree effects convert with 1 °F = 5/9 °C and temperatures with F = 9/5 C + 32
    (the definition of the Fahrenheit scale; common practice, no source)."""
    c = demo_model.coefficient_table()
    f = demo_model.coefficient_table(temp_unit="F")
    np.testing.assert_array_equal(c["estimate"], f["estimate"])
    assert list(c["term"]) == list(f["term"])  # term labels carry no unit
    slope_c = c.loc[c["term"] == "temperature, linear term", "meaning"].iloc[0]
    slope_f = f.loc[f["term"] == "temperature, linear term", "meaning"].iloc[0]
    assert "at 18 °C" in slope_c and "at 64.4 °F" in slope_f and "per °F" in slope_f
    b = float(c.loc[c["term"] == "temperature, linear term", "estimate"].iloc[0])
    assert f"{100 * b / 10 / 1.8:+.2f} % per °F" in slope_f
    t = demo_model.lowest_demand_temperature_c()
    assert f"{t * 9 / 5 + 32:.1f} °F" in demo_model.describe_lowest_demand(temp_unit="F")
    with pytest.raises(Exception, match="not a temperature unit"):
        demo_model.coefficient_table(temp_unit="K")


def test_weekly_error_terms_name_their_lag_in_days_and_in_weeks():
    """Weekly term k sits at lag 7 k days: k = 2 is lag 14, "two weeks earlier" (calendar
    arithmetic, no source). The model file's statsmodels-style names map to the same terms."""
    from loadcore.model.statespace import own_name, statsmodels_name
    from loadcore.model.terms import TermSpec
    from loadcore.model.wording import coefficient_meaning, term_label

    for k, lag, words in ((1, 7, "a week"), (2, 14, "two weeks"), (3, 21, "three weeks")):
        for kind, verb, when in (("ar", "AR", "earlier"), ("ma", "MA", "later")):
            name = f"error_weekly_{kind}_{k}"
            assert term_label(name) == f"error weekly {verb}, lag {lag}"
            meaning = coefficient_meaning(
                name, 0.2, terms=TermSpec(), log=True, demand_unit="MW", base_type="midweek"
            )
            assert f"same weekday {words} {when}" in meaning
            assert statsmodels_name(name, 7) == f"{kind}.S.L{lag}"
            assert own_name(f"{kind}.S.L{lag}", 7) == name
    assert "a week" not in coefficient_meaning(
        "error_weekly_ar_2", 0.2, terms=TermSpec(), log=True, demand_unit="MW", base_type="midweek"
    )


def test_term_labels_carry_no_unit(demo_model):
    """Labels are unit-free, so the table reads the same in °C and °F; the unit is in the
    meaning column."""
    from loadcore.model.wording import term_label

    for name in demo_model.param_names:
        label = term_label(name, demo_model.orders.period)
        assert "°" not in label and label != name
