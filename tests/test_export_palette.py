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


# Colour-vision simulation: the matrices of Machado, Oliveira and Fernandes (2009), "A
# physiologically-based model for simulation of color vision deficiency", IEEE TVCG 15(6), for
# severity 1.0, applied to linear sRGB (values from memory; each row sums to 1, so white stays
# white, which the first test below checks).
CVD = {
    "protanopia": [
        [0.152286, 1.052583, -0.204868],
        [0.114503, 0.786281, 0.099216],
        [-0.003882, -0.048116, 1.051998],
    ],
    "deuteranopia": [
        [0.367322, 0.860646, -0.227968],
        [0.280085, 0.672501, 0.047413],
        [-0.011820, 0.042940, 0.968881],
    ],
    "tritanopia": [
        [1.255528, -0.076749, -0.178779],
        [-0.078411, 0.930809, 0.147602],
        [0.004733, 0.691367, 0.303900],
    ],
}


def _linear(hex_colour: str):
    import numpy as np

    rgb = np.array([int(hex_colour[i : i + 2], 16) for i in (1, 3, 5)]) / 255.0
    # sRGB transfer function (IEC 61966-2-1).
    return np.where(rgb <= 0.04045, rgb / 12.92, ((rgb + 0.055) / 1.055) ** 2.4)


def _lab(linear):
    """CIELAB (D65 white) of a linear sRGB colour (CIE 15:2004 formulas)."""
    import numpy as np

    to_xyz = np.array(
        [[0.4124, 0.3576, 0.1805], [0.2126, 0.7152, 0.0722], [0.0193, 0.1192, 0.9505]]
    )
    xyz = to_xyz @ np.clip(linear, 0, 1) / np.array([0.95047, 1.0, 1.08883])
    f = np.where(xyz > 216 / 24389, np.cbrt(xyz), (24389 / 27 * xyz + 16) / 116)
    return np.array([116 * f[1] - 16, 500 * (f[0] - f[1]), 200 * (f[1] - f[2])])


def _contrast_with_white(hex_colour: str) -> float:
    """WCAG 2.1 contrast ratio of a colour against white (relative luminance formula)."""
    luminance = float(_linear(hex_colour) @ [0.2126, 0.7152, 0.0722])
    return 1.05 / (luminance + 0.05)


def test_the_colour_vision_matrices_keep_white():
    import numpy as np

    for matrix in CVD.values():
        np.testing.assert_allclose(np.array(matrix) @ np.ones(3), np.ones(3), atol=2e-6)


def test_eight_scenario_colours_stay_apart_for_colour_blind_readers():
    """The eight scenario colours: CIE76 distance at least 30 for normal vision and at least 18
    under each simulated dichromacy (Machado et al., 2009), where 2.3 is a just-noticeable
    difference (Sharma, 2003, from memory); and at least 3:1 contrast with white, the WCAG 2.1
    minimum for graphics (success criterion 1.4.11)."""
    import itertools

    import numpy as np

    colours = palette.SCENARIOS
    assert len(colours) >= 8 and len(set(colours)) == len(colours)
    views = {"normal": np.eye(3), **{k: np.array(v) for k, v in CVD.items()}}
    floor = {"normal": 30.0, "protanopia": 18.0, "deuteranopia": 18.0, "tritanopia": 18.0}
    for view, matrix in views.items():
        labs = [_lab(matrix @ _linear(c)) for c in colours]
        closest = min(np.linalg.norm(a - b) for a, b in itertools.combinations(labs, 2))
        assert closest >= floor[view], (view, closest)
    for colour in colours:
        assert _contrast_with_white(colour) >= 3.0, colour
    assert len(set(palette.SCENARIO_DASHES)) >= 6  # a second cue besides colour
