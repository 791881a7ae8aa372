"""A library on a read-only mount, and libraries with one damaged row (issue 11, items 8, 13).

Reading commands open the library read-only (nothing is written, not even journal files), so a
library on a read-only mount can be listed and exported. One damaged row is left out of the list
and named; asking for it gives one clear error, never "Unexpected failure"; the other rows stay
usable. A pipe or a device given as the library is refused instead of waited on.
"""

from __future__ import annotations

import os
import shutil
import sqlite3
import subprocess
import sys
from pathlib import Path

import pytest
from hardening_support import scenario_csv_text, tiny_model

from loadcore.cli import main
from loadcore.errors import InputError
from loadcore.library import ScenarioLibrary, entry_from_forecast
from loadcore.scenario import read_scenario_csv

REPO = Path(__file__).resolve().parent.parent
DEEP = "[" * 100 + "]" * 100


@pytest.fixture(scope="module")
def healthy(tmp_path_factory) -> Path:
    """A library with three saved scenarios, a, b and c."""
    folder = tmp_path_factory.mktemp("healthy")
    path = folder / "lib.sqlite"
    model = tiny_model()
    scenario = read_scenario_csv(scenario_csv_text(model).encode(), model_end=model.history_end)
    library = ScenarioLibrary(path)
    for name in ("a", "b", "c"):
        forecast = model.forecast(scenario)
        library.save(entry_from_forecast(forecast, scenario=scenario, model=model, name=name))
    return path


def _copy(healthy: Path, folder: Path) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    target = folder / "lib.sqlite"
    with sqlite3.connect(healthy) as source, sqlite3.connect(target) as copy:
        source.backup(copy)
    return target


def _damage(path: Path, sql: str) -> None:
    with sqlite3.connect(path) as conn:
        conn.execute(sql)


def _run(capsys, *argv) -> tuple[int, str, str]:
    code = main(list(argv))
    captured = capsys.readouterr()
    return code, captured.out, captured.err


LIST_DAMAGE = {
    "days text": "UPDATE scenarios SET days = 'abc' WHERE name = 'b'",
    "version text": "UPDATE scenarios SET version = 'x' WHERE name = 'b'",
    "first date bytes": "UPDATE scenarios SET first_date = x'ff00' WHERE name = 'b'",
    "last date not a date": "UPDATE scenarios SET last_date = '2030-13-45' WHERE name = 'b'",
    "note bytes": "UPDATE scenarios SET note = x'ff00' WHERE name = 'b'",
}


@pytest.mark.parametrize("damage", sorted(LIST_DAMAGE))
def test_a_damaged_list_row_is_skipped_and_named(healthy, tmp_path, capsys, damage):
    path = _copy(healthy, tmp_path)
    _damage(path, LIST_DAMAGE[damage])
    library = ScenarioLibrary(path)
    listing = library.scan()
    assert [item.name for item in listing.items] == ["a", "c"]
    assert [row.name for row in listing.damaged] == ["b"] and listing.damaged[0].reason
    assert library.names() == ["a", "c"]
    code, out, err = _run(capsys, "scenarios", "list", "--db", str(path))
    assert code == 0
    assert out.split()[0] == "a" and "\nc " in out
    assert "warning: the saved scenario 'b' is damaged" in err


ROW_DAMAGE = {
    "nested forecast": f"UPDATE scenarios SET forecast = '{DEEP}' WHERE name = 'b'",
    "nested context": f"UPDATE scenarios SET context = '{DEEP}' WHERE name = 'b'",
    "nested definition": f"UPDATE scenarios SET definition = '{DEEP}' WHERE name = 'b'",
    "bad date in the kept history": "UPDATE scenarios SET context = json_set(context, "
    "'$.history_tail[0].date', '2021-13-45') WHERE name = 'b'",
    "context is a list": "UPDATE scenarios SET context = '[1, 2]' WHERE name = 'b'",
    "levels are text": "UPDATE scenarios SET context = json_set(context, '$.levels', "
    "json('[\"x\"]')) WHERE name = 'b'",
    "forecast date": "UPDATE scenarios SET forecast = json_set(forecast, '$.records[0].date', "
    "'nope') WHERE name = 'b'",
    "forecast without rows": "UPDATE scenarios SET forecast = '{}' WHERE name = 'b'",
    "forecast mean text": "UPDATE scenarios SET forecast = json_set(forecast, "
    "'$.records[0].mean', 'lots') WHERE name = 'b'",
    "version text": "UPDATE scenarios SET version = 'x' WHERE name = 'b'",
}


@pytest.mark.parametrize("damage", sorted(ROW_DAMAGE))
def test_a_damaged_row_gives_one_clear_error_and_the_rest_work(healthy, tmp_path, capsys, damage):
    path = _copy(healthy, tmp_path)
    _damage(path, ROW_DAMAGE[damage])
    library = ScenarioLibrary(path)
    with pytest.raises(InputError, match="damaged"):
        library.get("b")
    for name in ("brief.html", "table.csv"):
        out = tmp_path / name
        code, _, err = _run(
            capsys, "scenarios", "export", "b", "--db", str(path), "--out", str(out)
        )
        assert code == 1 and "damaged" in err and "Unexpected" not in err
        assert not out.exists()
    out = tmp_path / "rest.csv"
    code, _, err = _run(
        capsys, "scenarios", "export", "a", "c", "--db", str(path), "--out", str(out)
    )
    assert code == 0 and out.exists(), err
    assert {"a", "c"} <= set(library.names())


def test_reading_changes_nothing_in_the_library(healthy, tmp_path, capsys):
    path = _copy(healthy, tmp_path / "lib")
    before = path.read_bytes()
    library = ScenarioLibrary(path, read_only=True)
    assert library.names() == ["a", "b", "c"]
    library.get("a")
    assert _run(capsys, "scenarios", "list", "--db", str(path))[0] == 0
    out = tmp_path / "export.csv"
    assert _run(capsys, "scenarios", "export", "a", "--db", str(path), "--out", str(out))[0] == 0
    assert path.read_bytes() == before  # no migration, no journal mode change, no write
    extra = set(os.listdir(path.parent)) - {"lib.sqlite"}
    assert extra <= {"lib.sqlite-wal", "lib.sqlite-shm"}  # SQLite's reader files, if any
    assert all((path.parent / name).stat().st_size == 0 for name in extra - {"lib.sqlite-shm"})
    with pytest.raises(InputError, match="reading only"):
        library.delete("a", expected_version=1)
    with pytest.raises(InputError, match="no scenario library"):
        ScenarioLibrary(tmp_path / "missing.sqlite", read_only=True)


def _read_only_mount_works() -> bool:
    if shutil.which("unshare") is None or shutil.which("mount") is None:
        return False
    probe = subprocess.run(
        ["unshare", "-m", "sh", "-c", "mount -t tmpfs none /mnt -o ro && umount /mnt"],
        capture_output=True,
    )
    return probe.returncode == 0


@pytest.mark.skipif(not _read_only_mount_works(), reason="needs a private read-only mount")
def test_a_library_on_a_read_only_mount_is_listed_and_exported(healthy, tmp_path):
    """A real read-only bind mount in a private mount namespace (unshare -m)."""
    source = _copy(healthy, tmp_path / "src").parent
    mounted = tmp_path / "ro"
    mounted.mkdir()
    db = mounted / "lib.sqlite"
    out = tmp_path / "out.csv"
    loadcore = f"{sys.executable} -m loadcore"
    script = " && ".join(
        [
            f"mount --bind {source} {mounted}",
            f"mount -o remount,bind,ro {mounted}",
            f"{loadcore} scenarios list --db {db}",
            f"{loadcore} scenarios export a b --db {db} --out {out}",
            f"({loadcore} scenarios save /dev/null --name z --model x --db {db} || true)",
        ]
    )
    run = subprocess.run(
        ["unshare", "-m", "sh", "-c", script], capture_output=True, text=True, cwd=REPO
    )
    assert run.returncode == 0, run.stderr
    assert run.stdout.split()[0] == "a" and "Wrote" in run.stdout
    assert "read-only disk or folder" in run.stderr
    assert out.exists()
    assert sorted(os.listdir(source)) == ["lib.sqlite"]


def test_a_pipe_as_the_library_is_refused(tmp_path, capsys):
    fifo = tmp_path / "lib.fifo"
    os.mkfifo(fifo)
    for argv in (
        ("scenarios", "list", "--db", str(fifo)),
        ("scenarios", "export", "a", "--db", str(fifo), "--out", str(tmp_path / "x.csv")),
    ):
        code, _, err = _run(capsys, *argv)
        assert code == 1 and "not a regular file" in err
    with pytest.raises(InputError, match="not a regular file"):
        ScenarioLibrary("/dev/zero")


def test_the_saved_page_shows_the_rest_and_names_the_damaged_row(healthy, tmp_path, monkeypatch):
    """The app's Saved scenarios page lists a, c and warns about b (AppTest)."""
    from test_app_support import assert_no_exception, demo_model, new_app

    path = _copy(healthy, tmp_path)
    _damage(path, LIST_DAMAGE["days text"])
    monkeypatch.setenv("LOADCORE_LIBRARY", str(path))
    at = new_app(page="pages/saved.py", model=demo_model())
    assert_no_exception(at)
    assert at.dataframe[0].value["name"].tolist() == ["a", "c"]
    assert any("'b' is damaged" in w.value for w in at.warning)
