"""Tests for the ``loadcore`` command (loadcore.cli) and the benchmark runner.

Most tests call ``main([...])`` in-process and read the output with capsys; a few run the real
command as ``python -m loadcore`` in a subprocess.
"""

from __future__ import annotations

import contextlib
import importlib.util
import io
import json
import math
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from loadcore import cli
from loadcore.cli import ProgressBar, main
from loadcore.cli import app as app_command
from loadcore.cli import check as check_command
from loadcore.cli.common import levels_arg
from loadcore.scenario import (
    constant_path,
    heat_wave,
    make_scenario,
    write_scenario_csv,
)

REPO = Path(__file__).resolve().parent.parent
DEMO = REPO / "demo_data" / "history.csv"


def _one_error_line(err: str) -> str:
    """The stderr text must be exactly one line starting 'error: ' and hold no traceback."""
    lines = [line for line in err.splitlines() if line.strip()]
    assert len(lines) == 1, err
    assert lines[0].startswith("error: "), err
    assert "Traceback" not in err
    return lines[0]


def _run(*args: str, timeout: float = 300) -> subprocess.CompletedProcess:
    return subprocess.run(
        [sys.executable, "-m", "loadcore", *args],
        capture_output=True,
        text=True,
        cwd=REPO,
        timeout=timeout,
    )


def _bad_history(tmp_path: Path) -> Path:
    path = tmp_path / "bad_history.csv"
    path.write_text(
        "date,demand,temperature\n2024-01-01,1400,5\n2024-01-02,lots,6\n2024-01-02,1410,7\n"
    )
    return path


# ------------------------------------------------------------------------------------------- check


def test_check_good_file_exits_0(capsys):
    assert main(["check", str(DEMO)]) == 0
    out = capsys.readouterr().out
    assert "0 error(s)" in out
    assert "can be used" in out


def test_check_bad_file_exits_1_with_the_report(tmp_path, capsys):
    assert main(["check", str(_bad_history(tmp_path))]) == 1
    out = capsys.readouterr().out
    assert "2 error(s)" in out
    assert "row 2" in out and "lots" in out


def test_check_column_options_reach_the_reader(tmp_path, capsys):
    path = tmp_path / "renamed.csv"
    frame = pd.read_csv(DEMO).rename(columns={"date": "Day", "demand": "Peak", "temperature": "T"})
    frame["T"] = frame["T"] * 9 / 5 + 32
    frame.to_csv(path, index=False)
    assert main(["check", str(path)]) == 1
    capsys.readouterr()
    code = main(
        ["check", str(path), "--date-col", "Day", "--demand-col", "Peak", "--temp-col", "T",
         "--temp-unit", "F"]
    )  # fmt: skip
    assert code == 0, capsys.readouterr().out


def test_check_hour_and_minimum_column_options_reach_the_reader(tmp_path, capsys):
    """An hour-beginning file (0-23, common practice, no source) and a daily minimum column."""
    days = pd.read_csv(DEMO).iloc[-400:].reset_index(drop=True)
    rows = days.loc[days.index.repeat(24)].reset_index(drop=True)
    rows.insert(1, "hr", list(range(24)) * len(days))
    rows["tmin"] = rows["temperature"] - 6
    path = tmp_path / "hourly.csv"
    rows.to_csv(path, index=False)
    assert main(["check", str(path)]) == 1
    assert "--hour-col NAME" in capsys.readouterr().out
    assert main(["check", str(path), "--hour-col", "hr", "--temp-min-col", "tmin"]) == 0
    out = capsys.readouterr().out
    assert "hour numbers 0-23" in out and "hour beginning" in out


def test_check_subprocess_exit_codes(tmp_path):
    good = _run("check", str(DEMO))
    assert good.returncode == 0, good.stderr
    bad = _run("check", str(_bad_history(tmp_path)))
    assert bad.returncode == 1
    assert "error(s)" in bad.stdout
    assert "Traceback" not in bad.stderr


# --------------------------------------------------------------------------------- user mistakes


def test_missing_file_is_one_line(capsys):
    assert main(["check", "no/such/history.csv"]) == 1
    line = _one_error_line(capsys.readouterr().err)
    assert "no/such/history.csv" in line


def test_history_errors_in_fit_are_one_line(tmp_path, capsys):
    code = main(["fit", str(_bad_history(tmp_path)), "--out", str(tmp_path / "m.json")])
    assert code == 1
    line = _one_error_line(capsys.readouterr().err)
    assert "loadcore check" in line
    assert not (tmp_path / "m.json").exists()


def test_bad_model_json_is_one_line(tmp_path, capsys):
    model = tmp_path / "model.json"
    model.write_text("{this is not json")
    scen = tmp_path / "s.csv"
    scen.write_text("date,temperature\n2026-11-30,10\n")
    assert main(["forecast", str(model), str(scen), "--out", str(tmp_path / "f.csv")]) == 1
    _one_error_line(capsys.readouterr().err)


def test_missing_output_folder_is_caught_before_fitting(tmp_path, capsys):
    code = main(["fit", str(DEMO), "--out", str(tmp_path / "no_such_folder" / "m.json")])
    assert code == 1
    assert "no_such_folder" in _one_error_line(capsys.readouterr().err)


def test_usage_mistakes_exit_2(capsys):
    assert main(["forecast", "m.json", "s.csv", "--out", "f.csv", "--levels", "80,120"]) == 2
    assert "outside 1 to 99.9 percent" in capsys.readouterr().err
    assert main(["fit", "history.csv"]) == 2  # --out is required
    assert main(["no-such-command"]) == 2
    assert main([]) == 2
    capsys.readouterr()
    assert main(["--version"]) == 0
    assert "loadcore" in capsys.readouterr().out


def test_unexpected_failure_says_please_report(monkeypatch, capsys):
    def broken(args):
        raise RuntimeError("boom\nsecond line")

    monkeypatch.setattr(check_command, "run", broken)
    assert main(["check", str(DEMO)]) == 1
    line = _one_error_line(capsys.readouterr().err)
    assert "please report" in line and "RuntimeError" in line and "boom second line" in line
    assert main(["check", str(DEMO), "--debug"]) == 1
    err = capsys.readouterr().err
    assert "Traceback" in err and "please report" in err


def test_bad_history_subprocess_has_no_traceback(tmp_path):
    done = _run("fit", str(_bad_history(tmp_path)), "--out", str(tmp_path / "m.json"))
    assert done.returncode == 1
    _one_error_line(done.stderr)


# ---------------------------------------------------------------------------------------- helpers


def test_progress_bar_draws_on_one_line():
    class Sink:
        def __init__(self):
            self.text = ""

        def write(self, s):
            self.text += s

        def flush(self):
            pass

    sink = Sink()
    bar = ProgressBar("candidates", stream=sink, width=10)
    bar(0, 4, "starting")
    bar(2, 4, "AR 1")
    bar(4, 4, "done")
    bar.close()
    assert sink.text.count("\n") == 1 and sink.text.endswith("\n")
    last = sink.text.rstrip("\n").split("\r")[-1]
    assert last.startswith("[##########] 4/4 candidates")
    assert "[#####.....] 2/4" in sink.text


def test_levels_parsing():
    assert levels_arg("95,80") == (80, 95)
    assert levels_arg("50, 99.5%") == (50, 99.5)
    for bad in ("", "0", "100", "abc", "80,-5"):
        with pytest.raises(Exception, match="level|number|between"):
            levels_arg(bad)


def test_every_command_is_listed_and_has_one_handler_convention():
    parser = cli.build_parser()
    sub = next(a for a in parser._actions if a.dest == "command")
    assert set(sub.choices) == {
        "check",
        "fit",
        "scenario",
        "forecast",
        "backtest",
        "ensemble",
        "scenarios",
        "zones",
        "app",
    }
    for name, command in sub.choices.items():
        if name in ("scenarios", "zones"):
            continue
        assert callable(command.get_default("handler")), name


def test_old_search_limit_spellings_still_work_with_a_note(capsys):
    parser = cli.build_parser()
    args = parser.parse_args(["fit", "h.csv", "--out", "m.json", "--max-p", "3", "--ma-up-to", "2"])
    assert args.ar_up_to == 3 and args.ma_up_to == 2
    assert "--max-p is now --ar-up-to" in capsys.readouterr().err


def test_app_wraps_streamlit(monkeypatch, tmp_path, capsys):
    seen = {}

    def fake_run(command, env, check, cwd):
        seen["command"], seen["env"], seen["cwd"] = command, env, cwd
        return subprocess.CompletedProcess(command, 0)

    monkeypatch.setattr(app_command.subprocess, "run", fake_run)
    history = tmp_path / "h.csv"
    history.write_text(DEMO.read_text())
    assert main(["app", "--port", "8765", "--history", str(history)]) == 0
    command = seen["command"]
    assert command[:4] == [sys.executable, "-m", "streamlit", "run"]
    assert Path(command[4]) == REPO / "app" / "main.py"
    flags = dict(zip(command[5::2], command[6::2], strict=True))
    assert {
        "--server.address": "127.0.0.1",
        "--server.port": "8765",
        "--server.headless": "true",
        "--browser.gatherUsageStats": "false",
    }.items() <= flags.items()
    # The project's own settings travel with the command, whatever the working directory.
    assert flags["--server.maxUploadSize"] == "50"
    assert flags["--client.showErrorDetails"] == "none"
    assert Path(seen["cwd"]) == REPO
    assert seen["env"]["LOADCORE_HISTORY"] == str(history.resolve())
    err = capsys.readouterr().err
    assert "localhost:8765" in err and "no login" not in err
    assert main(["app", "--history", str(tmp_path / "missing.csv")]) == 1
    _one_error_line(capsys.readouterr().err)
    assert main(["app", "--port", "99999"]) == 2
    capsys.readouterr()
    assert main(["app", "--address", "0.0.0.0"]) == 0
    assert seen["command"][seen["command"].index("--server.address") + 1] == "0.0.0.0"
    assert "no login" in capsys.readouterr().err
    assert main(["app", "--address", "not-an-ip"]) == 2


# ------------------------------------------------------------------------------- fit and forecast


@pytest.fixture(scope="module")
def fitted(tmp_path_factory):
    """The last two years of the demo history fitted once through ``loadcore fit --json``, with the
    quick search and small order limits so the suite stays short on a shared machine."""
    pytest.importorskip("loadcore.model")
    folder = tmp_path_factory.mktemp("fit")
    recent = folder / "recent_history.csv"
    lines = DEMO.read_text().splitlines()
    recent.write_text("\n".join([lines[0], *lines[-730:]]) + "\n")
    out = folder / "model.json"
    stdout, stderr = io.StringIO(), io.StringIO()
    limits = [
        "--ar-up-to",
        "2",
        "--ma-up-to",
        "1",
        "--weekly-ar-up-to",
        "1",
        "--weekly-ma-up-to",
        "0",
    ]
    with contextlib.redirect_stdout(stdout), contextlib.redirect_stderr(stderr):
        code = main(["fit", str(recent), "--out", str(out), "--search", "quick", "--json", *limits])
    assert code == 0, stderr.getvalue()
    return {"out": out, "stdout": stdout.getvalue(), "stderr": stderr.getvalue(), "dir": folder}


@pytest.mark.slow
def test_fit_json_keys(fitted):
    summary = json.loads(fitted["stdout"])  # exactly one JSON object on stdout
    errors = summary["errors"]
    assert set(errors) == {
        "ar",
        "differencing",
        "ma",
        "weekly_ar",
        "weekly_differencing",
        "weekly_ma",
    }
    assert all(isinstance(v, int) and v >= 0 for v in errors.values())
    assert errors["ar"] <= 2 and errors["weekly_ma"] == 0
    assert isinstance(summary["aicc"], float) and math.isfinite(summary["aicc"])
    assert isinstance(summary["candidates_evaluated"], int) and summary["candidates_evaluated"] >= 1
    assert isinstance(summary["converged"], bool)
    assert summary["history_end"] == "2026-11-29"
    assert fitted["out"].is_file()
    assert "candidates" in fitted["stderr"] and "[#" in fitted["stderr"]


@pytest.mark.slow
def test_fit_text_summary_uses_plain_words(fitted, tmp_path, capsys, monkeypatch):
    import loadcore.model as model_module

    saved = model_module.load_model(fitted["out"])
    calls = []

    def fit_again(history, settings, progress=None):
        # The fit itself was exercised by the fixture; here only the printed summary is checked.
        calls.append(settings)
        progress(1, 1, "done")
        return saved

    monkeypatch.setattr(model_module, "fit", fit_again)
    out = tmp_path / "m.json"
    code = main(["fit", str(DEMO), "--out", str(out), "--search", "thorough", "--ar-up-to", "3",
                 "--no-log", "--holidays", "US-TX", "--override", "2026-12-24..2027-01-01 year_end"])  # fmt: skip
    assert code == 0
    settings = calls[0]
    assert settings.search == "thorough" and settings.ar_up_to == 3 and settings.log is False
    assert settings.calendar.subdivision == "TX"
    assert settings.calendar.overrides[0].day_type == "year_end"
    assert out.is_file()
    text = capsys.readouterr().out
    assert "AICc" in text and "Coefficients" in text and "planning aid" in text
    assert "differencing" in text  # orders in our own words
    e = json.loads(fitted["stdout"])["errors"]
    assert f"({e['ar']},{e['differencing']},{e['ma']})" not in text


@pytest.mark.slow
def test_fit_in_fahrenheit_prints_every_temperature_in_fahrenheit(fitted, tmp_path, capsys):
    """`fit --temp-unit F` reads a °F file and prints ranges, meanings and notes in °F only."""
    frame = pd.read_csv(fitted["dir"] / "recent_history.csv")
    frame["temperature"] = frame["temperature"] * 9 / 5 + 32
    history_f = tmp_path / "history_f.csv"
    frame.to_csv(history_f, index=False)
    out = tmp_path / "m.json"
    code = main(["fit", str(history_f), "--out", str(out), "--temp-unit", "F", "--search", "quick",
                 "--ar-up-to", "1", "--ma-up-to", "1", "--weekly-ar-up-to", "1",
                 "--weekly-ma-up-to", "0", "--json"])  # fmt: skip
    assert code == 0
    summary = json.loads(capsys.readouterr().out)
    low_f, high_f = summary["temperature_range_f"]
    assert low_f == pytest.approx(frame["temperature"].min(), abs=0.05)
    assert high_f == pytest.approx(frame["temperature"].max(), abs=0.05)
    assert main(["fit", str(history_f), "--out", str(out), "--temp-unit", "F", "--search", "quick",
                 "--ar-up-to", "1", "--ma-up-to", "1", "--weekly-ar-up-to", "1",
                 "--weekly-ma-up-to", "0"]) == 0  # fmt: skip
    text = capsys.readouterr().out
    assert "°F" in text and "°C" not in text, text


def _scenario_file(folder: Path, model_path: Path, unit: str = "C") -> tuple[Path, float, str]:
    from loadcore.model import load_model

    model = load_model(model_path)
    low, high = model.temperature_range_c
    start = pd.Timestamp(model.history_end) + pd.Timedelta(days=1)
    base = constant_path(start, 20, (low + high) / 2)
    path = heat_wave(base, high + 4.0, length_days=14, ramp_days=0, start_day=3)
    scen = make_scenario("Hot spell", path, model_end=model.history_end)
    file = folder / f"heat_{unit}.csv"
    file.write_text(write_scenario_csv(scen, temp_unit=unit))
    return file, high, start.strftime("%Y-%m-%d")


@pytest.mark.slow
def test_forecast_csv_columns_and_out_of_range_flags(fitted, tmp_path, capsys):
    scen, high, _ = _scenario_file(tmp_path, fitted["out"])
    out = tmp_path / "forecast.csv"
    assert main(["forecast", str(fitted["out"]), str(scen), "--out", str(out)]) == 0
    printed = capsys.readouterr().out
    table = pd.read_csv(out)
    expected = ["scenario", "date", "temperature_c", "day_type", "mean", "median", "lower_80",
                "upper_80", "lower_95", "upper_95", "out_of_range", "out_of_range_by_c",
                "sparse_temperature"]  # fmt: skip
    assert list(table.columns) == expected
    assert len(table) == 20
    hot = np.zeros(20, bool)
    hot[3:17] = True
    assert table["out_of_range"].astype(bool).tolist() == hot.tolist()
    np.testing.assert_allclose(table.loc[hot, "out_of_range_by_c"], 4.0, atol=0.01)
    assert (table.loc[~hot, "out_of_range_by_c"].abs() < 1e-9).all()
    assert (table["lower_95"] <= table["lower_80"]).all()
    assert (table["lower_80"] <= table["median"]).all()
    assert (table["median"] <= table["upper_80"]).all()
    assert (table["upper_80"] <= table["upper_95"]).all()
    assert table["day_type"].str.len().min() > 0
    assert "warning:" in printed
    assert "known" in printed
    assert "planning aid" in printed


@pytest.mark.slow
def test_forecast_in_fahrenheit_subprocess(fitted, tmp_path):
    scen, _, _ = _scenario_file(tmp_path, fitted["out"], unit="F")
    out = tmp_path / "forecast_f.csv"
    done = _run("forecast", str(fitted["out"]), str(scen), "--out", str(out), "--temp-unit", "F",
                "--levels", "50,90,97.5")  # fmt: skip
    assert done.returncode == 0, done.stderr
    table = pd.read_csv(out)
    assert {"lower_50", "upper_50", "lower_90", "upper_90", "lower_97.5", "upper_97.5"} <= set(
        table.columns
    )
    assert (table["lower_97.5"] <= table["lower_90"]).all()
    assert (table["upper_90"] <= table["upper_97.5"]).all()
    given_f = pd.read_csv(scen)["temperature"]
    np.testing.assert_allclose(table["temperature_f"], given_f, atol=1e-3)  # stays in °F
    assert "temperature_c" not in table and "out_of_range_by_c" not in table
    np.testing.assert_allclose(
        table.loc[table["out_of_range"], "out_of_range_by_f"], 7.2, atol=0.02
    )
    assert table["out_of_range"].astype(bool).sum() == 14
    assert "°C" not in done.stdout, done.stdout  # every printed temperature in the chosen unit
    assert "97.5% from" in done.stdout


@pytest.mark.slow
def test_forecast_early_start_names_the_allowed_dates(fitted, tmp_path, capsys):
    scen, _, start = _scenario_file(tmp_path, fitted["out"])
    text = scen.read_text().splitlines()
    early = tmp_path / "early.csv"
    first = pd.Timestamp(start) - pd.Timedelta(days=1)
    moved = [
        f"{first + pd.Timedelta(days=i):%Y-%m-%d}," + row.split(",", 1)[1]
        for i, row in enumerate(text[1:])
    ]
    early.write_text("\n".join([text[0], *moved]) + "\n")
    assert main(["forecast", str(fitted["out"]), str(early), "--out", str(tmp_path / "f.csv")]) == 1
    line = _one_error_line(capsys.readouterr().err)
    assert f"start the scenario on a day from {start} to".lower() in line.lower()
    blank = tmp_path / "blank.csv"
    rows = text[:]
    rows[5] = rows[5].split(",")[0] + ",,"
    blank.write_text("\n".join(rows) + "\n")
    done = _run("forecast", str(fitted["out"]), str(blank), "--out", str(tmp_path / "g.csv"))
    assert done.returncode == 1
    line = _one_error_line(done.stderr)
    assert "row 5" in line


# ---------------------------------------------------------------------------- benchmark runner


def _load_runner():
    spec = importlib.util.spec_from_file_location("bench_runner", REPO / "benchmarks" / "run.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_benchmark_runner_writes_results_and_fails_on_a_failed_benchmark(tmp_path, capsys):
    runner = _load_runner()
    (tmp_path / "bench_fast.py").write_text(
        "def run():\n    return {'ratio': 3.0, 'target': 2.0, 'passed': True}\n"
    )
    (tmp_path / "bench_slow.py").write_text(
        "def run():\n    return {'ratio': 1.1, 'target': 2.0, 'passed': False}\n"
    )
    assert runner.main([], directory=tmp_path) == 1
    assert json.loads((tmp_path / "results" / "fast.json").read_text())["ratio"] == 3.0
    assert json.loads((tmp_path / "results" / "slow.json").read_text())["passed"] is False
    printed = capsys.readouterr().out
    assert "FAILED" in printed and "1 of 2" in printed
    assert runner.main(["fast"], directory=tmp_path) == 0
    (tmp_path / "bench_crash.py").write_text("def run():\n    raise OSError('disk')\n")
    assert runner.main(["crash"], directory=tmp_path) == 1
    assert "disk" in json.loads((tmp_path / "results" / "crash.json").read_text())["error"]


@pytest.mark.slow
def test_forecast_day_type_column_overrides_the_calendar(fitted, tmp_path, capsys):
    from loadcore.model import load_model

    model = load_model(fitted["out"])
    start = pd.Timestamp(model.history_end) + pd.Timedelta(days=1)
    scen = tmp_path / "with_types.csv"
    dates = pd.date_range(start, periods=7)
    rows = ["date,temperature,day_type"]
    rows += [f"{d:%Y-%m-%d},12.5,{'holiday' if i == 2 else ''}" for i, d in enumerate(dates)]
    scen.write_text("\n".join(rows) + "\n")
    out = tmp_path / "typed.csv"
    assert main(["forecast", str(fitted["out"]), str(scen), "--out", str(out)]) == 0, (
        capsys.readouterr().err
    )
    table = pd.read_csv(out)
    calendar = list(model.calendar_types(dates))
    expected = calendar[:2] + ["holiday"] + calendar[3:]
    assert table["day_type"].tolist() == expected
    assert not table["out_of_range"].any()


def test_an_error_after_a_progress_bar_starts_on_its_own_line(
    demo_model, tmp_path, capsys, monkeypatch
):
    """Issue 11, item 20: the ensemble's error printed on the progress bar's line."""
    import loadcore.weather as weather
    from loadcore.errors import ModelError

    def failing(*args, progress=None, **kwargs):
        progress(3, 10, "")
        raise ModelError("No past year has weather for these days", fix="Use a longer history")

    monkeypatch.setattr(weather, "ensemble_forecast", failing)
    model_path = demo_model.save(tmp_path / "m.json")
    code = main(["ensemble", str(model_path), "--out", str(tmp_path / "e.csv")])
    err = capsys.readouterr().err
    assert code == 1
    bar_line, *rest = err.split("\n")
    assert "3/10" in bar_line and "No past year" not in bar_line
    assert any(line.startswith("error: No past year") for line in rest)
