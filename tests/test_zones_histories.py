"""Zone histories in: long and wide files, sub-daily readings, per-zone reports, bad inputs.

Simulated systems (loadcore.zones.simulate) are our own invented data with known values.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from loadcore.errors import InputError
from loadcore.history import HistorySettings, read_history
from loadcore.zones import ZoneLayout, read_zone_histories
from loadcore.zones.simulate import simulated_system

LONG = ZoneLayout(zone_col="zone")
WIDE = ZoneLayout(wide_demand="{zone}_Demand", wide_temp="{zone}_Temp")


@pytest.fixture(scope="module")
def system():
    return simulated_system(3, n_days=380, seed=11)


def test_long_and_wide_give_the_histories_of_single_zone_files(system):
    long = read_zone_histories(system.long_table().to_csv(index=False), LONG)
    wide = read_zone_histories(system.wide_table().to_csv(index=False), WIDE)
    assert long.zones == wide.zones == system.zones
    for zone in system.zones:
        one = system.long_table().query("zone == @zone").drop(columns="zone")
        single = read_history(one.to_csv(index=False), HistorySettings())
        assert long.histories[zone].fingerprint == single.fingerprint
        assert wide.histories[zone].fingerprint == single.fingerprint


def test_sub_daily_long_file_in_fahrenheit_is_aggregated_per_zone(system):
    """Hourly rows: the day's peak is the daily demand, as for one history (hour column)."""
    rows = []
    for zone in system.zones[:2]:
        for day, mw, t in zip(
            system.dates[:370],
            system.demand_mw[zone].to_numpy()[:370],
            system.temperature_c[zone].to_numpy()[:370],
            strict=True,
        ):
            for hour in range(1, 25):
                shape = 0.8 + 0.2 * np.sin(np.pi * hour / 24)
                rows.append(
                    {
                        "Day": day.strftime("%d/%m/%Y"),
                        "HE": hour,
                        "Area": zone,
                        "Load": "" if np.isnan(mw) else round(mw * shape, 3),
                        "TempF": round(t * 1.8 + 32, 2),
                    }
                )
    text = pd.DataFrame(rows).to_csv(index=False, sep=";")
    settings = HistorySettings(
        date_col="Day", demand_col="Load", temp_col="TempF", hour_col="HE", temp_unit="F"
    )
    zones = read_zone_histories(text, ZoneLayout(zone_col="Area"), settings)
    assert zones.zones == system.zones[:2]
    h = zones.histories[system.zones[0]]
    peak = system.demand_mw[system.zones[0]].to_numpy()[:370]
    got = h.frame["demand"].to_numpy()
    ok = ~np.isnan(peak)
    assert np.allclose(got[ok], peak[ok], rtol=1e-4)


def test_a_zone_with_too_few_days_is_reported_and_others_kept(system):
    table = system.long_table()
    short = table[(table.zone != "Z02") | (table.index % 380 < 5)]
    zones = read_zone_histories(short.to_csv(index=False), LONG)
    assert zones.usable == ("Z01", "Z03")
    assert "Z02" in zones.failures
    assert not zones.reports["Z02"].ok


def test_report_names_rows_of_the_whole_file(system):
    table = system.long_table().astype({"temperature": object})
    table.loc[390, "temperature"] = "hot"  # zone Z02, day 11
    zones = read_zone_histories(table.to_csv(index=False), LONG)
    rows = [i.row for i in zones.reports["Z02"].errors]
    assert 391 in rows  # the 391st data row of the file


def test_unknown_zone_column_is_named(system):
    with pytest.raises(InputError) as err:
        read_zone_histories(system.long_table().to_csv(index=False), ZoneLayout(zone_col="area"))
    assert "'area'" in str(err.value) and "columns found" in str(err.value)


def test_pattern_that_matches_nothing_is_named(system):
    with pytest.raises(InputError) as err:
        read_zone_histories(
            system.wide_table().to_csv(index=False),
            ZoneLayout(wide_demand="{zone}_Load", wide_temp="{zone}_Temp"),
        )
    text = str(err.value)
    assert "'{zone}_Load'" in text and "--wide-demand" in text and "Z01_Demand" in text


def test_layout_mistakes_are_refused():
    with pytest.raises(InputError, match="exactly once"):
        ZoneLayout(wide_demand="Demand", wide_temp="{zone}_T")
    with pytest.raises(InputError, match="not both"):
        ZoneLayout(zone_col="zone", wide_demand="{zone}_D", wide_temp="{zone}_T")
    with pytest.raises(InputError, match="incomplete"):
        ZoneLayout(wide_demand="{zone}_D")


def test_zone_names_that_clash_or_take_the_system_name(system):
    table = system.long_table()
    clash = table.replace({"zone": {"Z01": "North East", "Z02": "North/East"}})
    with pytest.raises(InputError, match="share one model file"):
        read_zone_histories(clash.to_csv(index=False), LONG)
    named = table.replace({"zone": {"Z01": "System"}})
    with pytest.raises(InputError, match="system total"):
        read_zone_histories(named.to_csv(index=False), LONG)


def test_wide_zone_without_temperature_is_named(system):
    wide = system.wide_table().drop(columns="Z03_Temp")
    with pytest.raises(InputError, match="'Z03'.*no temperature"):
        read_zone_histories(wide.to_csv(index=False), WIDE)
