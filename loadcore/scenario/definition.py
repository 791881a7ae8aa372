"""The scenario definition file: a scenario as plain JSON, written and read back.

A definition is ``{"kind": "loadcore scenario", "version": 1, "name": ..., "days": [{"date":
"YYYY-MM-DD", "temperature_c": number, "day_type": name | null}, ...]}``, null meaning "from the
calendar". The scenario library stores scenarios in this form and the app's scenario download
writes it. This module turns a definition into its pieces and back; the
:class:`~loadcore.scenario.Scenario` constructor checks the pieces.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

from .. import plainjson
from ..errors import InputError, ScenarioError, quote
from .values import iso, parse_date

#: Identifies a scenario definition file written by :meth:`Scenario.to_dict`.
DEFINITION_KIND = "loadcore scenario"
DEFINITION_VERSION = 1

_WHERE = "scenario definition"


def definition(
    name: str,
    dates: Sequence[Any],
    temperature_c: Sequence[float],
    day_types: Sequence[str],
    temperature_min_c: Sequence[float] | None = None,
) -> dict[str, Any]:
    """The definition of a scenario's pieces ("" day types and NaN minima become null; a
    scenario without minima has no ``temperature_min_c`` entries)."""
    days = [
        {"date": iso(d), "temperature_c": float(t), "day_type": dt if dt else None}
        for d, t, dt in zip(dates, temperature_c, day_types, strict=True)
    ]
    if temperature_min_c is not None:
        for day, low in zip(days, temperature_min_c, strict=True):
            day["temperature_min_c"] = None if math.isnan(low) else float(low)
    return {
        "kind": DEFINITION_KIND,
        "version": DEFINITION_VERSION,
        "name": name,
        "days": days,
    }


def pieces(data: Any) -> tuple[str, list, list, list, list | None]:
    """Name, dates, temperatures (as written), day types and minima (None when no day has
    ``temperature_min_c``) of a definition.

    Raises
    ------
    ScenarioError
        When the definition is not one loadcore wrote, or a day lacks its date or temperature.
    """
    if not isinstance(data, dict) or data.get("kind") != DEFINITION_KIND:
        raise ScenarioError(
            "This is not a loadcore scenario definition",
            where=_WHERE,
            fix="Upload a file saved from loadcore's scenario download",
        )
    version = data.get("version")
    if version != DEFINITION_VERSION:
        raise ScenarioError(
            f"Scenario definition version {quote(version)} is not supported",
            where=_WHERE,
            fix=f"Save the scenario again with this loadcore (version {DEFINITION_VERSION})",
        )
    days = data.get("days")
    if not isinstance(days, list) or not days:
        raise ScenarioError(
            "The scenario definition has no days", where=_WHERE, fix="Add at least one day"
        )
    dates, temps, types, minima = [], [], [], []
    for i, day in enumerate(days, start=1):
        if not isinstance(day, dict) or "date" not in day or "temperature_c" not in day:
            raise ScenarioError(
                "A day entry needs a date and a temperature_c",
                where=f"{_WHERE}, day {i}",
                fix="Give each day as {'date': 'YYYY-MM-DD', 'temperature_c': number}",
            )
        dates.append(parse_date(day["date"], f"{_WHERE}, day {i}"))
        temps.append(day["temperature_c"])
        types.append(day.get("day_type"))
        minima.append(day.get("temperature_min_c"))
    given = any(day.get("temperature_min_c") is not None for day in days)
    return str(data.get("name") or "scenario"), dates, temps, types, minima if given else None


def parse_json(text: str | bytes) -> Any:
    """The JSON of a definition file, through loadcore's one depth-capped reader."""
    try:
        return plainjson.loads(text, what=_WHERE)
    except InputError as exc:
        raise ScenarioError(
            exc.problem,
            where=f"{_WHERE}, {exc.where}" if exc.where else _WHERE,
            fix="Upload a file saved from loadcore's scenario download",
        ) from None
