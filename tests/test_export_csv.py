"""Tests for loadcore.export.safe_csv: spreadsheet-safe cells, tables and the one CSV writer."""

from __future__ import annotations

import io

import numpy as np
import pandas as pd
import pytest

from loadcore.errors import InputError
from loadcore.export import (
    FORMULA_PREFIXES,
    safe_cell,
    safe_frame,
    starts_formula,
    to_csv_bytes,
)


@pytest.mark.parametrize("prefix", ["=", "+", "-", "@", "\t", "\r"])
def test_safe_cell_neutralises_each_formula_prefix(prefix):
    """Prefix list from the OWASP "CSV Injection" page (owasp.org/www-community/attacks/CSV_Injection)."""
    text = prefix + 'HYPERLINK("x")'
    assert safe_cell(text) == "'" + text


@pytest.mark.parametrize(
    "text",
    [
        '\uff1dHYPERLINK("x")',  # full-width equals sign
        "\uff0b1+1",  # full-width plus
        "\uff0d2+3",  # full-width minus (hyphen-minus)
        "\uff20SUM(A1)",  # full-width commercial at
        "\u200b=1+1",  # zero-width space first
        "\ufeff=1+1",  # byte-order mark first
        "\u200d\u2060+1",  # zero-width joiner and word joiner
        "\u00a0@x",  # no-break space
        "\u3000\uff1d1",  # ideographic space, then full-width equals
        " =1+1",
        "\n-1+2",
        "\ufe62cmd",  # small plus sign, NFKC '+'
    ],
)
def test_safe_cell_neutralises_disguised_formulas(text):
    """Issue 11, item 5: NFKC-normalise and drop invisible leading characters before the check
    (the OWASP "CSV Injection" prefixes, seen through Unicode compatibility folding: UAX #15)."""
    assert safe_cell(text) == "'" + text
    assert starts_formula(text)


def test_safe_cell_keeps_harmless_unicode():
    for text in ("\u2212 5 (a minus sign)", "caf\u00e9", "\u200bplain", "\uff41bc", "a\uff1db"):
        assert safe_cell(text) == text


def test_safe_cell_leaves_plain_text_and_numbers():
    """Numbers stay numbers, negative ones too (OWASP "CSV Injection": only text cells are at risk)."""
    assert safe_cell("heat wave") == "heat wave"
    assert safe_cell("a=b") == "a=b"
    assert safe_cell("") == ""
    for value in (-5, -5.25, np.float64(-3.5), np.int64(-7), True, 0):
        out = safe_cell(value)
        assert out == value and type(out) is type(value)
    assert safe_cell(None) is None
    assert np.isnan(safe_cell(float("nan")))
    ts = pd.Timestamp("2031-01-01")
    assert safe_cell(ts) is ts
    assert safe_cell(np.str_("=1+1")) == "'=1+1"
    assert set(FORMULA_PREFIXES) == {"=", "+", "-", "@", "\t", "\r"}


def test_safe_frame_touches_text_columns_only():
    frame = pd.DataFrame(
        {
            "scenario": ["=cmd|' /C calc'!A0", "normal", "-2+3"],
            "value": [-1.5, 2.0, -3.0],
            "count": [-1, 2, 3],
            "kind": pd.Categorical(["@SUM(A1)", "x", "y"]),
            "mixed": [1, "+bad", None],
        }
    )
    before = frame.copy()
    out = safe_frame(frame)
    pd.testing.assert_frame_equal(frame, before)  # input untouched
    assert out["scenario"].tolist() == ["'=cmd|' /C calc'!A0", "normal", "'-2+3"]
    assert out["value"].dtype == np.float64 and out["value"].tolist() == [-1.5, 2.0, -3.0]
    assert out["count"].dtype == np.int64
    assert out["kind"].tolist() == ["'@SUM(A1)", "x", "y"]
    assert out["mixed"].tolist()[:2] == [1, "'+bad"]
    assert out["mixed"].tolist()[2] is None


def test_safe_frame_neutralises_header_cells():
    out = safe_frame(pd.DataFrame({"=evil": [1]}))
    assert list(out.columns) == ["'=evil"]


def test_to_csv_bytes_reads_back_safely():
    frame = pd.DataFrame(
        {
            "date": pd.date_range("2031-07-01", periods=3, freq="D"),
            "scenario": ["=1+1", "Été chaud", "+SUM(A1:A2)"],
            "mean": [0.1 + 0.2, -1234.5678901234, 20000.0],
            "flag": [True, False, True],
            "blank": [np.nan, 1.0, 2.0],
        }
    )
    data = to_csv_bytes(frame)
    assert isinstance(data, bytes)
    text = data.decode("utf-8")
    assert not text.startswith("\ufeff")
    assert text.endswith("\r\n") and text.count("\r\n") == 4  # RFC 4180 line breaks
    lines = text.splitlines()
    assert lines[0] == "date,scenario,mean,flag,blank"
    assert lines[1].startswith("2031-07-01,'=1+1,0.3,True,")
    back = pd.read_csv(io.BytesIO(data))
    assert back["scenario"].tolist() == ["'=1+1", "Été chaud", "'+SUM(A1:A2)"]
    assert back["mean"].tolist() == pytest.approx([0.3, -1234.5679, 20000.0], abs=1e-4)
    assert back["mean"].dtype == np.float64  # negative numbers stay numbers
    assert np.isnan(back["blank"].iloc[0])
    # no data cell in the raw text begins with a formula prefix
    for line in lines[1:]:
        for cell in line.split(","):
            assert not cell.startswith(("=", "+", "@")), line


def test_to_csv_bytes_writes_index_and_timestamps():
    idx = pd.DatetimeIndex(["2031-01-01 06:30", "2031-01-02 00:00"], name="when")
    frame = pd.DataFrame({"demand": [1.0, 2.0]}, index=idx)
    text = to_csv_bytes(frame).decode()
    assert text.splitlines()[0] == "when,demand"
    assert "2031-01-01T06:30:00" in text
    with pytest.raises(InputError):
        to_csv_bytes("not a table")  # type: ignore[arg-type]


def test_to_csv_bytes_quotes_embedded_line_breaks():
    """Cells holding CR or LF stay one cell (RFC 4180, section 2: such fields are quoted)."""
    import csv

    frame = pd.DataFrame({"note": ["one\rtwo", "three\nfour", "\rfive"], "x": [1.0, -2.0, 3.0]})
    rows = list(csv.reader(io.StringIO(to_csv_bytes(frame).decode(), newline="")))
    assert rows == [["note", "x"], ["one\rtwo", "1"], ["three\nfour", "-2"], ["'\rfive", "3"]]


def test_to_csv_bytes_handles_repeated_and_odd_column_names():
    frame = pd.DataFrame([[1.0, "=x", 3]], columns=["a", "a", 7])
    text = to_csv_bytes(frame).decode()
    assert text.splitlines() == ["a,a,7", "1,'=x,3"]
    assert to_csv_bytes(pd.DataFrame()).decode().strip() == ""


def test_round_for_planners_uses_the_digits_a_planner_reads():
    """0.1 °C, 1 MW, 0.1 % and 0.001 for shares (common practice, no source)."""
    from loadcore.export import round_for_planners

    frame = pd.DataFrame(
        {
            "scenario": ["a"],
            "temperature_f": [101.23456],
            "out_of_range_by_f": [2.345],
            "mean": [1834.567],
            "lower_97.5": [1700.49],
            "p90": [1999.5001],
            "peak_vs_base_pct": [3.14159],
            "coverage_80": [0.81234],
            "weather_share": [0.45678],
            "days": [14],
        }
    )
    out = round_for_planners(frame)
    assert out.iloc[0].to_dict() == {
        "scenario": "a",
        "temperature_f": 101.2,
        "out_of_range_by_f": 2.3,
        "mean": 1835.0,
        "lower_97.5": 1700.0,
        "p90": 2000.0,
        "peak_vs_base_pct": 3.1,
        "coverage_80": 0.812,
        "weather_share": 0.457,
        "days": 14,
    }
    assert frame["mean"].iloc[0] == 1834.567  # a copy
