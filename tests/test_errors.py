"""Messages quote at most about 80 characters of the user's text (issue 11, item 15).

A 10 MB cell, column name or setting must not come back whole in an error line or a report
entry: :func:`loadcore.errors.quote` cuts what is quoted where messages are built, and every part
of a :class:`~loadcore.errors.LoadcoreError` or a history :class:`Issue` is cut as a last guard.
"""

from __future__ import annotations

import json

import pytest

from loadcore.errors import (
    MAX_PART_CHARS,
    QUOTE_CHARS,
    InputError,
    LoadcoreError,
    clip,
    quote,
    quote_all,
)

HUGE = "x" * 2_000_000


def test_clip_and_quote_cut_to_the_limit():
    assert clip("a  b\nc") == "a b c"
    assert len(clip(HUGE)) == QUOTE_CHARS
    assert clip(HUGE).endswith("\u2026")
    assert len(quote(HUGE)) == QUOTE_CHARS + 2  # the quotes around it
    assert quote("abc") == "'abc'"
    assert quote(5) == "5"
    assert len(quote(list(range(10_000)))) == QUOTE_CHARS
    assert quote_all([]) == "none"
    assert quote_all(["a", "b"]) == "'a', 'b'"
    assert quote_all([str(i) for i in range(30)], most=3) == "'0', '1', '2' and 27 more"


def test_every_part_of_an_error_is_bounded():
    err = InputError(HUGE, where=HUGE, fix=HUGE)
    assert len(err.problem) == len(err.where) == len(err.fix) == MAX_PART_CHARS
    assert len(str(err)) < 3 * MAX_PART_CHARS + 20


def _longest_quote(text: str) -> int:
    """Length of the longest run of x's (the hostile text) in a message."""
    runs = [len(run) for run in text.replace("\u2026", " ").split() if set(run) <= {"x", "'"}]
    return max(runs, default=0)


def test_history_messages_quote_little_of_a_huge_cell():
    from loadcore.history import HistorySettings, check_history, read_history

    big = "x" * 100_000  # under the csv module's field limit, so the cell is read
    text = f"date,demand,temperature\n2024-01-01,{big},5\n{big},1400,6\n"
    report = check_history(text.encode(), HistorySettings())
    assert report.errors
    for issue in report.issues:
        assert _longest_quote(issue.message) <= QUOTE_CHARS
        assert len(issue.message) <= MAX_PART_CHARS
    with pytest.raises(LoadcoreError) as caught:
        read_history(text.encode())
    assert len(str(caught.value)) < 2000


def test_history_missing_column_lists_few_huge_header_names():
    from loadcore.history import check_history

    header = ",".join(f"col{i}_" + "x" * 10_000 for i in range(50))
    report = check_history((header + "\n1,2,3\n").encode())
    assert report.errors
    for issue in report.issues:
        assert len(issue.message) <= MAX_PART_CHARS


def test_scenario_messages_quote_little_of_a_huge_cell():
    from loadcore.scenario import read_scenario_csv

    big = "x" * 1_000_000
    with pytest.raises(LoadcoreError) as caught:
        read_scenario_csv(f"date,temperature\n{big},20\n".encode())
    assert _longest_quote(str(caught.value)) <= QUOTE_CHARS
    with pytest.raises(LoadcoreError) as caught:
        read_scenario_csv(f"date,temperature\n2031-01-01,{big}\n".encode())
    assert _longest_quote(str(caught.value)) <= QUOTE_CHARS


def test_model_file_messages_quote_little():
    from loadcore.model import load_model

    doc = {"kind": "loadcore fitted model", "format_version": "x" * 1_000_000}
    with pytest.raises(LoadcoreError) as caught:
        load_model(json.dumps(doc))
    assert _longest_quote(str(caught.value)) <= QUOTE_CHARS


def test_library_lookup_of_a_huge_name_quotes_little(tmp_path):
    from loadcore.library import ScenarioLibrary

    library = ScenarioLibrary(tmp_path / "lib.sqlite")
    with pytest.raises(LoadcoreError) as caught:
        library.get("y" * 100)
    assert len(str(caught.value)) < 400
    with pytest.raises(LoadcoreError) as caught:
        library.get("y" * 5_000_000)
    assert len(str(caught.value)) < 400


def test_cli_error_line_is_short(tmp_path, capsys):
    from loadcore.cli import main

    path = tmp_path / "h.csv"
    path.write_text("date,demand,temperature\n" + "x" * 100_000 + ",1,2\n" * 2)
    assert main(["fit", str(path), "--out", str(tmp_path / "m.json")]) == 1
    err = capsys.readouterr().err
    assert len(err) < 2000
