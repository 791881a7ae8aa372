"""Tests for the ``loadcore scenarios`` command (loadcore/cli/scenarios.py) on a library file."""

from __future__ import annotations

import json
from dataclasses import dataclass

import numpy as np
import pandas as pd
import pytest
from library_support import (
    FakeModel,
    forecast_table,
    make_entry,
)

from loadcore.errors import LoadcoreError
from loadcore.library import (
    ScenarioLibrary,
    is_current,
)
from loadcore.scenario import constant_path, make_scenario


@pytest.fixture()
def library(tmp_path) -> ScenarioLibrary:
    return ScenarioLibrary(tmp_path / "lib.sqlite")


# ---------------------------------------------------------------------------------------------
# command line


def run(argv: list[str]) -> int:
    """The ``loadcore scenarios`` handler, called directly so that errors reach the test."""
    from loadcore.cli import build_parser

    args = build_parser().parse_args(argv)
    return args.handler(args)


def test_cli_list_json(library, capsys):
    library.save(make_entry("Base"))
    library.save(make_entry("=HYPERLINK()", note="formula-looking name"))
    assert run(["scenarios", "list", "--db", str(library.path), "--json"]) == 0
    items = json.loads(capsys.readouterr().out)
    assert [x["name"] for x in items] == ["=HYPERLINK()", "Base"]
    assert items[1]["version"] == 1 and items[1]["days"] == 14
    assert run(["scenarios", "list", "--db", str(library.path)]) == 0
    assert "Base" in capsys.readouterr().out


def test_cli_export_csv_and_html(library, tmp_path, capsys):
    library.save(make_entry("=Base", context={"levels": [80, 95], "history_period": []}))
    library.save(make_entry("Hot", seed=3))
    out_csv = tmp_path / "out" / "forecast.csv"
    out_csv.parent.mkdir()
    assert (
        run(
            [
                "scenarios",
                "export",
                "=Base",
                "Hot",
                "--db",
                str(library.path),
                "--out",
                str(out_csv),
            ]
        )
        == 0
    )
    table = pd.read_csv(out_csv)
    assert table["scenario"].unique().tolist() == ["'=Base", "Hot"]
    assert list(table.columns)[:3] == ["scenario", "date", "temperature_c"]
    assert len(table) == 28
    out_html = tmp_path / "brief.html"
    code = run(
        [
            "scenarios",
            "export",
            "Hot",
            "--db",
            str(library.path),
            "--out",
            str(out_html),
            "--temp-unit",
            "F",
        ]
    )
    assert code == 0
    text = out_html.read_text(encoding="utf-8")
    assert "planning aid" in text and "°F" in text
    assert not list(tmp_path.glob(".*.part"))
    with pytest.raises(LoadcoreError, match="csv or .html"):
        run(
            [
                "scenarios",
                "export",
                "Hot",
                "--db",
                str(library.path),
                "--out",
                str(tmp_path / "x.xlsx"),
            ]
        )
    with pytest.raises(LoadcoreError, match="(?i)no saved scenario"):
        run(["scenarios", "export", "Nope", "--db", str(library.path), "--out", str(out_csv)])


@pytest.mark.slow
def test_cli_save_with_a_fitted_model(tmp_path, demo_history, capsys):
    """End to end: fit the demo history, save a scenario file through the CLI, list and export it."""
    model_mod = pytest.importorskip("loadcore.model")
    from loadcore.model import TermSpec
    from loadcore.scenario import write_scenario_csv

    history = demo_history
    cut = history.frame.iloc[-366:]
    from loadcore.history import history_from_frame

    short = history_from_frame(cut[["demand", "temperature_c"]])
    small = model_mod.FitSettings(  # the smallest search: this test is about files, not fits
        ar_up_to=1,
        ma_up_to=0,
        ar_ma_up_to=1,
        weekly_ar_up_to=0,
        weekly_ma_up_to=0,
        workers=1,
        terms=TermSpec(annual_harmonics=0, trend=False),
    )
    try:
        model = model_mod.fit(short, small)
    except Exception as err:  # noqa: BLE001 - fitting is tested in test_model.py
        pytest.skip(f"no fitted model for the CLI round trip ({type(err).__name__}: {err})")
    model_path = tmp_path / "model.json"
    model.save(model_path)
    start = model.history_end + pd.Timedelta(days=1)
    scenario = make_scenario("hot", constant_path(start, 10, 33.0))
    csv_path = tmp_path / "hot.csv"
    csv_path.write_text(write_scenario_csv(scenario))
    db = tmp_path / "cli.sqlite"
    argv = ["scenarios", "save", str(csv_path), "--name", "Hot week", "--model", str(model_path)]
    argv += ["--db", str(db), "--note", "33 °C for ten days", "--author", "cli"]
    assert run(argv) == 0
    assert "Hot week" in capsys.readouterr().out
    saved = ScenarioLibrary(db).get("Hot week")
    assert saved.author == "cli" and len(saved.forecast) == 10
    assert is_current(saved, model_mod.load_model(model_path))
    assert run(["scenarios", "list", "--db", str(db), "--json"]) == 0
    assert json.loads(capsys.readouterr().out)[0]["name"] == "Hot week"
    out_html = tmp_path / "hot.html"
    assert run(["scenarios", "export", "Hot week", "--db", str(db), "--out", str(out_html)]) == 0
    text = out_html.read_text(encoding="utf-8")
    assert "Model history" in text and "weekly AR" in text


def test_cli_save_with_a_stand_in_model(tmp_path, monkeypatch, capsys):
    """The save command's own path (read file, forecast, store) with a contract-shaped model."""
    import loadcore.model as model_mod
    from loadcore.scenario import write_scenario_csv

    @dataclass(frozen=True)
    class History:
        frame: pd.DataFrame

    @dataclass(frozen=True)
    class Fc:
        frame: pd.DataFrame
        levels: tuple
        scenario_name: str
        note: str = ""
        demand_unit: str = "MW"

        def warnings(self, temp_unit="C"):
            return []

    @dataclass(frozen=True)
    class StandIn(FakeModel):
        history: History | None = None

        @property
        def history_end(self):
            return self.history.frame.index[-1]

        def forecast(self, scenario, levels=(80, 95)):
            frame = forecast_table(start=str(scenario.start.date()), days=scenario.horizon)
            frame["temperature_c"] = scenario.temperature_c
            return Fc(frame, tuple(levels), scenario.name)

    idx = pd.date_range("2031-05-01", periods=61, freq="D", name="date")
    model = StandIn(history=History(pd.DataFrame({"demand": 1900.0}, index=idx)))
    seen = []
    monkeypatch.setattr(model_mod, "load_model", lambda path: seen.append(path) or model)
    scenario = make_scenario("file name", constant_path("2031-07-01", 7, 31.0))
    csv_path = tmp_path / "week.csv"
    csv_path.write_text(write_scenario_csv(scenario, temp_unit="F"))
    db = tmp_path / "cli.sqlite"
    argv = ["scenarios", "save", str(csv_path), "--name", "Warm week", "--model", "m.json"]
    argv += ["--db", str(db), "--author", "cli", "--temp-unit", "F"]
    assert run(argv) == 0
    assert seen == ["m.json"]
    assert "Saved 'Warm week' (version 1, 7 days)" in capsys.readouterr().out
    saved = ScenarioLibrary(db).get("Warm week")
    assert saved.author == "cli" and is_current(saved, model)
    np.testing.assert_allclose(saved.forecast["temperature_c"], 31.0, atol=1e-6)
    assert saved.context["history_period"] == ["2031-05-01", "2031-06-30"]
    # a second save under the same name is refused with the library's message
    with pytest.raises(LoadcoreError, match="already exists"):
        run(argv)
