"""The demand model: regression on temperature and day types with weekly seasonal ARIMA errors.

The modules, in the order a fit uses them:

- :mod:`~loadcore.model.settings`: :class:`FitSettings`;
- :mod:`~loadcore.model.terms`: :class:`TermSpec` and :func:`design_matrix`, the one place
  regression columns are built;
- :mod:`~loadcore.model.orders`: :class:`Orders`, :class:`SearchBounds`, differencing tests, lag
  polynomials, AICc;
- :mod:`~loadcore.model.screening`: conditional-sum-of-squares screening, the stepwise walk;
- :mod:`~loadcore.model.exact`: exact maximum likelihood of one candidate, the worker pool;
- :mod:`~loadcore.model.search`: the order search that calls the two;
- :mod:`~loadcore.model.statespace`: the state-space form and the filter (statsmodels);
- :mod:`~loadcore.model.fitting`: :func:`fit`, a short pipeline over the above;
- :mod:`~loadcore.model.fitted`: :class:`FittedModel` and :func:`load_model`;
- :mod:`~loadcore.model.forecast`: :class:`Forecast` and the propagation of the end state;
- :mod:`~loadcore.model.wording`: the model in a planner's words;
- :mod:`~loadcore.model.diagnostics`: residual autocorrelation and the Ljung-Box test;
- :mod:`~loadcore.model.model_file`: the model file, format 2 (and the reader of format 1).
"""

from .diagnostics import Diagnostics, autocorrelations, ljung_box
from .exact import ExactResult, default_workers, exact_fit, exact_fits, shutdown_workers
from .fitted import FittedModel, load_model
from .fitting import fit
from .forecast import Forecast
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
from .screening import ScreenResult, css_screen, stepwise_orders
from .search import REFIT_COUNT, SearchOutcome, search_orders
from .settings import SEARCH_MODES, FitSettings, Progress
from .statespace import EndState, build_state_space
from .terms import TermSpec, design_matrix, model_response

__all__ = [
    "MODEL_FILE_VERSION",
    "REFIT_COUNT",
    "SEARCH_MODES",
    "WEEKLY_PERIOD",
    "Diagnostics",
    "DifferencingDecision",
    "EndState",
    "ExactResult",
    "FitSettings",
    "FittedModel",
    "Forecast",
    "Orders",
    "Progress",
    "ScreenResult",
    "SearchBounds",
    "SearchOutcome",
    "TermSpec",
    "aicc",
    "autocorrelations",
    "build_state_space",
    "choose_differencing",
    "css_screen",
    "default_workers",
    "design_matrix",
    "difference",
    "exact_fit",
    "exact_fits",
    "fit",
    "kpss_differences",
    "kpss_statistic",
    "lag_polynomials",
    "ljung_box",
    "load_model",
    "model_response",
    "roots_ok",
    "search_orders",
    "seasonal_strength",
    "shutdown_workers",
    "stepwise_orders",
]
