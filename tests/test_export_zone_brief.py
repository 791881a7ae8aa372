"""The zones brief (loadcore.export.zone_brief): written by ``zones forecast --brief`` on a
simulated 3-zone system (loadcore.zones.simulate, our own truth); self-contained, the zone
breakdown adds up to the system, user text is escaped, the cautions are there."""

from __future__ import annotations

import dataclasses
import html
import re

import numpy as np
import pytest

from loadcore import texts
from loadcore.cli import main
from loadcore.export.zone_brief import zone_breakdown, zone_brief_html
from loadcore.zones.folder import load_zone_folder, zone_scenarios
from loadcore.zones.forecast import forecast_zones
from loadcore.zones.simulate import simulated_system


@pytest.fixture(scope="module")
def system_run(tmp_path_factory):
    folder = tmp_path_factory.mktemp("zone_brief")
    system = simulated_system(3, n_days=500, rho=0.6, missing_fraction=0.0, seed=11)
    system.long_table().to_csv(folder / "zones.csv", index=False)
    out = folder / "fitted"
    assert main(["zones", "fit", str(folder / "zones.csv"), "--zone-col", "zone", "--out",
                 str(out), "--cluster", "none", "--search", "quick"]) == 0  # fmt: skip
    end = system.dates[-1]
    days = [end + np.timedelta64(k, "D") for k in range(1, 15)]
    scenario = folder / "heat.csv"
    scenario.write_text("date,temperature\n" + "".join(f"{d:%Y-%m-%d},8\n" for d in days))
    return folder, out, scenario, system


def test_zones_forecast_writes_a_self_contained_brief(system_run):
    folder, out, scenario, system = system_run
    brief = folder / "brief.html"
    code = main(["zones", "forecast", str(out), str(scenario), "--as-anomaly", "--out",
                 str(folder / "f.csv"), "--brief", str(brief)])  # fmt: skip
    assert code == 0
    text = brief.read_text(encoding="utf-8")
    assert text.startswith("<!DOCTYPE html>")
    assert not re.search(r"<script[^>]+src\s*=", text, re.I)
    assert not re.search(r"<link[^>]+href\s*=", text, re.I)
    plain = html.unescape(text)
    for caution in (texts.PLANNING_CAUTION, texts.ZONE_TOTAL_CAUTION, texts.INTERVAL_CAUTION):
        assert caution in plain
    for zone in system.zones:
        assert f"<td>{zone}</td>" in text


def test_breakdown_adds_up_and_user_text_is_escaped(system_run):
    _, out, scenario, system = system_run
    zones = load_zone_folder(out)
    result = forecast_zones(
        zones.models, zone_scenarios(scenario, zones, as_anomaly=True), n_paths=500
    )
    table = zone_breakdown(result)
    zone_rows = table.iloc[:-1]
    assert list(zone_rows["zone"]) == list(system.zones)
    # The system's mean is the sum of the zones' means, so the shares add up to 100 %.
    assert np.isclose(zone_rows["mean"].sum(), table["mean"].iloc[-1], rtol=1e-9)
    assert np.isclose(zone_rows["share_pct"].sum(), 100.0, rtol=1e-9)
    hostile = "<script>alert(1)</script>"
    renamed = dataclasses.replace(
        result,
        zones=(hostile, *result.zones[1:]),
        zone_forecasts={hostile: result.zone_forecasts[result.zones[0]]}
        | {z: result.zone_forecasts[z] for z in result.zones[1:]},
    )
    text = zone_brief_html(renamed, title=hostile)
    assert hostile not in text
    assert html.escape(hostile) in text
