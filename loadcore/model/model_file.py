"""The model file: a fitted model as plain JSON (no pickle), format 2, and the reader of format 1.

Format 2 (written since the model package; every name is ours)::

    kind              "loadcore fitted model"
    format_version    2
    fitted_at         UTC time the parameters were estimated (ISO, seconds)
    versions          loadcore, statsmodels, numpy, pandas that wrote the file
    settings          FitSettings.to_dict(): search, ar_up_to, ma_up_to, ar_ma_up_to,
                      weekly_ar_up_to, weekly_ma_up_to, log, terms, calendar, workers
    history           start, demand, temperature_c, temperature_filled, demand_unit,
                      fingerprint (the daily history the model was fitted on), and
                      temperature_min_c when the history has the daily minimum
    design            columns, day_type_levels, base_type, origin, intercept
    errors            Orders.to_dict(): ar, differencing, ma, weekly_ar,
                      weekly_differencing, weekly_ma
    parameter_names   regression columns, then error_ar_1.., error_ma_1..,
                      error_weekly_ar_1.. (lag 7), error_weekly_ma_1.., shock_variance
    parameters        their values, model scale
    covariance        the parameter covariance (rows and columns as parameter_names)
    log_likelihood, aicc, observations_used, converged
    differencing_tests  differencing, weekly_differencing, kpss_statistics,
                      kpss_critical_5pct, weekly_seasonal_strength (null when not tested)
    end_state         mean, covariance, transition, observation, selection,
                      shock_covariance, observation_variance (EndState)
    residuals         start, values (one-step prediction errors, model scale)
    candidates        the search's candidate table, one object per row
    response_comparison  (optional; files written before it have none) asked (quadratic,
                      degree_days or auto), fitted and other (each: terms, columns,
                      coefficients, log_likelihood, aicc, bases_estimated), seconds
    memory_selection  the memory terms' fits (loadcore.model.memory): one object per fit with
                      terms (kept groups, "past", "minimum"), aicc (null when not usable), kept;
                      absent in files written before it (read as no selection). The kept terms
                      are also in design.columns (temp_past, hdd_min...) and the smoothing
                      weight in settings.terms.memory_weight

Format 1 (loadcore 0.1) mirrored a statistics library's spelling (``orders`` as a list,
``param_names`` such as ``ar.S.L7`` and ``sigma2``, ``cov_params``, ``max_p``...); it is read by
translating it into format 2 first (:func:`upgrade_format_1`).
"""

from __future__ import annotations

import json
from collections.abc import Callable
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from .. import checks, files, plainjson, units
from ..errors import InputError, LoadcoreError, ModelError, clip, quote
from ..history import HistorySettings, history_from_frame
from ..version import __version__
from . import file_checks
from .memory import MemoryTrial
from .orders import WEEKLY_PERIOD, DifferencingDecision, Orders
from .response import ResponseComparison
from .settings import FitSettings
from .statespace import EndState, own_name
from .terms import MEMORY_GROUPS

KIND = "loadcore fitted model"
FORMAT_VERSION = 2
READABLE_VERSIONS = (1, 2)

#: Search-bound names of model files written before loadcore 0.2 (format 1).
_OLD_SETTING_NAMES = {
    "max_p": "ar_up_to",
    "max_q": "ma_up_to",
    "max_pq": "ar_ma_up_to",
    "max_P": "weekly_ar_up_to",
    "max_Q": "weekly_ma_up_to",
}

#: End-state keys of format 1 (Durbin and Koopman's letters) and their format-2 names.
_OLD_STATE_NAMES = {
    "a": "mean",
    "P": "covariance",
    "T": "transition",
    "Z": "observation",
    "R": "selection",
    "Q": "shock_covariance",
    "H": "observation_variance",
}


def _nan_to_none(values: np.ndarray) -> list:
    return [None if not np.isfinite(v) else float(v) for v in values]


def _none_if_nan(v: float | None) -> float | None:
    return None if v is None or not np.isfinite(v) else float(v)


def _floats(values) -> np.ndarray:
    return np.array([np.nan if v is None else float(v) for v in values], float)


def _nan_if_none(v: Any) -> float:
    return float("nan") if v is None else float(v)


# --------------------------------------------------------------------------------------------
# Writing
# --------------------------------------------------------------------------------------------


def model_to_dict(model: Any) -> dict:
    """The model file of a :class:`~loadcore.model.FittedModel`, format 2, as plain JSON."""
    import statsmodels

    frame = model.history.frame
    hs = getattr(model.history, "settings", None)
    diff = model.differencing
    return {
        "kind": KIND,
        "format_version": FORMAT_VERSION,
        "fitted_at": model.fitted_at,
        "versions": {
            "loadcore": __version__,
            "statsmodels": statsmodels.__version__,
            "numpy": np.__version__,
            "pandas": pd.__version__,
        },
        "settings": model.settings.to_dict(),
        "history": {
            "start": frame.index[0].date().isoformat(),
            "demand": _nan_to_none(frame["demand"].to_numpy(float)),
            "temperature_c": _nan_to_none(frame["temperature_c"].to_numpy(float)),
            "temperature_filled": [
                bool(v)
                for v in frame.get("temperature_filled", pd.Series(False, index=frame.index))
            ],
            "demand_unit": getattr(hs, "demand_unit", "MW"),
            "fingerprint": model.history.fingerprint,
            **(
                {"temperature_min_c": _nan_to_none(frame["temperature_min_c"].to_numpy(float))}
                if "temperature_min_c" in frame
                else {}
            ),
        },
        "design": {
            "columns": list(model.columns),
            "day_type_levels": list(model.day_type_levels),
            "base_type": model.base_type,
            "origin": model.origin.date().isoformat(),
            "intercept": model.intercept,
        },
        "errors": model.orders.to_dict(),
        "parameter_names": list(model.param_names),
        "parameters": model.params.tolist(),
        "covariance": model.covariance.tolist(),
        "log_likelihood": model.loglik,
        "aicc": model.aicc,
        "observations_used": model.n_obs,
        "converged": model.converged,
        "differencing_tests": {
            "differencing": diff.d,
            "weekly_differencing": diff.D,
            "kpss_statistics": list(diff.kpss_statistics),
            "kpss_critical_5pct": _none_if_nan(diff.kpss_critical_5pct),
            "weekly_seasonal_strength": _none_if_nan(diff.seasonal_strength),
        },
        "end_state": model.end_state.to_dict(),
        "residuals": {
            "start": model.residuals.index[0].date().isoformat(),
            "values": _nan_to_none(model.residuals.to_numpy(float)),
        },
        "candidates": json.loads(model.candidates.to_json(orient="records")),
        **(
            {"response_comparison": model.response_comparison.to_dict()}
            if model.response_comparison is not None
            else {}
        ),
        "memory_selection": [
            {"terms": list(t.terms), "aicc": _nan_to_none([t.aicc])[0], "kept": bool(t.kept)}
            for t in model.memory_trials
        ],
    }


# --------------------------------------------------------------------------------------------
# Reading
# --------------------------------------------------------------------------------------------


def upgrade_format_1(data: dict) -> dict:
    """A format-1 model file translated into format 2 (our names for everything).

    Raises KeyError, TypeError or ValueError for a damaged file (the reader turns them into
    one ModelError).
    """
    design = data["design"]
    columns = tuple(str(c) for c in design["columns"])
    p, d, q, P, D, Q, period = (int(v) for v in data["orders"])
    if period != WEEKLY_PERIOD:
        raise ValueError(f"seasonal period {period} is not weekly")
    orders = Orders(p, d, q, P, D, Q)
    old_names = [str(n) for n in data["param_names"]]
    if len(old_names) < len(columns):
        raise ValueError("fewer parameter names than regression columns")
    names = [*columns, *(own_name(n, period) for n in old_names[len(columns) :])]
    diff = data["differencing"]
    return {
        "kind": KIND,
        "format_version": 1,
        "fitted_at": data.get("saved_at", ""),
        "settings": {_OLD_SETTING_NAMES.get(k, k): v for k, v in dict(data["settings"]).items()},
        "history": data["history"],
        "design": {
            "columns": list(columns),
            "day_type_levels": design["levels"],
            "base_type": design["base_type"],
            "origin": design["origin"],
            "intercept": design["intercept"],
        },
        "errors": orders.to_dict(),
        "parameter_names": names,
        "parameters": data["params"],
        "covariance": data["cov_params"],
        "log_likelihood": data["loglik"],
        "aicc": data["aicc"],
        "observations_used": data["n_obs"],
        "converged": data["converged"],
        "differencing_tests": {
            "differencing": diff["d"],
            "weekly_differencing": diff["D"],
            "kpss_statistics": diff["kpss_statistics"],
            "kpss_critical_5pct": diff["kpss_critical_5pct"],
            "weekly_seasonal_strength": diff["seasonal_strength"],
        },
        "end_state": {new: data["state"][old] for old, new in _OLD_STATE_NAMES.items()},
        "residuals": data["residuals"],
        "candidates": data["candidates"],
    }


def _document(source: str | Path | bytes) -> tuple[dict, str]:
    """The parsed JSON document and a place name for messages; ModelError when it is not a
    readable loadcore model file of a known format."""
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
    if not isinstance(data, dict) or data.get("kind") != KIND:
        raise ModelError(
            "This is not a loadcore model file",
            where=where,
            fix="Use a file written by 'loadcore fit' or the app's model download",
        )
    version = data.get("format_version")
    if isinstance(version, bool) or version not in READABLE_VERSIONS:
        raise ModelError(
            f"Unsupported model file version {quote(version)}",
            where=where,
            fix="Refit the model with this version of loadcore",
        )
    return data, where


def _history(h: dict, where: str):
    demand = _floats(h["demand"])
    temps = _floats(h["temperature_c"])
    finite = temps[np.isfinite(temps)]
    if finite.size and (
        finite.min() < units.PLAUSIBLE_MIN_C or finite.max() > units.PLAUSIBLE_MAX_C
    ):
        raise ModelError(
            "The history inside the model file has temperatures outside the plausible range",
            where=f"{where}, history",
            fix="Refit the model or use the original file",
        )
    unit = checks.text(h.get("demand_unit", "MW"), "demand_unit", 20, where="history")
    idx = pd.date_range(pd.Timestamp(h["start"]), periods=len(demand), freq="D", name="date")
    frame = pd.DataFrame(
        {
            "demand": demand,
            "temperature_c": temps,
            "temperature_filled": np.asarray(h["temperature_filled"], bool),
        },
        index=idx,
    )
    if "temperature_min_c" in h:
        frame["temperature_min_c"] = _floats(h["temperature_min_c"])
    history = history_from_frame(frame, settings=HistorySettings(demand_unit=unit))
    if history.fingerprint != h["fingerprint"]:
        raise ModelError(
            "The history inside the model file does not match its fingerprint",
            where=where,
            fix="The file was changed; refit or use the original",
        )
    return history


#: Columns every candidate table has (see loadcore.model.search.candidate_table).
CANDIDATE_COLUMNS = (
    *Orders(0, 0, 0, 0, 0, 0).to_dict(),
    "screening_aicc",
    "aicc",
    "exact_fit",
    "converged",
    "stationary_invertible",
    "chosen",
    "note",
)


def _candidates(rows: Any) -> pd.DataFrame:
    if not isinstance(rows, list) or not rows or not all(isinstance(r, dict) for r in rows):
        raise ValueError("the candidate table is not a list of rows")
    table = pd.DataFrame(rows)
    missing = [c for c in CANDIDATE_COLUMNS if c not in table.columns]
    if missing:
        raise KeyError(f"candidate columns {missing}")
    return table


def _flag(value: Any, what: str) -> bool:
    if not isinstance(value, bool):
        raise TypeError(f"{what} must be true or false, got {quote(value)}")
    return value


def model_fields(data: dict, where: str) -> dict[str, Any]:
    """The FittedModel fields of a format-2 document (a format-1 one is upgraded first)."""
    if data.get("format_version") == 1:
        data = upgrade_format_1(data)
    design = data["design"]
    tests = data["differencing_tests"]
    r = data["residuals"]
    values = _floats(r["values"])
    return {
        "settings": FitSettings.from_dict(data["settings"]),
        "history": _history(data["history"], where),
        "orders": Orders.from_dict(data["errors"]),
        "columns": tuple(design["columns"]),
        "day_type_levels": tuple(design["day_type_levels"]),
        "base_type": str(design["base_type"]),
        "origin": pd.Timestamp(design["origin"]),
        "intercept": _flag(design["intercept"], "design.intercept"),
        "params": np.asarray(data["parameters"], float),
        "param_names": tuple(data["parameter_names"]),
        "covariance": np.asarray(data["covariance"], float),
        "loglik": float(data["log_likelihood"]),
        "aicc": float(data["aicc"]),
        "n_obs": int(data["observations_used"]),
        "converged": _flag(data["converged"], "converged"),
        "candidates": _candidates(data["candidates"]),
        "differencing": DifferencingDecision(
            int(tests["differencing"]),
            int(tests["weekly_differencing"]),
            tuple(float(v) for v in tests["kpss_statistics"]),
            _nan_if_none(tests["kpss_critical_5pct"]),
            _nan_if_none(tests["weekly_seasonal_strength"]),
        ),
        "end_state": EndState.from_dict(data["end_state"]),
        "residuals": pd.Series(
            values,
            index=pd.date_range(r["start"], periods=len(values), freq="D", name="date"),
            name="residual",
        ),
        "fitted_at": str(data.get("fitted_at", "")),
        "response_comparison": (
            ResponseComparison.from_dict(data["response_comparison"])
            if data.get("response_comparison") is not None
            else None
        ),
        "memory_trials": _memory_trials(data.get("memory_selection", [])),
    }


def _memory_trials(rows: Any) -> tuple[MemoryTrial, ...]:
    if not isinstance(rows, list) or not all(isinstance(r, dict) for r in rows):
        raise ValueError("the memory selection is not a list of fits")
    trials = []
    for row in rows:
        terms = row["terms"]
        if not isinstance(terms, list) or not set(terms) <= set(MEMORY_GROUPS):
            raise ValueError(f"memory terms {clip(terms)} are not ones loadcore writes")
        aicc = row["aicc"]
        trials.append(
            MemoryTrial(
                tuple(str(t) for t in terms),
                float("nan")
                if aicc is None
                else checks.real_number(
                    aicc, "memory_selection.aicc", -1e12, 1e12, where="model file"
                ),
                _flag(row["kept"], "memory_selection.kept"),
            )
        )
    return tuple(trials)


def read_model(source: str | Path | bytes, build: Callable[..., Any]):
    """Read a model file and ``build(**fields)`` the model (the FittedModel class).

    Raises
    ------
    ModelError
        One clear error for anything that is not an intact model file.
    """
    data, where = _document(source)
    try:
        model = build(**model_fields(data, where))
        file_checks.check_loaded(model)
        return model
    except ModelError as exc:
        if exc.where in (None, "", where):
            raise ModelError(exc.problem, where=where, fix=exc.fix) from None
        raise ModelError(exc.problem, where=f"{where}, {exc.where}", fix=exc.fix) from None
    except LoadcoreError as exc:
        raise ModelError(
            f"The model file has invalid settings: {exc.problem}",
            where=where,
            fix="Refit the model",
        ) from None
    except (KeyError, TypeError, ValueError, IndexError, AttributeError, OverflowError) as exc:
        raise ModelError(
            f"The model file is incomplete or damaged ({exc.__class__.__name__}: {clip(exc)})",
            where=where,
            fix="Refit the model or use the original file",
        ) from None
