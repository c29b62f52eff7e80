"""From a case to the inputs of the shared figure builders (orbitledger.figures).

The builders take kernel results (states, ground tracks, station lists); this module computes
those from a validated case with the kernel, once per case (a small cache shared by every
figure of an edit), and names each figure with its builder and its data partner:

- ``build(case, theme)`` -> the Bokeh model (the same builder the record uses);
- ``data(case, screen)`` -> the columns of its named sources, for an update in place
  (``screen`` is the model on screen, so that a view the user turned stays turned).

The trajectory follows ``force_model.propagator`` (``orbitledger.analysis.case_trajectory``);
a case the figures cannot draw (an SGP4 case without its TLE) is said so beside the figure.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from orbitledger import kernel
from orbitledger.analysis import budget_for_case
from orbitledger.analysis import case_trajectory as analysis_trajectory
from orbitledger.kernel.eclipses import shadow_state
from orbitledger.kernel.groundtrack import ground_track

from .inputkeys import CACHE, FIGURE_NEEDS
from .windowcache import remembering, sun_positions_km

__all__ = [
    "CASE_FIGURES",
    "FIGURE_NEEDS",
    "budget_report",
    "CaseFigure",
    "case_trajectory",
    "case_figures",
    "case_track",
    "overlay_figures",
    "prime",
]


# The kernel work of each figure is cached on the case's physical inputs (see inputkeys):
# the name of the item, and the inputs it depends on.
_DEPENDS = {
    "trajectory": "trajectory",
    "window-inputs": "trajectory",
    "track": "trajectory",
    "window-states": "trajectory",
    "one-orbit": "one-orbit",
    "budget": "budget",
}


def _cached(case: Any, key: str, fn: Callable[[Any], Any]) -> Any:
    """``fn(case)``, computed once per item ``key`` and the physical inputs it reads."""
    return CACHE.get(case, _DEPENDS[key], fn, name=key)


def case_trajectory(case: Any, progress: Callable[[float], None] | None = None) -> Any:
    """The kernel ``Trajectory`` of the case over its window (``analysis.case_trajectory``,
    the one translation of a case into kernel inputs), cached per case."""
    return _cached(case, "trajectory", lambda c: analysis_trajectory(c, progress=progress))


def window_offsets_s(case: Any) -> np.ndarray:
    """Sample times of the analysis window, s after its start: 0, step, ..., duration."""
    window = case.window
    n = int(np.floor(window.duration_s / window.step_s + 1e-9)) + 1
    return window.step_s * np.arange(n)


def _window_inputs(case: Any) -> tuple[Any, np.ndarray]:
    """The case's remembering trajectory and the window's sample times (one pair per case)."""
    return _cached(
        case,
        "window-inputs",
        lambda c: (remembering(case_trajectory(c)), np.asarray(window_offsets_s(c), dtype=float)),
    )


def case_track(case: Any) -> Any:
    """The kernel ``GroundTrack`` over the window, with the eclipse flags (conical shadow)."""

    def compute(c: Any) -> Any:
        traj, t = _window_inputs(c)
        track = ground_track(traj, t)
        r, _v = traj.gcrf(t)
        shadow = shadow_state(r, sun_positions_km(traj, t), "conical", traj.body) > 0
        return dataclasses.replace(track, in_eclipse=shadow)

    return _cached(case, "track", compute)


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


def prime(case: Any, needs: Sequence[str] = ("orbit", "window", "budget"), progress=None) -> None:
    """Compute (and cache) the kernel results the figures of ``case`` draw from, so that the
    kernel's share of an edit can be timed apart from building the figure data. ``needs``
    picks what (see ``FIGURE_NEEDS``); ``progress(fraction)`` is passed to a propagation."""
    if "window" in needs:
        try:
            case_trajectory(case, progress)
        except ValueError:
            pass
    chosen = {"orbit": (_one_orbit,), "window": (case_track, _window_states), "budget": (_budget,)}
    for compute in (fn for need in needs for fn in chosen[need]):
        try:
            compute(case)
        except ValueError:
            pass  # that figure says why, beside itself


def _stations(case: Any) -> list[dict[str, Any]]:
    return [s.model_dump(mode="json") for s in (case.stations or [])]


_sliders: dict[str, list] = {}


def _slider_view(screen: Any) -> dict[str, float]:
    """The view angles the user set with the inertial view's sliders (on screen)."""
    from bokeh.models import Slider

    out: dict[str, float] = {}
    if screen is None:
        return out
    sliders = _sliders.get(screen.id)
    if sliders is None:
        sliders = _sliders[screen.id] = list(screen.select({"type": Slider}))
    for slider in sliders:
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


class _Builders:
    """The shared builders of ``orbitledger.figures`` by name (None for one not there)."""

    def __getattr__(self, name: str) -> Any:
        from orbitledger import figures

        return getattr(figures, name, None)


def _figures(theme: str = "light") -> list[CaseFigure]:
    """The figures of a case; ``theme`` is the palette their data partners style with (the
    one ``build`` is given), so that an update in place keeps the figure's colours."""
    f = _Builders()

    out: list[CaseFigure] = []
    orbit_plane = getattr(f, "orbit_plane_figure", None)
    if orbit_plane is not None:
        out.append(
            CaseFigure(
                "orbit plane",
                lambda c, theme: orbit_plane(c.elements(), body=c.body_constants(), theme=theme),
                lambda c, _s: f.orbit_plane_data(
                    c.elements(), body=c.body_constants(), theme=theme
                ),
            )
        )
    if f.inertial_figure is not None:
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
    if f.ground_track_figure is not None:
        out.append(
            CaseFigure(
                "ground track",
                lambda c, theme: f.ground_track_figure(
                    [case_track(c)], _stations(c), theme=theme, labels=[_label(c)]
                ),
                lambda c, _s: f.ground_track_data([case_track(c)], _stations(c)),
            )
        )
    if f.altitude_speed_figure is not None:
        out.append(
            CaseFigure(
                "height and speed",
                lambda c, theme: f.altitude_speed_figure(
                    [_window_states(c)], body=c.body_constants(), theme=theme, labels=[_label(c)]
                ),
                lambda c, _s: f.altitude_speed_data([_window_states(c)], body=c.body_constants()),
            )
        )
    if f.budget_figure is not None:
        out.append(
            CaseFigure(
                "delta-v budget",
                lambda c, theme: f.budget_figure([_budget(c)], theme=theme, labels=[_label(c)]),
                lambda c, _s: f.budget_data([_budget(c)], labels=[_label(c)], theme=theme),
            )
        )
    return out


def _window_states(case: Any) -> dict[str, Any]:
    """GCRF states over the window with their time tags (shared with the ground track)."""

    def compute(c: Any) -> dict[str, Any]:
        traj, t = _window_inputs(c)
        r, v = traj.gcrf(t)
        return {"times_utc": traj.times(t), "r_km": r, "v_km_s": v}

    return _cached(case, "window-states", compute)


def _budget(case: Any) -> Any:
    """The kernel DeltaVBudget of the case (``analysis.budget_for_case``); a case without a
    budget section, or without the spacecraft's mass and Isp, has no budget chart."""
    if getattr(case, "budget", None) is None:
        raise ValueError("no budget section in this case")
    return budget_report(case).budget


def budget_report(case: Any) -> Any:
    """The case's ``analysis.BudgetReport``, cached on its inputs: the budget chart and the
    budget's results share it."""
    return _cached(case, "budget", budget_for_case)


def _label(case: Any) -> str:
    title = getattr(getattr(case, "meta", None), "title", "") or "case"
    return title.split(":", 1)[0]


CASE_FIGURES: Callable[..., list[CaseFigure]] = _figures


def case_figures(case: Any, *, theme: str = "light") -> dict[str, Any]:
    """Every figure of ``case`` that applies to it, by name: the figures the editor shows,
    for a notebook to pass to ``orbitledger.figures.show`` (and so to the record)."""
    case = case.case if hasattr(case, "case") and hasattr(case, "save") else case
    out = {}
    for fig in CASE_FIGURES(theme):
        try:
            out[fig.name] = fig.build(case, theme)
        except ValueError:
            continue  # e.g. a propagator the live figures do not offer yet: the editor says so
    return out


def overlay_figures(cases: Sequence[Any], labels: Sequence[str], *, theme: str = "light") -> list:
    """The figures of a trade: every candidate drawn in the same plot, one colour each."""
    f = _Builders()

    out = []
    body = cases[0].body_constants()
    if f.orbit_plane_figure is not None:
        out.append(
            f.orbit_plane_figure(
                [c.elements() for c in cases],
                labels=list(labels),
                body=body,
                theme=theme,
                title="Candidates' orbit planes",
            )
        )
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
