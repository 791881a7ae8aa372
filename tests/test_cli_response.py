"""``loadcore fit`` and the temperature response: both AICc, the note, ``auto``, the bases."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from loadcore.cli import main
from loadcore.model import load_model

DEMO = Path(__file__).resolve().parent.parent / "demo_data" / "history.csv"


def test_fit_text_names_both_responses_and_advises_degree_days(tmp_path, capsys):
    """On the demo (invented degree-day truth, demo_data/truth.json) the default quadratic fit
    prints both AICc values and one note sentence saying how to switch."""
    assert main(["fit", str(DEMO), "--out", str(tmp_path / "m.json")]) == 0
    text = capsys.readouterr().out
    assert "Temperature response in use: smooth-curve (quadratic) response AICc" in text
    assert "degree-day response (heating base 18 °C, cooling base 24 °C, estimated)" in text
    notes = [line for line in text.splitlines() if line.startswith("note: The degree-day")]
    assert len(notes) == 1
    assert "--response degree-days --heating-base 18 --cooling-base 24" in notes[0]
    assert "at the coldest temperature, -8.4 °C" in notes[0]


def test_fit_auto_keeps_degree_days(tmp_path, capsys):
    out = tmp_path / "m.json"
    assert main(["fit", str(DEMO), "--out", str(out), "--response", "auto", "--json"]) == 0
    summary = json.loads(capsys.readouterr().out)
    response = summary["temperature_response"]
    assert response["asked"] == "auto" and response["fitted"]["response"] == "degree_days"
    assert response["fitted"]["aicc"] < response["other"]["aicc"]
    assert response["note"] is None and response["other_is_better"] is False
    assert load_model(out).settings.terms.response == "degree_days"


def test_fit_degree_days_with_bases_in_fahrenheit(tmp_path, capsys):
    """--heating-base and --cooling-base are read in --temp-unit (64.4 °F = 18 °C, 75.2 °F =
    24 °C); the quadratic beside it is worse, so no note."""
    frame_f = tmp_path / "history_f.csv"
    lines = DEMO.read_text().splitlines()
    header = lines[0].split(",")
    col = header.index("temperature")
    rows = [header]
    for line in lines[1:]:
        cells = line.split(",")
        cells[col] = f"{float(cells[col]) * 9 / 5 + 32:.2f}"
        rows.append(cells)
    frame_f.write_text("\n".join(",".join(r) for r in rows) + "\n")
    out = tmp_path / "m.json"
    args = ["fit", str(frame_f), "--out", str(out), "--temp-unit", "F", "--response",
            "degree-days", "--heating-base", "64.4", "--cooling-base", "75.2"]  # fmt: skip
    assert main([*args, "--json"]) == 0
    summary = json.loads(capsys.readouterr().out)
    fitted = summary["temperature_response"]["fitted"]
    assert fitted["heating_base_f"] == pytest.approx(64.4) and not fitted["bases_estimated"]
    assert summary["temperature_response"]["note"] is None
    terms = load_model(out).settings.terms
    assert terms.heating_base_c == pytest.approx(18.0) and terms.cooling_base_c == pytest.approx(
        24.0
    )
