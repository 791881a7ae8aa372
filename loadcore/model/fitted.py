"""The fitted demand model: a typed, frozen result with the forecasts, tables and checks.

Build it with :func:`loadcore.model.fit` or :func:`load_model`. Every field is typed and
read-only; the derived facts (fingerprint, temperature range, coefficients) are properties or
cached values, and :meth:`FittedModel.update` returns a new model through
``dataclasses.replace``. Forecasts propagate the stored end state with our own code
(:mod:`loadcore.model.forecast`); statsmodels is only called to re-run the filter
(:meth:`~FittedModel.update`, :meth:`~FittedModel.statsmodels_results`).

Not split (about 700 lines): it is the one public face of a fitted model:
every method is a short delegation to the module that owns the work (wording, diagnostics,
forecast, state space, model file).
"""

from __future__ import annotations

import dataclasses
import hashlib
import json
from collections.abc import Sequence
from dataclasses import dataclass, field
from functools import cached_property
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from .. import files, texts, units
from .. import levels as interval_levels
from ..calendar import CalendarSpec, day_types, overrides_without_history
from ..errors import ModelError, ScenarioError
from ..history import History
from ..scenario import Scenario
from ..scenario.values import gap_days as window_gap_days
from . import forecast as propagation
from . import memory as memory_terms
from . import model_file, wording
from .diagnostics import ACF_MAX_LAG, Diagnostics, diagnose
from .forecast import Forecast
from .orders import SHOCK_VARIANCE, DifferencingDecision, Orders
from .response import ResponseComparison, ResponseFit
from .settings import FitSettings
from .statespace import EndState, run_filter
from .terms import DAYS_PER_YEAR, design_matrix, model_response


def _frozen(values: Any) -> np.ndarray:
    out = np.array(values, dtype=float)
    out.setflags(write=False)
    return out


@dataclass(frozen=True, eq=False)
class FittedModel:
    """A fitted demand model (compared by identity).

    Parameters
    ----------
    settings : FitSettings
        The settings it was fitted with.
    history : History
        The daily history it was fitted on (and whose end its state describes).
    orders : Orders
        The error model's orders.
    columns : tuple of str
        Regression columns, in :func:`loadcore.model.terms.design_matrix` names.
    day_type_levels : tuple of str
        Day types with an indicator column (the base type excluded).
    base_type : str
        The reference day type.
    origin : Timestamp
        First day of the fitted history (where the growth term is zero).
    intercept : bool
        Whether the regression has a constant (not when the errors are differenced).
    params : array
        Regression coefficients, error parameters, shock variance (model scale), in the order of
        ``param_names``.
    param_names : tuple of str
        ``columns`` followed by :meth:`Orders.parameter_names` (``error_ar_1``, ...,
        ``shock_variance``).
    covariance : (k, k) array
        Parameter covariance (outer product of gradients; Berndt et al., 1974).
    loglik, aicc : float
        Exact log-likelihood and AICc on the model scale (log demand for a log model).
    n_obs : int
        Days the likelihood used.
    converged : bool
        Whether the chosen fit converged.
    candidates : DataFrame
        The search's candidate table (:func:`loadcore.model.search.candidate_table`).
    differencing : DifferencingDecision
        The differencing tests.
    end_state : EndState
        The error process at the end of the history.
    residuals : Series
        One-step-ahead prediction errors after the filter's start-up days, model scale.
    fitted_at : str
        When the parameters were estimated, UTC ISO time.
    response_comparison : ResponseComparison or None
        The model's temperature response beside the other one, fitted with the same error
        orders (:mod:`loadcore.model.response`); None in model files written before it.
    memory_trials : tuple of MemoryTrial
        The memory selection's fits (:mod:`loadcore.model.memory`); empty for a model fitted
        without it (and for model files written before it).
    """

    settings: FitSettings
    history: History
    orders: Orders
    columns: tuple[str, ...]
    day_type_levels: tuple[str, ...]
    base_type: str
    origin: pd.Timestamp
    intercept: bool
    params: np.ndarray
    param_names: tuple[str, ...]
    covariance: np.ndarray
    loglik: float
    aicc: float
    n_obs: int
    converged: bool
    candidates: pd.DataFrame
    differencing: DifferencingDecision
    end_state: EndState
    residuals: pd.Series
    fitted_at: str = ""
    response_comparison: ResponseComparison | None = None
    memory_trials: tuple[memory_terms.MemoryTrial, ...] = ()
    _statsmodels: dict = field(default_factory=dict, init=False, repr=False)

    def __post_init__(self) -> None:
        set_ = object.__setattr__
        set_(self, "columns", tuple(str(c) for c in self.columns))
        set_(self, "day_type_levels", tuple(str(t) for t in self.day_type_levels))
        set_(self, "param_names", tuple(str(n) for n in self.param_names))
        set_(self, "origin", pd.Timestamp(self.origin))
        set_(self, "params", _frozen(self.params))
        set_(self, "covariance", _frozen(self.covariance))
        set_(self, "loglik", float(self.loglik))
        set_(self, "aicc", float(self.aicc))
        set_(self, "n_obs", int(self.n_obs))
        set_(self, "intercept", bool(self.intercept))
        set_(self, "converged", bool(self.converged))
        set_(self, "memory_trials", tuple(self.memory_trials))
        k = len(self.param_names)
        if (
            self.param_names != self.columns + self.orders.parameter_names()
            or self.params.shape != (k,)
            or self.covariance.shape != (k, k)
            or not np.all(np.isfinite(self.params))
        ):
            raise ModelError(
                "The model's parameters do not match its design",
                where=f"{len(self.params)} values for {k} names",
                fix="Refit the model",
            )

    # ---- basic facts ----------------------------------------------------------------------
    @property
    def order(self) -> tuple[int, int, int]:
        return self.orders.order

    @property
    def seasonal_order(self) -> tuple[int, int, int, int]:
        return self.orders.seasonal_order

    @cached_property
    def fingerprint(self) -> str:
        """Fingerprint of the data and settings this model was fitted on."""
        h = hashlib.sha256()
        h.update(self.history.fingerprint.encode())
        h.update(self.settings.key().encode())
        return h.hexdigest()

    @property
    def data_fingerprint(self) -> str:
        return self.history.fingerprint

    @property
    def history_end(self) -> pd.Timestamp:
        return pd.Timestamp(self.history.frame.index[-1])

    @cached_property
    def temperature_range_c(self) -> tuple[float, float]:
        """Lowest and highest daily temperature of the fitted history, °C."""
        t = self.history.frame["temperature_c"].to_numpy(float)
        return float(np.nanmin(t)), float(np.nanmax(t))

    @property
    def demand_unit(self) -> str:
        settings = getattr(self.history, "settings", None)
        return getattr(settings, "demand_unit", "MW") or "MW"

    @property
    def beta(self) -> np.ndarray:
        """Regression coefficients, in ``columns`` order (model scale)."""
        return self.params[: len(self.columns)]

    @property
    def shock_variance(self) -> float:
        """Variance of the daily shocks of the error process (model scale)."""
        return float(self.params[self.param_names.index(SHOCK_VARIANCE)])

    @property
    def candidates_evaluated(self) -> int:
        return int(len(self.candidates) + self.candidates["exact_fit"].sum())

    def calendar_types(self, dates) -> pd.Series:
        """Day types for any dates from the model's calendar."""
        return day_types(pd.DatetimeIndex(dates), self.calendar)

    @property
    def calendar(self) -> CalendarSpec:
        return self.settings.calendar

    def calendar_warnings(self) -> list[str]:
        """One warning per calendar override whose effect the history cannot estimate (no
        history day in it, its day type seen on no history day; see
        :func:`loadcore.calendar.overrides_without_history`)."""
        index = pd.DatetimeIndex(self.history.frame.index)
        first, last = f"{index[0]:%Y-%m-%d}", f"{index[-1]:%Y-%m-%d}"
        return [
            texts.override_warning(o.day_type, o.start.isoformat(), o.end.isoformat(), first, last)
            for o in overrides_without_history(self.calendar, index)
        ]

    # ---- regression pieces ----------------------------------------------------------------
    @property
    def memory_terms(self) -> tuple[str, ...]:
        """The memory groups the model kept (``past``, ``minimum``; :mod:`loadcore.model.memory`)."""
        return memory_terms.kept_groups(self.columns, self.settings.terms)

    def describe_memory(self) -> str:
        """Which memory terms the fit tried and kept, in one or two sentences."""
        return wording.describe_memory(self.memory_terms, self.memory_trials)

    def known_day_types(self) -> tuple[str, ...]:
        """The day types this model can forecast: the base type and those of the history."""
        return (self.base_type, *self.day_type_levels)

    def regressors(self, dates, temperature_c, types, *, temperature_min_c=None) -> np.ndarray:
        """The model's regression columns for days after the history: dates, temperatures (°C),
        day types and, optionally, daily minima (°C).

        The smoothed past temperature runs on from the history's temperatures (and its seasonal
        normal for days between the history's end and ``dates[0]``); minima not given are the
        maxima less the history's typical spread (:mod:`loadcore.model.memory`).

        Raises
        ------
        ScenarioError
            For a day type the fitted history does not contain (the one check of day types
            against a model).
        """
        dates = pd.DatetimeIndex(dates)
        types = np.asarray(types, dtype=object)
        self._check_types(dates, types)
        temps = np.asarray(temperature_c, float)
        groups = self.memory_terms
        lead_in = minimum = None
        if groups:
            lead_in = memory_terms.lead_in_c(self.history, dates[0])
            minimum = memory_terms.minimum_for(self.history, dates, temps, temperature_min_c)
        return self._columns(dates, temps, types, lead_in=lead_in, minimum=minimum)

    def _check_types(self, dates: pd.DatetimeIndex, types: np.ndarray) -> None:
        known = set(self.known_day_types())
        for day, t in zip(dates, types, strict=True):
            if t not in known:
                raise ScenarioError(
                    f"Day type '{t}' was not seen in the fitted history",
                    where=f"{day:%Y-%m-%d}",
                    fix=f"Use one of: {', '.join(sorted(known))}, or refit with this type in "
                    "the history",
                )

    def _columns(self, dates, temps, types, *, lead_in, minimum) -> np.ndarray:
        X = design_matrix(
            dates,
            temps,
            types,
            self.settings.terms,
            levels=self.day_type_levels,
            base_type=self.base_type,
            origin=self.origin,
            intercept=self.intercept,
            memory=self.memory_terms,
            lead_in_c=lead_in,
            temperature_min_c=minimum,
        )
        missing = [c for c in self.columns if c not in X.columns]
        if missing:
            raise ScenarioError(
                "The model uses the daily minimum temperature, but none is known for these days",
                where=", ".join(missing),
                fix="Give the scenario's daily minima, or use a history with daily minima",
            )
        return X[list(self.columns)].to_numpy()

    def to_demand(self, values):
        """Model scale to demand (exp for a log model)."""
        return np.exp(values) if self.settings.log else np.asarray(values, float)

    def scenario_day_types(self, scenario: Scenario) -> np.ndarray:
        """Every scenario day's type: the scenario's own, or the model's calendar where blank."""
        return np.array(scenario.day_types_with(self.calendar_types(scenario.dates)), dtype=object)

    def scenario_regressors(self, scenario: Scenario) -> np.ndarray:
        """The regression columns of a scenario (its minima used when it has them)."""
        dates, temps, types = self._scenario_inputs(scenario)
        return self.regressors(
            dates, temps, types, temperature_min_c=getattr(scenario, "temperature_min_c", None)
        )

    def _scenario_inputs(
        self, scenario: Scenario
    ) -> tuple[pd.DatetimeIndex, np.ndarray, np.ndarray]:
        """What a forecast needs from a scenario, after the checks that need the model (the
        scenario checked everything else when it was built)."""
        if not isinstance(scenario, Scenario):
            raise ScenarioError(
                f"Expected a Scenario, got {type(scenario).__name__}",
                where="forecast",
                fix="Build it with loadcore.scenario.make_scenario or Scenario(...)",
            )
        scenario.check_start(self.history_end)
        return scenario.dates, scenario.temperature_c, self.scenario_day_types(scenario)

    def window_gap(self, scenario: Scenario) -> int:
        """Days between the history's end and the scenario's window (0 when it starts the day
        after the history); the error process is carried through them."""
        return window_gap_days(scenario.start, self.history_end)

    def growth_months(self, scenario: Scenario) -> float:
        """How far past the history's end the growth term is carried at the scenario's last
        day, months of 30.44 days (0 for a model without a growth term)."""
        if "trend_years" not in self.columns:
            return 0.0
        days = (pd.Timestamp(scenario.end) - self.history_end).days
        return max(0.0, days / (DAYS_PER_YEAR / 12.0))

    def linear_predictor(self, scenario: Scenario) -> np.ndarray:
        """The regression part x'beta for each scenario day, model scale."""
        return self.scenario_regressors(scenario) @ self.beta

    # ---- the error process and forecasts --------------------------------------------------
    def simulate_noise(
        self, horizon: int, n_paths: int, seed: int | None = 0, *, gap_days: int = 0
    ) -> np.ndarray:
        """Error paths from the end of the history, shape (n_paths, horizon), model scale.

        The error process does not depend on temperature, so one set of paths serves every
        temperature trace. ``gap_days`` days between the history and the window are simulated
        and dropped (a far window).
        """
        return propagation.simulate_noise(self.end_state, horizon, n_paths, seed, gap_days)

    @property
    def coefficient_covariance(self) -> np.ndarray:
        """Covariance of the regression coefficients, in ``columns`` order (model scale)."""
        m = len(self.columns)
        return self.covariance[:m, :m]

    def sample_paths(self, scenario: Scenario, n_paths: int, seed: int | None = 0) -> np.ndarray:
        """Demand sample paths for a scenario, shape (n_paths, horizon), demand units.

        Each path draws the error process and the regression coefficients (from their
        covariance), as the analytic intervals of :meth:`forecast` count both."""
        lin = self.linear_predictor(scenario)
        noise = self.simulate_noise(len(lin), n_paths, seed, gap_days=self.window_gap(scenario))
        noise += self.coefficient_draws(scenario, n_paths, seed)
        return self.to_demand(lin[None, :] + noise)

    def coefficient_draws(
        self, scenario: Scenario, n_paths: int, seed: int | None = 0
    ) -> np.ndarray:
        """What the estimated regression coefficients add to each path, shape (n_paths,
        horizon), model scale: one draw of the coefficients from their covariance per path
        (the same draws for the same seed, whatever the scenario's temperatures)."""
        X = self.scenario_regressors(scenario)
        return propagation.coefficient_paths(
            self.end_state, X, self.coefficient_covariance, n_paths, seed, self.window_gap(scenario)
        )

    def forecast(self, scenario: Scenario, levels: Sequence[float] = (80, 95)) -> Forecast:
        """Forecast a scenario: mean, median, prediction intervals and range flags per day.

        The window may start on any day from the day after the history's end to
        :data:`loadcore.scenario.values.MAX_LEAD_MONTHS` months after it: the error process
        is carried through the gap (which needs no temperatures), so the intervals widen with
        the distance as the error model says; day types come from the calendar of the
        window's own dates; a growth term is extrapolated (``Forecast.growth_months``).
        """
        levels = interval_levels.parse_levels(levels, where="interval levels")
        dates, temps, types = self._scenario_inputs(scenario)
        gap = self.window_gap(scenario)
        X = self.scenario_regressors(scenario)
        lin = X @ self.beta
        noise_mean, noise_var = propagation.noise_moments(self.end_state, len(dates), gap)
        # The estimated coefficients add their own spread (a forecast from estimated
        # parameters; Goldberger, 1962).
        noise_var = noise_var + propagation.coefficient_variance(
            self.end_state, X, self.coefficient_covariance, gap
        )
        frame = propagation.forecast_frame(
            dates=dates,
            temperature_c=temps,
            day_types=types,
            linear=lin,
            noise_mean=noise_mean,
            noise_var=noise_var,
            use_log=self.settings.log,
            levels=levels,
            history_temperature_c=self.history.frame["temperature_c"].to_numpy(float),
        )
        return Forecast(
            frame=frame,
            levels=tuple(levels),
            scenario_name=str(scenario.name),
            demand_unit=self.demand_unit,
            temperature_range_c=self.temperature_range_c,
            note=texts.INTERVAL_CAUTION,
            gap_days=gap,
            growth_months=round(self.growth_months(scenario), 1),
        )

    def fitted(self) -> pd.Series:
        """One-step-ahead fitted demand over the history (median scale)."""
        y = model_response(self.history.frame["demand"].to_numpy(float), self.settings.log)
        y = pd.Series(y, index=self.history.frame.index)
        return pd.Series(self.to_demand((y - self.residuals).dropna()), name="fitted")

    def _reference_day(self, temps: np.ndarray, terms, columns, beta) -> np.ndarray:
        """x'beta for a reference-type day at the end of the history, annual terms at zero; memory
        terms (when ``columns`` has them) as after a spell at each temperature: the smoothed
        past temperature equals it, the minimum is it less the history's mean max-min spread."""
        n = len(temps)
        steady = {}
        for group in memory_terms.kept_groups(tuple(columns), terms):
            steady.update(memory_terms.steady_columns(group, terms, temps, self.history))
        X = design_matrix(
            pd.DatetimeIndex([self.history_end] * n),
            temps,
            [self.base_type] * n,
            terms,
            levels=self.day_type_levels,
            base_type=self.base_type,
            origin=self.origin,
            intercept=self.intercept,
        )
        for c in X.columns:
            if c.startswith("annual_"):
                X[c] = 0.0
        X = X.assign(**steady)
        return X[list(columns)].to_numpy() @ np.asarray(beta, float)

    def response_curve(self, temps_c) -> pd.DataFrame:
        """Median demand against temperature for a reference-type day at the end of the history.

        Annual terms are left at zero (their average over the year). With a response
        comparison, ``other_demand`` is the other response's curve (same day, same error
        orders; for differenced errors it is levelled to this model's curve over the
        history's temperatures).
        """
        temps = np.asarray(temps_c, float)
        lin = self._reference_day(temps, self.settings.terms, self.columns, self.beta)
        if not self.intercept:
            # Differenced errors: the level comes from the end of the history.
            lin = lin + (self.end_state.observation @ self.end_state.mean).item()
        out = pd.DataFrame({"temperature_c": temps, "demand": self.to_demand(lin)})
        other = self.other_response
        if other is not None:
            lin_other = self._reference_day(temps, other.terms, other.columns, other.beta)
            if not self.intercept:
                seen = self.history.frame["temperature_c"].to_numpy(float)
                own_seen = self._reference_day(seen, self.settings.terms, self.columns, self.beta)
                other_seen = self._reference_day(seen, other.terms, other.columns, other.beta)
                lin_other = lin_other + float(np.mean(own_seen - other_seen))
                lin_other = lin_other + (self.end_state.observation @ self.end_state.mean).item()
            out["other_demand"] = self.to_demand(lin_other)
        return out

    @property
    def other_response(self) -> ResponseFit | None:
        """The other temperature response fitted with this model's error orders, if any."""
        comparison = self.response_comparison
        return None if comparison is None else comparison.other

    def response_contrast(
        self, temperature_range_c: tuple[float, float] | None = None
    ) -> wording.ResponseContrast | None:
        """Demand at the coldest and hottest temperature under both responses, or None
        without a comparison.

        Parameters
        ----------
        temperature_range_c : (low, high), optional
            The scenario temperatures to read the curves at, °C; by default the history's.
        """
        comparison = self.response_comparison
        if comparison is None:
            return None
        low, high = temperature_range_c or self.temperature_range_c
        curve = self.response_curve([float(low), float(high)])
        return wording.ResponseContrast(
            fitted=comparison.fitted.response,
            other=comparison.other.response,
            fitted_aicc=comparison.fitted.aicc,
            other_aicc=comparison.other.aicc,
            cold_c=float(low),
            hot_c=float(high),
            fitted_demand=(float(curve["demand"].iloc[0]), float(curve["demand"].iloc[1])),
            other_demand=(
                float(curve["other_demand"].iloc[0]),
                float(curve["other_demand"].iloc[1]),
            ),
            other_terms=comparison.other.terms,
            asked=comparison.asked,
        )

    def response_note(
        self,
        temp_unit: str = "C",
        medium: str = "command",
        temperature_range_c: tuple[float, float] | None = None,
    ) -> str | None:
        """The one sentence that says the other response is clearly better, or None.

        Parameters
        ----------
        temp_unit : {"C", "F"}
            Unit of the temperatures in the sentence.
        medium : {"command", "app", "brief"}
            Where it is read, which decides how it says to switch.
        temperature_range_c : (low, high), optional
            Scenario temperatures, °C; by default the history's range.
        """
        comparison = self.response_comparison
        if comparison is None or not comparison.other_is_better:
            return None
        contrast = self.response_contrast(temperature_range_c)
        return wording.response_note(
            contrast, units.parse_unit(temp_unit), self.demand_unit, medium
        )

    def response_settings(self) -> FitSettings | None:
        """These settings with the other response (its estimated bases included): what the
        switch refits with; None without a comparison."""
        other = self.other_response
        if other is None:
            return None
        return dataclasses.replace(self.settings, terms=other.terms)

    # ---- tables and words -----------------------------------------------------------------
    def std_errors(self) -> np.ndarray:
        return np.sqrt(np.clip(np.diag(self.covariance), 0, None))

    def coefficient_table(self, temp_unit: str = "C") -> pd.DataFrame:
        """Every estimated parameter with its standard error and a plain meaning.

        ``temp_unit`` ("C" or "F") only changes how temperatures and per-degree effects are
        worded in ``meaning``; estimates and standard errors stay on the model's own scale.
        """
        unit = units.parse_unit(temp_unit)
        se = self.std_errors()
        rows = []
        for i, name in enumerate(self.param_names):
            est = float(self.params[i])
            meaning = wording.coefficient_meaning(
                name,
                est,
                terms=self.settings.terms,
                log=self.settings.log,
                demand_unit=self.demand_unit,
                base_type=self.base_type,
                temp_unit=unit,
            )
            rows.append(
                {
                    "term": wording.term_label(name, self.orders.period),
                    "estimate": est,
                    "std_error": float(se[i]),
                    "meaning": meaning,
                }
            )
        return pd.DataFrame(rows)

    def lowest_demand_temperature_c(self) -> float | None:
        """Temperature of lowest demand, °C, or None when the response has no minimum."""
        coefficients = dict(zip(self.columns, self.beta, strict=True))
        return wording.lowest_demand_temperature_c(self.settings.terms, coefficients)

    def describe_lowest_demand(self, temp_unit: str = "C") -> str:
        """The temperature of lowest demand in words, in °C or °F."""
        return wording.describe_lowest_demand(
            self.settings.terms,
            self.lowest_demand_temperature_c(),
            self.temperature_range_c,
            units.parse_unit(temp_unit),
        )

    def describe_errors(self) -> str:
        """The error model in plain words."""
        return wording.describe_errors(self.orders)

    def diagnostics(self, max_lag: int = ACF_MAX_LAG) -> Diagnostics:
        """Residual ACF with ±1.96/√n bounds and the Ljung-Box test at lag 14."""
        return diagnose(self.residuals, self.orders.n_arma, max_lag)

    # ---- re-running the filter ------------------------------------------------------------
    def _design_history(self, history: History) -> tuple[np.ndarray, np.ndarray]:
        frame = history.frame
        dates = pd.DatetimeIndex(frame.index)
        types = self.calendar_types(dates).to_numpy(dtype=object)
        temps = frame["temperature_c"].to_numpy(float)
        self._check_types(dates, types)
        minimum = None
        if "minimum" in self.memory_terms:
            # The history's own minima, or the model history's typical spread where it has none.
            if "temperature_min_c" in frame:
                minimum = frame["temperature_min_c"].to_numpy(float)
            else:
                minimum = temps - memory_terms.typical_spread_c(self.history, dates)
        # A history is its own lead-in: its first day starts the smoothing, as in the fit.
        X = self._columns(dates, temps, types, lead_in=None, minimum=minimum)
        return model_response(frame["demand"].to_numpy(float), self.settings.log), X

    def _keep_statsmodels_results(self, results: Any) -> None:
        """Remember the filter results of this model's own history (a cache, not a field)."""
        self._statsmodels["results"] = results

    def statsmodels_results(self):
        """statsmodels SARIMAX results with this model's parameters (filtered, not refitted)."""
        if "results" not in self._statsmodels:
            y, X = self._design_history(self.history)
            self._keep_statsmodels_results(run_filter(y, X, self.orders, self.params).results)
        return self._statsmodels["results"]

    def update(self, history: History) -> FittedModel:
        """The same parameters with the state re-run on another history (for rolling origins)."""
        y, X = self._design_history(history)
        run = run_filter(y, X, self.orders, self.params)
        updated = dataclasses.replace(
            self,
            history=history,
            end_state=run.end_state,
            residuals=run.residuals(pd.DatetimeIndex(history.frame.index)),
        )
        updated._keep_statsmodels_results(run.results)
        return updated

    # ---- the model file -------------------------------------------------------------------
    def to_dict(self) -> dict:
        """The model file's content (format :data:`loadcore.model.model_file.FORMAT_VERSION`)."""
        return model_file.model_to_dict(self)

    def to_json(self) -> str:
        return json.dumps(self.to_dict(), allow_nan=False)

    def save(self, path: str | Path) -> Path:
        """Write the model file all at once (:func:`loadcore.files.write_atomic`): a full disk
        or a crash leaves any earlier file at ``path`` as it was.

        Raises
        ------
        InputError
            When the file cannot be written, naming it.
        """
        return files.write_atomic(path, self.to_json(), what="model file")


def load_model(source: str | Path | bytes) -> FittedModel:
    """Load a model saved by :meth:`FittedModel.save`; JSON only, nothing is executed.

    Reads model file formats 2 and 1 (see :mod:`loadcore.model.model_file`).

    Parameters
    ----------
    source : path, JSON text or bytes

    Raises
    ------
    ModelError
        For anything that is not an intact model file (the embedded history must match its
        fingerprint).
    """
    return model_file.read_model(source, FittedModel)
