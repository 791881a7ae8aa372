"""Weather ensembles built from the temperature history.

Not split (about 700 lines): the trace building, the pooling of paths and the ensemble's table
share one set of window and trace rules; splitting them would scatter those rules. A split into
a weather/ package (traces, pooling, tables) is the next step if it grows.

A weather ensemble answers "what could demand be over the next weeks if the weather behaves like
it did in past years?". Each past year with the window available gives the temperatures of the
same calendar window, and again shifted by -k..+k days, so a five-year history with k = 3 gives
35 temperature traces. This is the fixed-date and shifted-date temperature scenario method of the
probabilistic load forecasting literature (e.g. Xie and Hong, 2018, International Journal of
Forecasting 34(2); cited from memory). A planner can add a warming offset and blend every trace
toward a temperature path of their own.

For every trace the fitted model gives the temperature- and calendar-driven part of demand; the
model's error paths are added on top and all paths are pooled into one predictive distribution.

loadcore is a planning aid, not an operating or reliability-compliance tool; defer to the system
operator's procedures, local reliability standards and licensed engineering judgement.
"""

from __future__ import annotations

import logging
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from loadcore import texts
from loadcore.errors import InputError, LoadcoreError, ScenarioError, quote
from loadcore.scenario import Scenario, fill_blank_day_types
from loadcore.scenario.values import check_length, check_start
from loadcore.scores import sample_quantiles

__all__ = [
    "EnsembleResult",
    "PeakDistribution",
    "ensemble_forecast",
    "ensemble_table",
    "pool_trace_paths",
    "quantile_column",
    "temperature_traces",
    "variance_split",
]

log = logging.getLogger(__name__)

# Shifts of up to +-3 days around the calendar date: the usual choice for shifted-date
# temperature scenarios (Xie and Hong, 2018, from memory).
DEFAULT_SHIFT_DAYS = 3

# Always reported, whatever extra quantiles the user asks for: the 10/50/90 band that planners
# read first (common practice, no source).
BASE_QUANTILES = (0.1, 0.5, 0.9)

# Bins of the window-peak histogram.
PEAK_BINS = 30

ProgressFn = Callable[[int, int, str], None]


def quantile_column(prob: float) -> str:
    """Column name of a quantile: 0.1 -> ``p10``, 0.025 -> ``p2.5``."""
    return f"p{100.0 * prob:.10g}"


def _timestamp(value, name: str) -> pd.Timestamp:
    try:
        stamp = pd.Timestamp(value)
    except (TypeError, ValueError) as exc:
        raise InputError(
            f"{quote(value)} is not a date", where=name, fix="Give a date such as 2026-12-01"
        ) from exc
    if stamp is pd.NaT:
        raise InputError("the date is missing", where=name, fix="Give a date such as 2026-12-01")
    return stamp.normalize()


def _same_day_in_year(date: pd.Timestamp, year: int) -> pd.Timestamp:
    """``date`` moved to ``year``; 29 February becomes 28 February in a common year."""
    if (
        date.month == 2
        and date.day == 29
        and not pd.Timestamp(year=year, month=1, day=1).is_leap_year
    ):
        return pd.Timestamp(year=year, month=2, day=28)
    return pd.Timestamp(year=year, month=date.month, day=date.day)


def _check_int(value, name: str, low: int, high: int | None = None) -> int:
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)):
        raise InputError(
            f"{name} must be a whole number, got {quote(value)}",
            where=name,
            fix=f"Use e.g. {max(low, 1)}",
        )
    if value < low or (high is not None and value > high):
        span = f"between {low} and {high}" if high is not None else f"at least {low}"
        raise InputError(
            f"{name} must be {span}, got {value}", where=name, fix=f"Use a value {span}"
        )
    return int(value)


def _on_dates(series: pd.Series, dates: pd.DatetimeIndex, problem: str, fix: str) -> pd.Series:
    """A per-day series put on the window dates; a ScenarioError names the first missing day."""
    aligned = series.copy()
    aligned.index = pd.DatetimeIndex(aligned.index).normalize()
    missing = dates.difference(aligned.index)
    if len(missing):
        raise ScenarioError(
            f"{problem} for {len(missing)} window day(s)",
            where=f"first missing date {missing[0].date()}",
            fix=fix,
        )
    return aligned.reindex(dates)


def _blend_values(blend_path, dates: pd.DatetimeIndex) -> np.ndarray:
    if isinstance(blend_path, pd.Series):
        values = _on_dates(
            blend_path,
            dates,
            "the blend path has no temperature",
            "Give the blend path a temperature for every day of the window",
        ).to_numpy(dtype=float)
    else:
        values = np.asarray(blend_path, dtype=float).ravel()
        if values.size != len(dates):
            raise ScenarioError(
                f"the blend path has {values.size} temperatures but the window has {len(dates)} days",
                where="blend_path",
                fix="Give one temperature (°C) per window day",
            )
    bad = np.flatnonzero(~np.isfinite(values))
    if bad.size:
        raise ScenarioError(
            "the blend path has a missing temperature",
            where=f"date {dates[bad[0]].date()}",
            fix="Fill every day of the blend path",
        )
    return values


def temperature_traces(
    history,
    start,
    days: int,
    *,
    shift_days: int = DEFAULT_SHIFT_DAYS,
    warming_c: float = 0.0,
    blend_path=None,
    blend_weight: float = 0.0,
    widen_for_few_years: bool = True,
) -> pd.DataFrame:
    """Temperature traces for a future window, one per past year and day shift.

    For every past year with the whole shifted window inside the history (and before
    ``start``), the temperatures of the same calendar window, shifted by -k..+k days
    (fixed-date and shifted-date scenarios, Xie and Hong, 2018, from memory), plus
    ``warming_c``, and optionally blended toward a planner's path:
    ``(1 - blend_weight) * trace + blend_weight * path``.

    A trace is a run of consecutive days starting at the same month and day as ``start`` in its
    year (29 February starts on 28 February in a common year), so a window that crosses a leap
    day drifts by one calendar day, well inside the shift spread.

    Parameters
    ----------
    history : History
        Anything with a ``frame`` holding ``temperature_c`` (°C) on a daily ``DatetimeIndex``.
    start : date-like
        First day of the future window.
    days : int
        Window length in days.
    shift_days : int
        Largest shift k in days; 0 gives fixed-date traces only.
    warming_c : float
        Offset added to every temperature, °C.
    blend_path : pandas.Series or array-like, optional
        A planner's temperature path in °C, indexed by the window dates or one value per day.
    blend_weight : float
        Weight of ``blend_path`` in [0, 1].
    widen_for_few_years : bool
        Spread each day's traces about their mean by sqrt(1 + 1/n), n the number of past years:
        a new year's weather is drawn from the same climate as the n years seen, so its spread
        about their average is wider than theirs, as in the prediction interval for a new
        observation from a sample of n (e.g. Hahn and Meeker, Statistical Intervals, 1991,
        from memory). With many years the factor tends to one.

    Returns
    -------
    pandas.DataFrame
        Rows are the window dates (index ``date``), one column of °C per trace, named
        ``<year><shift>`` such as ``2023+2``, ``2023-1`` or ``2023+0``, where the year is the
        year of the trace's first unshifted day.

    Raises
    ------
    ScenarioError
        When no past year has the whole window, or the blend path does not fit the window.
    """
    start = _timestamp(start, "start")
    days = _check_int(days, "days", 1, 3660)
    shift_days = _check_int(shift_days, "shift_days", 0, 60)
    warming = float(warming_c)
    if not np.isfinite(warming):
        raise InputError(
            "the warming offset is not a number", where="warming_c", fix="Use e.g. 1.0"
        )
    weight = float(blend_weight)
    if not 0.0 <= weight <= 1.0:
        raise InputError(
            f"blend weight must be between 0 and 1, got {blend_weight}",
            where="blend_weight",
            fix="Use 0 for pure history, 1 for the planner's path only",
        )
    if weight > 0 and blend_path is None:
        raise InputError(
            "a blend weight was given without a blend path",
            where="blend_path",
            fix="Give the planner's temperature path or set the weight to 0",
        )

    temps = history.frame["temperature_c"].astype(float)
    temps = temps[temps.notna()]
    dates = pd.date_range(start, periods=days, freq="D", name="date")
    if temps.empty:
        raise ScenarioError(
            "the history has no temperatures",
            where="temperature_c",
            fix="Load a history with temperatures",
        )
    first, last = temps.index.min(), min(temps.index.max(), start - pd.Timedelta(days=1))
    shifts = range(-shift_days, shift_days + 1)

    columns: dict[str, np.ndarray] = {}
    for year in range(first.year - 1, start.year + 1):
        anchor = _same_day_in_year(start, year)
        if anchor >= start:
            continue
        lo = anchor - pd.Timedelta(days=shift_days)
        hi = anchor + pd.Timedelta(days=days - 1 + shift_days)
        if lo < first or hi > last:
            continue
        block = temps.reindex(pd.date_range(lo, hi, freq="D"))
        if block.isna().any():
            log.info("skipping %s: temperature gap inside the window", year)
            continue
        values = block.to_numpy()
        for shift in shifts:
            offset = shift + shift_days
            columns[f"{year}{shift:+d}"] = values[offset : offset + days]

    if not columns:
        need = days + 2 * shift_days
        raise ScenarioError(
            f"no past year holds the whole {days}-day window plus {shift_days} day(s) of shift "
            f"on each side before {start.date()}",
            where=f"history {first.date()} to {temps.index.max().date()}",
            fix=f"Use a history with at least one full year before the window, a window shorter than "
            f"{need} days, or fewer shift days",
        )

    frame = pd.DataFrame(columns, index=dates)
    if widen_for_few_years:
        n_years = len({int(name[:4]) for name in columns})
        centre = frame.mean(axis=1)
        factor = float(np.sqrt(1.0 + 1.0 / n_years))
        frame = frame.sub(centre, axis=0).mul(factor).add(centre, axis=0)
    frame += warming
    if blend_path is not None and weight > 0:
        path = _blend_values(blend_path, dates)
        frame = frame.mul(1.0 - weight).add(path * weight, axis=0)
    log.debug("built %d temperature traces for %s + %d days", frame.shape[1], start.date(), days)
    return frame


def variance_split(pooled: np.ndarray) -> dict[str, np.ndarray]:
    """Split the predictive variance of each day into weather and error parts.

    Law of total variance over traces: ``Var(Y) = E[Var(Y | trace)] + Var(E[Y | trace])``.
    With the same number of paths per trace and population (ddof 0) variances the two parts
    add up exactly to the pooled sample variance.

    Parameters
    ----------
    pooled : ndarray, shape (n_traces, n_paths, days)
        Demand paths in MW grouped by trace.

    Returns
    -------
    dict with ``within`` (error part), ``between`` (weather part), ``total`` and ``share``
    (between / total, 0 where the total is 0), each of shape (days,), MW^2 except ``share``.
    """
    cube = np.asarray(pooled, dtype=float)
    if cube.ndim != 3:
        raise InputError(
            "paths must be grouped as (traces, paths, days)", where="pooled", fix="Reshape"
        )
    within = cube.var(axis=1).mean(axis=0)
    between = cube.mean(axis=1).var(axis=0)
    total = within + between
    with np.errstate(divide="ignore", invalid="ignore"):
        share = np.where(total > 0, between / total, 0.0)
    return {"within": within, "between": between, "total": total, "share": share}


@dataclass(frozen=True)
class PeakDistribution:
    """Distribution of the window peak: each pooled path's highest daily demand.

    Attributes
    ----------
    values_mw : ndarray
        One window maximum per pooled path, MW.
    quantiles : dict
        Column name (``p10`` ...) to MW.
    mean_mw : float
    counts, edges : ndarray
        Histogram of ``values_mw`` (``PEAK_BINS`` bins; edges in MW).
    """

    values_mw: np.ndarray = field(repr=False)
    quantiles: dict[str, float]
    mean_mw: float
    counts: np.ndarray = field(repr=False)
    edges: np.ndarray = field(repr=False)

    def to_frame(self) -> pd.DataFrame:
        """Histogram as a table: ``low_mw``, ``high_mw``, ``paths``, ``share``."""
        total = max(int(self.counts.sum()), 1)
        return pd.DataFrame(
            {
                "low_mw": self.edges[:-1],
                "high_mw": self.edges[1:],
                "paths": self.counts,
                "share": self.counts / total,
            }
        )


@dataclass(frozen=True)
class EnsembleResult:
    """Pooled weather-ensemble forecast for a window.

    Attributes
    ----------
    daily : pandas.DataFrame
        One row per day: ``date``, ``day_type``, the quantile columns (``p10``, ``p50``,
        ``p90`` and the requested ones), ``mean`` (MW), ``weather_share`` (share of that day's
        predictive variance due to weather), and ``prob_above`` when a threshold was given.
    traces : pandas.DataFrame
        The temperature traces used (°C), as from :func:`temperature_traces`.
    peak_distribution : PeakDistribution
    prob_any_above : float or None
        Share of pooled paths with at least one day above the threshold.
    expected_days_above : float or None
        Expected number of days above the threshold in the window.
    weather_share : float
        ``weather_share`` averaged over the window days.
    n_traces, n_paths : int
        Number of temperature traces and of pooled paths (traces x paths per trace).
    threshold_mw : float or None
    quantiles : tuple of float
    out_of_range_share : float
        Share of trace temperatures outside the temperature range the model was fitted on.
    note : str
        How the ensemble was made, with the planning caution.
    """

    daily: pd.DataFrame
    traces: pd.DataFrame = field(repr=False)
    peak_distribution: PeakDistribution
    prob_any_above: float | None
    expected_days_above: float | None
    weather_share: float
    n_traces: int
    n_paths: int
    threshold_mw: float | None
    quantiles: tuple[float, ...]
    out_of_range_share: float
    note: str

    def summary(self) -> dict[str, Any]:
        """Window figures as a JSON-ready dict."""
        peak = self.peak_distribution
        return {
            "start": str(self.daily["date"].iloc[0].date()),
            "end": str(self.daily["date"].iloc[-1].date()),
            "days": len(self.daily),
            "n_traces": self.n_traces,
            "n_paths": self.n_paths,
            "weather_share": round(self.weather_share, 4),
            "peak_mean_mw": round(peak.mean_mw, 1),
            "peak_quantiles_mw": {k: round(v, 1) for k, v in peak.quantiles.items()},
            "threshold_mw": self.threshold_mw,
            "prob_any_above": None
            if self.prob_any_above is None
            else round(self.prob_any_above, 4),
            "expected_days_above": None
            if self.expected_days_above is None
            else round(self.expected_days_above, 3),
            "out_of_range_share": round(self.out_of_range_share, 4),
            "note": self.note,
        }


def _day_type_values(model, dates: pd.DatetimeIndex, day_types) -> pd.Series:
    if day_types is None:
        return pd.Series(list(model.calendar_types(dates)), index=dates).astype(str)
    if isinstance(day_types, pd.Series):
        series = _on_dates(
            day_types,
            dates,
            "no day type",
            "Give a day type for every day of the window, or leave day types to the calendar",
        )
    else:
        values = list(day_types)
        if len(values) != len(dates):
            raise ScenarioError(
                f"{len(values)} day types given for a {len(dates)}-day window",
                where="day_types",
                fix="Give one day type per window day",
            )
        series = pd.Series(values, index=dates, dtype=object)
    filled = fill_blank_day_types(list(series), model.calendar_types(dates), where="day_types")
    return pd.Series(filled, index=dates, dtype=object).astype(str)


def pool_trace_paths(
    model,
    traces: pd.DataFrame,
    *,
    day_types=None,
    paths_per_trace: int = 200,
    seed: int = 0,
    progress: ProgressFn | None = None,
) -> np.ndarray:
    """Demand paths for every temperature trace, grouped by trace.

    One call of ``model.simulate_noise`` draws ``paths_per_trace`` error paths from the end of
    the model's history (through the gap before a window that starts later); the same error paths are added to every trace's linear predictor, with
    the spread of the estimated regression coefficients (``model.coefficient_draws``, the same
    coefficient draws for every trace). This
    is exact for each trace's predictive distribution because the model's error process does not
    depend on temperature: conditional on a trace, the demand paths are the trace's predictor
    plus draws of that error process. Reusing the draws only makes the traces share their error
    draws (common random numbers), which sharpens comparisons between traces and saves
    ``n_traces - 1`` simulations.

    Parameters
    ----------
    model : FittedModel
    traces : pandas.DataFrame
        Temperature traces (°C) on the future dates, one column each.
    day_types : sequence or pandas.Series, optional
        Day types for the dates; from the model's calendar when omitted.
    paths_per_trace : int
    seed : int
    progress : callable, optional
        ``progress(done, total, text)``, called once per trace.

    Returns
    -------
    ndarray, shape (n_traces, paths_per_trace, days), MW.
    """
    paths_per_trace = _check_int(paths_per_trace, "paths_per_trace", 1, 1_000_000)
    dates = pd.DatetimeIndex(traces.index)
    types = _day_type_values(model, dates, day_types)
    horizon = len(dates)
    gap = int((dates[0] - pd.Timestamp(model.history_end).normalize()).days) - 1
    if gap < 0:
        raise ScenarioError(
            f"The window starts on {dates[0].date()}, inside the model's history "
            f"(to {pd.Timestamp(model.history_end).date()})",
            where="weather ensemble window",
            fix="Start the window after the history's last day",
        )
    # A far window: the error paths run through the gap between the history and the window.
    noise = model.simulate_noise(
        horizon, paths_per_trace, seed, **({"gap_days": gap} if gap else {})
    )
    noise = np.asarray(noise, dtype=float)
    if noise.shape != (paths_per_trace, horizon):
        raise LoadcoreError(
            f"the model returned error paths of shape {noise.shape}",
            where="simulate_noise",
            fix="Report this as a bug",
        )
    n_traces = traces.shape[1]
    calendar = [str(t) for t in model.calendar_types(dates)]
    given = [str(t) for t in types]
    # Day types go to the scenario only where they differ from the model's own calendar.
    scenario_types = None if given == calendar else tuple(given)
    predictors = np.empty((n_traces, horizon))
    coefficients = np.zeros((n_traces, paths_per_trace, horizon))
    draws = getattr(model, "coefficient_draws", None)
    for i, name in enumerate(traces.columns):
        scenario = Scenario(
            name=str(name),
            dates=dates,
            temperature_c=traces[name].to_numpy(dtype=float),
            day_types=scenario_types,
        )
        predictors[i] = np.asarray(model.linear_predictor(scenario), dtype=float)
        if draws is not None:  # the estimated coefficients' spread, same draws for every trace
            coefficients[i] = draws(scenario, paths_per_trace, seed)
        if progress is not None:
            progress(i + 1, n_traces, f"trace {name}")
    paths = predictors[:, None, :] + noise[None, :, :] + coefficients
    return np.asarray(model.to_demand(paths), dtype=float)


def ensemble_forecast(
    model,
    *,
    days: int = 30,
    start=None,
    shift_days: int = DEFAULT_SHIFT_DAYS,
    warming_c: float = 0.0,
    paths_per_trace: int = 200,
    seed: int = 0,
    quantiles: Sequence[float] = BASE_QUANTILES,
    threshold_mw: float | None = None,
    day_types=None,
    blend_path=None,
    blend_weight: float = 0.0,
    progress: ProgressFn | None = None,
) -> EnsembleResult:
    """Weather-ensemble forecast for a window of days after the model's history.

    Temperature traces from the model's own history (:func:`temperature_traces`), the model's
    error paths added to each (:func:`pool_trace_paths`), all paths pooled into one predictive
    distribution of daily demand.

    Parameters
    ----------
    model : FittedModel
    days : int
        Window length, days (1 to :data:`loadcore.scenario.MAX_DAYS`).
    start : date-like, optional
        First day of the window: from the day after the history ends (the default) to
        :data:`loadcore.scenario.MAX_LEAD_MONTHS` months after it. The error paths run through
        the gap before it.
    shift_days, warming_c, blend_path, blend_weight
        As for :func:`temperature_traces` (°C).
    paths_per_trace : int
        Error paths per trace; the pool has ``n_traces * paths_per_trace`` paths.
    seed : int
        Seed of the error paths.
    quantiles : sequence of float
        Extra quantile levels in (0, 1); p10, p50 and p90 are always given.
    threshold_mw : float, optional
        A demand level (MW) for exceedance figures.
    day_types : sequence or pandas.Series, optional
        Day types for the window; from the model's calendar when omitted.
    progress : callable, optional
        ``progress(done, total, text)``.

    Returns
    -------
    EnsembleResult
    """
    probs = sorted({float(q) for q in (*BASE_QUANTILES, *quantiles)})
    if any(not 0.0 < q < 1.0 for q in probs):
        raise InputError(
            "quantile levels must lie strictly between 0 and 1",
            where="quantiles",
            fix="Use levels such as 0.05 or 0.95",
        )
    threshold = None
    if threshold_mw is not None:
        threshold = float(threshold_mw)
        if not np.isfinite(threshold) or threshold <= 0:
            raise InputError(
                f"the threshold must be a positive demand in MW, got {threshold_mw}",
                where="threshold_mw",
                fix="Give a level such as 2500",
            )

    end = pd.Timestamp(model.history_end).normalize()
    if start is None:
        start = end + pd.Timedelta(days=1)
    start = _timestamp(start, "start")
    check_start(start, end, "weather ensemble window")
    check_length(_check_int(days, "days", 1), "weather ensemble window")
    traces = temperature_traces(
        model.history,
        start,
        days,
        shift_days=shift_days,
        warming_c=warming_c,
        blend_path=blend_path,
        blend_weight=blend_weight,
    )
    dates = pd.DatetimeIndex(traces.index)
    types = _day_type_values(model, dates, day_types)
    cube = pool_trace_paths(
        model,
        traces,
        day_types=types,
        paths_per_trace=paths_per_trace,
        seed=seed,
        progress=progress,
    )
    n_traces, n_each, horizon = cube.shape
    flat = cube.reshape(n_traces * n_each, horizon)

    qvals = sample_quantiles(flat, probs, axis=0)
    daily = pd.DataFrame({"date": dates, "day_type": types.to_numpy()})
    for q, row in zip(probs, qvals, strict=True):
        daily[quantile_column(q)] = row
    daily["mean"] = flat.mean(axis=0)
    split = variance_split(cube)
    daily["weather_share"] = split["share"]

    peaks = flat.max(axis=1)
    counts, edges = np.histogram(peaks, bins=PEAK_BINS)
    peak_q = sample_quantiles(peaks, probs)
    peak = PeakDistribution(
        values_mw=peaks,
        quantiles={quantile_column(q): float(v) for q, v in zip(probs, peak_q, strict=True)},
        mean_mw=float(peaks.mean()),
        counts=counts,
        edges=edges,
    )

    prob_any = expected = None
    if threshold is not None:
        above = flat > threshold
        daily["prob_above"] = above.mean(axis=0)
        prob_any = float(above.any(axis=1).mean())
        expected = float(above.sum(axis=1).mean())

    low, high = model.temperature_range_c
    values = traces.to_numpy()
    out_share = float(((values < low) | (values > high)).mean())
    if out_share > 0:
        log.warning(
            "%.1f %% of trace temperatures lie outside the fitted range %.1f to %.1f °C",
            100 * out_share,
            low,
            high,
        )
    note = (
        f"{n_traces} temperature traces from past years (shifts up to {shift_days} day(s)"
        f"{f', warming {warming_c:+.1f} °C' if warming_c else ''}"
        f"{f', blended {blend_weight:.0%} toward a planner path' if blend_path is not None and blend_weight else ''}"
        f") x {n_each} error paths each, the traces widened by sqrt(1 + 1/years) for the few "
        f"years seen. {texts.ENSEMBLE_CAUTION} {texts.PLANNING_CAUTION}"
    )
    return EnsembleResult(
        daily=daily,
        traces=traces,
        peak_distribution=peak,
        prob_any_above=prob_any,
        expected_days_above=expected,
        weather_share=float(np.mean(split["share"])),
        n_traces=n_traces,
        n_paths=n_traces * n_each,
        threshold_mw=threshold,
        quantiles=tuple(probs),
        out_of_range_share=out_share,
        note=note,
    )


def ensemble_table(result: EnsembleResult) -> pd.DataFrame:
    """The CSV table of an ensemble: ``date``, the quantile columns, ``mean``, ``prob_above``."""
    columns = ["date", *[quantile_column(q) for q in result.quantiles], "mean"]
    if result.threshold_mw is not None:
        columns.append("prob_above")
    return result.daily[columns].copy()
