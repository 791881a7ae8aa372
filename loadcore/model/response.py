"""The other temperature response: fitted beside the chosen one, with the same error orders.

Every fit also fits the response it was not asked for (degree days beside the quadratic, the
quadratic beside degree days) with the error orders the search chose, so that a planner learns
when the other shape describes the history much better (:data:`MARGIN_AICC`).

Degree-day bases are estimated by profile likelihood on a grid of whole degrees
(:func:`profile_bases`). For given error parameters the regression is generalised least squares
on the whitened columns (:mod:`loadcore.model.likelihood`), and the log-determinant does not
depend on the regressors, so the profile over bases is a sum-of-squares comparison: every
candidate heating and cooling column is whitened once, the fixed columns are projected out, and
each pair of bases costs a 2 x 2 solve. Two rounds (profile at the chosen model's error
parameters, exact fit at the best pair, profile again at the new error parameters) settle the
bases; the exact fit is :func:`loadcore.model.exact.exact_fit` from the chosen model's error
parameters, so it takes a few steps.

The AICc of a response whose bases were estimated counts the two bases as parameters. The
work runs with one BLAS thread (:func:`loadcore.model.workers.single_blas`), as the search does:
the matrices are small and a multi-threaded BLAS on a shared machine was several times slower.
"""

from __future__ import annotations

import dataclasses
import logging
import time
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy.linalg import LinAlgError, cho_factor, cho_solve

from ..errors import LoadcoreError
from .exact import ExactFit, exact_fit
from .identify import MIN_DEGREE_DAYS, check_temperature_terms
from .likelihood import RegressionArima
from .orders import Orders, aicc
from .terms import TermSpec
from .workers import single_blas

log = logging.getLogger(__name__)

#: The other response is reported as better when its AICc is lower by more than this (issue 9's
#: threshold; differences of AICc above 10 leave essentially no support for the worse model:
#: Burnham and Anderson, 2002, section 2.6).
MARGIN_AICC = 10.0

#: Spacing of the grid of degree-day bases, °C (our choice: whole degrees, finer than the
#: accuracy with which a daily history fixes a base).
BASE_STEP_C = 1.0

#: Rounds of profile-then-exact-fit for the bases (our choice: the second round re-profiles at
#: the degree-day fit's own error parameters; on the demo and the simulated histories of
#: benchmarks/bench_response.py it kept the first round's pair).
PROFILE_ROUNDS = 2

#: Stopping rule of the other response's exact fits (:data:`loadcore.model.exact.EXACT_FTOL`):
#: the ranking tolerance, whose AICc is within about 0.02 of the final one; far finer than
#: :data:`MARGIN_AICC`. A response that ``auto`` keeps is refitted at the final tolerance.
EXACT_TOLERANCE = "rank"

#: The responses by name, and the other one of each.
OTHER_RESPONSE = {"quadratic": "degree_days", "degree_days": "quadratic"}

#: Builds the regression columns of the history for a temperature response (the fit's own
#: builder, differencing applied), so the other response gets every other column unchanged.
DesignBuilder = Callable[[TermSpec], pd.DataFrame]


@dataclass(frozen=True)
class ResponseFit:
    """One temperature response fitted with the model's error orders.

    Attributes
    ----------
    terms : TermSpec
        The regressor settings (bases included).
    columns : tuple of str
        Regression columns.
    beta : array
        Regression coefficients, model scale per unit of each column.
    loglik : float
        Exact log-likelihood (natural log), the same data and differencing as the model.
    aicc : float
        AICc (Hurvich and Tsai, 1989), counting estimated bases as parameters.
    bases_estimated : bool
        Whether the degree-day bases were estimated by the profile (two more parameters).
    """

    terms: TermSpec
    columns: tuple[str, ...]
    beta: np.ndarray
    loglik: float
    aicc: float
    bases_estimated: bool = False

    def __post_init__(self) -> None:
        beta = np.array(self.beta, float)
        beta.setflags(write=False)
        object.__setattr__(self, "beta", beta)
        object.__setattr__(self, "columns", tuple(str(c) for c in self.columns))
        object.__setattr__(self, "loglik", float(self.loglik))
        object.__setattr__(self, "aicc", float(self.aicc))

    @property
    def response(self) -> str:
        return self.terms.response

    def to_dict(self) -> dict:
        return {
            "terms": self.terms.to_dict(),
            "columns": list(self.columns),
            "coefficients": [float(v) for v in self.beta],
            "log_likelihood": self.loglik,
            "aicc": self.aicc,
            "bases_estimated": bool(self.bases_estimated),
        }

    @classmethod
    def from_dict(cls, data: dict) -> ResponseFit:
        """Inverse of :meth:`to_dict` (raises KeyError, TypeError or ValueError when damaged)."""
        flag = data["bases_estimated"]
        if not isinstance(flag, bool):
            raise TypeError("bases_estimated must be true or false")
        return cls(
            terms=TermSpec.from_dict(data["terms"]),
            columns=tuple(str(c) for c in data["columns"]),
            beta=np.asarray(data["coefficients"], float),
            loglik=float(data["log_likelihood"]),
            aicc=float(data["aicc"]),
            bases_estimated=flag,
        )


@dataclass(frozen=True)
class ResponseComparison:
    """The model's temperature response beside the other one, with the same error orders.

    Attributes
    ----------
    asked : {"quadratic", "degree_days", "auto"}
        The response the settings asked for (``auto``: the lower AICc was kept).
    fitted : ResponseFit
        The response of the model.
    other : ResponseFit
        The other response.
    seconds : float
        Wall time the comparison added to the fit.
    """

    asked: str
    fitted: ResponseFit
    other: ResponseFit
    seconds: float = 0.0

    @property
    def aicc_gain(self) -> float:
        """How much lower the other response's AICc is (negative when it is worse)."""
        return self.fitted.aicc - self.other.aicc

    @property
    def other_is_better(self) -> bool:
        """Whether the other response is better by more than :data:`MARGIN_AICC`."""
        return bool(self.aicc_gain > MARGIN_AICC)

    def to_dict(self) -> dict:
        return {
            "asked": self.asked,
            "fitted": self.fitted.to_dict(),
            "other": self.other.to_dict(),
            "seconds": round(float(self.seconds), 3),
        }

    @classmethod
    def from_dict(cls, data: dict) -> ResponseComparison:
        """Inverse of :meth:`to_dict` (raises KeyError, TypeError or ValueError when damaged)."""
        asked = data["asked"]
        if asked not in (*OTHER_RESPONSE, "auto"):
            raise ValueError(f"unknown response {asked!r}")
        fitted = ResponseFit.from_dict(data["fitted"])
        other = ResponseFit.from_dict(data["other"])
        if OTHER_RESPONSE[fitted.response] != other.response:
            raise ValueError("the compared responses are not the two kinds")
        return cls(asked, fitted, other, float(data.get("seconds", 0.0)))


@dataclass(frozen=True)
class BaseProfile:
    """The profile log-likelihood of the degree-day bases at fixed error parameters.

    Attributes
    ----------
    heating_base_c, cooling_base_c : float
        The best pair of bases on the grid, °C.
    table : DataFrame
        ``heating_base_c``, ``cooling_base_c``, ``loglik`` (up to a constant) for every pair.
    """

    heating_base_c: float
    cooling_base_c: float
    table: pd.DataFrame


def base_grid(temperature_c: np.ndarray, has_demand: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Candidate heating and cooling bases, °C: whole degrees with at least
    :data:`loadcore.model.identify.MIN_DEGREE_DAYS` days with demand on their active side."""
    t = np.asarray(temperature_c, float)[np.asarray(has_demand, bool)]
    if len(t) == 0:
        return np.zeros(0), np.zeros(0)
    low = np.floor(t.min() / BASE_STEP_C) * BASE_STEP_C
    grid = np.arange(low, t.max() + BASE_STEP_C, BASE_STEP_C)
    below = np.array([(t < g).sum() for g in grid])
    above = np.array([(t > g).sum() for g in grid])
    return grid[below >= MIN_DEGREE_DAYS], grid[above >= MIN_DEGREE_DAYS]


def profile_bases(
    y: np.ndarray,
    build: DesignBuilder,
    terms: TermSpec,
    temperature_c: np.ndarray,
    orders: Orders,
    arma: np.ndarray,
) -> BaseProfile | None:
    """Profile log-likelihood of the degree-day bases at fixed error parameters ``arma``.

    Parameters
    ----------
    y : array
        The response (model scale; NaN on missing days).
    build : callable
        ``build(terms) -> DataFrame`` of the history's regression columns.
    terms : TermSpec
        Degree-day settings; only the bases change.
    temperature_c : array
        Daily temperature, °C.
    orders : Orders
        Error orders, differencing included.
    arma : array
        Error parameters the profile is taken at.

    Returns
    -------
    BaseProfile, or None when the grid is empty (a history without days on both sides).
    """
    t = np.asarray(temperature_c, float)
    heat, cool = base_grid(t, np.isfinite(y))
    pairs = [(h, c) for h in heat for c in cool if c >= h]
    if not pairs:
        return None
    frame = build(
        dataclasses.replace(terms, heating_base_c=float(heat[0]), cooling_base_c=float(cool[-1]))
    )
    fixed = frame.drop(columns=["hdd", "cdd"]).to_numpy(float)
    hdd = np.maximum(heat[None, :] - t[:, None], 0.0)
    cdd = np.maximum(t[:, None] - cool[None, :], 0.0)
    problem = RegressionArima(y, np.column_stack([fixed, hdd, cdd]), orders)
    wt, _logdet = problem.whiten(np.asarray(arma, float))
    # Everything below comes from the cross-products of the whitened columns: the fixed columns
    # (missing-day indicators first) are projected out through their Gram matrix, leaving the
    # cross-products of the candidate columns and the response orthogonal to them.
    n_fixed = problem.k_missing + fixed.shape[1]
    gram = wt.T @ wt
    factor = cho_factor(gram[:n_fixed, :n_fixed], lower=False, check_finite=False)
    cross = gram[:n_fixed, n_fixed:]
    rest = gram[n_fixed:, n_fixed:] - cross.T @ cho_solve(factor, cross, check_finite=False)
    nh = len(heat)
    hi = np.array([np.searchsorted(heat, h) for h, _ in pairs])
    ci = np.array([np.searchsorted(cool, c) for _, c in pairs])
    a1, a2 = rest[hi, -1], rest[nh + ci, -1]
    g11, g22, g12 = rest[hi, hi], rest[nh + ci, nh + ci], rest[hi, nh + ci]
    det = g11 * g22 - g12 * g12
    ok = det > 1e-12 * np.maximum(g11 * g22, 1e-300)
    explained = np.where(
        ok, (g22 * a1 * a1 - 2 * g12 * a1 * a2 + g11 * a2 * a2) / np.where(ok, det, 1.0), -np.inf
    )
    rss = float(rest[-1, -1]) - explained
    n = problem.n_obs
    with np.errstate(invalid="ignore", divide="ignore"):
        loglik = np.where(ok & (rss > 0), -0.5 * n * np.log(np.where(rss > 0, rss, 1.0)), -np.inf)
    best = int(np.argmax(loglik))
    table = pd.DataFrame({"heating_base_c": heat[hi], "cooling_base_c": cool[ci], "loglik": loglik})
    return BaseProfile(float(heat[hi[best]]), float(cool[ci[best]]), table)


def _exact(y: np.ndarray, frame: pd.DataFrame, orders: Orders, start: np.ndarray) -> ExactFit:
    problem = RegressionArima(y, frame.to_numpy(float), orders)
    return exact_fit(problem, start=start, covariance=False, tolerance=EXACT_TOLERANCE)


def _response_fit(
    terms: TermSpec, frame: pd.DataFrame, fit: ExactFit, estimated: bool
) -> ResponseFit:
    n_params = fit.n_params + (2 if estimated else 0)
    return ResponseFit(
        terms=terms,
        columns=tuple(frame.columns),
        beta=fit.beta,
        loglik=fit.loglik,
        aicc=aicc(fit.loglik, n_params, fit.n_obs),
        bases_estimated=estimated,
    )


def fit_degree_days(
    y: np.ndarray,
    build: DesignBuilder,
    terms: TermSpec,
    temperature_c: np.ndarray,
    orders: Orders,
    arma: np.ndarray,
) -> tuple[ResponseFit, ExactFit, pd.DataFrame] | None:
    """Degree days with bases estimated by the profile, exactly fitted with ``orders``.

    Returns the response's record, its exact fit and its regression columns, or None when the
    history has no pair of bases to estimate.
    """
    spec = dataclasses.replace(terms, response="degree_days")
    start = np.asarray(arma, float)
    fit = frame = chosen = None
    for _ in range(PROFILE_ROUNDS):
        profile = profile_bases(y, build, spec, temperature_c, orders, start)
        if profile is None:
            return None
        pair = (profile.heating_base_c, profile.cooling_base_c)
        if pair == chosen:
            break
        chosen = pair
        spec = dataclasses.replace(spec, heating_base_c=pair[0], cooling_base_c=pair[1])
        frame = build(spec)
        fit = _exact(y, frame, orders, start)
        start = fit.arma
    assert fit is not None and frame is not None
    return _response_fit(spec, frame, fit, True), fit, frame


def fit_quadratic(
    y: np.ndarray, build: DesignBuilder, terms: TermSpec, orders: Orders, arma: np.ndarray
) -> tuple[ResponseFit, ExactFit, pd.DataFrame]:
    """The quadratic response exactly fitted with ``orders`` (centre from ``terms``)."""
    spec = dataclasses.replace(terms, response="quadratic")
    frame = build(spec)
    fit = _exact(y, frame, orders, np.asarray(arma, float))
    return _response_fit(spec, frame, fit, False), fit, frame


@single_blas
def fit_other(
    y: np.ndarray,
    build: DesignBuilder,
    terms: TermSpec,
    temperature_c: np.ndarray,
    orders: Orders,
    arma: np.ndarray,
) -> tuple[ResponseFit, ExactFit, pd.DataFrame] | None:
    """The response other than ``terms.response``, fitted with ``orders``; None when it cannot
    be fitted on this history (the reason is logged)."""
    try:
        if terms.response == "quadratic":
            out = fit_degree_days(y, build, terms, temperature_c, orders, arma)
        else:
            out = fit_quadratic(y, build, terms, orders, arma)
        if out is not None:
            check_temperature_terms(
                out[2], np.asarray(temperature_c, float), np.isfinite(y), out[0].terms
            )
        return out
    except (LoadcoreError, LinAlgError, ValueError, FloatingPointError) as exc:
        log.info("the other temperature response was not fitted: %s", exc)
        return None


def comparison(
    asked: str, fitted: ResponseFit, other: ResponseFit, started: float
) -> ResponseComparison:
    """The comparison record, timed from ``started`` (``time.perf_counter()``)."""
    return ResponseComparison(asked, fitted, other, time.perf_counter() - started)
