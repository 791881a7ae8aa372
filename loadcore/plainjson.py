"""The one converter to plain JSON values, and the one JSON reader with a depth limit.

Every JSON that loadcore writes (model files, scenario definitions, library rows, ``--json``
outputs) goes through :func:`to_plain`; every JSON it reads from a user's file goes through
:func:`loads`, which refuses nesting deeper than any file of ours can have before Python's own
parser would recurse into trouble.
"""

from __future__ import annotations

import json
import math
from collections.abc import Mapping
from dataclasses import fields, is_dataclass
from datetime import date, datetime
from typing import Any, Literal

import numpy as np
import pandas as pd

from loadcore import files
from loadcore.errors import InputError, clip

#: Deepest nesting of arrays and objects accepted in a JSON file (our files need 6; our choice).
MAX_DEPTH = 32


def to_plain(value: Any, *, nonfinite: Literal["null", "error"] = "null", where: str = "") -> Any:
    """``value`` as plain JSON types (dict, list, str, int, float, bool, None).

    numpy scalars and arrays, pandas Timestamps, Series and Index, dates, dataclasses, tuples and
    sets are converted; NaN and NaT become null. A day (a Timestamp at midnight, a ``date``) is
    written ``YYYY-MM-DD``, other times in ISO 8601.

    Parameters
    ----------
    nonfinite : {"null", "error"}
        What an infinite number becomes: null, or an :class:`InputError` naming ``where``.
    """

    def plain(v: Any) -> Any:
        if v is None or isinstance(v, str):
            return v
        if isinstance(v, bool | np.bool_):
            return bool(v)
        if isinstance(v, int | np.integer):
            return int(v)
        if isinstance(v, float | np.floating):
            number = float(v)
            if math.isnan(number):
                return None
            if math.isinf(number):
                if nonfinite == "error":
                    raise InputError(
                        "A value is infinite and cannot be stored",
                        where=where or None,
                        fix="Check the inputs for infinite or missing numbers",
                    )
                return None
            return number
        if v is pd.NaT:
            return None
        if isinstance(v, pd.Timestamp | np.datetime64):
            ts = pd.Timestamp(v)
            if ts is pd.NaT:
                return None
            return ts.strftime("%Y-%m-%d") if ts == ts.normalize() else ts.isoformat()
        if isinstance(v, datetime):
            return plain(pd.Timestamp(v))
        if isinstance(v, date):
            return v.isoformat()
        if is_dataclass(v) and not isinstance(v, type):
            to_dict = getattr(v, "to_dict", None)
            if callable(to_dict):
                return plain(to_dict())
            return {f.name: plain(getattr(v, f.name)) for f in fields(v)}
        if isinstance(v, Mapping):
            return {str(k): plain(x) for k, x in v.items()}
        if isinstance(v, set | frozenset):
            return [plain(x) for x in sorted(v, key=str)]
        if isinstance(v, list | tuple | np.ndarray | pd.Index | pd.Series):
            return [plain(x) for x in list(v)]
        if pd.api.types.is_scalar(v) and pd.isna(v):
            return None
        return str(v)

    return plain(value)


def dumps(
    value: Any, *, nonfinite: Literal["null", "error"] = "null", where: str = "", **kwargs: Any
) -> str:
    """``json.dumps(to_plain(value))``, never writing NaN or Infinity.

    ``nonfinite`` and ``where`` are passed to :func:`to_plain`; other keywords to ``json.dumps``.
    """
    plain = to_plain(value, nonfinite=nonfinite, where=where)
    return json.dumps(plain, allow_nan=False, **kwargs)


def _depth_ok(text: str, limit: int) -> bool:
    depth = 0
    in_string = False
    escaped = False
    for ch in text:
        if in_string:
            if escaped:
                escaped = False
            elif ch == "\\":
                escaped = True
            elif ch == '"':
                in_string = False
        elif ch == '"':
            in_string = True
        elif ch in "[{":
            depth += 1
            if depth > limit:
                return False
        elif ch in "]}":
            depth -= 1
    return True


def loads(text: str | bytes, *, what: str = "JSON file", max_depth: int = MAX_DEPTH) -> Any:
    """Parse JSON from a user's file, refusing deep nesting, NaN/Infinity and bad text.

    A UTF-8 byte-order mark at the start is accepted.

    Raises
    ------
    InputError
        When the text is not JSON, nests deeper than ``max_depth``, or holds NaN or Infinity.
    """
    if isinstance(text, bytes | bytearray):
        reason = files.not_text_reason(bytes(text[:8192]), expected="a JSON file")
        if reason:
            raise InputError(
                f"The {what} is {reason}",
                fix="Use a file written by loadcore (JSON text in UTF-8)",
            )
        try:
            text = bytes(text).decode("utf-8-sig")
        except UnicodeDecodeError:
            raise InputError(
                f"The {what} is not UTF-8 text", fix="Use a file written by loadcore"
            ) from None
    text = str(text).lstrip("\ufeff")
    if not _depth_ok(text, max_depth):
        raise InputError(
            f"The {what} nests lists or objects more than {max_depth} deep",
            fix="Use a file written by loadcore; this one was not",
        )

    def refuse(token: str) -> Any:
        raise ValueError(f"{token} is not allowed")

    try:
        return json.loads(text, parse_constant=refuse)
    except json.JSONDecodeError as exc:
        raise InputError(
            f"The {what} is not valid JSON",
            where=f"line {exc.lineno}, column {exc.colno}",
            fix="Use a file written by loadcore",
        ) from None
    except (ValueError, RecursionError) as exc:
        raise InputError(
            f"The {what} is not valid JSON ({clip(exc)})", fix="Use a file written by loadcore"
        ) from None
