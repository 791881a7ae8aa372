"""Read, check and tidy a demand history into a complete daily table.

The reader accepts a CSV file (comma, semicolon, tab or pipe delimited; most common date formats,
with or without times), a file-like object, raw bytes or a DataFrame. Sub-daily data (hourly,
half-hourly, ...) is aggregated to daily values. Every change made to the data, and every row that
is ignored, is listed in the :class:`HistoryReport`; nothing is dropped silently.

Inside loadcore temperatures are in °C; a file in °F is converted here, at the edge.

Modules, in the order the data flows: ``settings`` (:class:`HistorySettings`), ``reading``
(source -> raw columns), ``parsing`` (dates, numbers), ``hours`` (an hour or time-of-day
column), ``subdaily`` (sub-daily readings to daily values, daylight-saving days), ``daily`` (one
row per date, the complete daily table), ``table`` (:class:`History`, the fingerprint,
:func:`history_from_frame`), ``check`` (the pipeline, :func:`check_history`,
:func:`read_history`); ``report`` (:class:`Issue`, :class:`HistoryReport`) is shared by all.
"""

from loadcore.history.check import check_history, read_history
from loadcore.history.report import MAX_LISTED, HistoryReport, Issue
from loadcore.history.settings import HistorySettings
from loadcore.history.table import History, history_from_frame

__all__ = [
    "MAX_LISTED",
    "History",
    "HistoryReport",
    "HistorySettings",
    "Issue",
    "check_history",
    "history_from_frame",
    "read_history",
]
