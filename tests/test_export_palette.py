"""Tests for loadcore.export.palette: the one palette the app's charts and the brief share."""

from __future__ import annotations

import re
from pathlib import Path

from loadcore.export import palette

REPO = Path(__file__).resolve().parent.parent


def test_band_fill_reads_the_hex_colour():
    assert palette.band_fill("#1F6F78", 0.3) == "rgba(31, 111, 120, 0.30)"


def test_day_type_colours_are_distinct_for_override_types():
    colours = palette.day_type_colours(["midweek", "sunday", "shutdown", "bridge", "midweek"])
    assert list(colours) == ["midweek", "sunday", "shutdown", "bridge"]
    assert len(set(colours.values())) == 4


def test_scenario_colours_wrap_around():
    n = len(palette.SCENARIOS)
    assert palette.scenario_colour(n + 1) == palette.scenario_colour(1)


def test_every_palette_colour_is_a_hex_colour_and_the_page_matches_the_theme():
    """The app's theme (.streamlit/config.toml) uses the palette's paper, ink and first scenario."""
    names = ["INK", "PAPER", "GRID", "MUTED", "HEADING_FILL", "CAUTION_FILL", "HISTORY"]
    names += ["TEMPERATURE", "RANGE_EDGE", "OUTSIDE", "THRESHOLD"]
    colours = [getattr(palette, n) for n in names]
    colours += list(palette.SCENARIOS) + list(palette.DAY_TYPES.values()) + list(palette.EXTRA)
    assert all(re.fullmatch(r"#[0-9A-F]{6}", c) for c in colours), colours
    theme = (REPO / ".streamlit" / "config.toml").read_text(encoding="utf-8")
    assert f'backgroundColor = "{palette.PAPER}"' in theme
    assert f'textColor = "{palette.INK}"' in theme
    assert f'primaryColor = "{palette.SCENARIOS[0]}"' in theme


def test_the_app_has_no_palette_of_its_own():
    """One palette: app/palette.py is gone and no app module spells a colour itself."""
    assert not (REPO / "app" / "palette.py").exists()
    for path in [REPO / "app" / "charts.py", *sorted((REPO / "app" / "pages").glob("*.py"))]:
        text = path.read_text(encoding="utf-8")
        assert not re.search(r"['\"]#[0-9A-Fa-f]{6}['\"]", text), path.name
