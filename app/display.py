"""Display helpers for the pages: temperatures in the chosen unit, messages and cautions.

Temperatures are converted and formatted by :mod:`loadcore.units` in the unit the session holds
(:func:`app.state.temp_unit`); every caution and note is :mod:`loadcore.texts` wording. Nothing
here writes the session.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from typing import Any

import numpy as np
import pandas as pd
import streamlit as st

from app import state
from app.plain import md
from loadcore import texts, units
from loadcore.errors import HistoryError, LoadcoreError

# --------------------------------------------------------------------------------------------
# Temperature units (°C inside, °F only at the edges; loadcore.units converts and formats)
# --------------------------------------------------------------------------------------------


def unit_symbol(unit: units.Unit | None = None) -> str:
    """``"°C"`` or ``"°F"``."""
    return units.symbol(unit or state.temp_unit())


def to_display(values_c):
    """Temperatures in °C converted to the display unit (arrays, Series or floats)."""
    return units.to_unit(values_c, state.temp_unit())


def from_display(values):
    """Temperatures typed in the display unit converted to °C."""
    return units.from_unit(values, state.temp_unit())


def delta_to_display(delta_c: float) -> float:
    """A temperature difference in °C in the display unit (a °F step is 5/9 of a °C step)."""
    return float(units.delta_to_unit(float(delta_c), state.temp_unit()))


def delta_from_display(delta: float) -> float:
    """A temperature difference typed in the display unit, in °C."""
    return float(units.delta_from_unit(float(delta), state.temp_unit()))


def fmt_temp(value_c: float, digits: int = 1) -> str:
    """A temperature in °C as display text, e.g. ``"41.0 °C"`` or ``"105.8 °F"``."""
    return units.format_temp(value_c, state.temp_unit(), digits)


def fmt_delta(delta_c: float, digits: int = 1) -> str:
    """A temperature difference in °C as display text."""
    return units.format_delta(delta_c, state.temp_unit(), digits)


def temperature_input(
    where: Any,
    label: str,
    *,
    key: str,
    default_c: float,
    difference: bool = False,
    **options: Any,
) -> float:
    """A number input showing a temperature in the display unit; returns the value in °C.

    The value is kept in °C by :func:`app.state.typed_temperature`, so switching °C/°F changes
    what the input shows and not the temperature.

    Parameters
    ----------
    where : streamlit container
        Where to draw it (``st``, a column, a form).
    label : str
        The label; the unit symbol is added (``"Peak daily high, °F"``).
    key : str
        The widget key.
    default_c : float
        The value before anything is typed, °C (a °C difference when ``difference``).
    difference : bool, default False
        A temperature difference (a shift, a warming).
    **options
        Passed to ``st.number_input`` (``help``, ``disabled``, ``step``...).

    Returns
    -------
    float
        The temperature (or difference) in °C.
    """
    value_c = state.typed_temperature(key, default_c, difference=difference)
    options.setdefault("step", 0.5)
    options.setdefault("format", "%.1f")
    where.number_input(f"{label}, {unit_symbol()}", key=key, **options)
    return value_c


# --------------------------------------------------------------------------------------------
# Messages (their wording is loadcore.texts')
# --------------------------------------------------------------------------------------------


def show_error(exc: LoadcoreError, what: str | None = None) -> None:
    """Show a loadcore error inline (and a history report's errors as a table)."""
    lead = f"{what}: " if what else ""
    st.error(md(f"{lead}{exc}"))
    report = getattr(exc, "report", None) if isinstance(exc, HistoryError) else None
    if report is not None and len(report.issues):
        st.caption(
            "The file has errors, so nothing was changed. Each line below names the row, date or "
            "column and how to fix it; warnings and notes are listed too."
        )
        from app import tables

        st.dataframe(
            report.to_frame(),
            hide_index=True,
            width="stretch",
            column_config=tables.report_columns(),
        )


def attempt(call: Callable[[], Any], what: str | None = None) -> tuple[bool, Any]:
    """Run a loadcore call; on a LoadcoreError show it inline and return (False, None)."""
    try:
        return True, call()
    except LoadcoreError as exc:
        show_error(exc, what)
        return False, None


def heat_note(scenario_name: str, temperature_c) -> None:
    """The public-safety note (``loadcore.texts.heat_note``) for a scenario with days at or
    above ``loadcore.texts.HEAT_HEALTH_C``."""
    temps = np.asarray(temperature_c, dtype=float)
    if temps.size and np.nanmax(temps) >= texts.HEAT_HEALTH_C:
        text = texts.heat_note(float(np.nanmax(temps)), state.temp_unit())
        st.warning(f"**{md(scenario_name)}.** {md(text)}", icon=":material/health_and_safety:")


def out_of_range_lines(forecasts, range_c: tuple[float, float]) -> list[str]:
    """One Markdown line per out-of-range day (``loadcore.export.out_of_range_days``, worded by
    ``loadcore.texts.out_of_range_warning``): scenario (escaped), date, temperature, how far
    outside."""
    from loadcore.export import out_of_range_days

    unit = state.temp_unit()
    table = out_of_range_days(list(forecasts), temp_unit="C")
    low, high = (float(v) for v in range_c)
    return [
        f"{md(row.scenario)}, "
        + texts.out_of_range_warning(
            f"{pd.Timestamp(row.date):%a %Y-%m-%d}", float(row.temperature_c), low, high, unit
        )
        for row in table.itertuples(index=False)
    ]


def need_model() -> Any:
    """The fitted model, or stop the page with a pointer to the Model page."""
    fitted = state.model()
    if fitted is None:
        st.info("No model yet. Fit one on the Model page (or upload a saved model there).")
        st.page_link("pages/model_fit.py", label="Go to the Model page", icon=":material/tune:")
        footer()
        st.stop()
    return fitted


def footer() -> None:
    """The caution shown at the foot of every page (``loadcore.texts.PLANNING_CAUTION``)."""
    st.divider()
    st.caption(f":material/info: {texts.PLANNING_CAUTION}")


def as_options(mapping: Mapping[str, str]) -> tuple[list[str], Callable[[str], str]]:
    """Option values and a format function for a selectbox from a value -> label mapping."""
    return list(mapping), lambda value: mapping[value]
