"""The command line and the memory terms: --temp-min-col reading, the fit's words, --no-memory."""

from __future__ import annotations

import json
from pathlib import Path

import pandas as pd

from loadcore import load_model
from loadcore.cli import main

DEMO = Path(__file__).resolve().parent.parent / "demo_data" / "history.csv"


def _with_minimum(tmp_path: Path, days: int = 800) -> tuple[pd.DataFrame, Path]:
    data = pd.read_csv(DEMO).iloc[-days:].reset_index(drop=True)
    data["tmin"] = (data["temperature"] - 7).round(1).astype(object)
    return data, tmp_path / "daily.csv"


def test_bad_minimum_values_are_named_with_row_date_and_option(tmp_path, capsys):
    data, path = _with_minimum(tmp_path)
    data.loc[10, "tmin"] = "cold"
    data.loc[20, "tmin"] = float(data.loc[20, "temperature"]) + 5
    data.to_csv(path, index=False)
    out_file = tmp_path / "m.json"
    assert main(["fit", str(path), "--temp-min-col", "tmin", "--out", str(out_file)]) == 1
    text = capsys.readouterr()
    shown = text.out + text.err
    assert "'cold' is not a number" in shown and "row 11" in shown and "1 more problem" in shown
    assert not out_file.exists()
    assert main(["check", str(path), "--temp-min-col", "tmin"]) == 1
    shown = capsys.readouterr().out
    assert "'cold' is not a number" in shown and "row 11" in shown and "column tmin" in shown
    assert "is above the temperature" in shown and "row 21" in shown
    assert "--temp-min-col" in shown


def test_a_minimum_column_that_is_not_there_lists_the_columns(tmp_path, capsys):
    data, path = _with_minimum(tmp_path)
    data.to_csv(path, index=False)
    assert main(["check", str(path), "--temp-min-col", "tlow"]) == 1
    out = capsys.readouterr().out
    assert "'tlow' is not in the file" in out and "'tmin'" in out and "--temp-min-col" in out


def test_fit_says_which_memory_terms_it_kept_and_no_memory_tries_none(tmp_path, capsys):
    data, path = _with_minimum(tmp_path)
    data.to_csv(path, index=False)
    out_file = tmp_path / "m.json"
    args = ["fit", str(path), "--temp-min-col", "tmin", "--out", str(out_file)]
    assert main(args) == 0
    text = capsys.readouterr().out
    assert "smoothed past temperature" in text and "daily minimum temperature" in text
    assert main([*args, "--json"]) == 0
    summary = json.loads(capsys.readouterr().out)
    memory = summary["memory_terms"]
    assert {tuple(t["terms"]) for t in memory["tried"]} >= {(), ("past",), ("minimum",)}
    assert memory["kept"] == list(load_model(out_file).memory_terms)
    assert main([*args, "--json", "--no-memory"]) == 0
    summary = json.loads(capsys.readouterr().out)
    assert summary["memory_terms"]["tried"] == [] and summary["memory_terms"]["kept"] == []
    assert not load_model(out_file).settings.terms.memory
