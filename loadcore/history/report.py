"""The history check's findings: :class:`Issue`, :class:`HistoryReport` and the collector.

Every change made to the data, and every row that is ignored, becomes an :class:`Issue`; nothing is
dropped silently. :class:`Collector` is the package's internal gatherer: one kind of issue is
listed for at most :data:`MAX_LISTED` rows, then one issue counts the rest.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import pandas as pd

from loadcore.errors import bounded

# How many issues of one kind are listed one by one before the rest are summarised in a count.
MAX_LISTED = 20


@dataclass(frozen=True)
class Issue:
    """One finding of the history check.

    Parameters
    ----------
    severity : {"error", "warning", "info"}
        Errors stop the history being used; warnings and infos describe changes made.
    message : str
        What was found.
    row : int or None
        1-based data row of the file (the first line after the header is row 1).
    date : str or None
        ISO date concerned.
    column : str or None
        Column concerned, as named in the file.
    fix : str
        What the user can do.
    """

    severity: str
    message: str
    row: int | None = None
    date: str | None = None
    column: str | None = None
    fix: str = ""

    def __post_init__(self) -> None:
        object.__setattr__(self, "message", bounded(str(self.message)))
        object.__setattr__(self, "fix", bounded(str(self.fix)))
        if self.column is not None:
            object.__setattr__(self, "column", bounded(str(self.column)))

    def where(self) -> str:
        """The place as plain text, e.g. ``"row 12, date 2024-01-05, column demand"``."""
        parts = []
        if self.row is not None:
            parts.append(f"row {self.row}")
        if self.date is not None:
            parts.append(f"date {self.date}")
        if self.column is not None:
            parts.append(f"column {self.column}")
        return ", ".join(parts)


@dataclass(frozen=True)
class HistoryReport:
    """Everything the check found, in the order found."""

    issues: tuple[Issue, ...] = ()

    @property
    def ok(self) -> bool:
        """True when there are no errors."""
        return not self.errors

    @property
    def errors(self) -> tuple[Issue, ...]:
        return tuple(i for i in self.issues if i.severity == "error")

    @property
    def warnings(self) -> tuple[Issue, ...]:
        return tuple(i for i in self.issues if i.severity == "warning")

    @property
    def infos(self) -> tuple[Issue, ...]:
        return tuple(i for i in self.issues if i.severity == "info")

    def to_frame(self) -> pd.DataFrame:
        """One row per issue: severity, row, date, column, message, fix."""
        columns = ["severity", "row", "date", "column", "message", "fix"]
        rows = [
            {
                "severity": i.severity,
                "row": i.row,
                "date": i.date,
                "column": i.column,
                "message": i.message,
                "fix": i.fix,
            }
            for i in self.issues
        ]
        frame = pd.DataFrame(rows, columns=columns)
        frame["row"] = frame["row"].astype("Int64")
        return frame

    def to_text(self) -> str:
        """A readable plain-text report, errors first."""
        counts = (len(self.errors), len(self.warnings), len(self.infos))
        lines = [
            f"History check: {counts[0]} error(s), {counts[1]} warning(s), {counts[2]} note(s)"
        ]
        for severity, label in (("error", "ERROR"), ("warning", "WARNING"), ("info", "NOTE")):
            for issue in self.issues:
                if issue.severity != severity:
                    continue
                where = issue.where()
                text = f"{label:<8}{issue.message}"
                if where:
                    text += f" [{where}]"
                if issue.fix:
                    text += f" -> {issue.fix}"
                lines.append(text)
        return "\n".join(lines)


class Collector:
    """Gathers issues; repeated issues of one kind are listed up to MAX_LISTED then counted.

    Internal to :mod:`loadcore.history`: every stage of the check adds to one collector.
    """

    def __init__(self) -> None:
        self.issues: list[Issue] = []

    def add(self, severity: str, message: str, *, fix: str = "", **where: Any) -> None:
        self.issues.append(Issue(severity, message, fix=fix, **where))

    def many(
        self,
        severity: str,
        make: Callable[[int], tuple[str, dict[str, Any]]],
        count: int,
        *,
        kind: str,
        fix: str,
        column: str | None = None,
        rows: Sequence[int] | None = None,
    ) -> None:
        """Add ``make(i)`` for the first MAX_LISTED of ``count`` cases and a summary of the rest."""
        for i in range(min(count, MAX_LISTED)):
            message, where = make(i)
            self.issues.append(Issue(severity, message, fix=fix, column=column, **where))
        if count > MAX_LISTED:
            rest = count - MAX_LISTED
            span = ""
            if rows is not None and len(rows) == count:
                span = f" (rows {rows[MAX_LISTED]} to {rows[-1]})"
            self.issues.append(
                Issue(
                    severity,
                    f"... and {rest} more {kind}{span}; {count} in all",
                    column=column,
                    fix=fix,
                )
            )

    @property
    def has_errors(self) -> bool:
        return any(i.severity == "error" for i in self.issues)

    def report(self) -> HistoryReport:
        return HistoryReport(tuple(self.issues))


def iso_date(stamp: Any) -> str | None:
    """``"YYYY-MM-DD"`` of a timestamp for an issue's place, or None for a missing one."""
    if stamp is None or pd.isna(stamp):
        return None
    return pd.Timestamp(stamp).strftime("%Y-%m-%d")
