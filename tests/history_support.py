"""Shared builders for the history tests: small clean tables and the CSV lines they make."""

from __future__ import annotations

import numpy as np
import pandas as pd

from loadcore.history import (
    HistoryReport,
    HistorySettings,
    Issue,
)

START = "2023-01-01"


def table(n: int = 400, start: str = START) -> pd.DataFrame:
    """A small clean daily table: demand in MW, temperature in °C."""
    dates = pd.date_range(start, periods=n, freq="D")
    i = np.arange(n)
    return pd.DataFrame(
        {
            "date": dates,
            "demand": np.round(1000 + 50 * np.sin(i / 9) + 3 * (i % 7), 1),
            "temperature": np.round(15 + 12 * np.sin(2 * np.pi * i / 365), 1),
        }
    )


def to_csv(
    frame: pd.DataFrame,
    *,
    fmt: str = "%Y-%m-%d",
    sep: str = ",",
    header: tuple[str, str, str] = ("date", "demand", "temperature"),
) -> list[str]:
    """Lines of a CSV (header first), values written as given."""
    lines = [sep.join(header)]
    for d, m, t in zip(frame["date"], frame["demand"], frame["temperature"], strict=True):
        m_text = "" if pd.isna(m) else str(m)
        t_text = "" if pd.isna(t) else str(t)
        lines.append(sep.join([pd.Timestamp(d).strftime(fmt), m_text, t_text]))
    return lines


def as_bytes(lines: list[str]) -> bytes:
    return ("\n".join(lines) + "\n").encode()


def clean_bytes(n: int = 400, **kw) -> bytes:
    return as_bytes(to_csv(table(n), **kw))


def only(report: HistoryReport, severity: str, words: str) -> list[Issue]:
    return [i for i in report.issues if i.severity == severity and words in i.message]


def hourly_lines(days: int = 370, per_day: int = 24, drop: tuple[int, ...] = ()) -> list[str]:
    stamps = pd.date_range(START, periods=days * per_day, freq=pd.Timedelta(days=1) / per_day)
    k = np.arange(len(stamps))
    demand = 800 + (k % per_day) * 10.0  # rises through the day: peak is the last interval
    temp = 5 + (k % per_day) * 0.5
    lines = ["timestamp,load,temp"]
    for j, (s, m, t) in enumerate(zip(stamps, demand, temp, strict=True)):
        if j not in drop:
            lines.append(f"{s:%d/%m/%Y %H:%M},{m},{t}")
    return lines


SUBDAILY = HistorySettings(date_col="timestamp", demand_col="load", temp_col="temp")
