"""Tests for loadcore.library: the SQLite scenario library, its migrations, concurrency and CLI."""

from __future__ import annotations

import json
import os
import signal
import sqlite3
import subprocess
import sys
import textwrap
import threading
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from loadcore import library as lib
from loadcore.errors import InputError, LoadcoreError
from loadcore.library import (
    MIGRATIONS,
    SCHEMA_VERSION,
    SavedScenario,
    ScenarioEntry,
    ScenarioLibrary,
    entry_from_forecast,
    is_current,
    settings_to_dict,
)
from loadcore.scenario import Scenario, constant_path, make_scenario

REPO_ROOT = Path(__file__).resolve().parent.parent
STALE_TEXT = "changed by someone else since you opened it"


@dataclass(frozen=True)
class FakeTerms:
    response: str = "quadratic"
    reference_temp_c: float = 18.0


@dataclass(frozen=True)
class FakeSettings:
    search: str = "quick"
    ar_up_to: int = 5
    terms: FakeTerms = field(default_factory=FakeTerms)
    holidays: tuple = ("US",)


@dataclass(frozen=True)
class FakeModel:
    fingerprint: str = "f" * 64
    settings: FakeSettings = field(default_factory=FakeSettings)


def forecast_table(start: str = "2031-07-01", days: int = 14, seed: int = 0) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    dates = pd.date_range(start, periods=days, freq="D")
    temps = 30.0 + rng.normal(0, 2, days)
    mean = 2000.0 + 20.0 * (temps - 25.0)
    flags = temps > 32.0
    return pd.DataFrame(
        {
            "date": dates,
            "temperature_c": temps,
            "day_type": ["midweek"] * days,
            "mean": mean,
            "median": mean - 2.0,
            "lower_80": mean - 50.0,
            "upper_80": mean + 50.0,
            "lower_95": mean - 80.0,
            "upper_95": mean + 80.0,
            "out_of_range": flags,
            "out_of_range_by_c": np.where(flags, temps - 32.0, 0.0),
            "sparse_temperature": np.zeros(days, dtype=bool),
        }
    )


def make_entry(name: str = "July base", *, days: int = 14, seed: int = 0, **kw) -> ScenarioEntry:
    scenario = make_scenario("as built", constant_path("2031-07-01", days, 30.0))
    args = {
        "name": name,
        "definition": scenario.to_dict(),
        "model_fingerprint": FakeModel().fingerprint,
        "model_settings": settings_to_dict(FakeSettings()),
        "forecast": forecast_table(days=days, seed=seed),
        "note": "seasonal normal",
        "author": "planner A",
        "context": {"levels": [80, 95], "demand_unit": "MW", "demand_kind": "peak"},
    }
    args.update(kw)
    return ScenarioEntry(**args)


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


def test_file_uses_wal_and_current_schema(library):
    library.save(make_entry())
    conn = sqlite3.connect(library.path)
    try:
        assert conn.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
        assert conn.execute("PRAGMA user_version").fetchone()[0] == SCHEMA_VERSION
        assert conn.execute("PRAGMA application_id").fetchone()[0] == lib.APPLICATION_ID
    finally:
        conn.close()
    assert library.schema_version == SCHEMA_VERSION == MIGRATIONS[-1].version
    assert library.integrity_ok()


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


def test_not_a_library_file(tmp_path):
    junk = tmp_path / "junk.sqlite"
    junk.write_bytes(os.urandom(4096))
    with pytest.raises(InputError, match="not a loadcore scenario library"):
        ScenarioLibrary(junk)
    other = tmp_path / "other.sqlite"
    conn = sqlite3.connect(other)
    conn.execute("CREATE TABLE something (x)")
    conn.commit()
    conn.close()
    with pytest.raises(InputError, match="not a loadcore scenario library"):
        ScenarioLibrary(other)
    with pytest.raises(InputError, match="folder"):
        ScenarioLibrary(tmp_path)


def test_newer_schema_is_refused(tmp_path):
    path = tmp_path / "future.sqlite"
    ScenarioLibrary(path)
    conn = sqlite3.connect(path)
    conn.execute(f"PRAGMA user_version = {SCHEMA_VERSION + 1}")
    conn.commit()
    conn.close()
    with pytest.raises(InputError, match="newer loadcore"):
        ScenarioLibrary(path)


def test_migration_from_v1_file(tmp_path):
    """A file made with only the version 1 schema (no author column) is upgraded on open."""
    path = tmp_path / "v1.sqlite"
    conn = sqlite3.connect(path, isolation_level=None)
    conn.execute("PRAGMA journal_mode = WAL")
    conn.execute("BEGIN")
    for statement in MIGRATIONS[0].statements:
        conn.execute(statement)
    conn.execute("PRAGMA user_version = 1")
    entry = make_entry("Made by v1")
    conn.execute(
        "INSERT INTO scenarios (name, note, created_utc, changed_utc, version, first_date, "
        "last_date, days, definition, model_fingerprint, model_settings, forecast, context) "
        "VALUES (?, ?, ?, ?, 4, ?, ?, ?, ?, ?, ?, ?, ?)",
        (
            entry.name,
            "old note",
            "2030-01-01T00:00:00.000Z",
            "2030-02-01T00:00:00.000Z",
            "2031-07-01",
            "2031-07-14",
            14,
            json.dumps(entry.definition),
            entry.model_fingerprint,
            json.dumps(entry.model_settings),
            lib._frame_to_json(entry.forecast, "test"),
            "{}",
        ),
    )
    conn.execute("COMMIT")
    columns = [r[1] for r in conn.execute("PRAGMA table_info(scenarios)")]
    conn.close()
    assert "author" not in columns

    library = ScenarioLibrary(path)
    assert library.schema_version == 2
    conn = sqlite3.connect(path)
    columns = [r[1] for r in conn.execute("PRAGMA table_info(scenarios)")]
    conn.close()
    assert "author" in columns
    old = library.get("Made by v1")
    assert (old.author, old.note, old.version) == ("", "old note", 4)
    assert old.changed_utc == "2030-02-01T00:00:00.000Z"
    pd.testing.assert_frame_equal(old.forecast, entry.forecast, check_dtype=False)
    updated = library.update("Made by v1", expected_version=4, author="migrated")
    assert updated.author == "migrated" and updated.version == 5
    # opening again does not migrate twice
    assert ScenarioLibrary(path).schema_version == 2


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


# ---------------------------------------------------------------------------------------------
# a writer killed mid-save


WRITER = textwrap.dedent(
    """
    import sys
    sys.path.insert(0, {root!r})
    sys.path.insert(0, {tests!r})
    from test_library import make_entry
    from loadcore.library import ScenarioLibrary

    library = ScenarioLibrary(sys.argv[1])
    for i in range(100000):
        name = f"run {{i:05d}}"
        library.save(make_entry(name, days=90, seed=i))
        sys.stdout.write(name + "\\n")
        sys.stdout.flush()
    """
)


@pytest.mark.slow
def test_writer_killed_mid_save_leaves_earlier_saves_intact(tmp_path):
    path = tmp_path / "killed.sqlite"
    ScenarioLibrary(path).save(make_entry("before the writer"))
    script = tmp_path / "writer.py"
    script.write_text(WRITER.format(root=str(REPO_ROOT), tests=str(REPO_ROOT / "tests")))
    proc = subprocess.Popen(
        [sys.executable, str(script), str(path)],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
    )
    reported: list[str] = []
    try:
        assert proc.stdout is not None
        while len(reported) < 40:
            line = proc.stdout.readline()
            if not line:
                break
            reported.append(line.strip())
    finally:
        os.kill(proc.pid, signal.SIGKILL)
        proc.wait(timeout=30)
    # collect anything printed between our last read and the kill
    rest = proc.stdout.read() if proc.stdout else ""
    reported += [x.strip() for x in rest.splitlines() if x.strip()]
    assert proc.returncode == -signal.SIGKILL
    assert len(reported) >= 40, proc.stderr.read() if proc.stderr else ""

    conn = sqlite3.connect(path)
    try:
        assert conn.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
    finally:
        conn.close()
    library = ScenarioLibrary(path)
    assert library.integrity_ok()
    stored = set(library.names())
    missing = [name for name in reported if name not in stored]
    assert missing == []
    assert "before the writer" in stored
    # every stored save reads back whole
    for name in reported[-5:]:
        assert len(library.get(name).forecast) == 90
    # the library still takes new saves
    library.save(make_entry("after the kill"))
    assert "after the kill" in library


# ---------------------------------------------------------------------------------------------
# model fingerprints and entries from model objects


def test_is_current_compares_fingerprint_and_settings(library):
    saved = library.save(make_entry())
    assert is_current(saved, FakeModel())
    assert not is_current(saved, FakeModel(fingerprint="0" * 64))
    assert not is_current(saved, FakeModel(settings=FakeSettings(ar_up_to=3)))
    assert not is_current(saved, FakeModel(settings=FakeSettings(terms=FakeTerms("degree_days"))))
    assert not is_current(saved, object())


def test_settings_to_dict_prefers_to_dict_and_is_plain_json():
    class WithToDict:
        def to_dict(self):
            return {"b": (1, 2), "a": pd.Timestamp("2031-01-01")}

    assert settings_to_dict(WithToDict()) == {"a": "2031-01-01", "b": [1, 2]}
    plain = settings_to_dict(FakeSettings())
    assert plain == json.loads(json.dumps(plain))
    assert plain["terms"] == {"response": "quadratic", "reference_temp_c": 18.0}
    assert plain["holidays"] == ["US"]


def test_entry_from_forecast_with_contract_shaped_objects(library):
    @dataclass(frozen=True)
    class HistorySettings:
        demand_unit: str = "MW"
        subdaily_demand: str = "peak"

    @dataclass(frozen=True)
    class FakeHistory:
        frame: pd.DataFrame
        settings: HistorySettings = field(default_factory=HistorySettings)

    @dataclass(frozen=True)
    class Model(FakeModel):
        history: FakeHistory | None = None
        order: tuple = (1, 0, 1)
        seasonal_order: tuple = (1, 0, 0, 7)

    @dataclass(frozen=True)
    class Fc:
        frame: pd.DataFrame
        levels: tuple = (80, 95)
        scenario_name: str = "Hot"
        note: str = "plus 2 °C"

        def warnings(self):
            return ["2031-07-03: 41.0 °C is 1.0 °C above the fitted range"]

    hist = pd.DataFrame(
        {"demand": np.arange(100, dtype=float), "temperature_c": 20.0},
        index=pd.date_range("2031-03-23", periods=100, freq="D", name="date"),
    )
    model = Model(history=FakeHistory(hist))
    scenario = make_scenario("Hot", constant_path("2031-07-01", 14, 32.0))
    entry = entry_from_forecast(Fc(forecast_table()), scenario=scenario, model=model, author="me")
    assert entry.name == "Hot" and entry.note == "plus 2 °C" and entry.author == "me"
    assert len(entry.context["history_tail"]) == lib.HISTORY_TAIL_DAYS
    assert entry.context["history_tail"][-1] == {"date": "2031-06-30", "demand": 99.0}
    assert entry.context["history_period"] == ["2031-03-23", "2031-06-30"]
    assert entry.context["model_summary"]["Error model"].startswith("AR 1 · MA 1 | weekly AR 1")
    saved = library.save(entry)
    assert is_current(saved, model)
    tail = saved.history_tail()
    assert len(tail) == lib.HISTORY_TAIL_DAYS and tail.index[-1] == pd.Timestamp("2031-06-30")
    assert saved.to_forecast().warnings() == Fc(forecast_table()).warnings()


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
