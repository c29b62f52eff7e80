"""Time-series figures: height and speed, eclipse and contact timelines, on UTC axes."""

from __future__ import annotations

import json

import numpy as np
import pytest
from bokeh.embed import json_item
from bokeh.models import DatetimeAxis

from orbitledger.figures.sources import sources_of
from orbitledger.figures.timeseries import (
    altitude_speed_figure,
    contact_timeline_figure,
    eclipse_timeline_figure,
)
from orbitledger.kernel import EARTH, Elements, parse_utc
from orbitledger.kernel.eclipses import find_eclipses
from orbitledger.kernel.forces import ellipsoidal_height_km
from orbitledger.kernel.passes import Station, station_passes
from orbitledger.kernel.propagation import trajectory

pytestmark = pytest.mark.filterwarnings("ignore::UserWarning")  # leap-second extrapolation

WINDOW_S = 43_200.0
STATIONS = [
    Station("Harrow Fell", 60.2, -1.3, 0.08, 5.0),
    Station("Saltmarsh Point", 51.0, 1.9, 0.0, 10.0),
]


def _ms(iso: str) -> float:
    # UTC calendar string -> ms since 1970 through ERFA's dtf2d (kernel.parse_utc): a path
    # independent of the figure's offset arithmetic.
    jd1, jd2 = parse_utc(iso)
    return float(((jd1 - 2440587.5) + jd2) * 86_400_000.0)


@pytest.fixture(scope="module")
def kestrel():
    el = Elements(EARTH.radius_km + 800.0, 0.03, 97.5, 30.0, 90.0, 0.0)
    return trajectory("two-body", el, "2027-03-21T10:30:00Z", duration_s=WINDOW_S), el


def _series(traj, step_s=20.0):
    t = np.arange(0.0, WINDOW_S, step_s)
    r, v = traj.gcrf(t)
    return {"times_utc": traj.times(t), "r_km": r, "v_km_s": v}


def test_speed_follows_vis_viva_fast_at_periapsis(kestrel):
    traj, el = kestrel
    layout = altitude_speed_figure(_series(traj), labels=["Kestrel-2 A"])
    cols = sources_of(layout)["series-0"].data
    r, speed = cols["r_km"], cols["speed_km_s"]
    # vis-viva, v^2 = mu (2/r - 1/a) (Curtis, Orbital Mechanics for Engineering Students,
    # 3rd ed., Eq. 2.81); 1 mm/s.
    expected = np.sqrt(EARTH.mu_km3_s2 * (2.0 / r - 1.0 / el.a_km))
    assert np.max(np.abs(speed - expected)) < 1e-6
    # Fastest where closest (periapsis), slowest where farthest (apoapsis), within one step.
    assert abs(int(np.argmax(speed)) - int(np.argmin(r))) <= 1
    assert abs(int(np.argmin(speed)) - int(np.argmax(r))) <= 1
    # Height above the ellipsoid exceeds |r| - R_eq by at most R_eq f = 21.4 km (WGS-84).
    dh = cols["height_km"] - (r - EARTH.radius_km)
    assert np.all(dh >= -1e-9) and np.all(dh <= 21.4)


def test_height_speed_axes_are_utc_with_units(kestrel):
    traj, _ = kestrel
    layout = altitude_speed_figure([_series(traj), _series(traj, 60.0)], labels=["A", "B"])
    figs = [c for c in layout.children]
    assert all(isinstance(f.xaxis[0], DatetimeAxis) for f in figs)
    assert figs[-1].xaxis[0].axis_label == "time (UTC)"
    assert "(km)" in figs[0].yaxis[0].axis_label and "(km/s)" in figs[1].yaxis[0].axis_label
    # The height names its reference: above the ellipsoid. Over a pole that is 21.385 km more
    # than radius minus the equatorial radius (WGS-84 a = 6378.137 km, 1/f = 298.257223563,
    # so b = 6356.752 km; NIMA TR8350.2).
    assert "above ellipsoid" in figs[0].yaxis[0].axis_label
    tools = [tool for f in figs for tool in f.tools if hasattr(tool, "tooltips")]
    rows = [row[0] for tool in tools for row in tool.tooltips]
    assert "height above ellipsoid" in rows
    over_pole = ellipsoidal_height_km(np.array([[0.0, 0.0, 6378.137 + 540.0]]))
    assert float(np.ravel(over_pole)[0]) == pytest.approx(540.0 + 21.3847, abs=1e-3)
    t0 = sources_of(layout)["series-0"].data["time_utc"][0]
    assert t0 == pytest.approx(_ms("2027-03-21T10:30:00Z"), abs=1.0)  # 1 ms
    json.dumps(json_item(layout))


def test_eclipse_bars_span_entry_to_exit(kestrel):
    traj, _ = kestrel
    search = find_eclipses(traj, WINDOW_S)
    assert search.eclipses
    fig = eclipse_timeline_figure(search, traj.start, labels=["Kestrel-2 A"])
    src = sources_of(fig)
    pen, umb = src["penumbra"].data, src["umbra"].data
    assert len(pen["start"]) == len(search.eclipses)
    for k, e in enumerate(search.eclipses):
        # the kernel's UTC strings print to 0.1 s: agree within half of that, 50 ms
        assert pen["start"][k] == pytest.approx(_ms(e.entry_utc), abs=50.0)
        assert pen["end"][k] == pytest.approx(_ms(e.exit_utc), abs=50.0)
        assert pen["duration_s"][k] == pytest.approx(e.duration_s, abs=1e-9)
    # the umbra lies inside its shadow passage
    for u0, u1 in zip(umb["start"], umb["end"], strict=True):
        assert any(p0 <= u0 <= u1 <= p1 for p0, p1 in zip(pen["start"], pen["end"], strict=True))
    assert isinstance(fig.xaxis[0], DatetimeAxis) and fig.xaxis[0].axis_label == "time (UTC)"


def test_contact_rows_and_pass_bars(kestrel):
    traj, _ = kestrel
    search = station_passes(traj, STATIONS, WINDOW_S)
    assert search.passes
    fig = contact_timeline_figure(search, traj.start)
    assert list(fig.y_range.factors) == ["Saltmarsh Point", "Harrow Fell"]  # first on top
    cols = sources_of(fig)["passes"].data
    for k, p in enumerate(search.passes):
        assert cols["station"][k] == p.station
        # the kernel's pass times print to 0.1 s: agree within half of that, 50 ms
        assert cols["aos"][k] == pytest.approx(_ms(p.aos_utc), abs=50.0)
        assert cols["los"][k] == pytest.approx(_ms(p.los_utc), abs=50.0)
        assert cols["aos"][k] <= cols["tmax"][k] <= cols["los"][k]
        assert cols["max_elevation_deg"][k] >= 5.0
    rows = [row for tool in fig.tools if hasattr(tool, "tooltips") for row in tool.tooltips]
    names = [name for name, _ in rows]
    assert {"AOS", "LOS", "max elevation"} <= set(names)
    assert ("max elevation", "@{max_elevation_deg}{0.0} deg") in rows
    json.dumps(json_item(fig))
