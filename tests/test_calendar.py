"""Tests for loadcore.calendar: day types, holidays, overrides, specs."""

from __future__ import annotations

import datetime as dt
import json
from pathlib import Path

import holidays
import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from loadcore.calendar import (
    BASE_TYPE,
    DETAILED_TYPES,
    SIMPLE_TYPES,
    CalendarSpec,
    Override,
    _holiday_table,
    day_types,
    holiday_names,
    normalise_type_name,
    overrides_from_text,
    parse_holidays,
)
from loadcore.errors import InputError

US = CalendarSpec()


def test_detailed_week():
    """Monday 2025-06-02 to Sunday 2025-06-08: an ordinary week without holidays."""
    dates = pd.date_range("2025-06-02", periods=7, freq="D")
    got = day_types(dates, US)
    assert list(got) == [
        "monday",
        "midweek",
        "midweek",
        "midweek",
        "friday",
        "saturday",
        "sunday",
    ]
    assert got.index.equals(dates)


def test_simple_week():
    dates = pd.date_range("2025-06-02", periods=7, freq="D")
    got = day_types(dates, CalendarSpec(scheme="simple"))
    assert list(got) == ["working"] * 5 + ["non_working"] * 2


def test_us_federal_holidays():
    """Thanksgiving is the fourth Thursday of November and Independence Day is 4 July
    (5 U.S.C. 6103, the US federal holiday statute; from memory)."""
    got = day_types(pd.to_datetime(["2024-11-28", "2024-07-04", "2024-11-27"]), US)
    assert list(got) == ["holiday", "holiday", "midweek"]
    simple = day_types(pd.to_datetime(["2024-11-28", "2024-11-27"]), CalendarSpec(scheme="simple"))
    assert list(simple) == ["non_working", "working"]


def test_holiday_beats_weekend_and_observed_day_is_a_holiday():
    """4 July 2021 was a Sunday, observed on Monday 5 July (5 U.S.C. 6103 and Executive Order
    11582 on observance of holidays falling on a Sunday; from memory)."""
    got = day_types(pd.to_datetime(["2021-07-04", "2021-07-05"]), US)
    assert list(got) == ["holiday", "holiday"]


def test_override_beats_holiday_and_weekend():
    spec = CalendarSpec(
        overrides=(Override("2024-12-24", "2025-01-01", "Year End", "Year-end low load"),)
    )
    dates = pd.date_range("2024-12-22", "2025-01-02", freq="D")
    got = day_types(dates, spec)
    assert got["2024-12-22"] == "sunday"
    assert (got["2024-12-24":"2025-01-01"] == "year_end").all()  # includes Christmas, a weekend
    assert got["2025-01-02"] == "midweek"
    simple = day_types(dates, CalendarSpec(scheme="simple", overrides=spec.overrides))
    assert (simple["2024-12-24":"2025-01-01"] == "year_end").all()


def test_later_override_wins_where_they_overlap():
    spec = CalendarSpec(
        overrides=(
            Override("2026-07-01", "2026-07-10", "shutdown"),
            Override("2026-07-03", "2026-07-03", "bridge"),
        )
    )
    got = day_types(pd.date_range("2026-07-01", "2026-07-10"), spec)
    assert got["2026-07-03"] == "bridge"
    assert (got.drop(pd.Timestamp("2026-07-03")) == "shutdown").all()


def test_holiday_override_in_simple_scheme_joins_non_working():
    spec = CalendarSpec(
        scheme="simple", overrides=(Override("2026-11-27", "2026-11-27", "holiday"),)
    )
    assert day_types(pd.to_datetime(["2026-11-27"]), spec).iloc[0] == "non_working"


def test_subdivision_adds_state_holidays():
    """Texas Independence Day, 2 March, is a Texas state holiday (Texas Government Code
    662.003; from memory); 2 March 2023 was a Thursday."""
    date = pd.to_datetime(["2023-03-02"])
    assert day_types(date, US).iloc[0] == "midweek"
    assert day_types(date, CalendarSpec(subdivision="tx")).iloc[0] == "holiday"


def test_future_dates_and_unsorted_input():
    dates = pd.to_datetime(["2031-12-25", "2031-12-23", "2031-12-27"])
    got = day_types(dates, US)
    assert list(got.index) == list(dates)
    assert list(got) == ["holiday", "midweek", "saturday"]


def test_times_of_day_are_ignored():
    got = day_types(pd.to_datetime(["2024-07-04 13:00", "2024-07-05 23:30"]), US)
    assert list(got) == ["holiday", "friday"]


def test_accepts_lists_of_strings_series_and_empty():
    assert list(day_types(["2024-07-04"], US)) == ["holiday"]
    series = pd.Series(pd.to_datetime(["2024-07-04"]))
    assert list(day_types(series, US)) == ["holiday"]
    assert len(day_types(pd.DatetimeIndex([]), US)) == 0


def test_bad_dates_raise_input_error():
    with pytest.raises(InputError, match="could not be read"):
        day_types(["not a date"], US)
    with pytest.raises(InputError, match="missing"):
        day_types(pd.to_datetime(["2024-01-01", None]), US)


def _naive_day_type(day: dt.date, spec: CalendarSpec, table) -> str:
    for override in reversed(spec.overrides):
        if override.start <= day <= override.end:
            return override.day_type
    if day in table:
        return "holiday"
    return ["monday", "midweek", "midweek", "midweek", "friday", "saturday", "sunday"][
        day.weekday()
    ]


def test_vectorised_matches_a_date_by_date_rule():
    """Seven years of dates (about 2,500) give the same types as a plain per-date loop over
    the holidays package's own lookup."""
    spec = CalendarSpec(
        overrides=overrides_from_text("2023-12-24..2024-01-01 year_end\n2025-07-03 bridge")
    )
    dates = pd.date_range("2020-01-01", "2026-12-31", freq="D")
    table = holidays.country_holidays("US", years=range(2020, 2027))
    expected = [_naive_day_type(d.date(), spec, table) for d in dates]
    assert list(day_types(dates, spec)) == expected


def test_holiday_lookups_are_cached():
    dates = pd.date_range("2019-01-01", "2025-12-31", freq="D")
    day_types(dates, US)
    before = _holiday_table.cache_info().hits
    day_types(dates, US)
    holiday_names(dates, US)
    assert _holiday_table.cache_info().hits >= before + 2


@settings(max_examples=40, deadline=None)
@given(
    st.lists(
        st.dates(min_value=dt.date(1990, 1, 1), max_value=dt.date(2060, 12, 31)),
        min_size=1,
        max_size=40,
    ),
    st.sampled_from(["simple", "detailed"]),
)
def test_types_always_belong_to_the_scheme(days, scheme):
    spec = CalendarSpec(scheme=scheme)
    got = day_types(pd.to_datetime(days), spec)
    allowed = set(SIMPLE_TYPES if scheme == "simple" else DETAILED_TYPES)
    assert set(got) <= allowed
    assert len(got) == len(days)
    weekend = np.array([d.weekday() >= 5 for d in days])
    if scheme == "simple":
        assert (got.to_numpy()[weekend] == "non_working").all()


def test_base_type():
    assert BASE_TYPE == {"simple": "working", "detailed": "midweek"}
    assert CalendarSpec(scheme="simple").base_type == "working"


def test_holiday_names():
    dates = pd.to_datetime(["2024-07-04", "2024-07-05", "2024-12-25"])
    names = holiday_names(dates, US)
    assert list(names) == ["Independence Day", "", "Christmas Day"]
    assert names.index.equals(dates)


def test_other_country():
    """Boxing Day, 26 December, is a bank holiday in England (Banking and Financial Dealings
    Act 1971, schedule 1; from memory)."""
    spec = CalendarSpec(country="gb")
    assert spec.country == "GB"
    assert day_types(pd.to_datetime(["2024-12-26"]), spec).iloc[0] == "holiday"


def test_parse_holidays():
    assert parse_holidays("US") == ("US", None)
    assert parse_holidays(" us-tx ") == ("US", "TX")


def test_unknown_country_names_it_and_how_to_find_codes():
    with pytest.raises(InputError) as err:
        parse_holidays("XQ")
    assert "'XQ'" in str(err.value)
    assert "list_supported_countries" in str(err.value)
    with pytest.raises(InputError, match="XQ"):
        CalendarSpec(country="XQ")
    with pytest.raises(InputError, match="holiday calendar"):
        parse_holidays("   ")


def test_unknown_subdivision_lists_valid_ones():
    with pytest.raises(InputError) as err:
        parse_holidays("US-ZZ")
    message = str(err.value)
    assert "'ZZ'" in message and "TX" in message and "CA" in message


def test_unknown_scheme():
    with pytest.raises(InputError, match="scheme"):
        CalendarSpec(scheme="weekly")


def test_normalise_type_name():
    assert normalise_type_name("  Plant Shutdown ") == "plant_shutdown"
    assert normalise_type_name("Year-End") == "year_end"
    with pytest.raises(InputError, match="no letters"):
        normalise_type_name(" -- ")


def test_override_checks_dates():
    with pytest.raises(InputError, match="before it starts"):
        Override("2026-01-05", "2026-01-01", "x")
    with pytest.raises(InputError, match="not a date"):
        Override("soon", "2026-01-01", "x")
    o = Override(pd.Timestamp("2026-01-01 10:00"), dt.datetime(2026, 1, 2, 5), "X")
    assert (o.start, o.end, o.day_type) == (dt.date(2026, 1, 1), dt.date(2026, 1, 2), "x")


def test_overrides_from_text():
    text = """
    # year-end and a bridge day
    2026-12-24..2027-01-01 year_end  Year-end low load
    2026-07-03 Bridge
    2026-8-3 .. 2026-8-14 plant-shutdown
    """
    got = overrides_from_text(text)
    assert got == (
        Override(dt.date(2026, 12, 24), dt.date(2027, 1, 1), "year_end", "Year-end low load"),
        Override(dt.date(2026, 7, 3), dt.date(2026, 7, 3), "bridge"),
        Override(dt.date(2026, 8, 3), dt.date(2026, 8, 14), "plant_shutdown"),
    )
    assert overrides_from_text("") == ()


@pytest.mark.parametrize(
    ("text", "line", "words"),
    [
        ("2026-07-03 bridge\nJuly 4 holiday", 2, "not in the form"),
        ("2026-07-03", 1, "not in the form"),
        ("\n2026-02-30 bad_day", 2, "does not exist"),
        ("2026-07-10..2026-07-01 shutdown", 1, "before it starts"),
    ],
)
def test_overrides_from_text_errors_name_the_line(text, line, words):
    with pytest.raises(InputError) as err:
        overrides_from_text(text)
    message = str(err.value)
    assert f"line {line}" in message
    assert words in message


def test_spec_round_trips_through_json():
    spec = CalendarSpec(
        country="US",
        subdivision="TX",
        scheme="simple",
        overrides=overrides_from_text("2026-12-24..2027-01-01 year_end Year end"),
    )
    again = CalendarSpec.from_dict(json.loads(json.dumps(spec.to_dict())))
    assert again == spec
    assert CalendarSpec.from_dict({}) == CalendarSpec()


def test_type_names_fold_full_width_and_accented_letters():
    """Unicode NFKC folds full-width forms to ASCII (Unicode Standard Annex #15)."""
    assert normalise_type_name("ｈｏｌｉｄａｙ") == "holiday"
    assert normalise_type_name("Ｙｅａｒ Ｅｎｄ") == "year_end"
    assert normalise_type_name("Fête nationale") == "fete_nationale"
    with pytest.raises(InputError, match="no letters or digits of the Latin alphabet"):
        normalise_type_name("日本")


def test_overrides_without_history_days_are_named():
    """Issue 10, defect 11: an override wholly after (or before) the history, whose day type no
    history day has, cannot be estimated; one whose type the history has through an earlier
    override can."""
    from loadcore.calendar import overrides_without_history

    history = pd.date_range("2024-01-01", "2026-11-29", freq="D")
    after = Override("2027-12-24", "2028-01-01", "shutdown")
    before = Override("2019-07-01", "2019-07-05", "bridge")
    inside = Override("2025-12-24", "2026-01-01", "year_end")
    future = Override("2026-12-24", "2027-01-01", "year_end")
    spec = CalendarSpec(overrides=(inside, future, after, before))
    assert overrides_without_history(spec, history) == (after, before)
    assert overrides_without_history(CalendarSpec(overrides=(inside,)), history) == ()
    assert overrides_without_history(CalendarSpec(), history) == ()


def test_a_fit_warns_about_an_override_after_the_history(tmp_path, capsys):
    """The fit keeps the warning (FittedModel.calendar_warnings) and ``loadcore fit`` prints it,
    with the override's dates and the history's."""
    from loadcore.cli import main
    from loadcore.model import load_model

    history = Path(__file__).resolve().parent.parent / "demo_data" / "history.csv"
    out = tmp_path / "m.json"
    argv = ["fit", str(history), "--out", str(out), "--override", "2027-12-24..2028-01-01 shutdown"]
    assert main(argv) == 0
    printed = capsys.readouterr().out
    line = next(x for x in printed.splitlines() if x.startswith("warning:"))
    assert "'shutdown' (2027-12-24 to 2028-01-01) has no day in the history" in line
    assert "2021-01-01 to 2026-11-29" in line and "cannot be estimated" in line
    assert load_model(out).calendar_warnings() == [line.removeprefix("warning: ").rstrip(".")]
