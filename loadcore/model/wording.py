"""Planner wording of a fitted model: the error model in words, term labels, what each
coefficient means, the temperature of lowest demand, and the note that the other temperature
response fits clearly better, in °C or °F through loadcore.units."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from .. import units
from ..calendar import day_type_label
from .memory import GROUP_LABELS
from .orders import SHOCK_VARIANCE, WEEKLY_PERIOD, Orders, error_term, weeks_in_words
from .terms import TermSpec

_FIXED_LABELS = {
    "const": "level",
    "trend_years": "growth (per year)",
    "temp": "temperature, linear term",
    "temp_sq": "temperature, squared term",
    "hdd": "heating degrees",
    "cdd": "cooling degrees",
    SHOCK_VARIANCE: "shock variance",
}

#: Memory columns -> (the main temperature column they mirror, what their temperature is).
_MEMORY_COLUMNS = {
    f"{base}_{tag}{sq}": (f"{base}{sq}", what)
    for tag, what in (("past", "smoothed past temperature"), ("min", "daily minimum temperature"))
    for base, sq in (("temp", ""), ("temp", "_sq"), ("hdd", ""), ("cdd", ""))
}


def _memory_base(name: str) -> tuple[str, str] | None:
    """``(main column, what)`` for a memory column (``temp_past_sq`` -> ``("temp_sq", ...)``)."""
    return _MEMORY_COLUMNS.get(name)


def _plural(n: int, word: str) -> str:
    return f"{n} {word}{'s' if n > 1 else ''}"


def describe_errors(orders: Orders) -> str:
    """The error model in plain words, after its orders in our layout."""
    o = orders
    parts = []
    if o.p:
        parts.append(
            "today's deviation from the weather-and-calendar level carries over "
            f"from the last {_plural(o.p, 'day')}"
        )
    if o.q:
        parts.append(f"a shock echoes for {_plural(o.q, 'day')}")
    if o.P:
        parts.append(f"and from the same weekday in the last {_plural(o.P, 'week')}")
    if o.Q:
        parts.append(f"a shock echoes on the same weekday for {_plural(o.Q, 'week')}")
    if o.d:
        parts.append(
            "the level wanders (differenced once)"
            if o.d == 1
            else f"the level wanders (differenced {o.d} times)"
        )
    if o.D:
        parts.append("the weekly pattern shifts over time (weekly differencing)")
    if not parts:
        parts.append("day-to-day deviations are independent")
    return f"Error model: {o.describe()}. In words: " + "; ".join(parts) + "."


def term_label(name: str, period: int = WEEKLY_PERIOD) -> str:
    """The label of a parameter in the coefficient table (no unit in it)."""
    if name in _FIXED_LABELS:
        return _FIXED_LABELS[name]
    if name.startswith("type_"):
        return f"day type: {day_type_label(name[5:])}"
    memory = _memory_base(name)
    if memory is not None:
        base, what = memory
        part = _FIXED_LABELS[base].split(", ")[-1] if base.startswith("temp") else None
        return f"{what}, {part}" if part else f"{_FIXED_LABELS[base]} of the {what}"
    if name.startswith("annual_"):
        return f"annual {'cosine' if 'cos' in name else 'sine'} {name[-1]}"
    term = error_term(name)
    if term is not None:
        kind, k = term
        return {
            "ar": f"error AR, lag {k}",
            "ma": f"error MA, lag {k}",
            "weekly_ar": f"error weekly AR, lag {k * period}",
            "weekly_ma": f"error weekly MA, lag {k * period}",
        }[kind]
    return name


def coefficient_meaning(
    name: str,
    estimate: float,
    *,
    terms: TermSpec,
    log: bool,
    demand_unit: str,
    base_type: str,
    temp_unit: units.Unit = "C",
) -> str:
    """What one estimated parameter means, in plain words.

    Temperatures and per-degree effects are worded in ``temp_unit``; a log model's effects in
    per cent (100 (exp(b) - 1)), a demand model's in ``demand_unit``.
    """
    b = estimate
    base = day_type_label(base_type)
    deg = f"°{temp_unit}"
    per = units.delta_to_unit(1.0, temp_unit)  # degrees of temp_unit in one °C step

    def temp(value_c: float) -> str:
        return f"{units.to_unit(value_c, temp_unit):g} {deg}"

    def effect(what: str, coef: float = b) -> str:
        if log:
            pct = 100.0 * (math.exp(coef) - 1.0)
            verb = "raises" if pct >= 0 else "lowers"
            return f"{what} {verb} demand by {abs(pct):.1f} %"
        verb = "raises" if coef >= 0 else "lowers"
        return f"{what} {verb} demand by {abs(coef):,.1f} {demand_unit}"

    memory = _memory_base(name)
    if memory is not None:
        base, what = memory
        plain = coefficient_meaning(
            base,
            estimate,
            terms=terms,
            log=log,
            demand_unit=demand_unit,
            base_type=base_type,
            temp_unit=temp_unit,
        )
        return f"{what} (beside the day's maximum): {plain}"
    if name == "const":
        lvl = math.exp(b) if log else b
        where = (
            f"at {temp(terms.reference_temp_c)}"
            if terms.response == "quadratic"
            else f"between {temp(terms.heating_base_c)} and {temp(terms.cooling_base_c)}"
        )
        return f"demand on a {base} {where} at the start of the history: {lvl:,.0f} {demand_unit}"
    if name == "trend_years":
        return effect("each year of growth") + " (apart from weather and calendar)"
    if name == "temp":
        slope = b / 10.0 / per
        s = f"{100 * slope:+.2f} % per {deg}" if log else f"{slope:+,.1f} {demand_unit} per {deg}"
        return f"slope of the temperature response at {temp(terms.reference_temp_c)}: {s}"
    if name == "temp_sq":
        c = 2 * b / 100.0 / per**2
        s = f"{100 * c:+.3f} % per {deg}" if log else f"{c:+,.2f} {demand_unit} per {deg}"
        return (
            f"curvature: the slope changes by {s} for every {deg} away from "
            f"{temp(terms.reference_temp_c)}"
        )
    if name == "hdd":
        return effect(f"each {deg} below {temp(terms.heating_base_c)}", b / per)
    if name == "cdd":
        return effect(f"each {deg} above {temp(terms.cooling_base_c)}", b / per)
    if name.startswith("type_"):
        return effect(f"a {day_type_label(name[len('type_') :])}") + f" compared with a {base}"
    if name.startswith("annual_"):
        part = "cosine" if "cos" in name else "sine"
        return f"annual cycle beyond temperature, harmonic {name[-1]} ({part} part)"
    if name == SHOCK_VARIANCE:
        sd = math.sqrt(max(b, 0.0))
        if log:
            return f"variance of the daily shocks (typical shock about {100 * sd:.1f} %)"
        return f"variance of the daily shocks (typical shock about {sd:,.1f} {demand_unit})"
    term = error_term(name)
    if term is None:
        return ""
    kind, k = term
    if kind == "weekly_ar":
        return (
            "how much of a deviation carries over from the same weekday "
            f"{weeks_in_words(k)} earlier"
        )
    if kind == "weekly_ma":
        return f"how much of a shock echoes on the same weekday {weeks_in_words(k)} later"
    if kind == "ar":
        return f"how much of a deviation carries over from {k} day(s) earlier"
    return f"how much of a shock echoes {k} day(s) later"


def describe_memory(kept: tuple[str, ...], trials) -> str:
    """Which memory terms the fit tried and kept, with the AICc gain, in plain words.

    Parameters
    ----------
    kept : tuple of str
        The kept groups (``past``, ``minimum``).
    trials : sequence of MemoryTrial
        The selection's fits; empty for a model fitted without the selection.
    """
    labels = GROUP_LABELS
    if not trials:
        return "Memory terms were not tried for this model."
    tried = sorted({g for t in trials for g in t.terms}, key=list(labels).index)
    if not tried:
        return "Memory terms were not tried (switched off, or no term could be estimated)."
    base = next((t.aicc for t in trials if not t.terms), float("nan"))
    final = next((t.aicc for t in trials if t.kept), base)
    tried_text = " and ".join(labels[g] for g in tried)
    if not kept:
        verdict = "it did not" if len(tried) == 1 else "neither did"
        return f"Tried the {tried_text}; {verdict} improve AICc, so the model has no memory terms."
    kept_text = " and ".join(labels[g] for g in kept)
    left = [labels[g] for g in tried if g not in kept]
    out = f"Kept the {kept_text} (AICc lower by {base - final:,.1f})"
    if left:
        out += f"; the {' and '.join(left)} did not improve AICc"
    return out + "."


def lowest_demand_temperature_c(terms: TermSpec, coefficients: dict[str, float]) -> float | None:
    """Temperature of lowest demand, °C, or None when the response has no minimum.

    For the quadratic response, the vertex reference - 5 b1 / b2 (b1, b2 per 10 °C); for
    degree days, the middle of the flat band between the two bases.
    """
    if terms.response == "quadratic":
        b1, b2 = coefficients["temp"], coefficients["temp_sq"]
        if b2 <= 0:
            return None
        return float(terms.reference_temp_c - 5.0 * b1 / b2)
    return float((terms.heating_base_c + terms.cooling_base_c) / 2.0)


def describe_lowest_demand(
    terms: TermSpec,
    lowest_c: float | None,
    temperature_range_c: tuple[float, float],
    temp_unit: units.Unit = "C",
) -> str:
    """The temperature of lowest demand in words, in °C or °F."""
    lo, hi = temperature_range_c

    def temp(value_c: float) -> str:
        return f"{units.to_unit(value_c, temp_unit):.1f} °{temp_unit}"

    if terms.response == "degree_days":
        return (
            f"Demand is lowest in the flat band between {temp(terms.heating_base_c)} and "
            f"{temp(terms.cooling_base_c)}."
        )
    if lowest_c is None:
        return "The fitted response has no minimum (it is not U-shaped); check the data."
    where = "" if lo <= lowest_c <= hi else " (outside the fitted range: treat with care)"
    return f"Demand is lowest at about {temp(lowest_c)}{where}."


#: The temperature responses in a planner's words.
RESPONSE_NAMES = {
    "quadratic": "smooth-curve (quadratic) response",
    "degree_days": "degree-day response",
}

#: Where a response note is read (it says how to switch in that place's own terms).
NOTE_MEDIA = ("command", "app", "brief")


@dataclass(frozen=True)
class ResponseContrast:
    """The two temperature responses at the coldest and hottest temperature.

    Attributes
    ----------
    fitted, other : str
        The model's response and the other one (``quadratic`` or ``degree_days``).
    fitted_aicc, other_aicc : float
        Their AICc with the same error orders.
    cold_c, hot_c : float
        The coldest and hottest temperature read, °C.
    fitted_demand, other_demand : (float, float)
        Median demand of a reference-type day at ``cold_c`` and ``hot_c`` under each, demand
        units.
    other_terms : TermSpec
        The other response's settings (its bases).
    asked : str
        The response the fit was asked for (``auto`` when it chose).
    """

    fitted: str
    other: str
    fitted_aicc: float
    other_aicc: float
    cold_c: float
    hot_c: float
    fitted_demand: tuple[float, float]
    other_demand: tuple[float, float]
    other_terms: TermSpec
    asked: str = ""


def switch_label(response: str) -> str:
    """The app's one-click switch to ``response`` (the button and the note say the same)."""
    return f"Refit with the {RESPONSE_NAMES[response]}"


def _bases(terms: TermSpec, unit: units.Unit) -> str:
    return (
        f"heating base {units.format_temp(terms.heating_base_c, unit, digits=0)}, cooling base "
        f"{units.format_temp(terms.cooling_base_c, unit, digits=0)}"
    )


def _switch(contrast: ResponseContrast, unit: units.Unit, medium: str) -> str:
    other = contrast.other_terms
    if medium == "app":
        return f"to switch, press '{switch_label(contrast.other)}' below (everything else is kept)"
    if medium == "brief":
        shape = RESPONSE_NAMES[contrast.other]
        if contrast.other == "degree_days":
            shape += f" ({_bases(other, unit)})"
        return f"refitting with the {shape} is advised before these figures are used"
    if contrast.other == "degree_days":
        bases = (
            f"--heating-base {units.to_unit(other.heating_base_c, unit):g} --cooling-base "
            f"{units.to_unit(other.cooling_base_c, unit):g}"
        )
        return f"to switch, fit again with --response auto (or --response degree-days {bases})"
    return "to switch, fit again with --response auto (or --response quadratic)"


def response_note(
    contrast: ResponseContrast, unit: units.Unit, demand_unit: str, medium: str = "command"
) -> str:
    """The one sentence saying the other response fits clearly better: by how much, what it
    changes at the coldest and hottest temperature, and how to switch (in ``medium``'s terms:
    :data:`NOTE_MEDIA`)."""
    if medium not in NOTE_MEDIA:
        raise ValueError(f"medium must be one of {NOTE_MEDIA}, got {medium!r}")

    def demand(value: float) -> str:
        return f"{value:,.0f} {demand_unit}"

    gain = contrast.fitted_aicc - contrast.other_aicc
    cold = units.format_temp(contrast.cold_c, unit)
    hot = units.format_temp(contrast.hot_c, unit)
    return (
        f"The {RESPONSE_NAMES[contrast.other]} fits this history clearly better than the "
        f"{RESPONSE_NAMES[contrast.fitted]} in use (AICc lower by {gain:,.0f}, same error "
        f"model): at the coldest temperature, {cold}, it gives {demand(contrast.other_demand[0])} "
        f"where the model in use gives {demand(contrast.fitted_demand[0])}, and at the hottest, "
        f"{hot}, {demand(contrast.other_demand[1])} against {demand(contrast.fitted_demand[1])}; "
        f"{_switch(contrast, unit, medium)}."
    )


def describe_comparison(comparison: Any, unit: units.Unit = "C") -> str:
    """Both responses' AICc in one line (a :class:`~loadcore.model.response.ResponseComparison`)."""

    def side(fit: Any) -> str:
        name = RESPONSE_NAMES[fit.response]
        if fit.response == "degree_days":
            how = "estimated" if fit.bases_estimated else "as set"
            name += f" ({_bases(fit.terms, unit)}, {how})"
        return f"{name} AICc {fit.aicc:,.1f}"

    chosen = " (chosen by AICc)" if comparison.asked == "auto" else ""
    return (
        f"Temperature response in use{chosen}: {side(comparison.fitted)}; with the same error "
        f"model the {side(comparison.other)}."
    )
