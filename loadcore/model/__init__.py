"""The demand model: regression on temperature and day types with weekly seasonal ARIMA errors.

The modules, in the order a fit uses them:

- :mod:`~loadcore.model.settings`: :class:`FitSettings`;
- :mod:`~loadcore.model.terms`: :class:`TermSpec` and :func:`design_matrix`, the one place
  regression columns are built;
- :mod:`~loadcore.model.orders`: :class:`Orders`, :class:`SearchBounds`, differencing tests, lag
  polynomials, AICc;
- :mod:`~loadcore.model.constraints`: the map to stationary, invertible error parameters;
- :mod:`~loadcore.model.likelihood`: :class:`RegressionArima`, the exact likelihood (banded
  Cholesky factor, GLS coefficients, missing days);
- :mod:`~loadcore.model.screening`: CSS estimates scored by the exact likelihood;
- :mod:`~loadcore.model.exact`: :func:`exact_fit`, exact maximum likelihood of one candidate;
- :mod:`~loadcore.model.workers`: forked worker processes with one BLAS thread each;
- :mod:`~loadcore.model.search`: pilot, screen, exact fits within a margin, the stepwise walk;
- :mod:`~loadcore.model.simulate`: simulated histories with known truths (tests, benchmarks);
- :mod:`~loadcore.model.statespace`: the state-space form and the filter (statsmodels);
- :mod:`~loadcore.model.fitting`: :func:`fit`, a short pipeline over the above;
- :mod:`~loadcore.model.fitted`: :class:`FittedModel` and :func:`load_model`;
- :mod:`~loadcore.model.forecast`: :class:`Forecast` and the propagation of the end state;
- :mod:`~loadcore.model.wording`: the model in a planner's words;
- :mod:`~loadcore.model.diagnostics`: residual autocorrelation and the Ljung-Box test;
- :mod:`~loadcore.model.model_file`: the model file, format 2 (and the reader of format 1).
"""

from .diagnostics import Diagnostics, autocorrelations, ljung_box
from .exact import ExactFit, exact_fit
from .fitted import FittedModel, load_model
from .fitting import fit
from .forecast import Forecast
from .likelihood import RegressionArima, identified_columns
from .model_file import FORMAT_VERSION as MODEL_FILE_VERSION
from .orders import (
    WEEKLY_PERIOD,
    DifferencingDecision,
    Orders,
    SearchBounds,
    aicc,
    choose_differencing,
    difference,
    kpss_differences,
    kpss_statistic,
    lag_polynomials,
    roots_ok,
    seasonal_strength,
)
from .response import MARGIN_AICC, ResponseComparison, ResponseFit, profile_bases
from .screening import ScreenScore, css_fit, screen
from .search import SCREEN_MARGIN, SearchOutcome, fit_orders, search_orders
from .settings import SEARCH_MODES, FitSettings, Progress
from .statespace import EndState, build_state_space
from .terms import TermSpec, design_matrix, model_response
from .workers import default_workers

__all__ = [
    "MARGIN_AICC",
    "MODEL_FILE_VERSION",
    "SCREEN_MARGIN",
    "SEARCH_MODES",
    "WEEKLY_PERIOD",
    "Diagnostics",
    "DifferencingDecision",
    "EndState",
    "ExactFit",
    "FitSettings",
    "FittedModel",
    "Forecast",
    "Orders",
    "Progress",
    "RegressionArima",
    "ResponseComparison",
    "ResponseFit",
    "ScreenScore",
    "SearchBounds",
    "SearchOutcome",
    "TermSpec",
    "aicc",
    "autocorrelations",
    "build_state_space",
    "choose_differencing",
    "css_fit",
    "default_workers",
    "design_matrix",
    "difference",
    "exact_fit",
    "fit",
    "fit_orders",
    "identified_columns",
    "kpss_differences",
    "kpss_statistic",
    "lag_polynomials",
    "ljung_box",
    "load_model",
    "model_response",
    "profile_bases",
    "roots_ok",
    "screen",
    "search_orders",
    "seasonal_strength",
]
