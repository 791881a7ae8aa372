"""The demand model: regression on temperature and day types with seasonal ARIMA errors.

log(demand_t) = x_t' beta + u_t, where u_t follows a weekly seasonal ARIMA process, estimated
jointly by exact Gaussian maximum likelihood through the Kalman filter (statsmodels SARIMAX;
Durbin and Koopman, 2012). The orders of u_t are chosen automatically (:mod:`loadcore.search`).

Forecasts propagate the filter's final state with the model's own system matrices, so a model
loaded from its JSON file forecasts exactly as the fitted one did, with no refit and no pickle.
"""

from __future__ import annotations

import datetime as dt
import hashlib
import json
import logging
import math
from collections.abc import Callable, Sequence
from dataclasses import asdict, dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
from scipy import stats

from . import __version__, files, plainjson, texts, units
from . import levels as interval_levels
from .calendar import BASE_TYPE, CalendarSpec, day_type_label, day_types
from .errors import InputError, LoadcoreError, ModelError, ScenarioError
from .search import (
    WEEKLY_PERIOD,
    DifferencingDecision,
    ExactResult,
    Orders,
    SearchBounds,
    _fill_gaps,
    aicc,
    build_state_space,
    choose_differencing,
    css_screen,
    default_workers,
    difference,
    exact_fit,
    exact_fits,
    gls_start,
    stepwise_orders,
)
from .terms import TermSpec, design_matrix

log = logging.getLogger(__name__)

#: Longest scenario the model forecasts, days (product specification).
MAX_HORIZON_DAYS = 90

#: Ljung-Box lag for daily data: twice the weekly period (common practice, no source).
LJUNG_BOX_LAG = 2 * WEEKLY_PERIOD

#: Thin-data flag of scenario temperatures (see loadcore.texts).
SPARSE_MIN_DAYS = texts.SPARSE_MIN_DAYS
SPARSE_HALF_WIDTH_C = texts.SPARSE_HALF_WIDTH_C

#: How many screened candidates each search refits by exact likelihood (our choice, measured:
#: the exact winner was inside the screening top three in every benchmark run).
REFIT_COUNT = {"quick": 2, "thorough": 4}

MODEL_FILE_KIND = "loadcore fitted model"

#: Search-bound names used by model files written before version 0.2 (still read).
_OLD_SETTING_NAMES = {
    "max_p": "ar_up_to",
    "max_q": "ma_up_to",
    "max_pq": "ar_ma_up_to",
    "max_P": "weekly_ar_up_to",
    "max_Q": "weekly_ma_up_to",
}
MODEL_FILE_VERSION = 1

Progress = Callable[[int, int, str], None]


# --------------------------------------------------------------------------------------------
# Settings
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class FitSettings:
    """Everything that decides a fit, apart from the data.

    Parameters
    ----------
    search : {"quick", "thorough"}
        Stepwise search or every order within the bounds.
    ar_up_to, ma_up_to, ar_ma_up_to, weekly_ar_up_to, weekly_ma_up_to : int
        Bounds of the order search (non-seasonal AR and MA, their sum, weekly AR and MA).
    log : bool
        Model log demand (multiplicative effects) rather than demand.
    terms : TermSpec
        Temperature response, annual terms, growth.
    calendar : CalendarSpec
        Public holidays, day-type scheme and overrides.
    workers : int
        Processes for the exact refits (0 = as many as the machine has, at most 2).
    """

    search: str = "quick"
    ar_up_to: int = 5
    ma_up_to: int = 5
    ar_ma_up_to: int = 8
    weekly_ar_up_to: int = 2
    weekly_ma_up_to: int = 2
    log: bool = True
    terms: TermSpec = field(default_factory=TermSpec)
    calendar: CalendarSpec = field(default_factory=CalendarSpec)
    workers: int = 0

    def __post_init__(self) -> None:
        if self.search not in REFIT_COUNT:
            raise InputError(
                f"Unknown search '{self.search}'",
                where="model settings",
                fix="Use 'quick' or 'thorough'",
            )
        for name in ("ar_up_to", "ma_up_to", "ar_ma_up_to", "weekly_ar_up_to", "weekly_ma_up_to"):
            value = getattr(self, name)
            if not isinstance(value, int | np.integer) or not 0 <= value <= 10:
                raise InputError(
                    f"{name} must be a whole number from 0 to 10, got {value!r}",
                    where="model settings",
                    fix="Lower the bound; the defaults are p, q up to 5, p+q up to 8, weekly up to 2",
                )

    @property
    def bounds(self) -> SearchBounds:
        return SearchBounds(
            self.ar_up_to,
            self.ma_up_to,
            self.ar_ma_up_to,
            self.weekly_ar_up_to,
            self.weekly_ma_up_to,
        )

    def to_dict(self) -> dict:
        d = {k: v for k, v in asdict(self).items() if k not in ("terms", "calendar")}
        d["terms"] = self.terms.to_dict()
        d["calendar"] = self.calendar.to_dict()
        return d

    @classmethod
    def from_dict(cls, data: dict) -> FitSettings:
        data = {_OLD_SETTING_NAMES.get(k, k): v for k, v in dict(data).items()}
        terms = TermSpec.from_dict(data.pop("terms", {}))
        calendar = CalendarSpec.from_dict(data.pop("calendar", {}))
        return cls(terms=terms, calendar=calendar, **data)

    def key(self) -> str:
        """A stable text key of the settings (for caches)."""
        return json.dumps(self.to_dict(), sort_keys=True)


# --------------------------------------------------------------------------------------------
# Results
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Diagnostics:
    """Residual checks of a fitted model.

    ``residuals`` are one-step-ahead prediction errors on the model scale (log demand when the
    model is in logs), after the filter's start-up days.
    """

    residuals: pd.Series
    acf: np.ndarray
    acf_bound: float
    ljung_box_stat: float
    ljung_box_pvalue: float
    ljung_box_lag: int
    ljung_box_dof: int
    verdict: str
    advice: str


@dataclass(frozen=True)
class Forecast:
    """A scenario forecast.

    ``frame`` has one row per day: ``date``, ``temperature_c``, ``day_type``, ``mean`` (bias
    adjusted, exp(mu + sigma^2/2) for a log model), ``median`` (exp(mu)), ``lower_L`` and
    ``upper_L`` for every level L, ``out_of_range`` (bool), ``out_of_range_by_c`` (°C beyond the
    fitted range, 0 inside) and ``sparse_temperature`` (inside the range, thinly observed).
    """

    frame: pd.DataFrame
    levels: tuple[float, ...]
    scenario_name: str
    demand_unit: str
    temperature_range_c: tuple[float, float]
    note: str

    def warnings(self, temp_unit: units.Unit = "C") -> list[str]:
        """Plain messages for every day outside the fitted temperature range or thinly observed,
        with temperatures in ``temp_unit``."""
        return texts.forecast_warnings(self.frame, self.temperature_range_c, temp_unit)


# --------------------------------------------------------------------------------------------
# Fitting
# --------------------------------------------------------------------------------------------


def _response(demand: np.ndarray, use_log: bool) -> np.ndarray:
    demand = np.asarray(demand, float)
    if use_log:
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(demand > 0, np.log(demand), np.nan)
    return demand


def _ols(y: np.ndarray, X: np.ndarray) -> np.ndarray:
    ok = np.isfinite(y)
    beta, *_ = np.linalg.lstsq(X[ok], y[ok], rcond=None)
    return beta


def fit(
    history,
    settings: FitSettings | None = None,
    progress: Progress | None = None,
    *,
    orders: Orders | None = None,
) -> FittedModel:
    """Fit the demand model to a validated history, choosing the error orders automatically.

    Parameters
    ----------
    history : History
        Validated daily history (:func:`loadcore.history.read_history`).
    settings : FitSettings, optional
        Search, regressors and calendar; defaults to :class:`FitSettings()`.
    progress : callable, optional
        ``progress(done, total, text)`` after each candidate.
    orders : Orders, optional
        Skip the search and fit these orders (parameters are still estimated).

    Returns
    -------
    FittedModel
    """
    settings = settings or FitSettings()
    frame = history.frame
    dates = pd.DatetimeIndex(frame.index)
    y = _response(frame["demand"].to_numpy(float), settings.log)
    if np.isfinite(y).sum() < 2 * 365 // 3:
        raise ModelError(
            "Too few days with demand to fit a model",
            where=f"{np.isfinite(y).sum()} days with demand",
            fix="Provide at least a year of daily history",
        )
    temp = frame["temperature_c"].to_numpy(float)
    types = day_types(dates, settings.calendar).to_numpy(dtype=object)
    base = BASE_TYPE[settings.calendar.scheme]
    present = sorted(set(types))
    if base not in present:
        raise ModelError(
            f"The history has no '{base}' days, the reference day type",
            where="day types of the history",
            fix="Check the calendar overrides; they may cover every working day",
        )
    levels = tuple(t for t in present if t != base)
    origin = dates[0]

    def design(intercept: bool, d=dates, t=temp, ty=types) -> pd.DataFrame:
        return design_matrix(
            d,
            t,
            ty,
            settings.terms,
            levels=levels,
            base_type=base,
            origin=origin,
            intercept=intercept,
        )

    # Step 1: ordinary least squares gives residuals for the differencing tests.
    X_full = design(True)
    beta_ols = _ols(y, X_full.to_numpy())
    resid_levels = y - X_full.to_numpy() @ beta_ols
    if orders is None:
        decision = choose_differencing(resid_levels)
        d, D = decision.d, decision.D
    else:
        decision = DifferencingDecision(orders.d, orders.D, (), float("nan"), float("nan"))
        d, D = orders.d, orders.D
    intercept = d == 0 and D == 0
    X_df = X_full if intercept else design(False)
    X = X_df.to_numpy()

    # Step 2: regression coefficients to start from, and the residual series to screen on.
    if intercept:
        beta0 = beta_ols
    else:
        yd = difference(y, d, D)
        Xd = np.column_stack([difference(X[:, j], d, D) for j in range(X.shape[1])])
        beta0 = _ols(yd, Xd)
    w = difference(_fill_gaps(y - X @ beta0), d, D)
    scale = 1.0 / float(np.std(w)) if np.std(w) > 0 else 1.0
    # The optimiser works on s*(y - X beta0) with coefficients delta = s*(beta - beta0): the
    # same likelihood, but every parameter of order one, which the quasi-Newton steps need.
    ys = (y - X @ beta0) * scale
    w = w * scale
    n_exog = X.shape[1]

    bounds = settings.bounds
    burn = bounds.ar_up_to + WEEKLY_PERIOD * bounds.weekly_ar_up_to + WEEKLY_PERIOD

    def screen(o: Orders):
        return css_screen(w, o, n_exog=n_exog, burn=burn)

    # Step 3: screening.
    if orders is not None:
        screened = {orders: screen(orders)}
        total = 2
    elif settings.search == "thorough":
        grid = bounds.all_orders(d, D)
        total = len(grid) + REFIT_COUNT["thorough"]
        screened = {}
        for i, o in enumerate(grid, 1):
            screened[o] = screen(o)
            if progress:
                progress(i, total, f"screened {o.describe()}")
    else:
        counter = {"n": 0}
        guess_total = 30 + REFIT_COUNT["quick"]

        def screen_counted(o: Orders):
            counter["n"] += 1
            if progress:
                progress(
                    counter["n"],
                    max(guess_total, counter["n"] + REFIT_COUNT["quick"]),
                    f"screened {o.describe()}",
                )
            return screen(o)

        screened = stepwise_orders(screen_counted, bounds, d, D)
        total = len(screened) + REFIT_COUNT["quick"]
    ranked = sorted(screened.values(), key=lambda r: (0 if r.ok else 1, r.aicc))

    # Step 4: exact refits of the best few, in parallel.
    workers = settings.workers or default_workers()
    n_refit = 1 if orders is not None else REFIT_COUNT[settings.search]
    exact: dict[Orders, ExactResult] = {}
    done = len(screened)
    pos = 0
    while pos < len(ranked):
        batch = ranked[pos : pos + n_refit]
        pos += n_refit
        tasks = []
        for r in batch:
            arma = r.params if r.ok else np.zeros_like(r.params)
            start = np.r_[gls_start(ys, X, r.orders, arma, burn), arma]
            tasks.append((ys, X, r.orders, start))

        def tick(text: str) -> None:
            nonlocal done
            done += 1
            if progress:
                progress(min(done, total), max(total, done), f"exact fit {text}")

        for res in exact_fits(tasks, workers, tick):
            exact[res.orders] = res
        if any(e.usable for e in exact.values()) or pos >= 3 * n_refit:
            break
    usable = [e for e in exact.values() if e.usable]
    if not usable:
        notes = "; ".join(
            f"{e.orders.describe()}: {e.note or 'not usable'}" for e in exact.values()
        )
        raise ModelError(
            "No candidate error model converged to a stationary, invertible fit",
            where=notes,
            fix="Try the thorough search, smaller bounds, or check the history for level shifts",
        )
    best = min(usable, key=lambda e: e.aicc)
    # Polish the chosen model with tight tolerances; keep the ranking fit if that fails.
    polished = exact_fit(ys, X, best.orders, best.params, tolerance="final", maxiter=200)
    if polished.usable and polished.loglik >= best.loglik - 1e-6:
        best = exact[best.orders] = polished  # the candidate table shows the final fit
    else:
        log.warning("tight refit of %s did not improve (%s)", best.orders.describe(), polished.note)

    # Step 5: final filter on the model scale (unscaled parameters) for state and errors.
    params = best.params.copy()
    params[:n_exog] = beta0 + params[:n_exog] / scale
    params[-1] /= scale**2
    sm_model = build_state_space(y, X, best.orders)
    res = sm_model.filter(params, cov_type="opg")
    loglik = float(res.llf)
    k = len(params)
    n_obs = best.n_obs
    candidates = _candidate_table(screened, exact, best.orders, scale, n_obs)
    model = FittedModel._from_results(
        settings=settings,
        history=history,
        orders=best.orders,
        columns=tuple(X_df.columns),
        levels=levels,
        base_type=base,
        origin=origin,
        intercept=intercept,
        params=params,
        param_names=tuple(sm_model.param_names),
        cov=np.asarray(res.cov_params(), float),
        loglik=loglik,
        aicc=aicc(loglik, k, n_obs),
        n_obs=n_obs,
        converged=best.converged,
        candidates=candidates,
        differencing=decision,
        sm_results=res,
    )
    log.info("fitted %s, AICc %.2f", best.orders.describe(), model.aicc)
    return model


def _candidate_table(screened, exact, chosen: Orders, scale: float, n_obs: int) -> pd.DataFrame:
    rows = []
    for o, r in screened.items():
        e = exact.get(o)
        rows.append(
            {
                "ar": o.p,
                "differencing": o.d,
                "ma": o.q,
                "weekly_ar": o.P,
                "weekly_differencing": o.D,
                "weekly_ma": o.Q,
                "screening_aicc": r.aicc,
                # Exact AICc on the model scale: undo the optimiser's scaling of the response.
                "aicc": (e.aicc - 2 * n_obs * math.log(scale)) if e is not None else float("nan"),
                "exact_fit": e is not None,
                "converged": bool(e.converged) if e is not None else None,
                "stationary_invertible": (
                    bool(e.stationary and e.invertible) if e is not None else None
                ),
                "chosen": o == chosen,
                "note": "; ".join(x for x in (r.note, e.note if e is not None else "") if x),
            }
        )
    df = pd.DataFrame(rows)
    return df.sort_values(["aicc", "screening_aicc"], na_position="last").reset_index(drop=True)


# --------------------------------------------------------------------------------------------
# The fitted model
# --------------------------------------------------------------------------------------------


def _state_from_results(res) -> dict[str, np.ndarray]:
    ssm = res.model.ssm

    def fixed(name: str) -> np.ndarray:
        m = np.asarray(ssm[name], float)
        return m[:, :, 0] if m.ndim == 3 else m

    return {
        "a": np.asarray(res.predicted_state[:, -1], float),
        "P": np.asarray(res.predicted_state_cov[:, :, -1], float),
        "T": fixed("transition"),
        "Z": fixed("design"),
        "R": fixed("selection"),
        "Q": fixed("state_cov"),
        "H": fixed("obs_cov"),
    }


class FittedModel:
    """A fitted demand model. Build it with :func:`fit` or :func:`load_model`."""

    def __init__(self, **kw: Any) -> None:
        self.settings: FitSettings = kw["settings"]
        self.history = kw["history"]
        self.orders: Orders = kw["orders"]
        self.columns: tuple[str, ...] = tuple(kw["columns"])
        self.day_type_levels: tuple[str, ...] = tuple(kw["levels"])
        self.base_type: str = kw["base_type"]
        self.origin = pd.Timestamp(kw["origin"])
        self.intercept: bool = bool(kw["intercept"])
        self.params = np.asarray(kw["params"], float)
        self.param_names: tuple[str, ...] = tuple(kw["param_names"])
        self.cov = np.asarray(kw["cov"], float)
        self.loglik = float(kw["loglik"])
        self.aicc = float(kw["aicc"])
        self.n_obs = int(kw["n_obs"])
        self.converged = bool(kw["converged"])
        self.candidates: pd.DataFrame = kw["candidates"]
        self.differencing: DifferencingDecision = kw["differencing"]
        self.state: dict[str, np.ndarray] = {
            k: np.asarray(v, float) for k, v in kw["state"].items()
        }
        self.residuals: pd.Series = kw["residuals"]
        self._sm_results = kw.get("sm_results")

    @classmethod
    def _from_results(cls, *, sm_results, **kw: Any) -> FittedModel:
        res = sm_results
        burn = int(res.loglikelihood_burn)
        dates = pd.DatetimeIndex(kw["history"].frame.index)
        errors = np.asarray(res.filter_results.forecasts_error[0], float).copy()
        y = np.asarray(res.model.endog[:, 0], float)
        errors[~np.isfinite(y)] = np.nan
        resid = pd.Series(errors[burn:], index=dates[burn:], name="residual")
        return cls(state=_state_from_results(res), residuals=resid, sm_results=res, **kw)

    # ---- basic facts ----------------------------------------------------------------------
    @property
    def order(self) -> tuple[int, int, int]:
        return self.orders.order

    @property
    def seasonal_order(self) -> tuple[int, int, int, int]:
        return self.orders.seasonal_order

    @property
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

    @property
    def temperature_range_c(self) -> tuple[float, float]:
        t = self.history.frame["temperature_c"].to_numpy(float)
        return float(np.nanmin(t)), float(np.nanmax(t))

    @property
    def demand_unit(self) -> str:
        settings = getattr(self.history, "settings", None)
        return getattr(settings, "demand_unit", "MW") or "MW"

    @property
    def beta(self) -> np.ndarray:
        return self.params[: len(self.columns)]

    @property
    def sigma2(self) -> float:
        return float(self.params[-1])

    @property
    def candidates_evaluated(self) -> int:
        return int(len(self.candidates) + self.candidates["exact_fit"].sum())

    def describe_errors(self) -> str:
        """The error model in plain words."""
        o = self.orders
        parts = []
        if o.p:
            parts.append(
                f"today's deviation from the weather-and-calendar level carries over "
                f"from the last {o.p} day{'s' if o.p > 1 else ''}"
            )
        if o.q:
            parts.append(f"a shock echoes for {o.q} day{'s' if o.q > 1 else ''}")
        if o.P:
            parts.append(
                f"and from the same weekday in the last {o.P} week{'s' if o.P > 1 else ''}"
            )
        if o.Q:
            parts.append(
                f"a shock echoes on the same weekday for {o.Q} week{'s' if o.Q > 1 else ''}"
            )
        if o.d:
            parts.append(
                "the level wanders (differenced once)"
                if o.d == 1
                else f"the level wanders (differenced {o.d} times)"
            )
        if o.D:
            parts.append("the weekly pattern shifts over time (weekly differencing)")
        if not parts:
            parts.append("day-to-day deviations are independent")
        return f"Error model: {o.describe()}. In words: " + "; ".join(parts) + "."

    def calendar_types(self, dates) -> pd.Series:
        """Day types for any dates from the model's calendar."""
        return day_types(pd.DatetimeIndex(dates), self.settings.calendar)

    # ---- regression pieces ----------------------------------------------------------------
    def regressors(self, dates, temperature_c, types) -> np.ndarray:
        """The model's regression columns for any dates, temperatures (°C) and day types."""
        X = design_matrix(
            pd.DatetimeIndex(dates),
            np.asarray(temperature_c, float),
            types,
            self.settings.terms,
            levels=self.day_type_levels,
            base_type=self.base_type,
            origin=self.origin,
            intercept=self.intercept,
        )
        return X[list(self.columns)].to_numpy()

    def to_demand(self, values):
        """Model scale to demand (exp for a log model)."""
        return np.exp(values) if self.settings.log else np.asarray(values, float)

    def _scenario_inputs(self, scenario) -> tuple[pd.DatetimeIndex, np.ndarray, np.ndarray]:
        dates = pd.DatetimeIndex(scenario.dates)
        temps = np.asarray(scenario.temperature_c, float)
        if len(dates) == 0:
            raise ScenarioError(
                "The scenario has no days",
                where=f"scenario '{scenario.name}'",
                fix="Give at least one day",
            )
        if len(dates) > MAX_HORIZON_DAYS:
            raise ScenarioError(
                f"The scenario has {len(dates)} days; the longest forecast is "
                f"{MAX_HORIZON_DAYS} days",
                where=f"scenario '{scenario.name}'",
                fix=f"Shorten it to {MAX_HORIZON_DAYS} days or split it",
            )
        expected = self.history_end + pd.Timedelta(days=1)
        if dates[0] != expected:
            raise ScenarioError(
                f"The scenario starts on {dates[0]:%Y-%m-%d} but the model's history ends on "
                f"{self.history_end:%Y-%m-%d}",
                where=f"scenario '{scenario.name}'",
                fix=f"Start the scenario on {expected:%Y-%m-%d}",
            )
        steps = np.diff(dates.values).astype("timedelta64[D]").astype(int)
        if len(steps) and np.any(steps != 1):
            bad = dates[1:][steps != 1][0]
            raise ScenarioError(
                "The scenario dates are not consecutive days",
                where=f"at {bad:%Y-%m-%d}",
                fix="Give one row per day, in order",
            )
        if temps.shape != (len(dates),) or not np.all(np.isfinite(temps)):
            i = int(np.flatnonzero(~np.isfinite(temps))[0]) if temps.shape == (len(dates),) else 0
            raise ScenarioError(
                "A scenario temperature is missing or not a number",
                where=f"{dates[i]:%Y-%m-%d}",
                fix="Enter a temperature for every day",
            )
        types = np.array(self.calendar_types(dates).to_numpy(dtype=object), dtype=object)
        given = getattr(scenario, "day_types", None)
        if given is not None:
            given = np.asarray(list(given), dtype=object)
            if len(given) != len(dates):
                raise ScenarioError(
                    "The day types do not match the dates one for one",
                    where=f"scenario '{scenario.name}'",
                    fix="Give one day type per day, or none",
                )
            fill = np.array(
                [g is not None and str(g).strip() != "" and str(g) != "nan" for g in given]
            )
            types[fill] = [str(g).strip() for g in given[fill]]
        self._check_types(dates, types)
        return dates, temps, types

    def _check_types(self, dates, types) -> None:
        known = set(self.day_type_levels) | {self.base_type}
        for d, t in zip(dates, types, strict=True):
            if t not in known:
                raise ScenarioError(
                    f"Day type '{t}' was not seen in the fitted history",
                    where=f"{d:%Y-%m-%d}",
                    fix=f"Use one of: {', '.join(sorted(known))}",
                )

    def linear_predictor(self, scenario) -> np.ndarray:
        """The regression part x'beta for each scenario day, model scale."""
        dates, temps, types = self._scenario_inputs(scenario)
        return self.regressors(dates, temps, types) @ self.beta

    # ---- the error process ------------------------------------------------------------------
    def _noise_moments(self, horizon: int) -> tuple[np.ndarray, np.ndarray]:
        s = self.state
        a, P = s["a"].copy(), s["P"].copy()
        T, Z, R, Q, H = s["T"], s["Z"], s["R"], s["Q"], s["H"]
        RQR = R @ Q @ R.T
        mean = np.empty(horizon)
        var = np.empty(horizon)
        for h in range(horizon):
            mean[h] = (Z @ a).item()
            var[h] = (Z @ P @ Z.T + H).item()
            a = T @ a
            P = T @ P @ T.T + RQR
        return mean, var

    def simulate_noise(self, horizon: int, n_paths: int, seed: int | None = 0) -> np.ndarray:
        """Error paths from the end of the history, shape (n_paths, horizon), model scale.

        The error process does not depend on temperature, so one set of paths serves every
        temperature trace.
        """
        rng = np.random.default_rng(seed)
        s = self.state
        T, Z, R, Q, H = s["T"], s["Z"], s["R"], s["Q"], s["H"]
        k = len(s["a"])
        vals, vecs = np.linalg.eigh((s["P"] + s["P"].T) / 2)
        L = vecs * np.sqrt(np.clip(vals, 0, None))
        a = s["a"][:, None] + L @ rng.standard_normal((k, n_paths))
        qv, qe = np.linalg.eigh(Q)
        LQ = R @ (qe * np.sqrt(np.clip(qv, 0, None)))
        h_sd = math.sqrt(max(float(H[0, 0]), 0.0))
        out = np.empty((n_paths, horizon))
        for h in range(horizon):
            out[:, h] = (Z @ a)[0]
            if h_sd:
                out[:, h] += h_sd * rng.standard_normal(n_paths)
            a = T @ a + LQ @ rng.standard_normal((LQ.shape[1], n_paths))
        return out

    def sample_paths(self, scenario, n_paths: int, seed: int | None = 0) -> np.ndarray:
        """Demand sample paths for a scenario, shape (n_paths, horizon), demand units."""
        lin = self.linear_predictor(scenario)
        return self.to_demand(lin[None, :] + self.simulate_noise(len(lin), n_paths, seed))

    # ---- forecasts ----------------------------------------------------------------------------
    def forecast(self, scenario, levels: Sequence[float] = (80, 95)) -> Forecast:
        """Forecast a scenario: mean, median, prediction intervals and range flags per day."""
        levels = interval_levels.parse_levels(levels, where="interval levels")
        dates, temps, types = self._scenario_inputs(scenario)
        lin = self.regressors(dates, temps, types) @ self.beta
        noise_mean, noise_var = self._noise_moments(len(dates))
        mu = lin + noise_mean
        sd = np.sqrt(noise_var)
        out = {"date": dates, "temperature_c": temps, "day_type": types.astype(str)}
        if self.settings.log:
            out["mean"] = np.exp(mu + noise_var / 2.0)  # lognormal mean
            out["median"] = np.exp(mu)
        else:
            out["mean"] = mu
            out["median"] = mu
        for L in levels:
            z = interval_levels.z_value(L)
            out[interval_levels.lower_column(L)] = self.to_demand(mu - z * sd)
            out[interval_levels.upper_column(L)] = self.to_demand(mu + z * sd)
        tmin, tmax = self.temperature_range_c
        by = np.where(temps > tmax, temps - tmax, np.where(temps < tmin, tmin - temps, 0.0))
        out["out_of_range"] = by > 0
        out["out_of_range_by_c"] = np.round(by, 6)
        hist_t = np.sort(self.history.frame["temperature_c"].to_numpy(float))
        near = np.searchsorted(hist_t, temps + SPARSE_HALF_WIDTH_C, side="right") - np.searchsorted(
            hist_t, temps - SPARSE_HALF_WIDTH_C, side="left"
        )
        out["sparse_temperature"] = (by == 0) & (near < SPARSE_MIN_DAYS)
        frame = pd.DataFrame(out)
        return Forecast(
            frame=frame,
            levels=tuple(levels),
            scenario_name=str(scenario.name),
            demand_unit=self.demand_unit,
            temperature_range_c=(tmin, tmax),
            note=texts.INTERVAL_CAUTION,
        )

    def fitted(self) -> pd.Series:
        """One-step-ahead fitted demand over the history (median scale)."""
        y = _response(self.history.frame["demand"].to_numpy(float), self.settings.log)
        y = pd.Series(y, index=self.history.frame.index)
        return pd.Series(self.to_demand((y - self.residuals).dropna()), name="fitted")

    def response_curve(self, temps_c) -> pd.DataFrame:
        """Median demand against temperature for a reference-type day at the end of the history.

        Annual terms are left at zero (their average over the year).
        """
        temps = np.asarray(temps_c, float)
        n = len(temps)
        dates = pd.DatetimeIndex([self.history_end] * n)
        X = design_matrix(
            dates,
            temps,
            [self.base_type] * n,
            self.settings.terms,
            levels=self.day_type_levels,
            base_type=self.base_type,
            origin=self.origin,
            intercept=self.intercept,
        )
        for c in X.columns:
            if c.startswith("annual_"):
                X[c] = 0.0
        lin = X[list(self.columns)].to_numpy() @ self.beta
        if not self.intercept:
            # Differenced errors: the level comes from the end of the history.
            lin = lin + (self.state["Z"] @ self.state["a"]).item()
        return pd.DataFrame({"temperature_c": temps, "demand": self.to_demand(lin)})

    # ---- tables ---------------------------------------------------------------------------------
    def std_errors(self) -> np.ndarray:
        return np.sqrt(np.clip(np.diag(self.cov), 0, None))

    def coefficient_table(self, temp_unit: str = "C") -> pd.DataFrame:
        """Every estimated parameter with its standard error and a plain meaning.

        ``temp_unit`` ("C" or "F") only changes how temperatures and per-degree effects are
        worded in ``meaning``; estimates and standard errors stay on the model's own scale.
        """
        unit = units.parse_unit(temp_unit)
        se = self.std_errors()
        rows = []
        names = list(self.columns) + list(self.param_names[len(self.columns) :])
        for i, name in enumerate(names):
            est = float(self.params[i])
            rows.append(
                {
                    "term": _term_label(name),
                    "estimate": est,
                    "std_error": float(se[i]),
                    "meaning": self._meaning(name, est, unit),
                }
            )
        return pd.DataFrame(rows)

    def _meaning(self, name: str, b: float, temp_unit: str = "C") -> str:
        spec = self.settings.terms
        unit = self.demand_unit
        base = _type_label(self.base_type)
        deg = f"°{temp_unit}"
        per = units.delta_to_unit(1.0, temp_unit)  # degrees of temp_unit in one °C step

        def temp(value_c: float) -> str:
            return f"{units.to_unit(value_c, temp_unit):g} {deg}"

        def effect(what: str, coef: float = b) -> str:
            if self.settings.log:
                pct = 100.0 * (math.exp(coef) - 1.0)
                verb = "raises" if pct >= 0 else "lowers"
                return f"{what} {verb} demand by {abs(pct):.1f} %"
            verb = "raises" if coef >= 0 else "lowers"
            return f"{what} {verb} demand by {abs(coef):,.1f} {unit}"

        if name == "const":
            lvl = math.exp(b) if self.settings.log else b
            where = (
                f"at {temp(spec.reference_temp_c)}"
                if spec.response == "quadratic"
                else f"between {temp(spec.heating_base_c)} and {temp(spec.cooling_base_c)}"
            )
            return f"demand on a {base} {where} at the start of the history: {lvl:,.0f} {unit}"
        if name == "trend_years":
            return effect("each year of growth") + " (apart from weather and calendar)"
        if name == "temp":
            slope = b / 10.0 / per
            s = (
                f"{100 * slope:+.2f} % per {deg}"
                if self.settings.log
                else f"{slope:+,.1f} {unit} per {deg}"
            )
            return f"slope of the temperature response at {temp(spec.reference_temp_c)}: {s}"
        if name == "temp_sq":
            c = 2 * b / 100.0 / per**2
            s = (
                f"{100 * c:+.3f} % per {deg}"
                if self.settings.log
                else f"{c:+,.2f} {unit} per {deg}"
            )
            return (
                f"curvature: the slope changes by {s} for every {deg} away from "
                f"{temp(spec.reference_temp_c)}"
            )
        if name == "hdd":
            return effect(f"each {deg} below {temp(spec.heating_base_c)}", b / per)
        if name == "cdd":
            return effect(f"each {deg} above {temp(spec.cooling_base_c)}", b / per)
        if name.startswith("type_"):
            t = name[len("type_") :]
            return effect(f"a {_type_label(t)}") + f" compared with a {base}"
        if name.startswith("annual_"):
            k = name[-1]
            part = "cosine" if "cos" in name else "sine"
            return f"annual cycle beyond temperature, harmonic {k} ({part} part)"
        if name.startswith("ar.S."):
            return (
                f"how much of a deviation carries over from the same weekday {_weeks(name)} earlier"
            )
        if name.startswith("ma.S."):
            return f"how much of a shock echoes on the same weekday {_weeks(name)} later"
        if name.startswith("ar."):
            return f"how much of a deviation carries over from {name.split('L')[-1]} day(s) earlier"
        if name.startswith("ma."):
            return f"how much of a shock echoes {name.split('L')[-1]} day(s) later"
        if name == "sigma2":
            sd = math.sqrt(max(b, 0.0))
            if self.settings.log:
                return f"variance of the daily shocks (typical shock about {100 * sd:.1f} %)"
            return f"variance of the daily shocks (typical shock about {sd:,.1f} {unit})"
        return ""

    def lowest_demand_temperature_c(self) -> float | None:
        """Temperature of lowest demand, °C, or None when the response has no minimum.

        For the quadratic response, the vertex reference - 5 b1 / b2 (b1, b2 per 10 °C); for
        degree days, the middle of the flat band between the two bases.
        """
        spec = self.settings.terms
        b = dict(zip(self.columns, self.beta, strict=True))
        if spec.response == "quadratic":
            b1, b2 = b["temp"], b["temp_sq"]
            if b2 <= 0:
                return None
            return float(spec.reference_temp_c - 5.0 * b1 / b2)
        return float((spec.heating_base_c + spec.cooling_base_c) / 2.0)

    def describe_lowest_demand(self, temp_unit: str = "C") -> str:
        """The temperature of lowest demand in words, in °C or °F."""
        unit = units.parse_unit(temp_unit)
        spec = self.settings.terms
        t = self.lowest_demand_temperature_c()
        lo, hi = self.temperature_range_c

        def temp(value_c: float) -> str:
            return f"{units.to_unit(value_c, unit):.1f} °{unit}"

        if spec.response == "degree_days":
            return (
                f"Demand is lowest in the flat band between {temp(spec.heating_base_c)} and "
                f"{temp(spec.cooling_base_c)}."
            )
        if t is None:
            return "The fitted response has no minimum (it is not U-shaped); check the data."
        where = "" if lo <= t <= hi else " (outside the fitted range: treat with care)"
        return f"Demand is lowest at about {temp(t)}{where}."

    def diagnostics(self, max_lag: int = 28) -> Diagnostics:
        """Residual ACF with ±1.96/√n bounds and the Ljung-Box test at lag 14."""
        r = self.residuals.dropna().to_numpy(float)
        n = len(r)
        acf = autocorrelations(r, max_lag)
        dof = LJUNG_BOX_LAG - self.orders.n_arma
        stat, pval = ljung_box(r, LJUNG_BOX_LAG, dof)
        if pval >= 0.05:
            verdict = (
                f"No remaining autocorrelation detected (Ljung-Box p = {pval:.3f} at lag "
                f"{LJUNG_BOX_LAG}): the error model captures the day-to-day pattern."
            )
            advice = ""
        else:
            verdict = (
                f"Some autocorrelation remains (Ljung-Box p = {pval:.3f} at lag "
                f"{LJUNG_BOX_LAG}): intervals may be too narrow."
            )
            advice = (
                "Try the thorough search or larger bounds, add annual terms, mark unusual "
                "days (shutdowns, bridge days) as their own day type, or use the detailed "
                "day-type scheme."
            )
        return Diagnostics(
            pd.Series(r, index=self.residuals.dropna().index, name="residual"),
            acf,
            1.96 / math.sqrt(n),
            stat,
            pval,
            LJUNG_BOX_LAG,
            dof,
            verdict,
            advice,
        )

    # ---- re-running and statsmodels -----------------------------------------------------------
    def _design_history(self, history) -> tuple[np.ndarray, np.ndarray]:
        frame = history.frame
        dates = pd.DatetimeIndex(frame.index)
        types = self.calendar_types(dates).to_numpy(dtype=object)
        self._check_types(dates, types)
        X = self.regressors(dates, frame["temperature_c"].to_numpy(float), types)
        y = _response(frame["demand"].to_numpy(float), self.settings.log)
        return y, X

    def statsmodels_results(self):
        """statsmodels SARIMAX results with this model's parameters (filtered, not refitted)."""
        if self._sm_results is None:
            y, X = self._design_history(self.history)
            self._sm_results = build_state_space(y, X, self.orders).filter(
                self.params, cov_type="none"
            )
        return self._sm_results

    def update(self, history) -> FittedModel:
        """The same parameters with the state re-run on another history (for rolling origins)."""
        y, X = self._design_history(history)
        res = build_state_space(y, X, self.orders).filter(self.params, cov_type="none")
        kw = self._kwargs()
        kw.update(history=history)
        return FittedModel._from_results(sm_results=res, **kw)

    def _kwargs(self) -> dict:
        return dict(
            settings=self.settings,
            history=self.history,
            orders=self.orders,
            columns=self.columns,
            levels=self.day_type_levels,
            base_type=self.base_type,
            origin=self.origin,
            intercept=self.intercept,
            params=self.params,
            param_names=self.param_names,
            cov=self.cov,
            loglik=self.loglik,
            aicc=self.aicc,
            n_obs=self.n_obs,
            converged=self.converged,
            candidates=self.candidates,
            differencing=self.differencing,
        )

    # ---- saving -----------------------------------------------------------------------------
    def to_dict(self) -> dict:
        import statsmodels

        frame = self.history.frame
        hs = getattr(self.history, "settings", None)
        return {
            "kind": MODEL_FILE_KIND,
            "format_version": MODEL_FILE_VERSION,
            "saved_at": dt.datetime.now(dt.UTC).isoformat(timespec="seconds"),
            "versions": {
                "loadcore": __version__,
                "statsmodels": statsmodels.__version__,
                "numpy": np.__version__,
                "pandas": pd.__version__,
            },
            "settings": self.settings.to_dict(),
            "history": {
                "start": frame.index[0].date().isoformat(),
                "demand": _nan_to_none(frame["demand"].to_numpy(float)),
                "temperature_c": _nan_to_none(frame["temperature_c"].to_numpy(float)),
                "temperature_filled": [
                    bool(v)
                    for v in frame.get("temperature_filled", pd.Series(False, index=frame.index))
                ],
                "demand_unit": getattr(hs, "demand_unit", "MW"),
                "fingerprint": self.history.fingerprint,
            },
            "design": {
                "columns": list(self.columns),
                "levels": list(self.day_type_levels),
                "base_type": self.base_type,
                "origin": self.origin.date().isoformat(),
                "intercept": self.intercept,
            },
            "orders": [
                self.orders.p,
                self.orders.d,
                self.orders.q,
                self.orders.P,
                self.orders.D,
                self.orders.Q,
                self.orders.period,
            ],
            "param_names": list(self.param_names),
            "params": self.params.tolist(),
            "cov_params": self.cov.tolist(),
            "loglik": self.loglik,
            "aicc": self.aicc,
            "n_obs": self.n_obs,
            "converged": self.converged,
            "differencing": {
                "d": self.differencing.d,
                "D": self.differencing.D,
                "kpss_statistics": list(self.differencing.kpss_statistics),
                "kpss_critical_5pct": _none_if_nan(self.differencing.kpss_critical_5pct),
                "seasonal_strength": _none_if_nan(self.differencing.seasonal_strength),
            },
            "state": {k: v.tolist() for k, v in self.state.items()},
            "residuals": {
                "start": self.residuals.index[0].date().isoformat(),
                "values": _nan_to_none(self.residuals.to_numpy(float)),
            },
            "candidates": json.loads(self.candidates.to_json(orient="records")),
        }

    def to_json(self) -> str:
        return json.dumps(self.to_dict(), allow_nan=False)

    def save(self, path: str | Path) -> Path:
        path = Path(path)
        path.write_text(self.to_json(), encoding="utf-8")
        return path


_WEEK_WORDS = {1: "a week", 2: "two weeks", 3: "three weeks", 4: "four weeks"}


def _weeks(name: str) -> str:
    """``ar.S.L14`` -> ``two weeks``: the weekly lag of a seasonal term, in words."""
    lag = int(name.split("L")[-1])
    n = max(lag // WEEKLY_PERIOD, 1)
    return _WEEK_WORDS.get(n, f"{n} weeks")


def _type_label(t: str) -> str:
    return day_type_label(t)


def _term_label(name: str) -> str:
    fixed = {
        "const": "level",
        "trend_years": "growth (per year)",
        "temp": "temperature, linear term",
        "temp_sq": "temperature, squared term",
        "hdd": "heating degrees",
        "cdd": "cooling degrees",
        "sigma2": "shock variance",
    }
    if name in fixed:
        return fixed[name]
    if name.startswith("type_"):
        return f"day type: {_type_label(name[5:])}"
    if name.startswith("annual_"):
        return f"annual {'cosine' if 'cos' in name else 'sine'} {name[-1]}"
    if name.startswith("ar.S.L"):
        return f"error weekly AR, lag {name[6:]}"
    if name.startswith("ma.S.L"):
        return f"error weekly MA, lag {name[6:]}"
    if name.startswith("ar.L"):
        return f"error AR, lag {name[4:]}"
    if name.startswith("ma.L"):
        return f"error MA, lag {name[4:]}"
    return name


def _nan_to_none(values: np.ndarray) -> list:
    return [None if not np.isfinite(v) else float(v) for v in values]


def _none_if_nan(v: float) -> float | None:
    return None if v is None or not np.isfinite(v) else float(v)


def _floats(values) -> np.ndarray:
    return np.array([np.nan if v is None else float(v) for v in values], float)


# --------------------------------------------------------------------------------------------
# Residual statistics
# --------------------------------------------------------------------------------------------


def autocorrelations(x: np.ndarray, max_lag: int) -> np.ndarray:
    """Sample autocorrelations r_1..r_max_lag (Box and Jenkins, 1976, the usual biased estimator)."""
    x = np.asarray(x, float)
    x = x - x.mean()
    denom = float(x @ x)
    return np.array([float(x[k:] @ x[:-k]) / denom for k in range(1, max_lag + 1)])


def ljung_box(x: np.ndarray, lag: int, dof: int) -> tuple[float, float]:
    """Ljung-Box portmanteau statistic Q = n(n+2) sum r_k^2/(n-k) and its chi-square p-value.

    Ljung and Box (1978); ``dof`` degrees of freedom (the lag less the ARMA parameters).
    """
    n = len(x)
    r = autocorrelations(x, lag)
    q = float(n * (n + 2) * np.sum(r**2 / (n - np.arange(1, lag + 1))))
    dof = max(int(dof), 1)
    return q, float(stats.chi2.sf(q, dof))


# --------------------------------------------------------------------------------------------
# Loading
# --------------------------------------------------------------------------------------------


def load_model(source: str | Path | bytes) -> FittedModel:
    """Load a model saved by :meth:`FittedModel.save`; JSON only, nothing is executed.

    Parameters
    ----------
    source : path, JSON text or bytes
    """
    from .history import HistorySettings, history_from_frame

    where = "model file"
    if isinstance(source, str) and source.lstrip("\ufeff").lstrip().startswith("{"):
        raw: bytes | str = source
    else:
        if isinstance(source, str | Path):
            where = str(source)
        try:
            raw, _ = files.read_bytes(source, what="model file")
        except InputError as exc:
            raise ModelError(exc.problem, where=exc.where or where, fix=exc.fix) from None
    try:
        data = plainjson.loads(raw, what="model file")
    except InputError as exc:
        raise ModelError(
            exc.problem,
            where=f"{where}, {exc.where}" if exc.where else where,
            fix="Use a file written by 'loadcore fit' or the app",
        ) from None
    if not isinstance(data, dict) or data.get("kind") != MODEL_FILE_KIND:
        raise ModelError(
            "This is not a loadcore model file",
            where=where,
            fix="Use a file written by 'loadcore fit' or the app's model download",
        )
    if data.get("format_version") != MODEL_FILE_VERSION:
        raise ModelError(
            f"Unsupported model file version {data.get('format_version')!r}",
            where=where,
            fix="Refit the model with this version of loadcore",
        )
    try:
        settings = FitSettings.from_dict(data["settings"])
        h = data["history"]
        start = pd.Timestamp(h["start"])
        demand = _floats(h["demand"])
        temp = _floats(h["temperature_c"])
        idx = pd.date_range(start, periods=len(demand), freq="D", name="date")
        frame = pd.DataFrame(
            {
                "demand": demand,
                "temperature_c": temp,
                "temperature_filled": np.asarray(h["temperature_filled"], bool),
            },
            index=idx,
        )
        history = history_from_frame(
            frame, settings=HistorySettings(demand_unit=str(h.get("demand_unit", "MW")))
        )
        if history.fingerprint != h["fingerprint"]:
            raise ModelError(
                "The history inside the model file does not match its fingerprint",
                where=where,
                fix="The file was changed; refit or use the original",
            )
        o = [int(v) for v in data["orders"]]
        orders = Orders(*o)
        diff = data["differencing"]
        decision = DifferencingDecision(
            int(diff["d"]),
            int(diff["D"]),
            tuple(float(v) for v in diff["kpss_statistics"]),
            float(diff["kpss_critical_5pct"] if diff["kpss_critical_5pct"] is not None else "nan"),
            float(diff["seasonal_strength"] if diff["seasonal_strength"] is not None else "nan"),
        )
        des = data["design"]
        r = data["residuals"]
        rv = _floats(r["values"])
        resid = pd.Series(
            rv,
            index=pd.date_range(r["start"], periods=len(rv), freq="D", name="date"),
            name="residual",
        )
        state = {k: np.asarray(v, float) for k, v in data["state"].items()}
        for key in ("a", "P", "T", "Z", "R", "Q", "H"):
            if key not in state:
                raise KeyError(key)
        model = FittedModel(
            settings=settings,
            history=history,
            orders=orders,
            columns=des["columns"],
            levels=des["levels"],
            base_type=des["base_type"],
            origin=des["origin"],
            intercept=des["intercept"],
            params=data["params"],
            param_names=data["param_names"],
            cov=data["cov_params"],
            loglik=data["loglik"],
            aicc=data["aicc"],
            n_obs=data["n_obs"],
            converged=data["converged"],
            candidates=pd.DataFrame(data["candidates"]),
            differencing=decision,
            state=state,
            residuals=resid,
        )
    except LoadcoreError as exc:
        if isinstance(exc, ModelError):
            raise
        raise ModelError(
            f"The model file has invalid settings: {exc.problem}",
            where=where,
            fix="Refit the model",
        ) from None
    except (KeyError, TypeError, ValueError, IndexError, AttributeError) as exc:
        raise ModelError(
            f"The model file is incomplete or damaged ({exc.__class__.__name__}: {exc})",
            where=where,
            fix="Refit the model or use the original file",
        ) from None
    if (
        model.params.ndim != 1
        or len(model.params) != len(model.param_names)
        or len(model.beta) != len(model.columns)
    ):
        raise ModelError(
            "The model file's parameters do not match its design",
            where=where,
            fix="Refit the model",
        )
    return model
