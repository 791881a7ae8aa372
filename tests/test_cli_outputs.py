"""Nothing overwritten, nothing lost (issue 11, items 6 and 7), for every command that writes.

Item 6: an output path that is one of the command's inputs (the same file, through a link or a
hard link, or spelled another way) is refused before any work, and the input is unchanged.
Item 7: models, exports and briefs are written to a temporary file in the same folder, flushed and
renamed over the target only when complete; when the disk is full the earlier file stays intact,
no temporary file is left, and the one error line names the file. Outputs that are devices or
pipes are refused (writing would replace them or never end).
"""

from __future__ import annotations

import os
from pathlib import Path

import pytest
from hardening_support import SMALL_SEARCH, history_csv_text, scenario_csv_text, tiny_model

from loadcore.cli import main
from loadcore.errors import InputError


def _error_line(capsys) -> str:
    err = capsys.readouterr().err
    lines = [line for line in err.split("\n") if line.strip()]
    errors = [line for line in lines if "error:" in line]
    assert len(errors) == 1 and errors[0].startswith("error: "), err
    assert "Traceback" not in err
    return errors[0]


@pytest.fixture()
def files_here(tmp_path):
    """A history, a (tiny) model, a scenario and a library with one saved scenario."""
    history = tmp_path / "history.csv"
    history.write_text(history_csv_text())
    model = tiny_model()
    model_path = model.save(tmp_path / "model.json")
    scenario = tmp_path / "scenario.csv"
    scenario.write_text(scenario_csv_text(model))
    library = tmp_path / "lib.sqlite"
    code = main(
        [
            "scenarios",
            "save",
            str(scenario),
            "--name",
            "base",
            "--model",
            str(model_path),
            "--db",
            str(library),
        ]
    )
    assert code == 0
    return {"history": history, "model": model_path, "scenario": scenario, "library": library}


def _spellings(tmp_path: Path, target: Path) -> list[Path]:
    """The same file as a symbolic link, a hard link and a path through '..'."""
    link = tmp_path / f"link_{target.name}"
    link.symlink_to(target)
    hard = tmp_path / f"hard_{target.name}"
    os.link(target, hard)
    (tmp_path / "sub").mkdir(exist_ok=True)
    return [target, link, hard, tmp_path / "sub" / ".." / target.name]


def _commands(f: dict[str, Path]) -> list[tuple[list[str], Path, str]]:
    """(argv before the output path, the input it must not overwrite, the output option)."""
    save = ["scenarios", "save", str(f["scenario"]), "--name", "other", "--model", str(f["model"])]
    save.append("--db")
    return [
        (["fit", str(f["history"]), *SMALL_SEARCH, "--out"], f["history"], "--out"),
        (["forecast", str(f["model"]), str(f["scenario"]), "--out"], f["model"], "--out"),
        (["forecast", str(f["model"]), str(f["scenario"]), "--out"], f["scenario"], "--out"),
        (["ensemble", str(f["model"]), "--days", "5", "--out"], f["model"], "--out"),
        (
            ["scenarios", "export", "base", "--db", str(f["library"]), "--out"],
            f["library"],
            "--out",
        ),
        (save, f["scenario"], "--db"),
        (save, f["model"], "--db"),
    ]


def test_every_command_refuses_to_write_over_an_input(files_here, tmp_path, capsys):
    """Item 6, each command and each way of naming the same file."""
    for argv, victim, option in _commands(files_here):
        before = victim.read_bytes()
        for spelled in _spellings(tmp_path, victim):
            out = str(spelled)  # (an export named like the library is refused by its suffix)
            assert main([*argv, out]) == 1, (argv, out)
            line = _error_line(capsys)
            assert ("one of the input files" in line and option in line) or "format" in line, line
            assert victim.read_bytes() == before, (argv, out)
        for extra in tmp_path.iterdir():
            if extra.is_symlink() or extra.name.startswith("hard_"):
                extra.unlink()


def test_export_to_the_library_itself_is_refused(files_here, tmp_path, capsys):
    library = files_here["library"]
    csv_named = tmp_path / "lib.csv"
    os.link(library, csv_named)  # the library under an export name
    before = library.read_bytes()
    assert main(["scenarios", "export", "base", "--db", str(library), "--out", str(csv_named)]) == 1
    assert "one of the input files" in _error_line(capsys)
    assert library.read_bytes() == before


def test_outputs_that_are_pipes_are_refused(files_here, tmp_path, capsys):
    """A FIFO (or a device) as an output is refused, not replaced and not written into."""
    fifo = tmp_path / "out.fifo"
    os.mkfifo(fifo)
    f = files_here
    for argv in (
        ["fit", str(f["history"]), *SMALL_SEARCH, "--out", str(fifo)],
        ["forecast", str(f["model"]), str(f["scenario"]), "--out", str(fifo)],
        ["ensemble", str(f["model"]), "--days", "5", "--out", str(fifo)],
        ["scenarios", "export", "base", "--db", str(f["library"]), "--out", str(fifo) + ".csv"],
    ):
        if argv[-1].endswith(".csv"):
            os.mkfifo(argv[-1])
        assert main(argv) == 1
        assert "not a regular file" in _error_line(capsys)
        assert Path(argv[-1]).is_fifo()


def _full_disk(monkeypatch):
    def no_space(*args, **kwargs):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "fsync", no_space)


def _only(folder: Path, names: set[str]) -> None:
    left = {p.name for p in folder.iterdir()}
    assert left == names, left - names


def test_model_save_on_a_full_disk_keeps_the_old_model(files_here, monkeypatch):
    """Item 7: FittedModel.save writes atomically and names the file when it cannot."""
    path = files_here["model"]
    before = path.read_bytes()
    names = {p.name for p in path.parent.iterdir()}
    _full_disk(monkeypatch)
    with pytest.raises(InputError) as caught:
        tiny_model().save(path)
    assert str(path) in str(caught.value) and "No space left" in str(caught.value)
    assert path.read_bytes() == before
    _only(path.parent, names)


def test_fit_on_a_full_disk_names_the_file_and_keeps_the_old_model(files_here, monkeypatch, capsys):
    f = files_here
    before = f["model"].read_bytes()
    names = {p.name for p in f["model"].parent.iterdir()}
    _full_disk(monkeypatch)
    assert main(["fit", str(f["history"]), *SMALL_SEARCH, "--out", str(f["model"])]) == 1
    line = _error_line(capsys)
    assert str(f["model"]) in line and "No space left" in line
    assert f["model"].read_bytes() == before
    _only(f["model"].parent, names)


@pytest.mark.parametrize("suffix", [".csv", ".html"])
def test_export_and_brief_on_a_full_disk_leave_nothing_behind(
    files_here, tmp_path, monkeypatch, capsys, suffix
):
    out = tmp_path / f"export{suffix}"
    out.write_text("earlier export")
    names = {p.name for p in tmp_path.iterdir()}
    _full_disk(monkeypatch)
    argv = ["scenarios", "export", "base", "--db", str(files_here["library"]), "--out", str(out)]
    assert main(argv) == 1
    line = _error_line(capsys)
    assert str(out) in line
    assert out.read_text() == "earlier export"
    assert not [n for n in os.listdir(tmp_path) if n.endswith((".part", ".tmp"))]
    _only(tmp_path, names | {"lib.sqlite-wal", "lib.sqlite-shm"} & set(os.listdir(tmp_path)))


def test_forecast_output_on_a_full_disk(files_here, tmp_path, monkeypatch, capsys):
    out = tmp_path / "forecast.csv"
    names = {p.name for p in tmp_path.iterdir()}
    _full_disk(monkeypatch)
    f = files_here
    assert main(["forecast", str(f["model"]), str(f["scenario"]), "--out", str(out)]) == 1
    assert str(out) in _error_line(capsys)
    _only(tmp_path, names)


def test_model_saved_through_a_link_keeps_the_link(tmp_path):
    real = tmp_path / "models" / "v3.json"
    real.parent.mkdir()
    real.write_text("old")
    link = tmp_path / "current.json"
    link.symlink_to(real)
    tiny_model().save(link)
    assert link.is_symlink()
    assert real.read_text().startswith("{")
    assert not [p for p in real.parent.iterdir() if p.name != "v3.json"]
