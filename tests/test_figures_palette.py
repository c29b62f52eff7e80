"""The palette: the published Okabe-Ito colours, contrast on each theme's paper."""

from __future__ import annotations

import pytest

from orbitledger.figures.palette import DARK, LIGHT, OKABE_ITO, palette_for
from orbitledger.kernel import InputError

# Okabe and Ito (2008), Color Universal Design, https://jfly.uni-koeln.de/color/ (the eight
# colours as published, RGB 0-255): black (0,0,0), orange (230,159,0), sky blue (86,180,233),
# bluish green (0,158,115), yellow (240,228,66), blue (0,114,178), vermillion (213,94,0),
# reddish purple (204,121,167).
PUBLISHED = {
    "black": (0, 0, 0),
    "orange": (230, 159, 0),
    "sky_blue": (86, 180, 233),
    "bluish_green": (0, 158, 115),
    "yellow": (240, 228, 66),
    "blue": (0, 114, 178),
    "vermillion": (213, 94, 0),
    "reddish_purple": (204, 121, 167),
}


def _rgb(hex_colour: str) -> tuple[int, int, int]:
    h = hex_colour.lstrip("#")
    return tuple(int(h[i : i + 2], 16) for i in (0, 2, 4))


def _luminance(hex_colour: str) -> float:
    # WCAG 2.1 relative luminance (sRGB), https://www.w3.org/TR/WCAG21/#dfn-relative-luminance
    c = [x / 255 for x in _rgb(hex_colour)]
    c = [x / 12.92 if x <= 0.04045 else ((x + 0.055) / 1.055) ** 2.4 for x in c]
    return 0.2126 * c[0] + 0.7152 * c[1] + 0.0722 * c[2]


def _contrast(a: str, b: str) -> float:
    la, lb = sorted([_luminance(a), _luminance(b)], reverse=True)
    return (la + 0.05) / (lb + 0.05)


def test_colours_are_the_published_set():
    assert {k: _rgb(v) for k, v in OKABE_ITO.items()} == PUBLISHED
    published = {v.upper() for v in OKABE_ITO.values()}
    for pal in (LIGHT, DARK):
        assert {c.upper() for c in pal.series} <= published
        for role in ("periapsis", "apoapsis", "velocity", "station", "sunlit"):
            assert getattr(pal, role).upper() in published


@pytest.mark.parametrize("pal, count", [(LIGHT, 5), (DARK, 7)])
def test_series_lines_meet_non_text_contrast(pal, count):
    # WCAG 2.1 success criterion 1.4.11 (non-text contrast): at least 3:1 against the paper.
    for colour in pal.series[:count]:
        assert _contrast(colour, pal.paper) >= 3.0, colour
    assert _contrast(pal.ink, pal.paper) >= 7.0  # text: WCAG 1.4.6 enhanced contrast


def test_series_colours_are_distinct_and_cycle():
    for pal in (LIGHT, DARK):
        assert len(set(pal.series)) == len(pal.series)
        assert pal.series_colour(len(pal.series)) == pal.series[0]


def test_theme_names():
    assert palette_for("light") is LIGHT and palette_for("dark") is DARK
    assert palette_for(DARK) is DARK
    with pytest.raises(InputError, match="theme"):
        palette_for("solarized")
