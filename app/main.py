"""loadcore planner app: the entry point that frames every page.

Run with ``loadcore app`` (or ``python -m streamlit run app/main.py``). The pages follow the planner's
flow: history -> model -> build a scenario -> compare, then weather ensembles, backtests and the saved
scenarios. Every number shown comes from a loadcore call; the app only gathers inputs and draws.

Session-state keys (the only ones shared between pages; see app/state.py for the names):

``history``
    ``loadcore.history.History`` in use (the demo history until the user uploads a valid file).
``history_source``
    Text naming where the history came from (shown on the pages).
``calendar_spec``
    ``loadcore.calendar.CalendarSpec`` used for day types (country, subdivision, scheme, overrides).
``fit_settings``
    ``loadcore.model.FitSettings`` of the last fit (or the defaults).
``model``
    ``loadcore.model.FittedModel`` or None. The pre-fitted demo model when demo_data/demo_model.json
    exists and was fitted on the demo history.
``scenarios``
    dict, scenario name -> ``loadcore.scenario.Scenario``, in the order they were added.
``forecasts``
    dict, scenario name -> ``loadcore.model.Forecast`` for the current model (recomputed, cached).
``temp_unit``
    ``"C"`` or ``"F"``: the unit for every temperature typed or shown (°C inside).
``meeting_view``
    bool: the Compare page in its large, control-free form for meetings.
``ensemble`` / ``backtest``
    The last weather-ensemble and backtest results (with the inputs they were made from).

Every page writes a key only after the loadcore call producing the new value succeeded.
"""

from __future__ import annotations

import logging
import sys
from pathlib import Path

_REPO = Path(__file__).resolve().parent.parent
if str(_REPO) not in sys.path:
    sys.path.insert(0, str(_REPO))

import streamlit as st  # noqa: E402

from app import state  # noqa: E402

logger = logging.getLogger("loadcore.app")

st.set_page_config(
    page_title="loadcore planner",
    # A local image: an icon name would make the browser fetch it from a font server.
    page_icon=str(_REPO / "app" / "assets" / "icon.png"),
    layout="wide",
    initial_sidebar_state="expanded",
)

state.init_state()

PAGES = {
    "Plan": [
        st.Page("pages/history.py", title="History", icon=":material/table_chart:"),
        st.Page("pages/model_fit.py", title="Model", icon=":material/tune:"),
        st.Page("pages/scenario.py", title="Build a scenario", icon=":material/thermostat:"),
        st.Page("pages/compare.py", title="Compare", icon=":material/stacked_line_chart:"),
    ],
    "Explore": [
        st.Page("pages/ensembles.py", title="Weather ensembles", icon=":material/cloud:"),
        st.Page("pages/backtests.py", title="Backtests", icon=":material/history:"),
        st.Page("pages/saved.py", title="Saved scenarios", icon=":material/bookmarks:"),
    ],
}

page = st.navigation(PAGES)

with st.sidebar:
    st.markdown("**loadcore planner**")
    st.caption(f"History: {st.session_state[state.HISTORY_SOURCE]}")
    st.radio(
        "Temperatures in",
        options=["C", "F"],
        format_func=lambda unit: state.unit_symbol(unit),
        key=state.TEMP_UNIT,
        horizontal=True,
        help="Every temperature you type or read uses this unit; loadcore works in °C inside.",
    )
    st.toggle(
        "Meeting view",
        key=state.MEETING,
        help="Shows the comparison large, with the controls hidden, for a projector.",
    )
    status = st.container()


def _status() -> None:
    """Model and set status, written after the page ran so a new fit shows at once."""
    with status:
        fitted = state.model()
        if fitted is None:
            st.caption("Model: none fitted yet")
        else:
            st.caption(f"Model: fitted on data to {fitted.history_end.date().isoformat()}")
        st.caption(f"Scenarios in the set: {len(state.scenarios())}")


COMPARE = PAGES["Plan"][3]
if st.session_state[state.MEETING] and page.url_path != COMPARE.url_path:
    st.switch_page(COMPARE)

try:
    page.run()
except Exception:  # a fault in the code, not the user's input: say so, keep the details in the log
    logger.exception("the page %r failed", page.title)
    st.error(state.INTERNAL_ERROR)
finally:  # also when a page stops early (st.stop)
    _status()
