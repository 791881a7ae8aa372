"""loadcore planner app: the entry point that frames every page.

Run with ``loadcore app`` (or ``python -m streamlit run app/main.py``). The pages follow the planner's
flow: history -> model -> build a scenario -> compare, then weather ensembles, backtests and the saved
scenarios. Every number shown comes from a loadcore call; the app only gathers inputs and draws.

The session-state keys and every transition between states are documented and owned by
``app/state.py``; pages read the session through it and change it only by calling its transition
functions.
"""

from __future__ import annotations

import logging
import sys
from pathlib import Path

_REPO = Path(__file__).resolve().parent.parent
if str(_REPO) not in sys.path:
    sys.path.insert(0, str(_REPO))

import streamlit as st  # noqa: E402

from app import display, state  # noqa: E402
from app.plain import md  # noqa: E402
from loadcore import texts  # noqa: E402

logger = logging.getLogger("loadcore.app")

st.set_page_config(
    page_title="loadcore planner",
    # A local image: an icon name would make the browser fetch it from a font server.
    page_icon=str(_REPO / "app" / "assets" / "icon.png"),
    layout="wide",
    initial_sidebar_state="expanded",
)

for problem, what in state.init_state():
    display.show_error(problem, what)

PAGES = {
    "Plan": [
        st.Page("pages/history.py", title="History", icon=":material/table_chart:"),
        st.Page("pages/model_fit.py", title="Model", icon=":material/tune:"),
        st.Page("pages/scenario.py", title="Build a scenario", icon=":material/thermostat:"),
        st.Page("pages/compare.py", title="Compare", icon=":material/stacked_line_chart:"),
        st.Page("pages/zones.py", title="Zones", icon=":material/grid_view:"),
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
    st.caption(f"History: {md(state.history_source())}")
    state.sync_sidebar_widgets()
    st.radio(
        "Temperatures in",
        options=["C", "F"],
        format_func=lambda unit: display.unit_symbol(unit),
        key=state.UNIT_WIDGET,
        on_change=state.unit_chosen,
        horizontal=True,
        help="Every temperature you type or read uses this unit; loadcore works in °C inside.",
    )
    st.toggle(
        "Meeting view",
        key=state.MEETING_WIDGET,
        on_change=state.meeting_chosen,
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
        count = f"Scenarios in the set: {len(state.scenarios())}"
        if fitted is not None and state.scenarios():
            _, problems = state.forecasts_for_set(fitted)
            if problems:
                count += f" ({len(problems)} cannot be forecast with this model; see Compare)"
        st.caption(count)


COMPARE = PAGES["Plan"][3]
if state.meeting_view() and page.url_path != COMPARE.url_path:
    st.switch_page(COMPARE)

try:
    page.run()
except Exception:  # a fault in the code, not the user's input: say so, keep the details in the log
    logger.exception("the page %r failed", page.title)
    st.error(texts.INTERNAL_ERROR)
finally:  # also when a page stops early (st.stop)
    _status()
