"""The number layout of a column, decided once from all its values: decimal point or comma.

``"1,442"`` is 1442 in a file that writes ``"1,441.5"`` and 1.442 in one that writes ``"12,5"``;
no single cell can tell. So every cell of a column is classed first (:func:`evidence`), the layout
is decided for the whole column (:func:`decide`), using the file's other number column when this
one holds no telling value, and only then are the cells read (:func:`to_numbers`). A column whose
values disagree, or whose layout nothing in the file decides, is an error that says so; the
setting ``decimal`` (``"."`` or ``","``) decides it by hand.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np
import pandas as pd

from loadcore.errors import quote

#: The two decimal marks.
DECIMALS = (".", ",")

_SIGN = r"[+-]?"
_POINT_AMBIGUOUS = re.compile(rf"^{_SIGN}\d{{1,3}}\.\d{{3}}$")  # 1.442: decimal, or 1442?
_COMMA_AMBIGUOUS = re.compile(rf"^{_SIGN}\d{{1,3}},\d{{3}}$")  # 1,442: 1442, or 1.442?
_COMMA_GROUPS = re.compile(rf"^{_SIGN}\d{{1,3}}(,\d{{3}}){{2,}}$")  # 1,234,567
_POINT_GROUPS = re.compile(rf"^{_SIGN}\d{{1,3}}(\.\d{{3}}){{2,}}$")  # 1.234.567
_COMMA_GROUPS_POINT = re.compile(rf"^{_SIGN}\d{{1,3}}(,\d{{3}})+\.\d*$")  # 1,441.5
_POINT_GROUPS_COMMA = re.compile(rf"^{_SIGN}\d{{1,3}}(\.\d{{3}})+,\d*$")  # 1.441,5
_COMMA_DECIMAL = re.compile(rf"^{_SIGN}\d*,\d+$")  # 12,5 (not three digits after one group)
_POINT_NUMBER = re.compile(rf"^{_SIGN}\d*\.\d+([eE][+-]?\d+)?$|^{_SIGN}\d+\.$")  # 1441.5
_SEPARATORS = re.compile(r"[\s_\u2009\u202f]")


def clean(cell: str) -> str:
    """A cell without spaces and underscores (they group digits and mean nothing else)."""
    return _SEPARATORS.sub("", cell)


@dataclass(frozen=True)
class Evidence:
    """An example cell of each telling kind in a column ("" when there is none)."""

    point: str = ""
    comma: str = ""
    either: str = ""

    @property
    def decimal(self) -> str | None:
        """The decimal mark the column shows on its own, or None (none or both)."""
        if self.point and not self.comma:
            return "."
        if self.comma and not self.point:
            return ","
        return None


def evidence(cells: pd.Series) -> Evidence:
    """An example of each telling kind among a column's cleaned, non-blank cells.

    ``point``: only a decimal point reads it (``1,441.5``, ``1,234,567``, ``1441.5``);
    ``comma``: only a decimal comma (``12,5``, ``1.441,5``, ``1.234.567``); ``either``: a comma
    that may group thousands or be the decimal mark (``1,442``). Plain numbers (``1442``) and
    ``1.442`` (read with a decimal point unless the column uses a decimal comma) tell nothing.
    """
    text = pd.Series(pd.unique(cells.astype(str)), dtype=object)
    text = text[text.str.contains(r"[.,]", regex=True)]
    if text.empty:
        return Evidence()
    either = text.str.match(_COMMA_AMBIGUOUS)
    point = (
        text.str.match(_COMMA_GROUPS)
        | text.str.match(_COMMA_GROUPS_POINT)
        | (text.str.match(_POINT_NUMBER) & ~text.str.match(_POINT_AMBIGUOUS))
    )
    comma = (
        text.str.match(_POINT_GROUPS)
        | text.str.match(_POINT_GROUPS_COMMA)
        | (text.str.match(_COMMA_DECIMAL) & ~either)
    )

    def first(mask: pd.Series) -> str:
        return str(text[mask].iloc[0]) if mask.any() else ""

    return Evidence(point=first(point), comma=first(comma), either=first(either))


@dataclass(frozen=True)
class Decision:
    """The decimal mark of a column, and why (for the report); ``problem`` when undecidable."""

    decimal: str = "."
    note: str = ""
    problem: str = ""
    fix: str = ""


def decide(own: Evidence, other: Evidence | None, label: str, forced: str | None) -> Decision:
    """The decimal mark of a column from its own cells, else from the file's other column."""
    if forced is not None:
        return Decision(forced)
    if own.point and own.comma:
        return Decision(
            problem=f"The {label} column mixes number layouts: {quote(own.point)} is written with a "
            f"decimal point and {quote(own.comma)} with a decimal comma",
            fix="Write every number of the column in one layout, or set decimal to '.' or ','",
        )
    mark = own.decimal
    source = "its own values"
    if mark is None and own.either and other is not None and other.decimal is not None:
        mark, source = other.decimal, "the file's other number column"
    if mark is None and own.either:
        return Decision(
            problem=f"The {label} column has numbers such as {quote(own.either)}, which could be "
            f"{own.either.replace(',', '')} (a comma grouping thousands) or "
            f"{own.either.replace(',', '.')} (a decimal comma), and nothing in the file tells "
            "which",
            fix="Set decimal to '.' (CLI --decimal .) if the comma groups thousands, or to ',' "
            "for a decimal comma; or write the numbers without thousands separators",
        )
    mark = mark or "."
    example = own.either or (own.comma if mark == "," else own.point)
    note = ""
    if example and ("," in example):
        value = to_numbers(pd.Series([example]), mark)[0]
        role = "a decimal comma" if mark == "," else "a comma grouping thousands"
        note = (
            f"The {label} column uses {role} ({quote(example)} was read as {value:g}), decided from "
            f"{source}"
        )
    return Decision(mark, note=note)


def to_numbers(cells: pd.Series, decimal: str) -> np.ndarray:
    """Floats of cleaned cells written with the decimal mark ``decimal`` (NaN where not a
    number in that layout)."""
    group = "," if decimal == "." else "."
    text = cells.astype(str)
    grouped = text.str.contains(group, regex=False)
    valid_groups = text[grouped].str.match(rf"^{_SIGN}\d{{1,3}}(\{group}\d{{3}})+(\{decimal}\d*)?$")
    text = text.where(~grouped | valid_groups.reindex(text.index, fill_value=False), "x")
    text = text.str.replace(group, "", regex=False)
    if decimal == ",":
        text = text.where(~text.str.contains(".", regex=False), "x").str.replace(
            ",", ".", regex=False
        )
    return np.array(pd.to_numeric(text, errors="coerce"), dtype=float)
