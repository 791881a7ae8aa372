"""Zone histories in: one file holding many zones, split into one validated history per zone.

Two layouts (:class:`ZoneLayout`):

- **long**: one row per zone and day (or reading), with a zone column (``zone_col``) beside the
  date, demand and temperature columns that :class:`~loadcore.history.HistorySettings` names;
- **wide**: one row per day (or reading), with one demand and one temperature column per zone,
  named by patterns such as ``"{zone}_Demand"`` and ``"{zone}_Temp"``.

The file is read once, through the one file policy (:mod:`loadcore.files`) and the one table
reader (:mod:`loadcore.tables`: delimiter and header); each zone's cells are then handed, still
as text and with their file row numbers, to :func:`loadcore.history.read_history` with the
same settings, so a zone is parsed, aggregated (sub-daily readings) and validated exactly as a
single history is, and its report names the rows of the file.
"""

from __future__ import annotations

import csv
import io
import re
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from loadcore import files, tables
from loadcore.errors import HistoryError, InputError, clip, quote, quote_all
from loadcore.history import History, HistoryReport, HistorySettings, Issue, read_history
from loadcore.history.reading import source_label

#: The placeholder a wide-file pattern must hold once.
ZONE_FIELD = "{zone}"
#: The name the system total takes in outputs; no zone may be called so.
SYSTEM = "system"
#: Most zones in one file (a distribution utility's feeders fit well within it).
MAX_ZONES = 5000
#: Longest zone name, characters.
MAX_ZONE_NAME = 80
#: File names in a zones folder that belong to the folder itself.
RESERVED_STEMS = ("zones", "zones-timing")


@dataclass(frozen=True)
class ZoneLayout:
    """Where the zones are in a zones history file.

    Parameters
    ----------
    zone_col : str or None
        Long layout: the column holding each row's zone name.
    wide_demand, wide_temp : str or None
        Wide layout: column-name patterns holding ``{zone}`` once, e.g. ``"{zone}_Demand"`` and
        ``"{zone}_Temp"``; the text in place of ``{zone}`` is the zone's name.
    wide_temp_min : str or None
        Wide layout, daily files: an optional pattern for each zone's daily minimum temperature.

    Exactly one layout is given; anything else raises :class:`~loadcore.errors.InputError`.
    """

    zone_col: str | None = None
    wide_demand: str | None = None
    wide_temp: str | None = None
    wide_temp_min: str | None = None

    def __post_init__(self) -> None:
        wide = (self.wide_demand, self.wide_temp)
        if self.zone_col is not None and any(w is not None for w in (*wide, self.wide_temp_min)):
            raise InputError(
                "Both a zone column and wide-file patterns were given",
                where="zones layout",
                fix="Give either --zone-col (one row per zone and day) or --wide-demand and "
                "--wide-temp (one column per zone), not both",
            )
        if self.zone_col is None:
            if any(w is None for w in wide):
                raise InputError(
                    "The zones file layout is incomplete",
                    where="zones layout",
                    fix="Give --zone-col NAME for a long file, or both --wide-demand "
                    '"{zone}_Demand" and --wide-temp "{zone}_Temp" for a wide file',
                )
            for option, pattern in (
                ("--wide-demand", self.wide_demand),
                ("--wide-temp", self.wide_temp),
                ("--wide-temp-min", self.wide_temp_min),
            ):
                if pattern is not None and str(pattern).count(ZONE_FIELD) != 1:
                    raise InputError(
                        f"The pattern {quote(pattern)} must hold {ZONE_FIELD} exactly once",
                        where=option,
                        fix='Write the zone\'s place in the column name, e.g. "{zone}_Demand"',
                    )
            if len({self.wide_demand, self.wide_temp, self.wide_temp_min} - {None}) < 2 + (
                self.wide_temp_min is not None
            ):
                raise InputError(
                    "Two wide-file patterns are the same",
                    where="zones layout",
                    fix="Give the demand and temperature columns different patterns",
                )
        elif not str(self.zone_col).strip():
            raise InputError(
                "The zone column name is empty", where="--zone-col", fix="Name the zone column"
            )

    @property
    def long(self) -> bool:
        """Whether the file has one row per zone and day."""
        return self.zone_col is not None


@dataclass(frozen=True)
class ZoneHistories:
    """Every zone of a zones file: the validated histories and each zone's report.

    Attributes
    ----------
    zones : tuple of str
        Zone names in the order the file gives them.
    histories : dict
        Zone -> :class:`~loadcore.history.History`, for the zones that passed validation.
    reports : dict
        Zone -> :class:`~loadcore.history.HistoryReport`, for every zone.
    failures : dict
        Zone -> the one-line reason it cannot be used (its first error).
    notes : tuple of str
        Findings about the file as a whole (columns not used, blank rows).
    """

    zones: tuple[str, ...]
    histories: dict[str, History] = field(default_factory=dict)
    reports: dict[str, HistoryReport] = field(default_factory=dict)
    failures: dict[str, str] = field(default_factory=dict)
    notes: tuple[str, ...] = ()

    @property
    def usable(self) -> tuple[str, ...]:
        """Zones with a valid history, in file order."""
        return tuple(z for z in self.zones if z in self.histories)


def zone_file_stem(zone: str) -> str:
    """The file name (without ``.json``) of a zone's model in a zones folder: the name with
    every character other than letters, digits, ``.``, ``_`` and ``-`` replaced by ``_``."""
    stem = re.sub(r"[^A-Za-z0-9._-]", "_", zone)
    return "_" + stem if stem.startswith(".") else stem


def check_zone_names(zones: list[str], where: str) -> None:
    """Refuse zone names that cannot name a model file or clash with the system total.

    Raises
    ------
    InputError
        For no zones, too many, an empty or over-long name, the name ``system``, or two names
        that give the same file name.
    """
    if not zones:
        raise InputError("The file has no zones", where=where, fix="Check the zone settings")
    if len(zones) > MAX_ZONES:
        raise InputError(
            f"The file has {len(zones)} zones; at most {MAX_ZONES} are allowed",
            where=where,
            fix="Split the zones over several files",
        )
    stems: dict[str, str] = {}
    for zone in zones:
        if not zone:
            raise InputError("A zone has an empty name", where=where, fix="Name every zone")
        if len(zone) > MAX_ZONE_NAME:
            raise InputError(
                f"The zone name {quote(zone)} is longer than {MAX_ZONE_NAME} characters",
                where=where,
                fix="Use shorter zone names",
            )
        if zone.casefold() == SYSTEM:
            raise InputError(
                f"A zone is named {quote(zone)}, the name the system total takes",
                where=where,
                fix="Rename that zone",
            )
        stem = zone_file_stem(zone).casefold()
        if stem in RESERVED_STEMS:
            raise InputError(
                f"The zone name {quote(zone)} is kept for the zones folder's own files",
                where=where,
                fix="Rename that zone",
            )
        if stem in stems:
            raise InputError(
                f"The zones {quote(stems[stem])} and {quote(zone)} would share one model file",
                where=where,
                fix="Rename one of them (names differing only in case or punctuation clash)",
            )
        stems[stem] = zone


@dataclass(frozen=True)
class _Table:
    """The file's records below the header, as text, with 1-based data row numbers."""

    header: list[str]
    records: list[list[str]]
    rows: np.ndarray
    notes: tuple[str, ...]


def _read_table(source: Any, wanted: list[str], label: str) -> _Table:
    """Header and data records of a zones file (the file policy and the table reader)."""
    if isinstance(source, str) and ("\n" in source or "\r" in source):
        text = source
    else:
        data, _ = files.read_bytes(source, what="zones history file")
        text = files.decode(data, what="zones history file", label=label).text
    lines = text.splitlines()
    if not any(line.strip() for line in lines):
        raise InputError(
            "The zones history file is empty",
            where=label,
            fix="Choose a file with a header and data rows",
        )
    delim = tables.detect_delimiter(lines, wanted)
    try:
        records = list(csv.reader(io.StringIO(text, newline=""), delimiter=delim))
    except csv.Error as exc:
        raise InputError(
            f"The file cannot be read as a table ({clip(exc)})",
            where=label,
            fix="Save the zones history as a plain CSV file with one row per line",
        ) from None
    at = tables.find_header(records, wanted)
    if at is None:
        first = next((rec for rec in records if any(c.strip() for c in rec)), [])
        names = [tables.norm_name(c) for c in first]
        missing = [w for w in wanted if tables.norm_name(w) not in names]
        raise InputError(
            f"The column(s) {quote_all(missing)} are not in the file; the columns found are "
            f"{quote_all(c.strip() for c in first)}",
            where=label,
            fix="Set the column options (--zone-col, --date-col, --demand-col, --temp-col...) "
            "to the file's names",
        )
    header = [c.strip().strip("\ufeff") for c in records[at]]
    data = records[at + 1 :]
    keep = [i for i, rec in enumerate(data) if "".join(rec).strip()]
    notes = []
    if at:
        notes.append(f"The first {at} line(s) before the header were ignored")
    if len(keep) < len(data):
        notes.append(f"{len(data) - len(keep)} blank row(s) were ignored")
    width = len(header)
    kept = [data[i] + [""] * (width - len(data[i])) for i in keep]
    return _Table(header, kept, np.asarray(keep, dtype=np.int64) + 1, tuple(notes))


def _column(header: list[str], name: str) -> int:
    normed = [tables.norm_name(c) for c in header]
    return normed.index(tables.norm_name(name))


def _zone_frame(
    table: _Table, picks: dict[str, int], select: np.ndarray | None = None
) -> pd.DataFrame:
    """A zone's cells as a text table named by the history settings, with file row numbers."""
    idx = np.arange(len(table.records)) if select is None else select
    out = pd.DataFrame(
        {
            name: pd.Series([table.records[i][pos].strip() for i in idx], dtype=object)
            for name, pos in picks.items()
        }
    )
    out.attrs["file_rows"] = table.rows[idx].tolist()
    return out


def _shared_picks(table: _Table, settings: HistorySettings, label: str) -> dict[str, int]:
    """Columns every zone shares: the date and, when named, the hour."""
    picks = {settings.date_col: _column(table.header, settings.date_col)}
    if settings.hour_col is not None:
        try:
            picks[settings.hour_col] = _column(table.header, settings.hour_col)
        except ValueError:
            raise InputError(
                f"The hour column {quote(settings.hour_col)} is not in the file",
                where=label,
                fix="Set --hour-col to the file's name for it, or leave it out",
            ) from None
    return picks


def _long_frames(
    table: _Table, layout: ZoneLayout, settings: HistorySettings, label: str
) -> dict[str, pd.DataFrame]:
    zone_at = _column(table.header, str(layout.zone_col))
    picks = _shared_picks(table, settings, label)
    for name in (settings.demand_col, settings.temp_col, settings.temp_min_col):
        if name is not None:
            picks[name] = _column(table.header, name)
    names = np.array([rec[zone_at].strip() for rec in table.records], dtype=object)
    blank = np.flatnonzero(names == "")
    if len(blank):
        rows = ", ".join(str(int(r)) for r in table.rows[blank[:10]])
        raise InputError(
            f"{len(blank)} row(s) have no zone name (data rows {rows})",
            where=f"{label}, column {quote(layout.zone_col)}",
            fix="Fill in the zone of every row, or remove those rows",
        )
    zones = list(dict.fromkeys(names.tolist()))
    check_zone_names(zones, f"{label}, column {quote(layout.zone_col)}")
    return {z: _zone_frame(table, picks, np.flatnonzero(names == z)) for z in zones}


def _pattern_regex(pattern: str) -> re.Pattern[str]:
    head, tail = pattern.split(ZONE_FIELD)
    return re.compile(re.escape(head.strip()) + "(.+)" + re.escape(tail.strip()), re.IGNORECASE)


def _wide_frames(
    table: _Table, layout: ZoneLayout, settings: HistorySettings, label: str
) -> dict[str, pd.DataFrame]:
    picks = _shared_picks(table, settings, label)
    patterns = {
        settings.demand_col: ("--wide-demand", layout.wide_demand),
        settings.temp_col: ("--wide-temp", layout.wide_temp),
    }
    if layout.wide_temp_min is not None:
        patterns[settings.temp_min_col or "temperature_min"] = (
            "--wide-temp-min",
            layout.wide_temp_min,
        )
    found: dict[str, dict[str, int]] = {}
    for setting, (option, pattern) in patterns.items():
        rx = _pattern_regex(str(pattern))
        matches: dict[str, int] = {}
        for pos, name in enumerate(table.header):
            m = rx.fullmatch(name.strip())
            if m and m.group(1).strip():
                matches.setdefault(m.group(1).strip(), pos)
        if not matches:
            raise InputError(
                f"No column matches the pattern {quote(pattern)}; the columns found are "
                f"{quote_all(table.header)}",
                where=f"{label}, {option}",
                fix=f"Write the pattern as the file names the columns, with {ZONE_FIELD} where "
                'the zone name is, e.g. "{zone}_Demand"',
            )
        found[setting] = matches
    demand_zones = list(found[settings.demand_col])
    temp_zones = set(found[settings.temp_col])
    no_temp = [z for z in demand_zones if z not in temp_zones]
    no_demand = [z for z in found[settings.temp_col] if z not in set(demand_zones)]
    for missing, has, lacks, option in (
        (no_temp, "demand", "temperature", "--wide-temp"),
        (no_demand, "temperature", "demand", "--wide-demand"),
    ):
        if missing:
            raise InputError(
                f"The zone(s) {quote_all(missing)} have a {has} column but no {lacks} column",
                where=f"{label}, {option}",
                fix=f"Add a {lacks} column for each zone, or check the pattern",
            )
    check_zone_names(demand_zones, f"{label}, --wide-demand")
    frames = {}
    for zone in demand_zones:
        zone_picks = dict(picks)
        for setting, matches in found.items():
            if zone not in matches:
                raise InputError(
                    f"The zone {quote(zone)} has no column matching {quote(patterns[setting][1])}",
                    where=f"{label}, {patterns[setting][0]}",
                    fix="Add the column, or leave the pattern out",
                )
            zone_picks[setting] = matches[zone]
        frames[zone] = _zone_frame(table, zone_picks)
    return frames


def read_zone_histories(
    source: Any,
    layout: ZoneLayout,
    settings: HistorySettings = HistorySettings(),  # noqa: B008
) -> ZoneHistories:
    """Read a zones history file into one validated history per zone.

    Parameters
    ----------
    source : path, file-like, bytes or CSV text
        The zones file (daily or sub-daily rows).
    layout : ZoneLayout
        Long (zone column) or wide (column patterns).
    settings : HistorySettings
        How to read each zone, as for a single history (column names, units, hour column,
        sub-daily aggregation, decimal mark...). In a wide file, ``demand_col`` and ``temp_col``
        only name the zones' columns inside the validator's report.

    Returns
    -------
    ZoneHistories
        A zone that fails validation is kept in ``failures`` with its first error and in
        ``reports`` with its full report; the others are in ``histories``.

    Raises
    ------
    InputError
        When the file itself cannot be used: unreadable, a column or pattern not found, rows
        without a zone, zone names that clash.
    """
    label = source_label(source)
    if isinstance(source, str) and ("\n" in source or "\r" in source):
        label = "zones history text"
    if layout.long:
        wanted = [settings.date_col, str(layout.zone_col), settings.demand_col, settings.temp_col]
        wanted += [c for c in (settings.hour_col, settings.temp_min_col) if c is not None]
    else:
        wanted = [settings.date_col] + ([settings.hour_col] if settings.hour_col else [])
    table = _read_table(source, wanted, label)
    if layout.long:
        frames = _long_frames(table, layout, settings, label)
    else:
        if layout.wide_temp_min is not None and settings.temp_min_col is None:
            settings = _with_temp_min(settings)
        frames = _wide_frames(table, layout, settings, label)
    histories: dict[str, History] = {}
    reports: dict[str, HistoryReport] = {}
    failures: dict[str, str] = {}
    for zone, frame in frames.items():
        try:
            history = read_history(frame, settings)
        except HistoryError as exc:
            reports[zone] = exc.report or HistoryReport((Issue("error", exc.problem),))
            failures[zone] = str(exc)
            continue
        histories[zone] = history
        reports[zone] = history.report
    return ZoneHistories(
        zones=tuple(frames),
        histories=histories,
        reports=reports,
        failures=failures,
        notes=table.notes,
    )


def _with_temp_min(settings: HistorySettings) -> HistorySettings:
    import dataclasses

    return dataclasses.replace(settings, temp_min_col="temperature_min")
