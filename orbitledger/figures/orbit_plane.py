"""Orbit-plane view: the conic to scale in its perifocal plane, with Kepler's second law.

Perifocal axes (Vallado, *Fundamentals of Astrodynamics and Applications*, 4th ed. (2013),
Sec. 2.3, the PQW frame): x towards periapsis, y at true anomaly 90 deg, origin at the occupied
focus (the body's centre). Drawn: the body as a disc of its equatorial radius, the conic, the
empty focus at x = -2ae, periapsis and apoapsis, the line of apsides, both semi-axes, the
current position with its velocity arrow, and sweep sectors of equal duration.

Equal-time sectors: the period (or, for a hyperbola, the drawn stretch around periapsis) is
cut into ``sectors`` intervals of the same duration dt; the sector boundaries are the states
propagated by the kernel's two-body propagator from periapsis. Each sector's area is measured
on its drawn outline (the shoelace formula over 256 propagated points of its arc), not from a
formula, so the tooltip shows Kepler's second law holding: every sector has the area
h dt / 2 (h: specific angular momentum from ``orbit_summary``).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import numpy as np
from bokeh.models import Arrow, LabelSet, VeeHead

from .. import kernel
from ..kernel.constants import EARTH, Body
from ..kernel.elements import Elements
from ..kernel.errors import InputError
from ._inputs import as_list, labels_for
from .palette import Palette, palette_for
from .sources import FigureData, named_source
from .theme import add_hover, axis_label, finish_legend, new_figure, tooltip

__all__ = ["orbit_plane_data", "orbit_plane_figure", "shoelace_area_km2"]

_ARC_POINTS = 256  # propagated points per sector: shoelace area to ~1e-6 relative
_ARC_DRAWN = 32  # of which drawn
_HYPERBOLA_SPAN = 4.0  # a hyperbola is drawn out to this many periapsis radii


def shoelace_area_km2(x_km: np.ndarray, y_km: np.ndarray) -> np.ndarray:
    """Area (km^2) of closed polygons with vertices along the last axis (shoelace formula)."""
    x, y = np.asarray(x_km), np.asarray(y_km)
    return 0.5 * np.abs(np.sum(x * np.roll(y, -1, axis=-1) - np.roll(x, -1, axis=-1) * y, axis=-1))


def _checked(elements: Any, index: int) -> Elements:
    if not isinstance(elements, Elements):
        raise InputError(f"orbits[{index}]", type(elements).__name__, "must be kernel Elements")
    if np.ndim(elements.a_km) or np.ndim(elements.e):
        raise InputError(f"orbits[{index}]", "array", "needs one orbit (scalar elements)")
    return elements


def _conic(elements: Elements, mu: float, radius_km: float) -> dict[str, np.ndarray]:
    a, e = float(elements.a_km), float(elements.e)
    p = a * (1.0 - e * e)
    if e < 1.0:
        nu = np.linspace(-math.pi, math.pi, 721)
    else:
        r_max = _HYPERBOLA_SPAN * p / (1.0 + e)
        nu_max = math.acos((p / r_max - 1.0) / e)
        nu = np.linspace(-nu_max, nu_max, 721)
    shape = Elements(a, e, 0.0, 0.0, 0.0, np.degrees(nu))
    r, v = kernel.elements_to_state(shape, mu_km3_s2=mu)
    r, v = np.asarray(r), np.asarray(v)
    rn = np.linalg.norm(r, axis=-1)
    return {
        "x_km": r[:, 0],
        "y_km": r[:, 1],
        "nu_deg": np.degrees(nu),
        "r_km": rn,
        "alt_km": rn - radius_km,
        "speed_km_s": np.linalg.norm(v, axis=-1),
    }


def _sweep_times(elements: Elements, summary, mu: float, sectors: int) -> tuple[np.ndarray, float]:
    """Sector boundary times from periapsis, s, and the span they cover."""
    a, e = float(elements.a_km), float(elements.e)
    if e < 1.0:
        period = float(summary["period_s"])
        return np.linspace(0.0, period, sectors + 1), period
    # Hyperbola: r = a (1 - e cosh F) with a < 0; M = e sinh F - F; t = M / sqrt(mu / -a^3)
    # (Vallado 4th ed., Sec. 2.2, Eqs. 2-35 and 2-36: the hyperbolic orbit equation and
    # Kepler's equation), out to the drawn span.
    r_max = _HYPERBOLA_SPAN * a * (1.0 - e)
    f_max = math.acosh((1.0 - r_max / a) / e)
    t_max = (e * math.sinh(f_max) - f_max) / math.sqrt(mu / (-a) ** 3)
    return np.linspace(-t_max, t_max, sectors + 1), 2.0 * t_max


def _sectors(elements: Elements, summary, mu: float, sectors: int, pal: Palette) -> dict[str, Any]:
    times, span = _sweep_times(elements, summary, mu, sectors)
    periapsis = Elements(float(elements.a_km), float(elements.e), 0.0, 0.0, 0.0, 0.0)
    r0, v0 = kernel.elements_to_state(periapsis, mu_km3_s2=mu)
    fine = np.linspace(0.0, 1.0, _ARC_POINTS + 1)
    dt_s = (times[1] - times[0]) * fine
    t = times[:-1, None] + dt_s[None, :]  # (sectors, points)
    r, _ = kernel.propagate_two_body(np.asarray(r0), np.asarray(v0), t, mu_km3_s2=mu)
    r = np.asarray(r)
    zeros = np.zeros((sectors, 1))
    poly_x = np.concatenate([zeros, r[..., 0]], axis=1)
    poly_y = np.concatenate([zeros, r[..., 1]], axis=1)
    area = shoelace_area_km2(poly_x, poly_y)
    h = float(summary["specific_angular_momentum_km2_s"])
    step = _ARC_POINTS // _ARC_DRAWN
    drawn = np.r_[0, np.arange(1, _ARC_POINTS + 2, step), _ARC_POINTS + 1]
    drawn = np.unique(drawn)
    duration = float(times[1] - times[0])
    return {
        "xs": [poly_x[k, drawn] for k in range(sectors)],
        "ys": [poly_y[k, drawn] for k in range(sectors)],
        "sector": [f"{k + 1} of {sectors}" for k in range(sectors)],
        "t_start_s": times[:-1],
        "t_end_s": times[1:],
        "duration_s": np.full(sectors, duration),
        "area_km2": area,
        "kepler_area_km2": np.full(sectors, 0.5 * h * duration),
        "fill": [k % 2 for k in range(sectors)],
        "colour": [pal.sector_fills[k % 2] for k in range(sectors)],
        "span_s": np.full(sectors, span),
    }


def _apsides(a: float, e: float, radius_km: float, pal: Palette) -> dict[str, list]:
    """Periapsis (and, for an ellipse, apoapsis) on the apse line, with marker and colour."""
    radii = [a * (1.0 - e)] + ([a * (1.0 + e)] if e < 1.0 else [])
    n = len(radii)
    return {
        "x_km": [radii[0], *(-r for r in radii[1:])],
        "y_km": [0.0] * n,
        "name": ["periapsis", "apoapsis"][:n],
        "r_km": radii,
        "alt_km": [r - radius_km for r in radii],
        "marker": ["diamond", "square"][:n],
        "colour": [pal.periapsis, pal.apoapsis][:n],
    }


def orbit_plane_data(
    orbits: Any,
    *,
    body: Body = EARTH,
    sectors: int = 8,
    sweep_orbit: int = 0,
    theme: str | Palette = "light",
) -> FigureData:
    """Columns of every source of the orbit-plane view, by source name.

    ``orbits``: one kernel ``Elements`` or a sequence (elliptic or hyperbolic; scalar fields),
    about ``body``. The true anomaly ``nu_deg`` places the current position. Equal-time sweep
    sectors (``sectors`` >= 2, 0 for none) are drawn for the orbit at index ``sweep_orbit``.
    Every drawn column is here, styling too (colours of the ``theme``'s palette, the apsides'
    markers), so that a live view updates the figure in place from this data alone.
    """
    pal = palette_for(theme)
    orbits = as_list(orbits, lambda o: isinstance(o, Elements))
    if not orbits:
        raise InputError("orbits", orbits, "needs at least one orbit")
    if sectors and not 2 <= int(sectors) <= 64:
        raise InputError("sectors", sectors, "must be 0 (none) or a count from 2 to 64")
    mu, radius = body.mu_km3_s2, body.radius_km
    data: FigureData = {}
    for k, raw in enumerate(orbits):
        el = _checked(raw, k)
        a, e = float(el.a_km), float(el.e)
        summary = kernel.orbit_summary(el, body=body)
        data[f"conic-{k}"] = _conic(el, mu, radius)
        # The same conic with i = RAAN = argp = 0: its GCRF state is its perifocal state.
        flat = Elements(el.a_km, el.e, 0.0, 0.0, 0.0, el.nu_deg)
        r_now, v_now = map(np.asarray, kernel.elements_to_state(flat, mu_km3_s2=mu))
        r_p = a * (1.0 - e)
        b = abs(a) * math.sqrt(abs(1.0 - e * e))
        centre = -a * e
        data[f"apsides-{k}"] = _apsides(a, e, radius, pal)
        data[f"foci-{k}"] = {
            "x_km": [0.0, -2.0 * a * e],
            "y_km": [0.0, 0.0],
            "name": [f"occupied focus ({body.name})", "empty focus"],
        }
        # The apse line: periapsis to apoapsis; for a hyperbola, vertex to focus.
        apse_x = [r_p, -a * (1.0 + e) if e < 1.0 else 0.0]
        data[f"apse-{k}"] = {"x_km": apse_x, "y_km": [0.0, 0.0]}
        # Semi-axes from the centre of the conic: a along the apse line to the vertex,
        # b perpendicular to it (for a hyperbola, the conjugate semi-axis).
        data[f"axes-{k}"] = {
            "x0": [centre, centre],
            "y0": [0.0, 0.0],
            "x1": [r_p, centre],
            "y1": [0.0, b],
            "label": [f"a = {abs(a):,.0f} km", f"b = {b:,.0f} km"],
            "lx": [0.5 * (centre + r_p), centre],
            "ly": [0.0, 0.5 * b],
            "length_km": [abs(a), b],
        }
        speed = float(np.linalg.norm(v_now))
        scale = 0.25 * max(abs(a), radius) / max(speed, 1e-12)
        data[f"now-{k}"] = {
            "x_km": [r_now[0]],
            "y_km": [r_now[1]],
            "nu_deg": [float(el.nu_deg) % 360.0],
            "r_km": [float(np.linalg.norm(r_now))],
            "alt_km": [float(np.linalg.norm(r_now)) - radius],
            "speed_km_s": [speed],
            "vx_km_s": [v_now[0]],
            "vy_km_s": [v_now[1]],
            "x_end": [r_now[0] + scale * v_now[0]],
            "y_end": [r_now[1] + scale * v_now[1]],
        }
        if sectors and k == sweep_orbit:
            data["sectors"] = _sectors(el, summary, mu, int(sectors), pal)
    theta = np.linspace(0.0, 2.0 * np.pi, 181)
    data["body"] = {"x_km": radius * np.cos(theta), "y_km": radius * np.sin(theta)}
    return data


def orbit_plane_figure(
    orbits: Any,
    *,
    labels: Sequence[str] | None = None,
    body: Body = EARTH,
    sectors: int = 8,
    sweep_orbit: int = 0,
    theme: str | Palette = "light",
    title: str = "Orbit plane (perifocal frame, to scale)",
    size: int = 480,
):
    """The orbit-plane view of one or more orbits (see ``orbit_plane_data``)."""
    pal = palette_for(theme)
    data = orbit_plane_data(orbits, body=body, sectors=sectors, sweep_orbit=sweep_orbit, theme=pal)
    n = sum(1 for name in data if name.startswith("conic-"))
    names = labels_for(labels, n, "orbit")
    fig = new_figure(
        title=title,
        x_label=axis_label("x, towards periapsis", "km"),
        y_label=axis_label("y", "km"),
        theme=pal,
        width=None,
        height=None,
        frame_width=size,
        frame_height=size,
        match_aspect=True,
    )
    if "sectors" in data:
        src = named_source(data, "sectors")
        wedges = fig.patches(
            "xs",
            "ys",
            source=src,
            fill_color="colour",
            fill_alpha=0.35,
            line_color=pal.paper,
            line_width=1.0,
            legend_label=f"equal-time sectors ({names[sweep_orbit]})",
        )
        add_hover(
            fig,
            [wedges],
            [
                ("sector", "@sector"),
                tooltip("from periapsis", "t_start_s", "s", "0"),
                tooltip("to", "t_end_s", "s", "0"),
                tooltip("duration", "duration_s", "s", "0.0"),
                tooltip("area (drawn outline)", "area_km2", "km^2", "0.000e"),
                tooltip("h dt / 2", "kepler_area_km2", "km^2", "0.000e"),
            ],
        )
    fig.patch(
        "x_km",
        "y_km",
        source=named_source(data, "body"),
        fill_color=pal.body_fill,
        fill_alpha=0.55,
        line_color=pal.ink,
        line_width=1.0,
        legend_label=f"{body.name} (equatorial radius)",
    )
    labelled = sweep_orbit if "sectors" in data else 0
    for k in range(n):
        _draw_orbit(fig, data, k, names[k], pal, first=k == 0, labelled=k == labelled)
    finish_legend(fig, pal, outside="right")
    return fig


def _draw_orbit(
    fig, data: FigureData, k: int, name: str, pal: Palette, *, first: bool, labelled: bool
) -> None:
    """One orbit's conic, apsides, foci, semi-axes and position with velocity. Construction
    elements enter the legend once, and the semi-axis lengths are written for one orbit only,
    so that overlaid candidates stay readable."""

    def once(text: str) -> dict:
        return {"legend_label": text} if first else {}

    colour = pal.series_colour(k)
    conic = fig.line(
        "x_km",
        "y_km",
        source=named_source(data, f"conic-{k}"),
        line_color=colour,
        line_width=2.2,
        legend_label=name,
    )
    state_rows = [
        ("orbit", name),
        tooltip("true anomaly", "nu_deg", "deg", "0.0"),
        tooltip("radius", "r_km", "km", "0.0"),
        tooltip("altitude above equatorial radius", "alt_km", "km", "0.0"),
        tooltip("speed", "speed_km_s", "km/s", "0.000"),
    ]
    add_hover(fig, [conic], state_rows, mode="mouse")
    fig.line(
        "x_km",
        "y_km",
        source=named_source(data, f"apse-{k}"),
        line_color=colour,
        line_width=1.0,
        line_dash=[6, 4],
        **once("line of apsides"),
    )
    axes = named_source(data, f"axes-{k}")
    fig.segment(
        "x0",
        "y0",
        "x1",
        "y1",
        source=axes,
        line_color=colour,
        line_width=1.4,
        **once("semi-axes a, b"),
    )
    if labelled:
        fig.add_layout(
            LabelSet(
                x="lx",
                y="ly",
                text="label",
                source=axes,
                text_font_size="10px",
                text_color=pal.ink,
                x_offset=4,
                y_offset=4,
            )
        )
    aps = named_source(data, f"apsides-{k}")
    apsides = fig.scatter(
        "x_km",
        "y_km",
        source=aps,
        marker="marker",
        size=11,
        fill_color="colour",
        line_color=pal.ink,
        **once("periapsis ◆, apoapsis ■"),
    )
    foci = fig.scatter(
        "x_km",
        "y_km",
        source=named_source(data, f"foci-{k}"),
        marker="x",
        size=10,
        line_color=pal.focus,
        line_width=2,
        **once("foci (occupied, empty)"),
    )
    add_hover(
        fig,
        [apsides],
        [
            ("point", "@name"),
            tooltip("radius", "r_km", "km", "0.0"),
            tooltip("altitude above equatorial radius", "alt_km", "km", "0.0"),
        ],
    )
    add_hover(fig, [foci], [("point", "@name"), tooltip("x", "x_km", "km", "0.0")])
    now = named_source(data, f"now-{k}")
    mark = fig.scatter(
        "x_km",
        "y_km",
        source=now,
        size=11,
        fill_color=colour,
        line_color=pal.ink,
        **once("position, velocity (arrow)"),
    )
    fig.add_layout(
        Arrow(
            end=VeeHead(size=10, line_color=pal.velocity, fill_color=pal.velocity),
            x_start="x_km",
            y_start="y_km",
            x_end="x_end",
            y_end="y_end",
            source=now,
            line_color=pal.velocity,
            line_width=2.0,
        )
    )
    add_hover(fig, [mark], state_rows)
