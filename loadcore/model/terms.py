"""Regressors for the demand model: temperature response, day types, annual terms, growth,
and the temperature memory terms.

The regression is on log demand (or demand; :func:`model_response`) and every column here is
built by one function, :func:`design_matrix`, for history and future dates alike, so that a
scenario is always described by exactly the columns the model was fitted with.

Memory terms (two groups, each tried by the fit and kept only when it improves AICc;
:mod:`loadcore.model.memory`):

- ``past``: the smoothed past temperature S_t, an exponentially weighted mean of the days
  before t: S_t = w T_{t-1} + (1 - w) S_{t-1}, with S at the first day equal to that day's
  temperature (no earlier day is known). It is pandas' ``T.ewm(alpha=w, adjust=False).mean()``
  shifted one day. It enters in the shape of the response: (S - reference)/10 and its square
  (``temp_past``, ``temp_past_sq``) or its own heating and cooling degrees (``hdd_past``,
  ``cdd_past``, same bases).
- ``minimum``: the daily minimum temperature beside the maximum, in the same shape
  (``temp_min``, ``temp_min_sq`` or ``hdd_min``, ``cdd_min``).

Future days get the smoothed term from the history's temperatures before them (the lead-in,
:func:`smoothed_past`), so it runs on from the history without a break.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, fields, replace

import numpy as np
import pandas as pd

from .. import checks, units
from ..errors import InputError

#: Temperature terms are (T - reference) / 10 and its square, so both are of order one and the
#: optimiser sees well-scaled columns (common practice, no source).
TEMP_SCALE_C = 10.0

#: Days per year for the annual Fourier terms and the growth term (common practice, no source).
DAYS_PER_YEAR = 365.25

#: The temperature responses a model can have.
RESPONSES = ("quadratic", "degree_days")

#: What a fit may be asked for: a response, or ``auto`` (the one with the lower AICc, with the
#: same error orders; :mod:`loadcore.model.response`).
RESPONSE_CHOICES = (*RESPONSES, "auto")

#: Weight of the previous day in the smoothed past temperature: 0.5 is pandas' ``span=3``
#: (alpha = 2 / (span + 1)), a three-day memory whose weights halve each day back (common
#: practice, no source).
MEMORY_WEIGHT = 0.5

#: The memory groups, in the order the fit tries them and the design lists them.
MEMORY_GROUPS = ("past", "minimum")


@dataclass(frozen=True)
class TermSpec:
    """Which regressors describe the temperature and calendar response.

    Parameters
    ----------
    response : {"quadratic", "degree_days", "auto"}
        ``quadratic``: centred temperature and its square. ``degree_days``: heating degrees below
        ``heating_base_c`` and cooling degrees above ``cooling_base_c`` (°C), flat in between.
        ``auto`` (a fit setting only): fit both with the same error orders and keep the one with
        the lower AICc (degree days with bases estimated by profile likelihood); a fitted model's
        terms always name the response it has.
    reference_temp_c : float
        Centre of the quadratic terms, °C.
    heating_base_c, cooling_base_c : float
        Degree-day bases, °C (18 °C is the usual heating base; common practice, no source).
    annual_harmonics : int
        Number of annual Fourier pairs (cos, sin) for seasonal effects beyond temperature.
    trend : bool
        Include a slow-growth term (years since the start of the history).
    memory : bool
        Try the memory terms (smoothed past temperature; the daily minimum where the history
        has it); the fit keeps each only when it improves AICc.
    memory_weight : float
        Weight of the previous day in the smoothed past temperature, in (0, 1].
    """

    response: str = "quadratic"
    reference_temp_c: float = 18.0
    heating_base_c: float = 18.0
    cooling_base_c: float = 24.0
    annual_harmonics: int = 2
    trend: bool = True
    memory: bool = True
    memory_weight: float = MEMORY_WEIGHT

    def __post_init__(self) -> None:
        where = "model settings"
        checks.one_of(self.response, "temperature response", RESPONSE_CHOICES, where=where)
        for name in ("reference_temp_c", "heating_base_c", "cooling_base_c"):
            value = checks.real_number(
                getattr(self, name), name, units.PLAUSIBLE_MIN_C, units.PLAUSIBLE_MAX_C, where=where
            )
            object.__setattr__(self, name, value)
        checks.whole_number(self.annual_harmonics, "annual_harmonics", 0, 6, where=where)
        checks.flag(self.trend, "trend", where=where)
        checks.flag(self.memory, "memory", where=where)
        weight = checks.real_number(self.memory_weight, "memory_weight", 0.05, 1.0, where=where)
        object.__setattr__(self, "memory_weight", weight)
        if self.response == "degree_days" and self.cooling_base_c < self.heating_base_c:
            raise InputError(
                "The cooling base is below the heating base",
                where=f"heating {self.heating_base_c} °C, cooling {self.cooling_base_c} °C",
                fix="Set the cooling base at or above the heating base",
            )

    def to_dict(self) -> dict:
        return asdict(self)

    @classmethod
    def from_dict(cls, data: dict) -> TermSpec:
        """Inverse of :meth:`to_dict`; every value is checked by the constructor."""
        if not isinstance(data, dict) or set(data) - {f.name for f in fields(cls)}:
            raise InputError(
                "The temperature-response settings are not ones loadcore writes",
                where="model settings: terms",
                fix="Use settings written by loadcore",
            )
        return cls(**data)

    def temperature_columns(self) -> tuple[str, ...]:
        return ("hdd", "cdd") if self.response == "degree_days" else ("temp", "temp_sq")

    def start_response(self) -> TermSpec:
        """The settings a fit starts from: ``auto`` starts from the quadratic (the default)."""
        if self.response == "auto":
            return replace(self, response="quadratic")
        return self

    def memory_columns(self, group: str) -> tuple[str, ...]:
        """The columns of one memory group (``past`` or ``minimum``) for this response."""
        tag = {"past": "past", "minimum": "min"}[group]
        if self.response == "degree_days":
            return (f"hdd_{tag}", f"cdd_{tag}")
        return (f"temp_{tag}", f"temp_{tag}_sq")


def model_response(demand: np.ndarray, use_log: bool) -> np.ndarray:
    """The regression's response: log demand (NaN where demand is missing or not positive) for a
    log model, demand otherwise."""
    demand = np.asarray(demand, float)
    if use_log:
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(demand > 0, np.log(demand), np.nan)
    return demand


def type_column(day_type: str) -> str:
    """Name of the indicator column for a day type."""
    return f"type_{day_type}"


def temperature_terms(temperature_c: np.ndarray, spec: TermSpec) -> dict[str, np.ndarray]:
    """Temperature regressors for daily temperatures in °C."""
    t = np.asarray(temperature_c, dtype=float)
    if spec.response == "auto":
        raise InputError(
            "The temperature response 'auto' has no columns of its own",
            where="model settings",
            fix="Fit the model: it resolves 'auto' to the quadratic or degree days",
        )
    if spec.response == "quadratic":
        x = (t - spec.reference_temp_c) / TEMP_SCALE_C
        return {"temp": x, "temp_sq": x * x}
    return {
        "hdd": np.maximum(spec.heating_base_c - t, 0.0),
        "cdd": np.maximum(t - spec.cooling_base_c, 0.0),
    }


def kept_groups(columns: tuple[str, ...], spec: TermSpec) -> tuple[str, ...]:
    """The memory groups a model's columns contain."""
    present = set(columns)
    return tuple(g for g in MEMORY_GROUPS if present & set(spec.memory_columns(g)))


def smoothed_past(
    temperature_c: np.ndarray, weight: float, lead_in_c: np.ndarray | None = None
) -> np.ndarray:
    """The smoothed past temperature of every day, °C (see the module docstring).

    Parameters
    ----------
    temperature_c : array
        Daily temperature of consecutive days, °C.
    weight : float
        Weight of the previous day, in (0, 1].
    lead_in_c : array, optional
        Temperatures of the consecutive days just before the first one, °C (a history's days
        before a scenario). Without it the first day's smoothed value is its own temperature.

    Returns
    -------
    array of the same length as ``temperature_c``.
    """
    t = np.asarray(temperature_c, dtype=float)
    lead = np.asarray(lead_in_c if lead_in_c is not None else [], dtype=float)
    series = np.concatenate([lead, t])
    if len(series) == 0:
        return series
    w = float(weight)
    out = np.empty(len(series))
    running = series[0]  # the first day's "past" is itself: no earlier day is known
    for i, value in enumerate(series):
        out[i] = running
        running = w * value + (1.0 - w) * running
    return out[len(lead) :]


def memory_terms(
    group: str,
    spec: TermSpec,
    temperature_c: np.ndarray,
    *,
    lead_in_c: np.ndarray | None = None,
    temperature_min_c: np.ndarray | None = None,
) -> dict[str, np.ndarray]:
    """The columns of one memory group (``past`` or ``minimum``), named by
    :meth:`TermSpec.memory_columns`."""
    if group == "past":
        source = smoothed_past(temperature_c, spec.memory_weight, lead_in_c)
    elif temperature_min_c is None:
        return {}
    else:
        source = np.asarray(temperature_min_c, dtype=float)
    base = temperature_terms(source, spec)
    return dict(zip(spec.memory_columns(group), base.values(), strict=True))


def design_matrix(
    dates: pd.DatetimeIndex,
    temperature_c: np.ndarray,
    day_types: pd.Series | np.ndarray | list,
    spec: TermSpec,
    *,
    levels: tuple[str, ...],
    base_type: str,
    origin: pd.Timestamp,
    intercept: bool,
    memory: tuple[str, ...] = (),
    lead_in_c: np.ndarray | None = None,
    temperature_min_c: np.ndarray | None = None,
) -> pd.DataFrame:
    """Build the regression columns for the given dates.

    Parameters
    ----------
    dates : DatetimeIndex
        Daily dates.
    temperature_c : array
        Daily temperature, °C.
    day_types : sequence of str
        Day type of every date, each the base type or one of ``levels`` (checked by the caller:
        :meth:`loadcore.model.FittedModel.regressors` for a fitted model).
    spec : TermSpec
        Regressor choice.
    levels : tuple of str
        Day types the model has indicator columns for (the base type excluded).
    base_type : str
        The reference day type; its effect is in the intercept.
    origin : Timestamp
        Date where the growth term is zero (the first day of the fitted history).
    intercept : bool
        Include a constant (not identified when the errors are differenced).
    memory : tuple of str
        Memory groups to build (:data:`MEMORY_GROUPS`); ``minimum`` only when
        ``temperature_min_c`` is given.
    lead_in_c : array, optional
        Temperatures of the days just before ``dates``, °C, for the smoothed past temperature.
    temperature_min_c : array, optional
        Daily minimum temperature, °C.

    Returns
    -------
    DataFrame indexed by ``dates``.
    """
    dates = pd.DatetimeIndex(dates)
    types = np.asarray(day_types, dtype=object)
    cols: dict[str, np.ndarray] = {}
    if intercept:
        cols["const"] = np.ones(len(dates))
    if spec.trend:
        cols["trend_years"] = (dates - origin).days.to_numpy(dtype=float) / DAYS_PER_YEAR
    cols.update(temperature_terms(temperature_c, spec))
    for level in levels:
        cols[type_column(level)] = (types == level).astype(float)
    if spec.annual_harmonics:
        doy = dates.day_of_year.to_numpy(dtype=float)
        for k in range(1, int(spec.annual_harmonics) + 1):
            angle = 2.0 * np.pi * k * doy / DAYS_PER_YEAR
            cols[f"annual_cos{k}"] = np.cos(angle)
            cols[f"annual_sin{k}"] = np.sin(angle)
    for group in MEMORY_GROUPS:  # last, so that a model without them has the old columns
        if group in memory:
            cols.update(
                memory_terms(
                    group,
                    spec,
                    temperature_c,
                    lead_in_c=lead_in_c,
                    temperature_min_c=temperature_min_c,
                )
            )
    return pd.DataFrame(cols, index=dates)
