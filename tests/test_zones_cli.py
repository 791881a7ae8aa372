"""``loadcore zones fit`` and ``zones forecast``: the same bytes on a local Dask cluster and in
this process, failing zones reported, bad inputs named, forecast options.

Simulated systems (loadcore.zones.simulate) are our own invented data.
"""

from __future__ import annotations

import json

import pandas as pd
import pytest

from loadcore.cli import main
from loadcore.zones import MANIFEST, TIMING
from loadcore.zones.simulate import simulated_system

FIT_DAYS = 400


@pytest.fixture(scope="module")
def system():
    return simulated_system(3, n_days=FIT_DAYS + 30, rho=0.5, seed=7)


@pytest.fixture()
def long_csv(system, tmp_path):
    path = tmp_path / "zones.csv"
    system.long_table(slice(0, FIT_DAYS)).to_csv(path, index=False)
    return path


def _error_line(capsys) -> str:
    err = capsys.readouterr().err
    lines = [line for line in err.splitlines() if "error:" in line]
    assert len(lines) == 1 and "Traceback" not in err, err
    return lines[0]


@pytest.mark.slow
def test_local_cluster_and_in_process_write_the_same_bytes(system, long_csv, tmp_path, monkeypatch):
    """zones.json byte for byte, and every model file byte for byte but for the search's table
    of rejected candidates; only zones-timing.json (the times taken) may differ.

    The rejected candidates are left out because the order search itself does not repeat them
    exactly, even twice in one process: a candidate whose optimum lies on the stationarity or
    invertibility boundary (an over-parametrised model) can end a few hundredths of a
    log-likelihood unit apart from one fit to the next, as the optimiser's first step on a
    nearly singular Jacobian depends on where its work arrays fall in memory (measured; reported
    to the model's owners). The chosen model, its parameters, covariance, end state and
    residuals are compared in full, byte for byte."""
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1767225600")
    outs = {}
    for how in ("none", "local"):
        out = tmp_path / how
        assert main(["zones", "fit", str(long_csv), "--zone-col", "zone", "--out", str(out),
                     "--cluster", how]) == 0  # fmt: skip
        outs[how] = out
    names = sorted(p.name for p in outs["none"].iterdir())
    assert names == sorted(p.name for p in outs["local"].iterdir())
    assert names == sorted([MANIFEST, TIMING, *(f"{z}.json" for z in system.zones)])
    assert (outs["none"] / MANIFEST).read_bytes() == (outs["local"] / MANIFEST).read_bytes()
    for zone in system.zones:
        here, there = (json.loads((outs[h] / f"{zone}.json").read_bytes()) for h in outs)
        chosen = [[c for c in m.pop("candidates") if c["chosen"]] for m in (here, there)]
        assert chosen[0] == chosen[1] and len(chosen[0]) == 1, zone
        assert json.dumps(here).encode() == json.dumps(there).encode(), zone
    ran = json.loads((outs["local"] / TIMING).read_text())
    assert ran["ran"].startswith("on a local Dask cluster") and ran["workers"] >= 1
    manifest = json.loads((outs["none"] / MANIFEST).read_text())
    assert manifest["fitted_at"] == "2026-01-01T00:00:00+00:00"
    row = manifest["zones"][0]
    assert row["error_model"].startswith("AR ") and row["converged"] is True
    assert {"aicc", "temperature_range_c", "data_fingerprint", "days"} <= set(row)


def test_a_failing_zone_is_reported_and_the_others_are_fitted(system, tmp_path, capsys):
    table = system.long_table(slice(0, FIT_DAYS))
    table.loc[table.zone == "Z02", "temperature"] = 21.0  # nothing to learn a response from
    table = table[(table.zone != "Z03") | (table.index % FIT_DAYS < 30)]  # too few days
    path = tmp_path / "zones.csv"
    table.to_csv(path, index=False)
    out = tmp_path / "fitted"
    assert main(["zones", "fit", str(path), "--zone-col", "zone", "--out", str(out),
                 "--cluster", "none"]) == 0  # fmt: skip
    printed = capsys.readouterr().out
    assert "Fitted 1 of 3 zone(s)" in printed
    assert "Z02: FAILED" in printed and "Z03: NOT USABLE" in printed
    manifest = json.loads((out / MANIFEST).read_text())
    status = {r["zone"]: r["status"] for r in manifest["zones"]}
    assert status == {"Z01": "fitted", "Z02": "failed", "Z03": "failed"}
    reasons = {r["zone"]: r.get("reason", "") for r in manifest["zones"]}
    assert "365 days" in reasons["Z03"]
    assert "temperature" in reasons["Z02"].lower()
    assert (out / "Z01.json").exists() and not (out / "Z02.json").exists()


def test_unknown_zone_column_is_one_clear_error(long_csv, tmp_path, capsys):
    code = main(["zones", "fit", str(long_csv), "--zone-col", "area", "--out", str(tmp_path / "o")])
    assert code == 1
    line = _error_line(capsys)
    assert "'area'" in line and "columns found" in line and "--zone-col" in line


def test_a_pattern_that_matches_nothing_is_one_clear_error(system, tmp_path, capsys):
    path = tmp_path / "wide.csv"
    system.wide_table(slice(0, FIT_DAYS)).to_csv(path, index=False)
    code = main(["zones", "fit", str(path), "--wide-demand", "{zone}_MW", "--wide-temp",
                 "{zone}_Temp", "--out", str(tmp_path / "o")])  # fmt: skip
    assert code == 1
    line = _error_line(capsys)
    assert "'{zone}_MW'" in line and "--wide-demand" in line


def test_bad_cluster_address_is_a_usage_error(long_csv, tmp_path, capsys):
    code = main(["zones", "fit", str(long_csv), "--zone-col", "zone", "--out", str(tmp_path),
                 "--cluster", "nowhere"])  # fmt: skip
    assert code == 2
    assert "not a scheduler address" in capsys.readouterr().err


@pytest.fixture(scope="module")
def folder(system, tmp_path_factory):
    base = tmp_path_factory.mktemp("zf")
    path = base / "wide.csv"
    system.wide_table(slice(0, FIT_DAYS)).to_csv(path, index=False)
    out = base / "fitted"
    assert main(["zones", "fit", str(path), "--wide-demand", "{zone}_Demand", "--wide-temp",
                 "{zone}_Temp", "--out", str(out), "--cluster", "none"]) == 0  # fmt: skip
    return out


def test_forecast_in_fahrenheit_per_zone_columns(system, folder, tmp_path, capsys):
    days = system.dates[FIT_DAYS : FIT_DAYS + 10]
    temps = {z: system.temperature_c[z].to_numpy()[FIT_DAYS : FIT_DAYS + 10] for z in system.zones}
    scen = tmp_path / "f.csv"
    pd.DataFrame(
        {"date": days.strftime("%Y-%m-%d")} | {z: t * 1.8 + 32 for z, t in temps.items()}
    ).to_csv(scen, index=False)
    out_f = tmp_path / "out_f.csv"
    assert main(["zones", "forecast", str(folder), str(scen), "--out", str(out_f),
                 "--temp-unit", "F", "--levels", "90"]) == 0  # fmt: skip
    table = pd.read_csv(out_f)
    assert "temperature_f" in table.columns and "lower_90" in table.columns
    z1 = table[table.zone == "Z01"]["temperature_f"].to_numpy()
    assert abs(z1[0] - (temps["Z01"][0] * 1.8 + 32)) < 0.01
    assert table[table.zone == "system"]["note"].str.contains("coincident system peak").all()


def test_anomaly_shifts_every_zone_from_its_own_normal(system, folder, tmp_path):
    days = system.dates[FIT_DAYS : FIT_DAYS + 7]
    outs = {}
    for change in (0, 8):
        scen = tmp_path / f"a{change}.csv"
        pd.DataFrame({"date": days.strftime("%Y-%m-%d"), "temperature": change}).to_csv(
            scen, index=False
        )
        out = tmp_path / f"o{change}.csv"
        assert main(["zones", "forecast", str(folder), str(scen), "--as-anomaly", "--out",
                     str(out)]) == 0  # fmt: skip
        outs[change] = pd.read_csv(out)
    for zone in system.zones:
        base = outs[0][outs[0].zone == zone]["temperature_c"].to_numpy()
        hot = outs[8][outs[8].zone == zone]["temperature_c"].to_numpy()
        assert abs((hot - base) - 8).max() < 0.02
    zone_bases = [outs[0][outs[0].zone == z]["temperature_c"].iloc[0] for z in system.zones]
    assert len(set(round(b, 1) for b in zone_bases)) > 1  # each zone's own normal


def test_forecast_scenario_without_a_zone_column_names_it(system, folder, tmp_path, capsys):
    days = system.dates[FIT_DAYS : FIT_DAYS + 5]
    scen = tmp_path / "s.csv"
    pd.DataFrame({"date": days.strftime("%Y-%m-%d"), "Z01": 20.0}).to_csv(scen, index=False)
    code = main(["zones", "forecast", str(folder), str(scen), "--out", str(tmp_path / "o.csv")])
    assert code == 1
    line = _error_line(capsys)
    assert "'Z02'" in line and "'Z03'" in line and "--as-anomaly" in line


def test_forecast_of_a_folder_without_zones_list(tmp_path, capsys):
    code = main(["zones", "forecast", str(tmp_path), str(tmp_path / "x.csv"), "--out",
                 str(tmp_path / "o.csv")])  # fmt: skip
    assert code == 1
    assert "error:" in capsys.readouterr().err
