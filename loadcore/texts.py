"""Every caution and note sentence a planner reads, one wording each.

The command line, the app and the meeting brief all take their cautions from here, so the same
warning never reads two ways. Sentences that carry numbers are small functions; temperatures in
them are formatted by :mod:`loadcore.units` in the unit the user chose.
"""

from __future__ import annotations

from loadcore import units
from loadcore.units import Unit

#: The standing caution on every output (a planning aid, not an operating tool).
PLANNING_CAUTION = (
    "loadcore is a planning aid, not an operating or reliability-compliance tool. Defer to the "
    "system operator's procedures, local reliability standards and licensed engineering judgement."
)

#: What a scenario's prediction intervals do and do not cover.
INTERVAL_CAUTION = (
    "Prediction intervals treat the scenario temperatures as known: they cover the model's own "
    "uncertainty, not the uncertainty of the weather itself. Use weather ensembles for the spread "
    "the weather brings."
)

#: Why days outside the fitted temperature range are flagged.
RANGE_CAUTION = (
    "Days marked outside the fitted range have temperatures beyond those seen in the history the "
    "model was fitted on; the forecast there is an extrapolation of the temperature response and "
    "deserves extra scrutiny."
)

#: What a sum of daily peak forecasts means.
SUM_CAUTION_PEAK = (
    "The sum of daily means adds up daily peak demand over the horizon. It is a convenient size "
    "measure for comparing scenarios of the same length; it is not energy."
)

#: What a sum of daily total forecasts means.
SUM_CAUTION_TOTAL = (
    "The sum of daily means adds up daily demand totals over the horizon, which is energy over the "
    "horizon in the history's demand unit."
)

#: What a system total of zone forecasts is (zones outputs: CLI, CSV, app).
ZONE_TOTAL_CAUTION = (
    "The system total adds the zones' daily values: for daily peaks it is the sum of the zone "
    "peaks, not the coincident system peak, which is usually lower because zones peak at "
    "different hours."
)

#: Scenarios of different lengths are not like for like.
HORIZON_CAUTION = (
    "The scenarios cover different numbers of days, so their sums are not like for like."
)

#: What a weather ensemble's spread does not contain.
ENSEMBLE_CAUTION = (
    "The weather spread comes only from the years in the history: a hotter or colder spell than "
    "any of them is not in it."
)

#: Shown when something unforeseen failed inside the app (the details go to the log).
INTERNAL_ERROR = (
    "Something went wrong on this page. That is a fault in loadcore, not in your input; your "
    "history, model and scenarios are unchanged. Please report it (the server log has the details)."
)

#: Daily maximum at or above which a scenario carries the public-safety note, °C (common
#: practice, no source: daily highs of 38 °C and above are where heat-health warnings are usually
#: issued).
HEAT_HEALTH_C = 38.0

#: A scenario temperature inside the fitted range with fewer history days than this within
#: +/- SPARSE_HALF_WIDTH_C is flagged as thinly observed (our choice).
SPARSE_MIN_DAYS = 10
SPARSE_HALF_WIDTH_C = 1.5


#: A forecast whose growth term is carried more than this many months past the history's end
#: says so (product specification).
GROWTH_NOTE_MONTHS = 12


def growth_note(months: float) -> str:
    """The note of a far window: the growth term is extrapolated by ``months`` months."""
    return (
        f"The growth term is extrapolated {months:.0f} months beyond the end of the history: "
        "the forecast assumes demand keeps growing (or shrinking) at the fitted yearly rate"
    )


def override_warning(
    day_type: str, start: str, end: str, history_start: str, history_end: str
) -> str:
    """An override with no day in the history (and whose day type no history day has)."""
    span = start if start == end else f"{start} to {end}"
    return (
        f"The calendar override '{day_type}' ({span}) has no day in the history ({history_start} "
        f"to {history_end}), so its effect cannot be estimated and a scenario on its days "
        "cannot be forecast. Add the same kind of period in past years to the overrides, or "
        "remove it"
    )


def heat_note(peak_c: float, unit: Unit) -> str:
    """The public-safety note for a scenario with days at or above :data:`HEAT_HEALTH_C`."""
    return (
        f"Public safety: this scenario has days at or above {units.format_temp(HEAT_HEALTH_C, unit)} "
        f"with highs up to {units.format_temp(peak_c, unit)}. Heat of this kind brings a risk of "
        "heat-related illness; check the operator's emergency procedures and the local "
        "heat-health plan."
    )


def out_of_range_warning(
    date_text: str, temperature_c: float, low_c: float, high_c: float, unit: Unit
) -> str:
    """One day outside the fitted range, in words."""
    above = temperature_c > high_c
    side = "above" if above else "below"
    edge = high_c if above else low_c
    by = temperature_c - high_c if above else low_c - temperature_c
    return (
        f"{date_text}: {units.format_temp(temperature_c, unit)} is "
        f"{units.format_delta(by, unit)} {side} the fitted range ("
        f"{'highest' if above else 'lowest'} fitted {units.format_temp(edge, unit)}); the "
        "temperature response is extrapolated"
    )


def sparse_warning(dates_text: str, unit: Unit) -> str:
    """Days inside the range but thinly observed in the history."""
    return (
        f"Thinly observed temperatures (fewer than {SPARSE_MIN_DAYS} history days within "
        f"±{units.format_delta(SPARSE_HALF_WIDTH_C, unit)}) on: {dates_text}"
    )


def fitted_range_text(low_c: float, high_c: float, unit: Unit) -> str:
    """``Fitted temperature range: -8.4 °C to 42.9 °C.``"""
    return f"Fitted temperature range: {units.format_range(low_c, high_c, unit)}."


def forecast_warnings(frame, temperature_range_c: tuple[float, float], unit: Unit) -> list[str]:
    """Every warning of a forecast table (``date``, ``temperature_c``, ``out_of_range``,
    ``sparse_temperature``): one line per day outside the fitted range, one for thin days."""
    low, high = (float(v) for v in temperature_range_c)
    out = [
        out_of_range_warning(f"{row.date:%Y-%m-%d}", float(row.temperature_c), low, high, unit)
        for row in frame[frame["out_of_range"].astype(bool)].itertuples()
    ]
    if "sparse_temperature" in frame:
        sparse = frame[frame["sparse_temperature"].astype(bool)]
        if len(sparse):
            out.append(sparse_warning(", ".join(f"{d:%Y-%m-%d}" for d in sparse["date"]), unit))
    return out
