"""The window picker: a scenario window's first day and length, with loadcore's quick choices.

Drawn by the Build-a-scenario and the Weather-ensembles pages. The window's limits are
loadcore's (``loadcore.scenario.window_limits``: from the day after the history to
``MAX_LEAD_MONTHS`` months after it; ``MAX_DAYS`` days at most) and so are the quick choices
(``loadcore.scenario.window_starts``: right after the history, the coming hottest and coldest
calendar months, the coming year-end period). The chosen window is kept by app/state.py, so it
is the same on both pages and survives a visit to another page.
"""

from __future__ import annotations

import pandas as pd
import streamlit as st

from app import state
from loadcore.scenario import MAX_DAYS, window_limits, window_starts
from loadcore.scenario.values import gap_days


def window_picker(page: str, fitted) -> tuple[pd.Timestamp, int]:
    """Draw the quick choices, the first-day picker and the length input; return the window.

    Parameters
    ----------
    page : str
        ``"scn"`` or ``"ens"``: the page's own widget keys (``app.state.WINDOW_WIDGETS``).
    fitted : loadcore.model.FittedModel
        The model in use: its history gives the limits and the quick choices.

    Returns
    -------
    (pandas.Timestamp, int)
        The window's first day and its length in days.
    """
    first, last = window_limits(fitted.history_end)
    choices = window_starts(fitted.history)
    state.prepare_window(page, first, last, choices[0].days, MAX_DAYS)
    start_key, days_key = state.WINDOW_WIDGETS[page]

    st.markdown("**Window**: quick choices")
    cols = st.columns(len(choices))
    for col, choice in zip(cols, choices, strict=True):
        col.button(
            choice.label,
            key=f"{page}_window_{choice.kind}",
            on_click=state.window_chosen,
            args=(choice.start, choice.days),
            help=f"{choice.days} days from {choice.start:%A %d %B %Y}",
            width="stretch",
        )
    left, right = st.columns([2, 1])
    left.date_input(
        f"First day (from {first:%d %b %Y} to {last:%d %b %Y})",
        min_value=first.date(),
        max_value=last.date(),
        key=start_key,
        format="YYYY-MM-DD",
        on_change=state.window_typed,
        args=(page,),
    )
    right.number_input(
        f"Days (1 to {MAX_DAYS})",
        min_value=1,
        max_value=MAX_DAYS,
        step=1,
        key=days_key,
        on_change=state.window_typed,
        args=(page,),
        help=f"A window covers 1 to {MAX_DAYS} consecutive days.",
    )
    start, days = state.window()
    end = start + pd.Timedelta(days=days - 1)
    gap = gap_days(start, fitted.history_end)
    after = (
        "the day after the history ends"
        if gap == 0
        else f"{gap} days after the history ends on {fitted.history_end:%d %B %Y} (the error "
        "model's forecast runs through those days first)"
    )
    st.caption(f"{start:%A %d %B %Y} to {end:%A %d %B %Y} ({days} days), starting {after}.")
    return start, days
