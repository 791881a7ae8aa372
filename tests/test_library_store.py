"""Tests for loadcore.library.store: saving, reading, listing and editing saved scenarios."""

from __future__ import annotations

import json
import threading

import numpy as np
import pandas as pd
import pytest
from library_support import (
    STALE_TEXT,
    FakeSettings,
    forecast_table,
    make_entry,
)

from loadcore import library as lib
from loadcore.errors import InputError
from loadcore.library import (
    SavedScenario,
    ScenarioLibrary,
    settings_to_dict,
)
from loadcore.scenario import Scenario


@pytest.fixture()
def library(tmp_path) -> ScenarioLibrary:
    return ScenarioLibrary(tmp_path / "lib.sqlite")


# ---------------------------------------------------------------------------------------------
# basic round trip


def test_save_and_get_round_trip(library):
    entry = make_entry()
    saved = library.save(entry)
    assert isinstance(saved, SavedScenario)
    assert saved.version == 1
    assert saved.created_utc == saved.changed_utc
    assert saved.created_utc.endswith("Z")
    pd.Timestamp(saved.created_utc)  # parses as ISO 8601
    got = library.get("july BASE")  # ASCII case is ignored
    assert got.name == "July base"
    assert got.note == "seasonal normal" and got.author == "planner A"
    assert got.model_fingerprint == entry.model_fingerprint
    assert got.model_settings == settings_to_dict(FakeSettings())
    pd.testing.assert_frame_equal(got.forecast, entry.forecast, check_dtype=False)
    assert got.forecast["out_of_range"].dtype == bool
    assert got.levels == (80.0, 95.0)
    scenario = got.scenario()
    assert isinstance(scenario, Scenario)
    assert scenario.name == "July base" and scenario.horizon == 14
    np.testing.assert_allclose(scenario.temperature_c, 30.0)
    fc = got.to_forecast()
    assert fc.scenario_name == "July base" and fc.levels == (80.0, 95.0)
    with pytest.raises(dataclasses_frozen_error()):
        got.version = 5  # type: ignore[misc]


def dataclasses_frozen_error():
    import dataclasses

    return dataclasses.FrozenInstanceError


def test_save_refuses_a_taken_name(library):
    library.save(make_entry("Heat wave"))
    with pytest.raises(InputError, match="already exists"):
        library.save(make_entry("HEAT WAVE"))
    with pytest.raises(InputError, match="already exists"):
        library.save(make_entry("  Heat wave  "))
    assert len(library) == 1


def test_list_and_search(library):
    library.save(make_entry("Base", note="seasonal normal", author="Åsa"))
    library.save(make_entry("Hot July", note="plus 3 °C", author="Ben"))
    library.save(make_entry("cold snap", note="", author="carla"))
    names = [x.name for x in library.list()]
    assert names == ["Base", "cold snap", "Hot July"]
    assert [x.name for x in library.list("JULY")] == ["Hot July"]
    assert [x.name for x in library.list("åsa")] == ["Base"]
    assert [x.name for x in library.list("°C")] == ["Hot July"]
    assert library.list("nothing like this") == []
    item = library.list("Base")[0]
    assert (item.first_date, item.last_date, item.days, item.version) == (
        "2031-07-01",
        "2031-07-14",
        14,
        1,
    )
    assert json.loads(json.dumps(item.to_dict()))["name"] == "Base"
    assert "Base" in library and "nope" not in library


def test_get_unknown_suggests_close_names(library):
    library.save(make_entry("Heat wave 2031"))
    with pytest.raises(InputError, match="Heat wave 2031") as info:
        library.get("Heat wave 2032")
    assert "No saved scenario is named" in str(info.value)


# ---------------------------------------------------------------------------------------------
# edits and optimistic concurrency


def test_update_bumps_version_and_refuses_stale_edits(library):
    saved = library.save(make_entry())
    v2 = library.update(saved.name, expected_version=1, note="checked by ops")
    assert v2.version == 2 and v2.note == "checked by ops" and v2.author == "planner A"
    assert v2.changed_utc >= saved.changed_utc and v2.created_utc == saved.created_utc
    with pytest.raises(InputError, match=STALE_TEXT) as info:
        library.update(saved.name, expected_version=1, note="stale edit")
    assert "Reopen it and apply your edit again" in str(info.value)
    assert library.get(saved.name).note == "checked by ops"


def test_update_with_new_content(library):
    saved = library.save(make_entry())
    fresh = make_entry(seed=7, model_fingerprint="e" * 64, context={"levels": [90]})
    v2 = library.update(saved.name, expected_version=saved.version, entry=fresh)
    assert v2.model_fingerprint == "e" * 64
    assert v2.note == saved.note  # entry's note is not used
    pd.testing.assert_frame_equal(v2.forecast, fresh.forecast, check_dtype=False)
    assert v2.levels == (90.0,)


def test_two_sessions_keep_both_changes(tmp_path):
    """Two app sessions open version 1; the later save is refused, reopened and re-applied."""
    path = tmp_path / "shared.sqlite"
    ScenarioLibrary(path).save(make_entry("Shared"))
    session_a, session_b = ScenarioLibrary(path), ScenarioLibrary(path)
    opened_a, opened_b = session_a.get("Shared"), session_b.get("Shared")
    session_a.update("Shared", expected_version=opened_a.version, note="A's note")
    with pytest.raises(InputError, match=STALE_TEXT):
        session_b.update("Shared", expected_version=opened_b.version, author="B")
    reopened = session_b.get("Shared")
    session_b.update("Shared", expected_version=reopened.version, author="B")
    final = ScenarioLibrary(path).get("Shared")
    assert (final.note, final.author, final.version) == ("A's note", "B", 3)


def test_rename(library):
    saved = library.save(make_entry("Old name"))
    library.save(make_entry("Taken"))
    renamed = library.rename("Old name", "New name", expected_version=saved.version)
    assert renamed.name == "New name" and renamed.version == 2
    assert renamed.definition["name"] == "New name"
    assert renamed.scenario().name == "New name"
    assert "Old name" not in library
    with pytest.raises(InputError, match="already exists"):
        library.rename("New name", "TAKEN", expected_version=2)
    with pytest.raises(InputError, match=STALE_TEXT):
        library.rename("New name", "Newer", expected_version=1)
    case_only = library.rename("New name", "NEW NAME", expected_version=2)
    assert case_only.name == "NEW NAME" and case_only.version == 3
    with pytest.raises(InputError, match="(?i)no saved scenario"):
        library.rename("Old name", "x", expected_version=1)


def test_duplicate(library):
    saved = library.save(make_entry("Original"))
    library.update("Original", expected_version=1, note="edited")
    copy = library.duplicate("Original", "Copy")
    assert copy.version == 1 and copy.note == "edited"
    assert copy.definition["name"] == "Copy"
    assert copy.created_utc >= saved.created_utc
    pd.testing.assert_frame_equal(copy.forecast, library.get("Original").forecast)
    with pytest.raises(InputError, match="already exists"):
        library.duplicate("Original", "copy")
    with pytest.raises(InputError, match="(?i)no saved scenario"):
        library.duplicate("Missing", "Other")


def test_delete(library):
    library.save(make_entry("Gone"))
    library.update("Gone", expected_version=1, note="x")
    with pytest.raises(InputError, match=STALE_TEXT):
        library.delete("Gone", expected_version=1)
    assert "Gone" in library
    library.delete("Gone", expected_version=2)
    assert "Gone" not in library and len(library) == 0
    with pytest.raises(InputError, match="(?i)no saved scenario"):
        library.delete("Gone", expected_version=2)
    for bad in (0, -1, True, "2", 1.5):
        with pytest.raises(InputError, match="expected version"):
            library.delete("Gone", expected_version=bad)


def test_threads_saving_at_once_lose_nothing(tmp_path):
    path = tmp_path / "threads.sqlite"
    shared = ScenarioLibrary(path)
    errors: list[Exception] = []

    def writer(tag: str) -> None:
        try:
            for i in range(15):
                shared.save(make_entry(f"{tag} {i}", days=5))
        except Exception as exc:  # pragma: no cover - reported below
            errors.append(exc)

    threads = [threading.Thread(target=writer, args=(t,)) for t in ("A", "B", "C")]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert errors == []
    assert len(ScenarioLibrary(path)) == 45


# ---------------------------------------------------------------------------------------------
# bad entries and bad files


def test_bad_entries_are_input_errors(library):
    with pytest.raises(InputError, match="empty"):
        library.save(make_entry("   "))
    with pytest.raises(InputError, match="control character"):
        library.save(make_entry("bad\x00name"))
    with pytest.raises(InputError, match="more than 120"):
        library.save(make_entry("x" * 121))
    with pytest.raises(InputError, match="control character"):
        library.save(make_entry("ok", note="bell\x07"))
    with pytest.raises(InputError, match="infinite"):
        table = forecast_table()
        table.loc[3, "upper_95"] = np.inf
        library.save(make_entry("inf", forecast=table))
    with pytest.raises(InputError, match="no days"):
        library.save(make_entry("nodays", definition={"days": []}))
    with pytest.raises(InputError, match="fingerprint"):
        library.save(make_entry("nofp", model_fingerprint=""))
    with pytest.raises(InputError, match="ScenarioEntry"):
        library.save({"name": "dict"})  # type: ignore[arg-type]
    assert len(library) == 0
    # line breaks and tabs in notes are kept exactly
    saved = library.save(make_entry("ok", note="line 1\nline 2\ttab\r\n"))
    assert library.get("ok").note == saved.note == "line 1\nline 2\ttab\r\n"


def test_path_from_environment_and_default(tmp_path, monkeypatch):
    env_path = tmp_path / "env" / "from_env.sqlite"
    monkeypatch.setenv("LOADCORE_LIBRARY", str(env_path))
    assert ScenarioLibrary().path == env_path
    assert env_path.exists()
    monkeypatch.delenv("LOADCORE_LIBRARY")
    monkeypatch.setenv("HOME", str(tmp_path / "home"))
    expected = tmp_path / "home" / ".loadcore" / "scenarios.sqlite"
    assert lib.default_library_path() == expected
    assert ScenarioLibrary().path == expected and expected.exists()
    explicit = tmp_path / "explicit.sqlite"
    monkeypatch.setenv("LOADCORE_LIBRARY", str(env_path))
    assert ScenarioLibrary(explicit).path == explicit
