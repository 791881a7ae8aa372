"""Temperature units: the one place that parses "C"/"F", converts values and formats them.

Inside loadcore every temperature is in °C. A user's unit is parsed once at the edge (a CLI option,
an app control, a file setting) with :func:`parse_unit` and the resulting ``"C"`` or ``"F"`` is
passed down; code below the edges converts only through the functions here.

Two kinds of quantity are converted differently (exact definitions, common practice, no source):

- a *temperature* (a point on the scale): F = C x 9/5 + 32;
- a *temperature difference* or a per-degree effect: 1 °C step = 1.8 °F steps, so a difference
  in °F is 1.8 times the one in °C, and an effect per °F is the effect per °C divided by 1.8.
"""

from __future__ import annotations

from typing import Any, Literal

import numpy as np

from loadcore.errors import InputError

Unit = Literal["C", "F"]

#: The units a user may choose.
UNITS: tuple[Unit, ...] = ("C", "F")

#: °F steps per °C step (exact definition of the Fahrenheit scale).
F_PER_C = 1.8

#: °F at 0 °C (exact definition of the Fahrenheit scale).
F_AT_ZERO_C = 32.0

#: Plausibility limits for a daily temperature at a populated place, °C: beyond these a value is
#: almost surely a unit or typing mistake (common practice, no source; the recorded extremes lie
#: inside). The one copy: histories, scenarios and model settings all check against it.
PLAUSIBLE_MIN_C = -60.0
PLAUSIBLE_MAX_C = 60.0


def parse_unit(text: Any, *, where: str = "temperature unit") -> Unit:
    """``"C"`` or ``"F"`` from a user's text (``"c"``, ``"°F"``, ``" F "``, ``"Celsius"``...).

    Raises
    ------
    InputError
        For anything else, naming where the value came from.
    """
    raw = "" if text is None else str(text)
    unit = raw.strip().upper().lstrip("°").strip()
    unit = {"CELSIUS": "C", "FAHRENHEIT": "F", "DEGC": "C", "DEGF": "F"}.get(unit, unit)
    if unit not in UNITS:
        shown = raw.strip()[:20] or "(blank)"
        raise InputError(
            f"'{shown}' is not a temperature unit",
            where=where,
            fix="Use C for degrees Celsius or F for degrees Fahrenheit",
        )
    return unit  # type: ignore[return-value]


def symbol(unit: Unit) -> str:
    """``"°C"`` or ``"°F"``."""
    return f"°{unit}"


def _numeric(values: Any) -> Any:
    return np.asarray(values, dtype=float) if isinstance(values, list | tuple) else values


def c_to_f(temperature_c: Any) -> Any:
    """Temperatures in °C to °F (F = C x 9/5 + 32); scalars, lists, arrays and Series alike."""
    # Written as x 9 / 5 (not x 1.8) so that results match earlier versions bit for bit.
    return _numeric(temperature_c) * 9.0 / 5.0 + F_AT_ZERO_C


def f_to_c(temperature_f: Any) -> Any:
    """Temperatures in °F to °C (C = (F - 32) x 5/9); scalars, lists, arrays and Series alike."""
    # Written as x 5 / 9 (not / 1.8) so that fingerprints of °F histories match earlier versions.
    return (_numeric(temperature_f) - F_AT_ZERO_C) * 5.0 / 9.0


def to_unit(temperature_c: Any, unit: Unit) -> Any:
    """Temperatures in °C shown in ``unit``."""
    return c_to_f(temperature_c) if unit == "F" else temperature_c


def from_unit(temperature: Any, unit: Unit) -> Any:
    """Temperatures given in ``unit`` to °C."""
    return f_to_c(temperature) if unit == "F" else temperature


def delta_to_unit(delta_c: Any, unit: Unit) -> Any:
    """A temperature *difference* in °C expressed in ``unit`` (x 1.8 for °F)."""
    return _numeric(delta_c) * F_PER_C if unit == "F" else delta_c


def delta_from_unit(delta: Any, unit: Unit) -> Any:
    """A temperature *difference* given in ``unit`` to °C (/ 1.8 for °F)."""
    return _numeric(delta) / F_PER_C if unit == "F" else delta


def per_degree_to_unit(effect_per_c: Any, unit: Unit) -> Any:
    """An effect per °C expressed per degree of ``unit`` (/ 1.8 for °F)."""
    return effect_per_c / F_PER_C if unit == "F" else effect_per_c


def format_temp(temperature_c: float, unit: Unit, digits: int = 1) -> str:
    """One temperature for display, e.g. ``"41.0 °C"`` or ``"105.8 °F"``."""
    value = float(to_unit(float(temperature_c), unit))
    return f"{value:.{digits}f} {symbol(unit)}"


def format_delta(delta_c: float, unit: Unit, digits: int = 1) -> str:
    """One temperature difference for display, e.g. ``"2.5 °C"`` or ``"4.5 °F"``."""
    value = float(delta_to_unit(float(delta_c), unit))
    return f"{value:.{digits}f} {symbol(unit)}"


def format_range(low_c: float, high_c: float, unit: Unit, digits: int = 1) -> str:
    """A temperature range for display, e.g. ``"-8.4 °C to 42.9 °C"``."""
    return f"{format_temp(low_c, unit, digits)} to {format_temp(high_c, unit, digits)}"


def temperature_column(unit: Unit) -> str:
    """Name of a table's temperature column in ``unit``: ``temperature_c`` or ``temperature_f``."""
    return f"temperature_{unit.lower()}"


def out_of_range_column(unit: Unit) -> str:
    """Name of the distance-outside-the-range column: ``out_of_range_by_c`` or ``_by_f``."""
    return f"out_of_range_by_{unit.lower()}"


def rounded(values: Any, digits: int = 1) -> np.ndarray:
    """Temperatures rounded for tables and CSVs (0.1 degree by default)."""
    return np.round(np.asarray(values, dtype=float), digits)
