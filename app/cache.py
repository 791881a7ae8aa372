"""Work shared between reruns and sessions: fitted models and forecasts, computed once.

A fit is kept in one store shared by every session, keyed by the history's fingerprint and the
settings; a forecast is cached by the model's and the scenario's keys, so a redraw never
recomputes an unchanged forecast. Nothing here reads or writes the session.
"""

from __future__ import annotations

import hashlib
import json

import numpy as np
import pandas as pd
import streamlit as st

# The interval levels every forecast in the app carries, percent.
LEVELS = (80, 95)


# --------------------------------------------------------------------------------------------
# Fitting: one shared store keyed by the data fingerprint and the settings
# --------------------------------------------------------------------------------------------

FITS_KEPT = 4


@st.cache_resource(show_spinner=False)
def _fitted_store() -> dict:
    """Fitted models shared by every session, (history fingerprint, settings key) -> model.

    A store rather than a cached fit, so the fit can report progress to the page (a cached
    function may not update an element made outside it).
    """
    return {}


def fit_model(hist, settings, progress=None):
    """``loadcore.model.fit(history, settings, progress)``, reused for the same data and settings."""
    from loadcore.model import fit

    store = _fitted_store()
    key = (hist.fingerprint, settings.key())
    if key in store:
        return store[key]
    fitted = fit(hist, settings, progress=progress)
    store[key] = fitted
    while len(store) > FITS_KEPT:
        store.pop(next(iter(store)))
    return fitted


# --------------------------------------------------------------------------------------------
# Forecasts: cached per (model, scenario) so a redraw never recomputes an unchanged forecast
# --------------------------------------------------------------------------------------------


def model_key(fitted) -> str:
    """A text key that changes whenever the fitted model changes."""
    return f"{fitted.fingerprint}|{fitted.order}|{fitted.seasonal_order}|{fitted.aicc!r}"


def scenario_key(scenario) -> str:
    """A sha256 over the scenario's name, dates, temperatures and day types."""
    digest = hashlib.sha256()
    digest.update(str(scenario.name).encode())
    digest.update(pd.DatetimeIndex(scenario.dates).asi8.tobytes())
    digest.update(np.asarray(scenario.temperature_c, dtype=float).tobytes())
    digest.update(json.dumps(list(scenario.day_types or ())).encode())
    return digest.hexdigest()


@st.cache_resource(max_entries=256, show_spinner=False)
def _cached_forecast(_model, _scenario, model_id: str, scenario_id: str, levels: tuple[int, ...]):
    return _model.forecast(_scenario, levels=levels)


def forecast(fitted, scenario, levels: tuple[int, ...] = LEVELS):
    """``fitted.forecast(scenario, levels)``, cached by the model and scenario keys."""
    return _cached_forecast(fitted, scenario, model_key(fitted), scenario_key(scenario), levels)
