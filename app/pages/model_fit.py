"""Step 2: fit the demand model (settings, progress, results, diagnostics, save and load)."""

from __future__ import annotations

import dataclasses

import numpy as np
import streamlit as st

from app import cache, charts, display, state, tables
from app.plain import md
from loadcore.calendar import parse_holidays
from loadcore.errors import LoadcoreError
from loadcore.export import describe_orders
from loadcore.files import check_upload_size
from loadcore.model import FitSettings, TermSpec, load_model
from loadcore.model.terms import RESPONSE_CHOICES
from loadcore.model.wording import RESPONSE_NAMES, describe_comparison, switch_label

st.title("Model")
history = state.history()
current: FitSettings = state.fit_settings()
calendar = state.calendar()
st.caption(
    "Daily demand is explained by temperature, day type and (optionally) an annual cycle and "
    "growth; what is left over follows a time-series error model (ARIMA with weekly terms) chosen "
    "by the lowest AICc."
)


def _holiday_code(spec) -> str:
    """The calendar's holiday choice as the code typed on this page (``US``, ``US-TX``, blank)."""
    if not spec.country:
        return ""
    return f"{spec.country}-{spec.subdivision}" if spec.subdivision else spec.country


# --------------------------------------------------------------------------------------------
# Settings
# --------------------------------------------------------------------------------------------
state.sync_fit_form()
with st.form("fit_form", border=True):
    st.markdown("**Settings**")
    a, b, c = st.columns(3)
    search = a.radio(
        "Search for the error model",
        ["quick", "thorough"],
        index=0 if current.search == "quick" else 1,
        format_func=lambda s: {
            "quick": "quick (step by step from a few starting points)",
            "thorough": "thorough (every combination within the limits)",
        }[s],
        key="fit_search",
    )
    use_log = b.toggle(
        "Model the logarithm of demand",
        value=current.log,
        key="fit_log",
        help="Effects then act as percentages of demand, which suits a growing system.",
    )
    scheme = c.radio(
        "Day types",
        ["detailed", "simple"],
        index=0 if calendar.scheme == "detailed" else 1,
        format_func=lambda s: {"detailed": "detailed (weekdays apart)", "simple": "simple"}[s],
        key="fit_scheme",
    )
    a, b, c = st.columns(3)
    response = a.radio(
        "Temperature response",
        list(RESPONSE_CHOICES),
        index=RESPONSE_CHOICES.index(current.terms.response),
        format_func=lambda r: {
            "quadratic": "smooth curve (quadratic)",
            "degree_days": "heating and cooling degree days",
            "auto": "the better of the two by AICc (degree-day bases estimated)",
        }[r],
        key="fit_response",
        help="Every fit also fits the other response with the same error model and shows both "
        "below the results.",
    )
    harmonics = b.number_input(
        "Annual cycle terms (0 = none)",
        0,
        6,
        int(current.terms.annual_harmonics),
        key="fit_harmonics",
    )
    trend = c.toggle("Include growth over the years", value=current.terms.trend, key="fit_trend")
    memory = c.toggle(
        "Try temperature memory terms",
        value=current.terms.memory,
        key="fit_memory",
        help="The smoothed temperature of the previous days and, when the history has it, the "
        "daily minimum; each is kept only when it improves AICc.",
    )
    a, b = st.columns([1, 2])
    holidays = a.radio(
        "Public holidays",
        ["country", "none"],
        index=0 if calendar.country else 1,
        format_func=lambda h: {
            "country": "a country's or region's public holidays",
            "none": "no public holidays (weekends and special periods only)",
        }[h],
        key="fit_holidays",
    )
    holiday_code = b.text_input(
        "Holiday calendar: country code, or country-region (e.g. US, US-TX, CA-ON)",
        value=_holiday_code(calendar),
        key="fit_holiday_code",
        help="The public-holiday calendar of the holidays package (not used with no public "
        "holidays); holidays become a day type of their own. Special periods (shutdowns, bridge "
        "days) are set on the History page.",
    )
    a, b, c = st.columns(3)
    ref_c = display.temperature_input(
        a,
        "Curve centre",
        key="fit_ref",
        default_c=current.terms.reference_temp_c,
        help="For the smooth curve: the temperature its slope and bend are measured from.",
    )
    heat_c = display.temperature_input(
        b, "Heating base", key="fit_hdd", default_c=current.terms.heating_base_c
    )
    cool_c = display.temperature_input(
        c, "Cooling base", key="fit_cdd", default_c=current.terms.cooling_base_c
    )
    with st.expander("Search limits"):
        a, b, c, d, e = st.columns(5)
        ar_up_to = a.number_input("AR up to", 0, 10, current.ar_up_to, key="fit_p")
        ma_up_to = b.number_input("MA up to", 0, 10, current.ma_up_to, key="fit_q")
        ar_ma_up_to = c.number_input("AR + MA up to", 0, 10, current.ar_ma_up_to, key="fit_pq")
        max_big_p = d.number_input("weekly AR up to", 0, 10, current.weekly_ar_up_to, key="fit_bp")
        max_big_q = e.number_input("weekly MA up to", 0, 10, current.weekly_ma_up_to, key="fit_bq")
    go = st.form_submit_button("Fit the model", type="primary")

if go:
    try:
        # The holiday choice is parsed once, here: "none" is no public holidays, never a default.
        country, subdivision = (None, None) if holidays == "none" else parse_holidays(holiday_code)
        terms = TermSpec(
            response=response,
            reference_temp_c=ref_c,
            heating_base_c=heat_c,
            cooling_base_c=cool_c,
            annual_harmonics=int(harmonics),
            trend=bool(trend),
            memory=bool(memory),
        )
        settings = FitSettings(
            search=search,
            ar_up_to=int(ar_up_to),
            ma_up_to=int(ma_up_to),
            ar_ma_up_to=int(ar_ma_up_to),
            weekly_ar_up_to=int(max_big_p),
            weekly_ma_up_to=int(max_big_q),
            log=bool(use_log),
            terms=terms,
            calendar=dataclasses.replace(
                calendar, country=country, subdivision=subdivision, scheme=scheme
            ),
        )
    except LoadcoreError as exc:
        display.show_error(exc, "These settings cannot be used")
    else:
        bar = st.progress(0.0, text="Looking for the error model...")

        def _progress(done: int, total: int, text: str) -> None:
            bar.progress(min(done / max(total, 1), 1.0), text=f"{done} of {total} done: {text}")

        try:
            fitted = cache.fit_model(history, settings, progress=_progress)
        except LoadcoreError as exc:
            bar.empty()
            display.show_error(exc, "The model could not be fitted")
            st.caption("The model in use (if any) is unchanged.")
        else:
            screened = len(fitted.candidates)
            exact = int(fitted.candidates["exact_fit"].sum())
            bar.progress(
                1.0,
                text=f"Done: {fitted.candidates_evaluated} candidates evaluated ({screened} error "
                f"models screened, {exact} of them also fitted exactly).",
            )
            state.use_model(fitted)

# --------------------------------------------------------------------------------------------
# Load a saved model
# --------------------------------------------------------------------------------------------
with st.expander("Upload a saved model (JSON)"):
    upload = st.file_uploader("Model file", type=["json"], key="model_upload")
    if upload is not None and st.button("Use this model", key="model_use"):
        data = upload.getvalue()
        try:
            check_upload_size(len(data))
            loaded = load_model(data)
        except LoadcoreError as exc:
            display.show_error(exc, f"{upload.name} was not used")
        else:
            state.use_model(loaded, source=upload.name)
            history = state.history()
            st.success(f"Using the model from {md(upload.name)}.")

fitted = state.model()
if fitted is None:
    st.info("No model yet: choose the settings and press **Fit the model**.")
    display.footer()
    st.stop()

# --------------------------------------------------------------------------------------------
# Results
# --------------------------------------------------------------------------------------------
if fitted.history.fingerprint != history.fingerprint:
    st.warning(
        "This model was fitted on a different history from the one now in use. Fit again to use "
        "the new history.",
        icon=":material/sync_problem:",
    )
st.subheader("The fitted model")
for text in fitted.calendar_warnings():
    st.warning(md(text) + ".", icon=":material/event_busy:")
st.markdown(fitted.describe_errors())
a, b, c = st.columns(3)
a.metric("AICc", f"{fitted.aicc:,.1f}", help="Lower is better, for the same data and settings.")
screened = len(fitted.candidates)
exact = int(fitted.candidates["exact_fit"].sum())
b.metric(
    "Error models screened",
    f"{screened}",
    help=f"{exact} of them were also fitted exactly; the table at the foot lists every one.",
)
c.metric("Estimation converged", "yes" if fitted.converged else "no")
if not fitted.converged:
    st.warning("The estimation did not fully converge; try the thorough search or other settings.")
st.markdown(fitted.describe_lowest_demand(temp_unit=state.temp_unit()))
st.markdown(f"Temperature memory: {fitted.describe_memory()}")

# --------------------------------------------------------------------------------------------
# The temperature response beside the other one (same error model)
# --------------------------------------------------------------------------------------------
st.subheader("Temperature response")
comparison = fitted.response_comparison
curve_c = np.linspace(*fitted.temperature_range_c, 121)
curve = fitted.response_curve(curve_c)
if comparison is None:
    st.caption(
        "This model was saved before loadcore compared the two temperature responses; fit again "
        "to see the other one beside it."
    )
else:
    st.markdown(md(describe_comparison(comparison, state.temp_unit())))
    note = fitted.response_note(state.temp_unit(), medium="app")
    if note:
        st.warning(md(note), icon=":material/lightbulb:")
        if st.button(switch_label(comparison.other.response), key="response_switch"):
            with st.spinner("Fitting again with the other temperature response..."):
                try:
                    switched = cache.fit_model(fitted.history, fitted.response_settings())
                except LoadcoreError as exc:
                    display.show_error(exc, "The model could not be fitted again")
                    st.caption("The model in use is unchanged.")
                else:
                    state.switch_response(switched)
                    st.rerun()
st.caption(
    "Lines: demand of a reference-type day at the end of the history under each response; "
    "dots: the history's days; the band is the fitted temperature range."
)
st.plotly_chart(
    theme=None,
    figure_or_data=charts.response_figure(
        fitted.history.frame,
        fitted.calendar_types(fitted.history.frame.index),
        curve_c=curve_c,
        curve_mw=curve["demand"].to_numpy(dtype=float),
        range_c=fitted.temperature_range_c,
        to_unit=display.to_display,
        unit=display.unit_symbol(),
        demand_unit=fitted.demand_unit,
        curve_name=f"in use: {RESPONSE_NAMES[fitted.settings.terms.response]}",
        other_curve_mw=(
            curve["other_demand"].to_numpy(dtype=float) if "other_demand" in curve else None
        ),
        other_curve_name=(
            f"other: {RESPONSE_NAMES[comparison.other.response]}" if comparison else ""
        ),
    ),
    key="response_curves",
)

st.markdown("**What each term means**")
st.dataframe(
    fitted.coefficient_table(temp_unit=state.temp_unit()),
    hide_index=True,
    width="stretch",
    column_config=tables.coefficient_columns(fitted.settings.log),
)

st.subheader("Checks on what the model leaves unexplained")
diag = fitted.diagnostics()
if diag.ljung_box_pvalue >= 0.05:
    st.success(diag.verdict, icon=":material/check_circle:")
else:
    st.warning(diag.verdict, icon=":material/warning:")
    st.markdown(f"**What to try:** {diag.advice}")
resid = diag.residuals.rename("residual").rename_axis("date").reset_index()
scale = "log demand" if fitted.settings.log else f"{fitted.demand_unit}"
left, right = st.columns(2)
left.plotly_chart(
    theme=None,
    figure_or_data=charts.lines_figure(
        resid, "date", ["residual"], x_title="date", y_title=f"one-day-ahead error, {scale}"
    ),
    key="diag_resid",
)
acf = np.asarray(diag.acf, dtype=float)  # lags 1, 2, ... as loadcore returns them
right.plotly_chart(
    theme=None,
    figure_or_data=charts.bars_figure(
        np.arange(1, len(acf) + 1),
        acf,
        x_title="lag, days",
        y_title="autocorrelation",
        hlines={"bound": diag.acf_bound, "": -diag.acf_bound},
    ),
    key="diag_acf",
)
st.plotly_chart(
    theme=None,
    figure_or_data=charts.histogram_figure(
        resid["residual"].to_numpy(dtype=float),
        x_title=f"one-day-ahead error, {scale}",
        y_title="days",
    ),
    key="diag_hist",
)

with st.expander(f"Every candidate error model ({screened} screened, {exact} fitted exactly)"):
    candidates = fitted.candidates.copy()
    candidates.insert(
        0,
        "error model",
        [
            describe_orders(
                (r.ar, r.differencing, r.ma), (r.weekly_ar, r.weekly_differencing, r.weekly_ma)
            )
            for r in candidates.itertuples(index=False)
        ],
    )
    for flag in ("converged", "stationary_invertible"):
        candidates[flag] = [tables.yes_no(v) for v in candidates[flag]]
    st.dataframe(
        candidates, hide_index=True, width="stretch", column_config=tables.candidate_columns()
    )

st.download_button(
    "Download the fitted model (JSON)",
    data=fitted.to_json().encode("utf-8"),
    file_name="loadcore_model.json",
    mime="application/json",
    icon=":material/download:",
    key="model_download",
    on_click="ignore",
)
display.footer()
