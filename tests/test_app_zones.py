"""AppTest of the Zones page: open a fitted zones folder, apply one change to every zone, read the
system total and the zone breakdown back from the CSV download; a bad folder path gives an error and
keeps what was open."""

from __future__ import annotations

import html
import io

import numpy as np
import pandas as pd
import pytest
from test_app_support import (
    assert_no_exception,
    download_bytes,
    new_app,
    recording_downloads,
    texts,
)

from loadcore import texts as texts_mod
from loadcore.cli import main
from loadcore.zones.simulate import simulated_system


def test_bad_zones_folder_gives_an_error_and_keeps_the_page_running(tmp_path):
    at = new_app(page="pages/zones.py")
    assert_no_exception(at)
    at.text_input(key="zn_folder").set_value(str(tmp_path / "missing"))
    [b for b in at.get("button") if getattr(b, "label", "") == "Open the folder"][0].click()
    at.run()
    assert_no_exception(at)
    assert any("zones folder" in t.lower() for t in texts(at, "error"))
    assert "zones" not in at.session_state


@pytest.fixture(scope="module")
def zones_folder(tmp_path_factory):
    """Three simulated zones (loadcore.zones.simulate, our own truth) fitted through the CLI."""
    folder = tmp_path_factory.mktemp("app_zones")
    system = simulated_system(3, n_days=500, rho=0.6, missing_fraction=0.0, seed=7)
    history = folder / "zones.csv"
    system.long_table().to_csv(history, index=False)
    out = folder / "fitted"
    code = main(["zones", "fit", str(history), "--zone-col", "zone", "--out", str(out),
                 "--cluster", "none", "--search", "quick"])  # fmt: skip
    assert code == 0
    return out, system


def test_open_folder_apply_change_and_download_the_zone_breakdown(zones_folder, tmp_path):
    out, system = zones_folder
    with recording_downloads():
        at = new_app(page="pages/zones.py")
        at.text_input(key="zn_folder").set_value(str(out))
        at.button(key="zn_open").click()
        at.run()
        assert_no_exception(at)
        assert set(at.session_state["zones"]["models"].models) == set(system.zones)
        at.number_input(key="zn_change").set_value(8.0)
        at.run()
        assert_no_exception(at)
        assert any(texts_mod.ZONE_TOTAL_CAUTION in t for t in texts(at, "info"))
        table = pd.read_csv(io.BytesIO(download_bytes(at, "zn_csv")))
        brief = download_bytes(at, "zn_brief").decode("utf-8")
    assert "<h2>Zone breakdown</h2>" in brief
    assert texts_mod.ZONE_TOTAL_CAUTION in html.unescape(brief)
    for zone in system.zones:
        assert f"<td>{zone}</td>" in brief
    assert list(table["zone"].unique()) == [*system.zones, "system"]
    zones_rows = table[table.zone != "system"]
    total = table[table.zone == "system"].set_index("date")
    assert len(total) == 14
    summed = zones_rows.groupby("date")["mean"].sum()
    assert np.allclose(total["mean"], summed.loc[total.index], rtol=1e-6)
    # +8 °C over each zone's seasonal normal: the zone temperatures differ by zone.
    assert zones_rows.groupby("zone")["temperature_c"].mean().nunique() == 3

    # A bad path afterwards keeps the zones already open.
    at.text_input(key="zn_folder").set_value(str(tmp_path / "missing"))
    at.button(key="zn_open").click()
    at.run()
    assert_no_exception(at)
    assert any("zones folder" in t.lower() for t in texts(at, "error"))
    assert set(at.session_state["zones"]["models"].models) == set(system.zones)
