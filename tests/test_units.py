"""The owners of user parameters: temperature units, interval levels, plain JSON, file policy."""

from __future__ import annotations

import os
import zipfile

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from loadcore import files, levels, plainjson, texts, units
from loadcore.errors import InputError

# ------------------------------------------------------------------------------------------ units


def test_unit_conversion_fixed_points():
    """Water freezes at 0 °C = 32 °F, boils at 100 °C = 212 °F; the scales meet at -40
    (common practice, no source)."""
    assert units.c_to_f(0.0) == pytest.approx(32.0)
    assert units.c_to_f(100.0) == pytest.approx(212.0)
    assert units.c_to_f(-40.0) == pytest.approx(-40.0)
    assert units.f_to_c(212.0) == pytest.approx(100.0)
    assert units.f_to_c(98.6) == pytest.approx(37.0)


def test_unit_conversion_round_trip_arrays_lists_and_series():
    values = np.linspace(-50, 50, 11)
    np.testing.assert_allclose(units.f_to_c(units.c_to_f(values)), values)
    np.testing.assert_allclose(units.c_to_f([0.0, 10.0]), [32.0, 50.0])
    assert isinstance(units.c_to_f(pd.Series([20.0, 30.0])), pd.Series)
    np.testing.assert_allclose(units.from_unit(units.to_unit(values, "F"), "F"), values)
    assert units.to_unit(21.5, "C") == 21.5


def test_differences_and_per_degree_effects_scale_by_1_8():
    """A 1 °C step is 1.8 °F steps (exact definition; common practice, no source)."""
    assert units.delta_to_unit(10.0, "F") == pytest.approx(18.0)
    assert units.delta_from_unit(18.0, "F") == pytest.approx(10.0)
    assert units.per_degree_to_unit(1.8, "F") == pytest.approx(1.0)
    assert units.delta_to_unit(10.0, "C") == 10.0


@pytest.mark.parametrize("text", ["C", "c", "°C", " F ", "°f", "Fahrenheit", "celsius"])
def test_parse_unit_accepts_the_usual_spellings(text):
    assert units.parse_unit(text) in ("C", "F")


@pytest.mark.parametrize("text", ["K", "", None, "degrees", "CF"])
def test_parse_unit_refuses_anything_else_with_a_fix(text):
    with pytest.raises(InputError, match="not a temperature unit.*Use C"):
        units.parse_unit(text, where="--temp-unit")


def test_formatting_and_column_names_carry_the_unit():
    assert units.format_temp(41.0, "C") == "41.0 °C"
    assert units.format_temp(41.0, "F") == "105.8 °F"
    assert units.format_delta(2.5, "F") == "4.5 °F"
    assert units.format_range(-8.4, 42.9, "C") == "-8.4 °C to 42.9 °C"
    assert units.temperature_column("F") == "temperature_f"
    assert units.out_of_range_column("C") == "out_of_range_by_c"


# ----------------------------------------------------------------------------------------- levels


def test_levels_parse_once_sorted_and_distinct():
    assert levels.parse_levels("95,80") == (80, 95)
    assert levels.parse_levels("50, 97.5%, 80, 80") == (50, 80, 97.5)
    assert levels.parse_levels([80.0, 95]) == (80, 95)
    assert levels.parse_levels("1,99.9") == (1, 99.9)


@pytest.mark.parametrize("bad", ["", "0", "100", "abc", "80,-5", "0.5", "99.95", "nan", "inf"])
def test_levels_outside_1_to_99_9_are_refused(bad):
    with pytest.raises(InputError, match="level|Give levels"):
        levels.parse_levels(bad)


def test_level_columns_have_one_spelling_and_read_back():
    assert levels.lower_column(80) == "lower_80"
    assert levels.upper_column(97.5) == "upper_97.5"
    assert levels.coverage_column(97.5) == "coverage_97.5"
    assert levels.level_of_column("upper_97.5") == 97.5
    assert levels.level_of_column("lower_97_5") == 97.5  # written by older versions
    assert levels.level_of_column("lower_80") == 80
    assert levels.level_of_column("mean") is None
    cols = ["date", "lower_80", "upper_80", "lower_97.5", "upper_97.5", "lower_50"]
    assert levels.levels_in_columns(cols) == (80, 97.5)


def test_z_values_match_scipy_normal_quantiles():
    """The 95 % central interval's z is 1.959964 (standard normal table; scipy.stats.norm)."""
    assert levels.z_value(95) == pytest.approx(1.959964, abs=1e-6)
    assert levels.z_value(80) == pytest.approx(stats.norm.ppf(0.9))
    assert levels.tail_probabilities(97.5) == pytest.approx((0.0125, 0.9875))


# ------------------------------------------------------------------------------------------ texts


def test_warnings_follow_the_chosen_unit():
    frame = pd.DataFrame(
        {
            "date": pd.date_range("2027-07-01", periods=3),
            "temperature_c": [44.0, 20.0, 30.0],
            "out_of_range": [True, False, False],
            "sparse_temperature": [False, False, True],
        }
    )
    in_f = texts.forecast_warnings(frame, (-8.0, 42.0), "F")
    assert "111.2 °F" in in_f[0] and "3.6 °F above" in in_f[0] and "°C" not in " ".join(in_f)
    in_c = texts.forecast_warnings(frame, (-8.0, 42.0), "C")
    assert "44.0 °C is 2.0 °C above" in in_c[0] and "2027-07-03" in in_c[1]


# ------------------------------------------------------------------------------------ plain JSON


def test_plain_json_converts_numpy_pandas_and_dates():
    value = {
        "a": np.float64(1.5),
        "b": np.int64(2),
        "c": [np.nan, pd.NaT, float("inf")],
        "d": pd.Timestamp("2026-01-02"),
        "e": pd.Timestamp("2026-01-02 13:30"),
        "f": (1, 2),
        "g": np.array([True, False]),
    }
    plain = plainjson.to_plain(value)
    assert plain == {
        "a": 1.5,
        "b": 2,
        "c": [None, None, None],
        "d": "2026-01-02",
        "e": "2026-01-02T13:30:00",
        "f": [1, 2],
        "g": [True, False],
    }
    with pytest.raises(InputError, match="infinite"):
        plainjson.to_plain(float("inf"), nonfinite="error", where="x")


def test_json_reader_caps_depth_and_accepts_a_byte_order_mark():
    assert plainjson.loads(b'\xef\xbb\xbf{"a": [1, 2]}') == {"a": [1, 2]}
    with pytest.raises(InputError, match="nests"):
        plainjson.loads("[" * 100 + "]" * 100)
    with pytest.raises(InputError, match="not valid JSON"):
        plainjson.loads('{"a": NaN}')
    with pytest.raises(InputError, match="line 1"):
        plainjson.loads("{oops")


# ---------------------------------------------------------------------------------- file policy


def test_files_refuse_folders_devices_and_oversized_files(tmp_path):
    with pytest.raises(InputError, match="folder"):
        files.read_bytes(tmp_path)
    with pytest.raises(InputError, match="not a regular file"):
        files.read_bytes("/dev/zero")
    fifo = tmp_path / "pipe"
    os.mkfifo(fifo)
    with pytest.raises(InputError, match="not a regular file"):
        files.read_bytes(fifo)
    big = tmp_path / "big.csv"
    big.write_bytes(b"x" * (2 * files.BYTES_PER_MB))
    with pytest.raises(InputError, match="more than the 1 MB limit"):
        files.read_bytes(big, limit_mb=1)
    with pytest.raises(InputError, match="does not exist"):
        files.read_bytes(tmp_path / "missing.csv")


def test_files_name_spreadsheets_utf16_and_binary(tmp_path):
    book = tmp_path / "book.xlsx"
    with zipfile.ZipFile(book, "w") as z:
        z.writestr("[Content_Types].xml", "<Types/>")
        z.writestr("xl/workbook.xml", "<workbook/>")
    with pytest.raises(InputError, match="Excel workbook.*Save it as CSV"):
        files.read_text(book)
    with pytest.raises(InputError, match="UTF-16"):
        files.decode("date,demand\n".encode("utf-16"))
    with pytest.raises(InputError, match="binary"):
        files.decode(b"abc\x00\x01\x02")
    latin = files.decode("température".encode("cp1252"))
    assert latin.text == "température" and latin.fallback


def test_atomic_write_keeps_the_old_file_on_failure(tmp_path, monkeypatch):
    target = tmp_path / "model.json"
    target.write_text("old")
    files.write_atomic(target, "new")
    assert target.read_text() == "new"

    def full_disk(*args, **kwargs):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "fsync", full_disk)
    with pytest.raises(InputError, match="No space left.*unchanged"):
        files.write_atomic(target, "newer")
    assert target.read_text() == "new"
    assert [p.name for p in tmp_path.iterdir()] == ["model.json"]


def test_output_that_is_an_input_is_refused(tmp_path):
    source = tmp_path / "h.csv"
    source.write_text("x")
    link = tmp_path / "link.csv"
    link.symlink_to(source)
    with pytest.raises(InputError, match="one of the input files"):
        files.refuse_overwriting_inputs(link, source)
    files.refuse_overwriting_inputs(tmp_path / "other.csv", source)


def test_check_upload_size():
    files.check_upload_size(0)
    files.check_upload_size(50 * 1024 * 1024)
    with pytest.raises(InputError, match="limit"):
        files.check_upload_size(50 * 1024 * 1024 + 1)
    with pytest.raises(InputError, match="limit"):
        files.check_upload_size(2_000_000, limit_mb=1)
    for bad in (-1, 1.5, "10", True, None):
        with pytest.raises(InputError):
            files.check_upload_size(bad)  # type: ignore[arg-type]
    with pytest.raises(InputError):
        files.check_upload_size(10, limit_mb=0)
