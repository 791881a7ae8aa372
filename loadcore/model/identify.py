"""Whether the history can identify the temperature terms, checked before a fit.

A constant (or nearly constant) temperature makes the temperature columns copies of the
constant: a fit then reports a "significant" effect per degree and a temperature of lowest
demand that the data never saw. Degree-day terms need days on their side of their base. So a fit
is refused, with a message saying what to change, when on the days with demand:

- the temperature hardly varies (the 5th to 95th percentile spread is under
  :data:`MIN_SPREAD_C`);
- a degree-day column has fewer than :data:`MIN_DEGREE_DAYS` days away from zero (no heating
  days below the heating base, no cooling days above the cooling base);
- a temperature column is (almost) a combination of the other regression columns (the other
  temperature column included: two distinct temperatures cannot show a curve): its
  variance inflation (1 / (1 - R^2) of its regression on the others; Belsley, Kuh and Welsch,
  1980) is above :data:`MAX_VARIANCE_INFLATION`, e.g. a temperature that is exactly a yearly
  sine of the annual terms.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..errors import ModelError, quote
from .terms import TermSpec

#: Smallest 5th-95th percentile spread of the daily temperature, °C (our choice: below it no
#: temperature effect can be told from noise; the narrowest climates span several degrees).
MIN_SPREAD_C = 1.0

#: Fewest days on the active side of a degree-day base (our choice).
MIN_DEGREE_DAYS = 10

#: Largest variance inflation of a temperature column (our choice: far beyond the usual rule of
#: thumb of 10, so that only columns the data cannot tell apart are refused; a narrow but real
#: range stays allowed).
MAX_VARIANCE_INFLATION = 1e5


def _refuse(problem: str, fix: str) -> ModelError:
    return ModelError(problem, where="temperature terms", fix=fix)


def check_temperature_terms(
    design: pd.DataFrame, temperature_c: np.ndarray, has_demand: np.ndarray, spec: TermSpec
) -> None:
    """Refuse temperature terms the history cannot identify.

    Parameters
    ----------
    design : DataFrame
        The regression columns of the history (:func:`loadcore.model.terms.design_matrix`).
    temperature_c : array
        Daily temperature, °C.
    has_demand : array of bool
        Days with a demand (the days the fit uses).
    spec : TermSpec

    Raises
    ------
    ModelError
        Naming what cannot be identified and what to do.
    """
    temps = np.asarray(temperature_c, float)[has_demand]
    low, high = np.percentile(temps, [5, 95]) if len(temps) else (0.0, 0.0)
    if high - low < MIN_SPREAD_C:
        raise _refuse(
            f"The temperature is nearly constant ({low:.1f} to {high:.1f} °C on 90 % of the "
            "days), so its effect on demand cannot be estimated",
            "Check the temperature column (it may be a placeholder or a sensor stuck at one "
            "value) and use a history with the weather of every season",
        )
    rows = design[has_demand]
    if spec.response == "degree_days":
        for column, base, side in (
            ("hdd", spec.heating_base_c, "below the heating base"),
            ("cdd", spec.cooling_base_c, "above the cooling base"),
        ):
            active = int((rows[column] > 0).sum())
            if active < MIN_DEGREE_DAYS:
                raise _refuse(
                    f"Only {active} day(s) of the history are {side} of {base:g} °C, too few to "
                    f"estimate the {'heating' if column == 'hdd' else 'cooling'} effect",
                    "Move the base into the history's range of temperatures, or use the "
                    "quadratic response",
                )
    for column in spec.temperature_columns():
        others = rows.drop(columns=[column])
        target = rows[column].to_numpy(float)
        X = others.to_numpy(float)
        if X.shape[1] == 0 or "const" not in others.columns:
            X = np.column_stack([np.ones(len(target)), X])
        fitted = X @ np.linalg.lstsq(X, target, rcond=None)[0]
        total = float(np.sum((target - target.mean()) ** 2))
        left = float(np.sum((target - fitted) ** 2))
        if total <= 0 or left <= total / MAX_VARIANCE_INFLATION:
            raise _refuse(
                f"The temperature term {quote(column)} is (almost) a copy of the other regression "
                "terms (the other temperature term, the calendar, the yearly cycle or the "
                "trend), so its effect cannot be told apart from theirs",
                "Check the temperature column (it may be a smoothed or invented series), or "
                "fit with fewer annual terms (--annual-harmonics 0)",
            )
