"""Delimited text tables: the delimiter, the header row and the named columns of a CSV file.

One piece of code for every text table loadcore reads (histories and scenario files): the
delimiter is the comma, semicolon, tab or pipe whose split of an early line holds the wanted
column names (else the one :class:`csv.Sniffer` finds, else the most frequent), and the header is
the first of the early records that holds every wanted name, matched ignoring case, surrounding
spaces, quotes and byte-order marks.
"""

from __future__ import annotations

import csv
from collections.abc import Iterable, Sequence

#: The delimiters a table may use.
DELIMITERS = (",", ";", "\t", "|")

#: How many lines (and records) from the top may come before the header.
HEADER_SEARCH_LINES = 30


def norm_name(name: str) -> str:
    """A column name as matched: no surrounding spaces, quotes or byte-order mark, lower case."""
    return str(name).strip().strip("\ufeff").strip('"').strip().lower()


def detect_delimiter(lines: Sequence[str], wanted: Sequence[str]) -> str:
    """The delimiter whose split of an early line holds every wanted column, else sniffed."""
    wanted_n = [norm_name(w) for w in wanted]
    for line in lines[:HEADER_SEARCH_LINES]:
        for delim in DELIMITERS:
            cells = [norm_name(c) for c in line.split(delim)]
            if all(w in cells for w in wanted_n):
                return delim
    sample = "\n".join(lines[:50])
    try:
        return csv.Sniffer().sniff(sample, delimiters="".join(DELIMITERS)).delimiter
    except csv.Error:
        counts = {d: sum(line.count(d) for line in lines[:50]) for d in DELIMITERS}
        return max(counts, key=lambda d: counts[d]) if max(counts.values()) > 0 else ","


def find_header(records: Iterable[Sequence[str]], wanted: Sequence[str]) -> int | None:
    """Index of the first of the early records that holds every wanted column name, or None."""
    wanted_n = [norm_name(w) for w in wanted]
    for i, rec in enumerate(records):
        if i >= HEADER_SEARCH_LINES:
            return None
        cells = [norm_name(c) for c in rec]
        if all(w in cells for w in wanted_n):
            return i
    return None


def delimiter_name(delim: str) -> str:
    """The delimiter as a message names it."""
    return {"\t": "tab", ",": "comma", ";": "semicolon", "|": "pipe"}.get(delim, repr(delim))
