"""Hard limits on single values, whatever their source (a script, a CLI option, a model file).

A value read from a file is never trusted: a model file that says ``"workers": 1000000000`` or
``"log": "false"`` must be refused (or, for the worker count, lowered to what this machine has),
not obeyed. The settings classes (:class:`~loadcore.model.FitSettings`,
:class:`~loadcore.model.TermSpec`, :class:`~loadcore.history.HistorySettings`) check their
fields with these functions in their constructors, so every way of building them is checked.
"""

from __future__ import annotations

import math
import numbers
import os
from typing import Any

import numpy as np

from loadcore.errors import InputError, quote


def machine_cores() -> int:
    """Processor cores this process may use (at least 1): the hard limit on worker processes."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except (AttributeError, OSError):
        return max(1, os.cpu_count() or 1)


def whole_number(value: Any, name: str, low: int, high: int, *, where: str) -> int:
    """``value`` as an int in ``low..high``; bools, fractions and text are refused.

    Raises
    ------
    InputError
        Naming ``name`` and ``where``, with the allowed range.
    """
    if (
        isinstance(value, bool)
        or not isinstance(value, numbers.Integral)
        or not low <= int(value) <= high
    ):
        raise InputError(
            f"{name} must be a whole number from {low} to {high}, got {quote(value)}",
            where=where,
            fix=f"Give a whole number from {low} to {high}",
        )
    return int(value)


def real_number(value: Any, name: str, low: float, high: float, *, where: str) -> float:
    """``value`` as a finite float in ``low..high``; bools and text are refused."""
    if (
        isinstance(value, bool)
        or not isinstance(value, numbers.Real)
        or not math.isfinite(float(value))
        or not low <= float(value) <= high
    ):
        raise InputError(
            f"{name} must be a number from {low:g} to {high:g}, got {quote(value)}",
            where=where,
            fix=f"Give a number from {low:g} to {high:g}",
        )
    return float(value)


def flag(value: Any, name: str, *, where: str) -> bool:
    """``value`` if it is a real bool (``"false"`` in a file is text, not false)."""
    if isinstance(value, np.bool_):
        return bool(value)
    if not isinstance(value, bool):
        raise InputError(
            f"{name} must be true or false, got {quote(value)}",
            where=where,
            fix="Give true or false (not text such as 'false')",
        )
    return value


def one_of(value: Any, name: str, choices: tuple[str, ...], *, where: str) -> str:
    """``value`` if it is one of the ``choices`` (text)."""
    if not isinstance(value, str) or value not in choices:
        raise InputError(
            f"Unknown {name} {quote(value)}",
            where=where,
            fix=f"Use one of: {', '.join(choices)}",
        )
    return value


def text(value: Any, name: str, most: int, *, where: str) -> str:
    """``value`` if it is text of at most ``most`` characters."""
    if not isinstance(value, str) or len(value) > most:
        shown = f"{len(value)} characters" if isinstance(value, str) else quote(value)
        raise InputError(
            f"{name} must be text of at most {most} characters, got {shown}",
            where=where,
            fix=f"Give a short text (at most {most} characters)",
        )
    return value
