"""One exception family, with messages written for a planner.

Every error says what is wrong, where (file, row, date or column) and how to fix it.
The CLI prints ``str(error)`` as one line; the app shows it inline. A message never echoes
unbounded input: :func:`quote` and :func:`clip` cut what is quoted of the user's text to
:data:`QUOTE_CHARS` characters, and each part of a message is cut at :data:`MAX_PART_CHARS` as a
last guard.
"""

from __future__ import annotations

from typing import Any

#: Longest piece of the user's text quoted back in a message, characters (our choice).
QUOTE_CHARS = 80

#: Longest problem, place or fix of one message, characters: a last guard for messages that
#: list many quoted pieces (our choice).
MAX_PART_CHARS = 600


def clip(text: Any, limit: int = QUOTE_CHARS) -> str:
    """``text`` folded onto one line and cut to ``limit`` characters (an ellipsis marks a cut).

    Parameters
    ----------
    text : Any
        The user's text (anything is turned into ``str`` first).
    limit : int
        Most characters kept, ellipsis included.
    """
    flat = " ".join(str(text).split())
    return flat if len(flat) <= limit else flat[: max(limit - 1, 0)] + "\u2026"


def quote(value: Any, limit: int = QUOTE_CHARS) -> str:
    """A value as a message quotes it: text in quotes and cut by :func:`clip`, other values as
    ``repr`` cut to ``limit`` characters."""
    if isinstance(value, str):
        return repr(clip(value, limit))
    return clip(repr(value), limit)


def quote_all(values: Any, most: int = 12) -> str:
    """Values as a message lists them: each quoted by :func:`quote`, at most ``most`` of them,
    then how many more there are; ``"none"`` for no values."""
    items = list(values)
    if not items:
        return "none"
    shown = ", ".join(quote(v, 40) for v in items[:most])
    return shown + (f" and {len(items) - most} more" if len(items) > most else "")


def bounded(text: str) -> str:
    """``text`` cut at :data:`MAX_PART_CHARS` characters (the last guard of every message)."""
    return text if len(text) <= MAX_PART_CHARS else text[: MAX_PART_CHARS - 1] + "\u2026"


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
        self.problem = bounded(str(problem))
        self.where = None if where is None else bounded(str(where))
        self.fix = None if fix is None else bounded(str(fix))
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
