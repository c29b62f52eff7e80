"""The figures' colours: a colour-blind-safe palette in a light and a dark variant.

Every hue comes from the eight colours of Okabe and Ito, *Color Universal Design (CUD): how to
make figures and presentations that are friendly to colorblind people* (2008),
https://jfly.uni-koeln.de/color/ : black #000000, orange #E69F00, sky blue #56B4E9, bluish
green #009E73, yellow #F0E442, blue #0072B2, vermillion #D55E00, reddish purple #CC79A7.
They stay distinguishable under protanopia, deuteranopia and tritanopia. Structure (paper,
ink, grid, land) uses neutral greys, which carry no meaning by hue.

The two variants differ in the order of the series colours and in their neutrals: on the light
paper the dark members (blue, vermillion, bluish green) lead, on the dark paper the light ones
(sky blue, orange, yellow) lead, so that the first five series colours of the light variant and
all seven of the dark one keep a contrast ratio of at least 3:1 against their paper (WCAG 2.1,
success criterion 1.4.11, non-text contrast; checked in tests/test_figures_palette.py). Orange
and sky blue, under 3:1 on white, serve on white only as translucent fills or as the sixth and
seventh series. The light
neutrals follow JupyterLab's light theme (white paper), the dark ones its dark theme
(#111111 layout colour); a figure is a canvas, so it cannot read the page's CSS variables and
is given its variant explicitly (``theme="light"`` or ``"dark"``).

Meaning is never carried by colour alone: markers differ in shape and lines in dash as well.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..kernel.errors import InputError

__all__ = ["OKABE_ITO", "Palette", "LIGHT", "DARK", "THEMES", "palette_for", "sequential"]

# Okabe & Ito (2008), the eight CUD colours, by their published names.
OKABE_ITO = {
    "black": "#000000",
    "orange": "#E69F00",
    "sky_blue": "#56B4E9",
    "bluish_green": "#009E73",
    "yellow": "#F0E442",
    "blue": "#0072B2",
    "vermillion": "#D55E00",
    "reddish_purple": "#CC79A7",
}


@dataclass(frozen=True)
class Palette:
    """Colours by role. ``series`` is the cycle for candidates/orbits/stations, in order."""

    name: str
    paper: str  # figure background
    ink: str  # text, axes, outlines of the central body
    muted: str  # secondary text, minor guides
    grid: str
    series: tuple[str, ...]
    body_fill: str  # central body disc
    land: str  # ground-track map land fill
    coast: str  # coastline / border lines
    ocean: str  # map background
    sunlit: str  # sunlit track, sunlit bars
    umbra: str  # full shadow
    penumbra: str  # partial shadow
    station: str
    periapsis: str
    apoapsis: str
    velocity: str
    focus: str
    sector_fills: tuple[str, str]  # alternating fills of the equal-time sweep sectors
    margin: str  # delta-v budget margin, stacked on each line

    def series_colour(self, index: int) -> str:
        """The ``index``-th series colour, cycling."""
        return self.series[index % len(self.series)]


_C = OKABE_ITO

LIGHT = Palette(
    name="light",
    paper="#FFFFFF",
    ink="#1F2328",
    muted="#57606A",
    grid="#E4E7EB",
    series=(
        _C["blue"],
        _C["vermillion"],
        _C["bluish_green"],
        _C["reddish_purple"],
        _C["black"],
        _C["orange"],
        _C["sky_blue"],
    ),
    body_fill="#B4BFCB",  # neutral: the sectors carry the hues
    land="#E9E6DF",
    coast="#8C8C8C",
    ocean="#FFFFFF",
    sunlit=_C["orange"],
    umbra=_C["black"],
    penumbra="#8C8C8C",
    station=_C["reddish_purple"],
    periapsis=_C["vermillion"],
    apoapsis=_C["bluish_green"],
    velocity=_C["vermillion"],
    focus=_C["black"],
    sector_fills=(_C["sky_blue"], _C["orange"]),
    margin="#B8BEC6",
)

DARK = Palette(
    name="dark",
    paper="#111111",
    ink="#E6E6E6",
    muted="#A0A0A0",
    grid="#2E2E2E",
    series=(
        _C["sky_blue"],
        _C["orange"],
        _C["yellow"],
        _C["reddish_purple"],
        _C["bluish_green"],
        _C["vermillion"],
        _C["blue"],
    ),
    body_fill="#4A5663",  # neutral: the sectors carry the hues
    land="#2B2B2B",
    coast="#7A7A7A",
    ocean="#111111",
    sunlit=_C["yellow"],
    umbra="#FFFFFF",
    penumbra="#8C8C8C",
    station=_C["reddish_purple"],
    periapsis=_C["vermillion"],
    apoapsis=_C["bluish_green"],
    velocity=_C["orange"],
    focus="#FFFFFF",
    sector_fills=(_C["sky_blue"], _C["orange"]),
    margin="#5A5F66",
)

THEMES = {"light": LIGHT, "dark": DARK}


def palette_for(theme: str | Palette) -> Palette:
    """The palette for ``theme`` ("light" or "dark"; a Palette passes through)."""
    if isinstance(theme, Palette):
        return theme
    try:
        return THEMES[theme]
    except (KeyError, TypeError):
        raise InputError("theme", theme, "must be 'light' or 'dark'") from None


def sequential(count: int) -> list[str]:
    """``count`` colours of cividis, a sequential map designed to read the same with and without
    colour-vision deficiency and to rise monotonically in lightness (Nunez, Anderton and
    Renslow, "Optimizing colormaps with consideration for color vision deficiency to enable
    accurate interpretation of scientific data", PLoS ONE 13(7): e0199239, 2018), as shipped
    by Bokeh (``bokeh.palettes.Cividis256``). Dark = low values."""
    from bokeh.palettes import Cividis256

    if count < 1:
        raise InputError("count", count, "needs at least one colour")
    if count == 1:
        return [Cividis256[0]]
    return [Cividis256[round(k * 255 / (count - 1))] for k in range(count)]
