"""Ground-track figure: what it draws, checked against geometry outside the figure code."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from bokeh.embed import json_item

from orbitledger.figures import ground_track_data, ground_track_figure, station_circle
from orbitledger.figures.mapping import (
    coastline_lon_lat,
    split_at_antimeridian,
    visibility_central_angle_deg,
)
from orbitledger.figures.sources import sources_of
from orbitledger.kernel import EARTH, InputError, time_scales, topocentric_view
from orbitledger.kernel.frames import itrf_from_geodetic
from orbitledger.kernel.groundtrack import ground_track
from orbitledger.kernel.passes import Station
from orbitledger.kernel.propagation import Trajectory

pytestmark = pytest.mark.filterwarnings("ignore::UserWarning")  # leap-second extrapolation

R = EARTH.radius_km
HARROW_FELL = Station("Harrow Fell", 60.2, -1.3, 0.08, 5.0)
KURU_RIDGE = Station("Kuru Ridge", -12.4, 178.6, 0.2, 10.0)


def _circular_trajectory(alt_km=540.0, i_deg=97.5):
    """An analytic circular orbit (test fixture, independent of the kernel's propagators)."""
    a = R + alt_km
    n = math.sqrt(EARTH.mu_km3_s2 / a**3)
    inc = math.radians(i_deg)

    def state_at(t):
        u = n * np.asarray(t, dtype=float)
        r = a * np.stack([np.cos(u), np.sin(u) * np.cos(inc), np.sin(u) * np.sin(inc)], -1)
        v = a * n * np.stack([-np.sin(u), np.cos(u) * np.cos(inc), np.cos(u) * np.sin(inc)], -1)
        return r, v

    start = time_scales("2027-03-21T10:30:00Z")
    return Trajectory(start, state_at, 2 * math.pi / n, "test-circular")


@pytest.fixture(scope="module")
def track():
    t = np.arange(0.0, 3 * 5700.0, 30.0)
    eclipse = np.sin(2 * np.pi * t / 5700.0) > 0.6  # an invented shadow pattern
    return ground_track(_circular_trajectory(), t, in_eclipse=eclipse)


def test_visibility_radius_at_zero_mask_is_the_horizon():
    # With a 0 deg mask the circle is the satellite's horizon: cos(lambda) = R / (R + h)
    # (common practice; Wertz and Larson, SMAD 3rd ed., Sec. 5.2).
    for h in (400.0, 540.0, 800.0, 20_200.0):
        lam = visibility_central_angle_deg(h, 0.0, R)
        assert math.radians(lam) * R == pytest.approx(R * math.acos(R / (R + h)), abs=1e-6)


@pytest.mark.parametrize("h_km, mask_deg", [(540.0, 5.0), (540.0, 10.0), (800.0, 20.0)])
def test_visibility_radius_puts_the_satellite_at_the_mask(h_km, mask_deg):
    # Independent check by plane geometry: a ground point at central angle lambda from the
    # sub-satellite point sees the satellite at elevation = 90 deg - angle(up, line of sight).
    lam = math.radians(visibility_central_angle_deg(h_km, mask_deg, R))
    ground = R * np.array([math.cos(lam), math.sin(lam)])
    sat = np.array([R + h_km, 0.0])
    los = sat - ground
    elev = 90.0 - math.degrees(math.acos(los @ ground / (np.linalg.norm(los) * R)))
    # 1e-9 deg of elevation is far below a metre of ground range.
    assert elev == pytest.approx(mask_deg, abs=1e-9)


def test_visibility_circle_against_kernel_wgs84_elevation():
    # The drawn circle is on a sphere; the kernel's topocentric view uses WGS-84. At the
    # circle's edge the kernel must see the satellite close to the mask: at 60 deg latitude the
    # ellipsoid moves the edge by 0.03 deg of elevation for a 540 km orbit (a few km of ground
    # range); the bound allows 0.1 deg.
    circle = station_circle(HARROW_FELL, 540.0)
    lon, lat = circle["lon_deg"], circle["lat_deg"]
    ok = np.isfinite(lon)
    sat = itrf_from_geodetic(lat[ok], lon[ok], np.full(ok.sum(), 540.0))
    view = topocentric_view(sat, HARROW_FELL.lat_deg, HARROW_FELL.lon_deg, 0.0)
    assert np.max(np.abs(view["el_deg"] - HARROW_FELL.elevation_mask_deg)) < 0.1
    # And the radius in km is the central angle times R.
    assert circle["ground_range_km"] == pytest.approx(
        math.radians(circle["central_angle_deg"]) * R, abs=1e-9
    )


def test_split_matches_kernel_and_never_jumps(track):
    lon, lat = split_at_antimeridian(track.lon_deg, track.lat_deg)
    k_lon, k_lat = track.plot_lon_lat()  # the kernel's own split of the same track
    np.testing.assert_allclose(lon, k_lon, atol=1e-12, equal_nan=True)
    np.testing.assert_allclose(lat, k_lat, atol=1e-12, equal_nan=True)
    data = ground_track_data(track, [HARROW_FELL, KURU_RIDGE])
    for name, cols in data.items():
        if name == "coastline" or name == "stations":
            continue
        x = np.asarray(cols["lon_deg"], dtype=float)
        steps = np.abs(np.diff(x))
        assert np.all(steps[np.isfinite(steps)] <= 180.0), name
    x = data["track-0"]["lon_deg"]
    breaks = np.flatnonzero(np.isnan(x))
    assert len(breaks) >= 2  # three orbits cross the antimeridian more than once
    assert np.all(np.abs(x[breaks - 1]) == 180.0) and np.all(np.abs(x[breaks + 1]) == 180.0)


def test_circle_across_the_antimeridian_is_split():
    circle = station_circle(KURU_RIDGE, 540.0)
    x = circle["lon_deg"]
    assert np.isnan(x).sum() == 2  # leaves over +180 once and comes back once
    steps = np.abs(np.diff(x))
    assert np.all(steps[np.isfinite(steps)] <= 180.0)


def test_eclipse_segments_cover_the_flagged_points(track):
    data = ground_track_data(track, max_points=100_000)
    ecl = data["eclipse-0"]
    drawn = np.isfinite(ecl["lon_deg"])
    flagged = np.asarray(track.in_eclipse)
    # every flagged sample is on the dashed line (the line also holds the crossing points)
    lon_set = {round(v, 9) for v in np.asarray(ecl["lon_deg"])[drawn]}
    assert all(round(v, 9) in lon_set for v in track.lon_deg[flagged])
    sunlit_far = ~flagged
    sunlit_far[:-1] &= ~flagged[1:]
    sunlit_far[1:] &= ~flagged[:-1]
    assert not any(round(v, 9) in lon_set for v in track.lon_deg[sunlit_far][:50])


def test_station_columns_and_tooltip_units(track):
    fig = ground_track_figure(track, [HARROW_FELL, KURU_RIDGE], labels=["Kestrel-2 A"])
    st = sources_of(fig)["stations"].data
    assert list(st["name"]) == ["Harrow Fell", "Kuru Ridge"]
    assert st["circle_alt_km"][0] == pytest.approx(np.median(track.height_km))
    assert "(deg)" in fig.xaxis[0].axis_label and "(deg)" in fig.yaxis[0].axis_label
    rows = [row for tool in fig.tools if hasattr(tool, "tooltips") for row in tool.tooltips]
    assert ("circle radius", "@{circle_range_km}{0} km") in rows
    assert "height above ellipsoid" in [name for name, _ in rows]  # geodetic: its reference
    assert any("UTC" in value for _, value in rows)
    text = json.dumps(json_item(fig))
    assert "Harrow Fell" in text


def test_coastline_is_the_natural_earth_outline():
    lon, lat = coastline_lon_lat()
    finite = np.isfinite(lon)
    # Natural Earth 1:110m Admin 0 has 10 654 points in 289 parts (counted from the source
    # shapefile; rounding to 0.01 deg merges a few duplicates).
    assert 10_400 < finite.sum() <= 10_654
    assert np.nanmin(lon) == -180.0 and np.nanmax(lon) == 180.0
    assert np.nanmin(lat) == -90.0 and np.nanmax(lat) < 84.0


def test_bad_inputs_are_named():
    with pytest.raises(InputError, match="tracks"):
        ground_track_data([])
    with pytest.raises(InputError, match="elevation_mask_deg"):
        visibility_central_angle_deg(540.0, 95.0, R)
