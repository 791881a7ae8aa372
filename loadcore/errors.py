"""One exception family, with messages written for a planner.

Every error says what is wrong, where (file, row, date or column) and how to fix it.
The CLI prints ``str(error)`` as one line; the app shows it inline.
"""

from __future__ import annotations


class LoadcoreError(Exception):
    """Base class for every error loadcore raises on purpose.

    Parameters
    ----------
    problem : str
        What is wrong, in plain words.
    where : str, optional
        The place: a file, a row number, a date, a column.
    fix : str, optional
        What the user can do about it.
    """

    def __init__(self, problem: str, *, where: str | None = None, fix: str | None = None):
        self.problem = problem
        self.where = where
        self.fix = fix
        super().__init__(self.message)

    @property
    def message(self) -> str:
        text = self.problem.rstrip(".")
        if self.where:
            text = f"{text} ({self.where})"
        text += "."
        if self.fix:
            text += f" {self.fix.rstrip('.')}."
        return text

    def __str__(self) -> str:  # pragma: no cover - trivial
        return self.message


class InputError(LoadcoreError):
    """A file, a setting or a value given by the user is not usable."""


class HistoryError(InputError):
    """The demand history has errors. ``report`` holds the full validation report."""

    def __init__(
        self, problem: str, *, report=None, where: str | None = None, fix: str | None = None
    ):
        self.report = report
        super().__init__(problem, where=where, fix=fix)


class ScenarioError(InputError):
    """A scenario (dates, temperatures, day types) cannot be forecast as given."""


class ModelError(LoadcoreError):
    """Fitting or loading a model failed."""
