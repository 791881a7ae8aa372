"""The number layout of a history column, decided from all its values (issue 11, item 9), and the
reader defects found when the history package was split (DataFrame infinities and true/false
columns, one column named for two settings, a missing path named twice, one-line CSV text taken
as a path, time-zone-aware dates of UTC days).

Thousands separators and decimal commas are a fact of the trade's spreadsheet exports (common
practice, no source): ``1,442`` is 1442 where numbers are written ``1,441.5`` and 1.442 where
they are written ``12,5``.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from hardening_support import simulated_frame

from loadcore.errors import HistoryError
from loadcore.history import HistorySettings, check_history, read_history
from loadcore.history.numbers import decide, evidence, to_numbers


def _csv(demand, temperature, sep=",", quote=True) -> bytes:
    n = len(demand)
    dates = pd.date_range("2029-01-01", periods=n, freq="D")
    q = '"' if quote else ""
    lines = [sep.join(["date", "demand", "temperature"])]
    lines += [
        sep.join([f"{d:%Y-%m-%d}", f"{q}{m}{q}", f"{q}{t}{q}"])
        for d, m, t in zip(dates, demand, temperature, strict=True)
    ]
    return ("\n".join(lines) + "\n").encode()


def _truth(n=400):
    frame = simulated_frame(n)
    return frame["demand"].to_numpy(), frame["temperature"].to_numpy()


def _grouped(value: float, decimals: int = 1) -> str:
    return f"{value:,.{decimals}f}"


def test_thousands_without_decimals_are_thousands_when_the_file_uses_decimal_points():
    """The issue's first case: '1,442' was read as 1.442 with no issue."""
    demand, temp = _truth()
    cells = [f"{round(v):,d}" for v in demand]  # "1,442"
    history = read_history(_csv(cells, [f"{t:.1f}" for t in temp]))
    np.testing.assert_allclose(history.frame["demand"], np.round(demand))
    notes = [i for i in history.report.infos if "grouping thousands" in i.message]
    assert notes and "1," in notes[0].message


def test_a_column_mixing_1441_5_and_1458_is_read_in_one_layout():
    """The issue's second case: 199 of 400 rows were divided by 1,000."""
    demand, temp = _truth()
    cells = [_grouped(v) if i % 2 else f"{round(v):,d}" for i, v in enumerate(demand)]
    history = read_history(_csv(cells, [f"{t:.1f}" for t in temp]))
    expected = [round(v, 1) if i % 2 else round(v) for i, v in enumerate(demand)]
    np.testing.assert_allclose(history.frame["demand"], expected)
    assert history.frame["demand"].min() > 500


def test_decimal_commas_with_dot_groups_are_read_whole():
    demand, temp = _truth()
    cells = [f"{v:,.1f}".replace(",", "_").replace(".", ",").replace("_", ".") for v in demand]
    temps = [f"{t:.1f}".replace(".", ",") for t in temp]
    history = read_history(_csv(cells, temps, sep=";", quote=False))
    np.testing.assert_allclose(history.frame["demand"], np.round(demand, 1))
    np.testing.assert_allclose(history.frame["temperature_c"], np.round(temp, 1))


def test_an_ambiguous_column_stops_with_a_clear_error():
    demand, _ = _truth()
    cells = [f"{round(v):,d}" for v in demand]
    temps = ["12"] * len(cells)  # whole degrees: nothing tells the decimal mark
    report = check_history(_csv(cells, temps))
    errors = [i for i in report.errors if "could be" in i.message]
    assert len(errors) == 1 and "--decimal" in errors[0].fix
    assert not [i for i in report.errors if "not a number" in i.message]
    for mark, factor in ((".", 1.0), (",", 1e-3)):
        history = read_history(_csv(cells, temps), HistorySettings(decimal=mark))
        np.testing.assert_allclose(history.frame["demand"], np.round(demand) * factor)


def test_a_column_with_both_layouts_is_an_error():
    demand, temp = _truth()
    cells = [_grouped(v) if i % 2 else f"{v:.1f}".replace(".", ",") for i, v in enumerate(demand)]
    with pytest.raises(HistoryError, match="mixes number layouts"):
        read_history(_csv(cells, [f"{t:.1f}" for t in temp]))


@pytest.mark.parametrize(
    ("cells", "point", "comma", "either"),
    [
        (["1,441.5", "1,458"], "1,441.5", "", "1,458"),
        (["12,5", "1.442"], "", "12,5", ""),
        (["1,234,567"], "1,234,567", "", ""),
        (["1.234.567"], "", "1.234.567", ""),
        (["1.442", "1442", "-3"], "", "", ""),
        (["1441.5"], "1441.5", "", ""),
        (["-1,442"], "", "", "-1,442"),
    ],
)
def test_evidence_of_each_layout(cells, point, comma, either):
    found = evidence(pd.Series(cells))
    assert (found.point, found.comma, found.either) == (point, comma, either)


def test_decide_and_read():
    own = evidence(pd.Series(["1,442"]))
    assert decide(own, evidence(pd.Series(["8.3"])), "demand", None).decimal == "."
    assert decide(own, evidence(pd.Series(["8,3"])), "demand", None).decimal == ","
    assert decide(own, None, "demand", None).problem
    np.testing.assert_allclose(
        to_numbers(pd.Series(["1,442", "1.5", "1,441.5", "12,5"]), "."), [1442, 1.5, 1441.5, np.nan]
    )
    np.testing.assert_allclose(
        to_numbers(pd.Series(["1,442", "1.442", "1.441,5", "1.5"]), ","),
        [1.442, 1442, 1441.5, np.nan],
    )


# ---- reader defects -----------------------------------------------------------------------


def _frame(**columns):
    frame = simulated_frame(400)
    for name, values in columns.items():
        frame[name] = values
    return frame


def test_a_frame_with_infinite_demand_is_an_error_as_in_a_file():
    demand = simulated_frame(400)["demand"].to_numpy().copy()
    demand[[5, 9]] = [np.inf, -np.inf]
    report = check_history(_frame(demand=demand))
    bad = [i for i in report.errors if "not a finite number" in i.message]
    assert [i.row for i in bad] == [6, 10]


def test_a_bool_column_is_not_demand():
    report = check_history(_frame(demand=np.arange(400) % 2 == 0))
    assert any("true/false" in i.message for i in report.errors)


def test_one_column_named_for_two_settings_is_refused():
    for kw in ({"demand_col": "temperature"}, {"date_col": "Demand"}, {"temp_col": "date"}):
        with pytest.raises(HistoryError, match="name the same column"):
            HistorySettings(**kw)


def test_a_missing_file_is_named_once(tmp_path):
    missing = str(tmp_path / "nope.csv")
    with pytest.raises(HistoryError) as caught:
        read_history(missing)
    assert str(caught.value).count(missing) == 1


def test_one_line_of_csv_text_is_a_path_and_the_message_says_so():
    """Decision: a str without a line break is a path (the common case); the message says how
    to pass text."""
    with pytest.raises(HistoryError, match="line of CSV text"):
        read_history("date,demand,temperature")


def test_utc_days_in_a_local_zone_stay_on_their_days():
    frame = simulated_frame(400)
    local = frame.assign(date=frame["date"].dt.tz_localize("UTC").dt.tz_convert("America/Chicago"))
    history = read_history(local)
    assert history.start == frame["date"].iloc[0]
    np.testing.assert_allclose(history.frame["demand"], frame["demand"])
    assert any("midnight UTC" in i.message for i in history.report.warnings)
    # local midnights in a zone stay local days, with nothing to say
    zoned = frame.assign(date=frame["date"].dt.tz_localize("America/Chicago"))
    history = read_history(zoned)
    assert history.start == frame["date"].iloc[0]
    assert not any("UTC" in i.message for i in history.report.issues)


def test_daily_rows_all_at_one_evening_hour_are_reported():
    frame = simulated_frame(400)
    text = frame.assign(date=frame["date"].dt.strftime("%Y-%m-%d 19:00")).to_csv(index=False)
    report = check_history(text.encode())
    assert any("same time of day (19:00)" in i.message for i in report.warnings)
