"""Inertial view: the orbit around the central body in GCRF, as an orthographic projection
that the user turns by the viewer's azimuth and elevation.

The viewer looks at the body's centre from the direction
d = (cos E cos A, cos E sin A, sin E) (A: azimuth from the GCRF x axis towards y, E: elevation
above the equator). A point p projects onto the screen axes right = (-sin A, cos A, 0) and
up = d x right; its depth along d tells whether it faces the viewer. A point behind the body's
centre (depth < 0) whose projection falls inside the limb (u^2 + v^2 < R^2) is hidden and is
drawn dashed and dim. Orthographic projection: Snyder, *Map Projections: A Working Manual*,
USGS Professional Paper 1395 (1987), Ch. 20 (the same rotation, applied to space points).

The projection is data-driven: every polyline's source keeps its GCRF x, y, z columns beside
the projected u, v. A live view calls :func:`reproject` (Python); the static figure carries
two sliders whose ``CustomJS`` does the same computation in the browser (``PROJECT_JS``), so a
record's figure turns too.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

import numpy as np
from bokeh.layouts import column, row
from bokeh.models import CustomJS, Slider

from ..kernel.constants import EARTH, Body
from ..kernel.errors import InputError
from ._inputs import labels_for
from .own_scripts import declare_script
from .palette import Palette, palette_for
from .sources import FigureData, named_source, sources_of
from .theme import add_hover, axis_label, finish_legend, new_figure, tooltip

__all__ = [
    "PROJECT_JS",
    "default_view",
    "inertial_data",
    "inertial_figure",
    "project",
    "reproject",
]

_LINE_SOURCES = ("orbit-", "equator", "nodes-", "axis")


def project(
    xyz_km: np.ndarray, azimuth_deg: float, elevation_deg: float
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Orthographic screen coordinates (u right, v up, km) and depth (km, > 0 towards the
    viewer) of GCRF points ``xyz_km`` (..., 3) seen from (azimuth, elevation), deg."""
    a, e = np.radians(azimuth_deg), np.radians(elevation_deg)
    d = np.array([np.cos(e) * np.cos(a), np.cos(e) * np.sin(a), np.sin(e)])
    right = np.array([-np.sin(a), np.cos(a), 0.0])
    up = np.cross(d, right)
    p = np.asarray(xyz_km, dtype=float)
    return p @ right, p @ up, p @ d


def _split_hidden(u, v, w, radius_km) -> dict[str, np.ndarray]:
    hidden = (w < 0.0) & (u * u + v * v < radius_km * radius_km)
    # Each part keeps its neighbours on the other side, so the two lines meet at the limb.
    front = ~hidden
    front_ext = front.copy()
    front_ext[:-1] |= front[1:]
    front_ext[1:] |= front[:-1]
    back_ext = hidden.copy()
    back_ext[:-1] |= hidden[1:]
    back_ext[1:] |= hidden[:-1]
    return {
        "u_km": u,
        "v_km": v,
        "u_front": np.where(front_ext, u, np.nan),
        "v_front": np.where(front_ext, v, np.nan),
        "u_back": np.where(back_ext, u, np.nan),
        "v_back": np.where(back_ext, v, np.nan),
    }


def _polyline(xyz: np.ndarray, azimuth_deg, elevation_deg, radius_km) -> dict[str, np.ndarray]:
    u, v, w = project(xyz, azimuth_deg, elevation_deg)
    cols = {"x_km": xyz[:, 0], "y_km": xyz[:, 1], "z_km": xyz[:, 2]}
    cols.update(_split_hidden(u, v, w, radius_km))
    return cols


def _checked_states(r_km: Any, v_km_s: Any, index: int) -> tuple[np.ndarray, np.ndarray]:
    r = np.asarray(r_km, dtype=float)
    v = np.asarray(v_km_s, dtype=float)
    if r.ndim != 2 or r.shape[-1] != 3 or r.shape != v.shape or len(r) < 2:
        raise InputError(
            f"orbits[{index}]", r.shape, "needs r_km and v_km_s of shape (n, 3), n >= 2"
        )
    if not (np.all(np.isfinite(r)) and np.all(np.isfinite(v))):
        raise InputError(
            f"orbits[{index}]", "non-finite", "positions and velocities must be finite"
        )
    return r, v


def default_view(r_km: Any, v_km_s: Any) -> tuple[float, float]:
    """A view that shows the orbit open: from its pole (the direction of h = r x v), tilted
    30 deg towards the north so that the equator reads as an ellipse. (azimuth, elevation) deg."""
    h = np.cross(np.asarray(r_km, dtype=float)[0], np.asarray(v_km_s, dtype=float)[0])
    az = float(np.degrees(np.arctan2(h[1], h[0])))
    el = float(np.degrees(np.arcsin(h[2] / np.linalg.norm(h))))
    return round(az), round(float(np.clip(el + 30.0 if el < 60.0 else el - 30.0, -85.0, 85.0)))


def inertial_data(
    orbits: Sequence[tuple[Any, Any]],
    *,
    azimuth_deg: float | None = None,
    elevation_deg: float | None = None,
    body: Body = EARTH,
) -> FigureData:
    """Columns of every source of the inertial view, by source name.

    ``orbits``: a sequence of ``(r_km, v_km_s)`` GCRF samples of shape (n, 3) each (e.g. one
    period from ``kernel.propagate_two_body``); the first sample is the current position. The
    line of nodes is along z x h (h = r x v of the first sample); for an equatorial orbit
    (|h_xy| < 1e-9 |h|) it is not drawn.
    """
    radius = body.radius_km
    orbits = list(orbits)
    if azimuth_deg is None or elevation_deg is None:
        az0, el0 = default_view(*orbits[0]) if orbits else (30.0, 25.0)
        azimuth_deg = az0 if azimuth_deg is None else azimuth_deg
        elevation_deg = el0 if elevation_deg is None else elevation_deg
    data: FigureData = {}
    extent = radius
    for k, (r_km, v_km_s) in enumerate(orbits):
        r, v = _checked_states(r_km, v_km_s, k)
        data[f"orbit-{k}"] = _polyline(r, azimuth_deg, elevation_deg, radius)
        data[f"orbit-{k}"]["r_km"] = np.linalg.norm(r, axis=1)
        data[f"orbit-{k}"]["speed_km_s"] = np.linalg.norm(v, axis=1)
        extent = max(extent, float(np.max(np.linalg.norm(r, axis=1))))
        h = np.cross(r[0], v[0])
        node = np.cross([0.0, 0.0, 1.0], h)
        length = float(np.max(np.linalg.norm(r, axis=1)))
        if np.linalg.norm(node) > 1e-9 * np.linalg.norm(h):
            # From the surface out to the orbit on both sides (inside the body it is unseen);
            # a NaN row parts the ascending half from the descending one.
            unit = node / np.linalg.norm(node)
            reach = np.linspace(radius, max(length, radius), 16)[:, None]
            nodes = np.vstack([unit * reach, np.full((1, 3), np.nan), -unit * reach])
        else:
            nodes = np.full((2, 3), np.nan)
        data[f"nodes-{k}"] = _polyline(nodes, azimuth_deg, elevation_deg, radius)
        u, v_, w = project(r[:1], azimuth_deg, elevation_deg)
        data[f"now-{k}"] = {
            "x_km": r[:1, 0],
            "y_km": r[:1, 1],
            "z_km": r[:1, 2],
            "u_km": u,
            "v_km": v_,
            "r_km": np.linalg.norm(r[:1], axis=1),
            "speed_km_s": np.linalg.norm(v[:1], axis=1),
        }
    theta = np.linspace(0.0, 2.0 * np.pi, 241)
    equator = np.column_stack([radius * np.cos(theta), radius * np.sin(theta), 0.0 * theta])
    data["equator"] = _polyline(equator, azimuth_deg, elevation_deg, radius)
    data["axis"] = _polyline(
        np.array([[0.0, 0.0, radius], [0.0, 0.0, 1.25 * radius]]),
        azimuth_deg,
        elevation_deg,
        radius,
    )
    data["limb"] = {"u_km": radius * np.cos(theta), "v_km": radius * np.sin(theta)}
    data["view"] = {
        "azimuth_deg": [float(azimuth_deg)],
        "elevation_deg": [float(elevation_deg)],
        "radius_km": [radius],
        "extent_km": [extent],
    }
    return data


def reproject(fig, azimuth_deg: float, elevation_deg: float) -> None:
    """Turn a live inertial view to (azimuth, elevation), deg, in place (Python side of
    ``PROJECT_JS``): recomputes u, v and the hidden split of every line from its x, y, z."""
    sources = sources_of(fig)
    limb = sources["limb"].data
    radius = float(np.hypot(limb["u_km"][0], limb["v_km"][0]))
    for name, src in sources.items():
        if "x_km" not in src.data:
            continue
        xyz = np.column_stack([src.data["x_km"], src.data["y_km"], src.data["z_km"]])
        u, v, w = project(xyz, azimuth_deg, elevation_deg)
        new = dict(src.data)
        if name.startswith(_LINE_SOURCES):
            new.update(_split_hidden(u, v, w, radius))
        else:
            new.update({"u_km": u, "v_km": v})
        src.data = new
    if "view" in sources:  # present when the figure carries its sliders
        sources["view"].data = dict(
            sources["view"].data,
            azimuth_deg=[float(azimuth_deg)],
            elevation_deg=[float(elevation_deg)],
        )


# The browser twin of ``project`` and ``_split_hidden``: the same formulas, for the sliders of a
# static figure. Checked against the Python side in tests (run with node).
PROJECT_JS = """
const A = az.value * Math.PI / 180, E = el.value * Math.PI / 180;
const d = [Math.cos(E) * Math.cos(A), Math.cos(E) * Math.sin(A), Math.sin(E)];
const rt = [-Math.sin(A), Math.cos(A), 0.0];
const up = [d[1] * rt[2] - d[2] * rt[1], d[2] * rt[0] - d[0] * rt[2], d[0] * rt[1] - d[1] * rt[0]];
const R = view.data.radius_km[0];
for (const [src, isLine] of targets) {
  const x = src.data.x_km, y = src.data.y_km, z = src.data.z_km, n = x.length;
  const u = new Float64Array(n), v = new Float64Array(n), hid = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    u[i] = x[i] * rt[0] + y[i] * rt[1] + z[i] * rt[2];
    v[i] = x[i] * up[0] + y[i] * up[1] + z[i] * up[2];
    const w = x[i] * d[0] + y[i] * d[1] + z[i] * d[2];
    hid[i] = (w < 0 && u[i] * u[i] + v[i] * v[i] < R * R) ? 1 : 0;
  }
  const data = Object.assign({}, src.data, {u_km: u, v_km: v});
  if (isLine) {
    const uf = new Float64Array(n), vf = new Float64Array(n);
    const ub = new Float64Array(n), vb = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const prev = i > 0 ? hid[i - 1] : hid[i], next = i < n - 1 ? hid[i + 1] : hid[i];
      const front = !hid[i] || !prev || !next, back = hid[i] || prev || next;
      uf[i] = front ? u[i] : NaN; vf[i] = front ? v[i] : NaN;
      ub[i] = back ? u[i] : NaN; vb[i] = back ? v[i] : NaN;
    }
    Object.assign(data, {u_front: uf, v_front: vf, u_back: ub, v_back: vb});
  }
  src.data = data;
}
view.data = Object.assign({}, view.data, {azimuth_deg: [az.value], elevation_deg: [el.value]});
"""
declare_script("inertial view: re-projection by the sliders", PROJECT_JS)


def inertial_figure(
    orbits: Sequence[tuple[Any, Any]],
    *,
    labels: Sequence[str] | None = None,
    azimuth_deg: float | None = None,
    elevation_deg: float | None = None,
    body: Body = EARTH,
    theme: str | Palette = "light",
    title: str = "Orbit in GCRF (orthographic view)",
    size: int = 460,
    sliders: bool = True,
):
    """The inertial view of one or more orbits (see ``inertial_data``).

    With ``sliders`` (default) returns a layout: the figure and azimuth/elevation sliders that
    re-project in the browser; without, the bare figure (a live view turns it with
    ``reproject``). The figure is named "inertial" in the layout.
    """
    pal = palette_for(theme)
    data = inertial_data(orbits, azimuth_deg=azimuth_deg, elevation_deg=elevation_deg, body=body)
    n = sum(1 for name in data if name.startswith("orbit-"))
    names = labels_for(labels, n, "orbit")
    extent = 1.08 * data["view"]["extent_km"][0]
    fig = new_figure(
        title=title,
        x_label=axis_label("screen right", "km"),
        y_label=axis_label("screen up", "km"),
        theme=pal,
        width=None,
        height=None,
        frame_width=size,
        frame_height=size,
        match_aspect=True,
        x_range=(-extent, extent),
        y_range=(-extent, extent),
        name="inertial",
    )
    fig.grid.visible = False
    fig.patch(
        "u_km",
        "v_km",
        source=named_source(data, "limb"),
        fill_color=pal.body_fill,
        fill_alpha=0.28,
        line_color=pal.ink,
        line_width=1.2,
        legend_label=f"{body.name} limb",
    )
    sources = {name: named_source(data, name) for name in data if name != "limb"}
    dim = {"line_alpha": 0.45, "line_dash": [4, 4]}
    for name, colour, width in (("equator", pal.muted, 1.2), ("axis", pal.muted, 1.2)):
        src = sources[name]
        fig.line("u_back", "v_back", source=src, line_color=colour, line_width=width, **dim)
        fig.line(
            "u_front",
            "v_front",
            source=src,
            line_color=colour,
            line_width=width,
            legend_label="equator, polar axis",
        )
    for k in range(n):
        colour = pal.series_colour(k)
        orbit, nodes, now = sources[f"orbit-{k}"], sources[f"nodes-{k}"], sources[f"now-{k}"]
        fig.line("u_back", "v_back", source=orbit, line_color=colour, line_width=2.0, **dim)
        front = fig.line(
            "u_front",
            "v_front",
            source=orbit,
            line_color=colour,
            line_width=2.2,
            legend_label=names[k],
        )
        fig.line("u_back", "v_back", source=nodes, line_color=colour, line_width=1.0, **dim)
        fig.line(
            "u_front",
            "v_front",
            source=nodes,
            line_color=colour,
            line_width=1.0,
            line_dash="dotdash",
            legend_label=f"{names[k]}: line of nodes",
        )
        mark = fig.scatter(
            "u_km",
            "v_km",
            source=now,
            size=10,
            marker="circle",
            fill_color=colour,
            line_color=pal.ink,
        )
        add_hover(
            fig,
            [front, mark],
            [
                ("orbit", names[k]),
                tooltip("x", "x_km", "km", "0"),
                tooltip("y", "y_km", "km", "0"),
                tooltip("z", "z_km", "km", "0"),
                tooltip("radius", "r_km", "km", "0.0"),
                tooltip("speed", "speed_km_s", "km/s", "0.000"),
            ],
        )
    finish_legend(fig, pal, outside="right")
    if not sliders:
        return fig
    az = Slider(
        title="view azimuth (deg)",
        start=-180,
        end=180,
        step=1,
        value=data["view"]["azimuth_deg"][0],
        width=size // 2 - 10,
    )
    el = Slider(
        title="view elevation (deg)",
        start=-90,
        end=90,
        step=1,
        value=data["view"]["elevation_deg"][0],
        width=size // 2 - 10,
    )
    targets = [
        [src, name.startswith(_LINE_SOURCES)] for name, src in sources.items() if "x_km" in src.data
    ]
    callback = CustomJS(
        args={"az": az, "el": el, "view": sources["view"], "targets": targets}, code=PROJECT_JS
    )
    az.js_on_change("value", callback)
    el.js_on_change("value", callback)
    return column(fig, row(az, el))
