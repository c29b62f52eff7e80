"""From a case to the inputs of the shared figure builders (orbitledger.figures).

The builders take kernel results (states, ground tracks, station lists); this module computes
those from a validated case with the kernel, once per case (a small cache shared by every
figure of an edit), and names each figure with its builder and its data partner:

- ``build(case, theme)`` -> the Bokeh model (the same builder the record uses);
- ``data(case, screen)`` -> the columns of its named sources, for an update in place
  (``screen`` is the model on screen, so that a view the user turned stays turned).

The ephemeris follows ``force_model.propagator``; a propagator the kernel does not offer yet is
said so beside the figure, never replaced silently by another.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from orbitledger import kernel

__all__ = [
    "CASE_FIGURES",
    "CaseFigure",
    "case_ephemeris",
    "case_figures",
    "case_track",
    "overlay_figures",
]


@dataclass(frozen=True)
class Ephemeris:
    """GCRF samples of a case over its analysis window: dt_s from the epoch, r_km, v_km_s."""

    dt_s: np.ndarray
    r_km: np.ndarray
    v_km_s: np.ndarray
    utc: tuple[np.ndarray, np.ndarray]  # two-part UTC Julian dates of the samples


_cache: dict[tuple[int, str], tuple[Any, Any]] = {}


def _cached(case: Any, key: str, fn: Callable[[Any], Any]) -> Any:
    slot = (id(case), key)
    hit = _cache.get(slot)
    if hit is not None and hit[0] is case:
        return hit[1]
    value = fn(case)
    if len(_cache) > 16:
        _cache.clear()
    _cache[slot] = (case, value)  # the case is kept so that its id is not reused meanwhile
    return value


def _window_offsets_s(case: Any) -> np.ndarray:
    window = case.window
    start = 0.0
    if window.start_utc is not None:
        j1, j2 = kernel.parse_utc(case.epoch_utc)
        s1, s2 = kernel.parse_utc(window.start_utc)
        start = float(((s1 - j1) + (s2 - j2)) * 86400.0)
    n = int(np.floor(window.duration_s / window.step_s + 1e-9)) + 1
    return start + window.step_s * np.arange(n)


def _propagate(case: Any, dt_s: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    propagator = case.force_model.propagator
    body = case.body_constants()
    r0, v0 = case.state()
    if propagator == "two-body":
        return kernel.propagate_two_body(r0, v0, dt_s, mu_km3_s2=body.mu_km3_s2)
    j2_mean = getattr(kernel, "propagate_j2_mean", None)
    if propagator == "j2-mean" and j2_mean is not None:
        return j2_mean(r0, v0, dt_s, body=body)
    raise ValueError(f"the {propagator!r} propagator is not available for live figures yet")


def case_ephemeris(case: Any) -> Ephemeris:
    """The case's GCRF ephemeris over its analysis window (cached per case)."""

    def compute(c: Any) -> Ephemeris:
        dt = _window_offsets_s(c)
        r, v = _propagate(c, dt)
        j1, j2 = kernel.parse_utc(c.epoch_utc)
        return Ephemeris(dt, np.asarray(r), np.asarray(v), (j1 + 0.0 * dt, j2 + dt / 86400.0))

    return _cached(case, "ephemeris", compute)


def case_track(case: Any) -> dict[str, np.ndarray]:
    """The ground track of the case over its window: lat_deg, lon_deg, height_km (WGS-84)."""

    def compute(c: Any) -> dict[str, np.ndarray]:
        eph = case_ephemeris(c)
        eop = c.earth_orientation
        r_itrf = kernel.gcrf_to_itrf(
            eph.r_km, eph.utc, dut1_s=eop.dut1_s, xp_arcsec=eop.xp_arcsec, yp_arcsec=eop.yp_arcsec
        )
        lat, lon, h = kernel.geodetic_from_itrf(r_itrf)
        return {"lat_deg": lat, "lon_deg": lon, "height_km": h, "times_utc": _utc_ms(eph)}

    return _cached(case, "track", compute)


def _utc_ms(eph: Ephemeris) -> np.ndarray:
    # Milliseconds since 1970-01-01 UTC (Bokeh's datetime unit); JD 2440587.5 is that instant.
    return ((eph.utc[0] - 2440587.5) + eph.utc[1]) * 86_400_000.0


def _one_orbit(case: Any) -> tuple[np.ndarray, np.ndarray]:
    """GCRF samples over one period from the epoch (or the window, for an open orbit)."""

    def compute(c: Any) -> tuple[np.ndarray, np.ndarray]:
        elements = c.elements()
        body = c.body_constants()
        r0, v0 = c.state()
        e = float(np.asarray(elements.e))
        if e < 1.0:
            period = 2.0 * np.pi * np.sqrt(float(np.asarray(elements.a_km)) ** 3 / body.mu_km3_s2)
            dt = np.linspace(0.0, period, 361)
        else:
            dt = np.linspace(0.0, c.window.duration_s, 361)
        return kernel.propagate_two_body(r0, v0, dt, mu_km3_s2=body.mu_km3_s2)

    return _cached(case, "one-orbit", compute)


def _stations(case: Any) -> list[dict[str, Any]]:
    return [s.model_dump(mode="json") for s in (case.stations or [])]


def _slider_view(screen: Any) -> dict[str, float]:
    """The view angles the user set with the inertial view's sliders (on screen)."""
    from bokeh.models import Slider

    out: dict[str, float] = {}
    if screen is None:
        return out
    for slider in screen.select(type=Slider):
        title = (slider.title or "").lower()
        if "azimuth" in title:
            out["azimuth_deg"] = float(slider.value)
        elif "elevation" in title:
            out["elevation_deg"] = float(slider.value)
    return out


@dataclass(frozen=True)
class CaseFigure:
    """A figure of one case: ``build(case, theme)`` and ``data(case, screen)``."""

    name: str
    build: Callable[[Any, str], Any]
    data: Callable[[Any, Any], dict[str, dict[str, Any]]]


def _figures() -> list[CaseFigure]:
    from orbitledger import figures as f

    out: list[CaseFigure] = []
    orbit_plane = getattr(f, "orbit_plane_figure", None)
    if orbit_plane is not None:
        out.append(
            CaseFigure(
                "orbit plane",
                lambda c, theme: orbit_plane(c.elements(), body=c.body_constants(), theme=theme),
                lambda c, _s: f.orbit_plane_data(c.elements(), body=c.body_constants()),
            )
        )
    if hasattr(f, "inertial_figure"):
        out.append(
            CaseFigure(
                "inertial view",
                lambda c, theme: f.inertial_figure(
                    [_one_orbit(c)], body=c.body_constants(), theme=theme
                ),
                lambda c, screen: f.inertial_data(
                    [_one_orbit(c)], body=c.body_constants(), **_slider_view(screen)
                ),
            )
        )
    if hasattr(f, "ground_track_figure"):
        out.append(
            CaseFigure(
                "ground track",
                lambda c, theme: f.ground_track_figure(
                    [case_track(c)], _stations(c), theme=theme, labels=[_label(c)]
                ),
                lambda c, _s: f.ground_track_data([case_track(c)], _stations(c)),
            )
        )
    return out


def _label(case: Any) -> str:
    title = getattr(getattr(case, "meta", None), "title", "") or "case"
    return title.split(":", 1)[0]


CASE_FIGURES: Callable[[], list[CaseFigure]] = _figures


def case_figures(case: Any, *, theme: str = "light") -> dict[str, Any]:
    """Every figure of ``case`` that applies to it, by name: the figures the editor shows,
    for a notebook to pass to ``orbitledger.figures.show`` (and so to the record)."""
    case = case.case if hasattr(case, "case") and hasattr(case, "save") else case
    out = {}
    for fig in CASE_FIGURES():
        try:
            out[fig.name] = fig.build(case, theme)
        except ValueError:
            continue  # e.g. a propagator the live figures do not offer yet: the editor says so
    return out


def overlay_figures(cases: Sequence[Any], labels: Sequence[str], *, theme: str = "light") -> list:
    """The figures of a trade: every candidate drawn in the same plot, one colour each."""
    from orbitledger import figures as f

    out = []
    body = cases[0].body_constants()
    out.append(
        f.inertial_figure(
            [_one_orbit(c) for c in cases],
            labels=list(labels),
            body=body,
            theme=theme,
            title="Candidates in GCRF (orthographic view)",
        )
    )
    stations = {s["name"]: s for c in cases for s in _stations(c)}
    out.append(
        f.ground_track_figure(
            [case_track(c) for c in cases],
            list(stations.values()),
            labels=list(labels),
            theme=theme,
            title="Ground tracks of the candidates",
        )
    )
    return out
