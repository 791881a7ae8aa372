"""The one palette: colours and type for every chart and for the meeting brief.

The app's pages and the offline brief draw with these, so a scenario, a day type or a warning looks
the same on screen and on paper. The colours are our own choice: the scenario colours were picked by a
search for eight colours that stay far apart in CIELAB for normal vision and under simulated
protanopia, deuteranopia and tritanopia, each with at least 3:1 contrast against white
(tests/test_export_palette.py checks both); each scenario also has its own line pattern.
The page colours are kept in step with ``.streamlit/config.toml``.
"""

from __future__ import annotations

from collections.abc import Sequence

# Page and text colours.
INK = "#1E2A2E"
PAPER = "#FBFAF7"
GRID = "#DCE3E0"
MUTED = "#6C7A7D"
# Table headings and the background of a caution box in the brief.
HEADING_FILL = "#EDF1EF"
CAUTION_FILL = "#F7E9EB"

# The demand history and the actual values.
HISTORY = "#3B4A4F"
TEMPERATURE = "#B5651D"

# Scenario lines, in the order scenarios are added to the set.
SCENARIOS = (
    "#1F6F78",  # deep teal (the app's primary colour)
    "#E36504",  # pumpkin
    "#333AB6",  # indigo
    "#CC7C66",  # clay
    "#803790",  # plum
    "#8487C3",  # periwinkle
    "#A0000E",  # oxblood
    "#B869F0",  # lilac
)
# Line patterns, in the same order: a second cue besides the colour (plotly dash names).
SCENARIO_DASHES = ("solid", "dash", "dot", "dashdot", "longdash", "longdashdot", "solid", "dash")

# Fitted temperature range band and the marker for days outside it.
RANGE_BAND = "rgba(122, 139, 58, 0.14)"
RANGE_EDGE = "#7A8B3A"
OUTSIDE = "#A4243B"
OUTSIDE_SYMBOL = "triangle-up"
THRESHOLD = "#A4243B"

# Day types (both schemes); override types not listed get EXTRA colours in turn.
DAY_TYPES = {
    "monday": "#5FA8A0",
    "midweek": "#1F6F78",
    "working": "#1F6F78",
    "friday": "#94B447",
    "saturday": "#E09F3E",
    "sunday": "#B5485D",
    "non_working": "#B5485D",
    "holiday": "#5E548E",
}
EXTRA = ("#2E5C8A", "#8E4162", "#C99A2E", "#4F772D", "#6C7A7D")

FONT_FAMILY = "Arial, Helvetica, Liberation Sans, DejaVu Sans, sans-serif"


def scenario_colour(index: int) -> str:
    """Colour for the scenario at position ``index`` in the set (wraps around)."""
    return SCENARIOS[index % len(SCENARIOS)]


def scenario_dash(index: int) -> str:
    """Line pattern for the scenario at position ``index`` in the set (wraps around)."""
    return SCENARIO_DASHES[index % len(SCENARIO_DASHES)]


def day_type_colours(day_types: Sequence[str]) -> dict[str, str]:
    """Colour for every day type in ``day_types``; unknown (override) types take EXTRA colours."""
    colours: dict[str, str] = {}
    extra = 0
    for name in day_types:
        if name in colours:
            continue
        if name in DAY_TYPES:
            colours[name] = DAY_TYPES[name]
        else:
            colours[name] = EXTRA[extra % len(EXTRA)]
            extra += 1
    return colours


def band_fill(hex_colour: str, alpha: float) -> str:
    """The ``rgba(...)`` fill for a prediction-interval band drawn in ``hex_colour``."""
    value = hex_colour.lstrip("#")
    red, green, blue = (int(value[i : i + 2], 16) for i in (0, 2, 4))
    return f"rgba({red}, {green}, {blue}, {alpha:.2f})"
