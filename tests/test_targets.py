"""Target access, revisit and coverage against outside references: astropy's AltAz (the
satellite and the Sun seen from the target), the spherical-Earth relations of Wertz et al.,
"Space Mission Engineering: The New SMAD" (2011), a brute-force 1 s search and a hand
calculation of the revisit of a polar orbit over the pole."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from _circular_orbit import circular, plane_basis

from orbitledger.kernel import coverage as coverage_module
from orbitledger.kernel.constants import EARTH
from orbitledger.kernel.coverage import coverage_grid, region_coverage
from orbitledger.kernel.errors import InputError
from orbitledger.kernel.frames import itrf_from_geodetic
from orbitledger.kernel.targets import (
    Sensor,
    Target,
    reach_central_angle_deg,
    swath_off_nadir_deg,
    target_access,
)

pytestmark = pytest.mark.filterwarnings(
    "ignore::orbitledger.kernel.timescales.LeapSecondExtrapolationWarning"
)

R_KM = EARTH.radius_km
A_KM = R_KM + 540.0
FENWICK_FEN = Target("Fenwick Fen", 52.3, 0.1, 0.01)
KURU_PLAIN = Target("Kuru Plain", -12.5, 131.0, 0.1)


def _kestrel():
    return circular(A_KM, *plane_basis(97.5, 30.0))


def _astropy_altaz(traj, offsets_s, target: Target):
    """astropy AltAz (no refraction) of the satellite and of the Sun (get_sun) at the target."""
    import astropy.units as u
    from astropy.coordinates import ITRS, AltAz, CartesianRepresentation, EarthLocation, get_sun
    from astropy.time import Time
    from astropy.utils import iers

    site = EarthLocation.from_geodetic(
        lon=target.lon_deg * u.deg, lat=target.lat_deg * u.deg, height=target.height_km * u.km
    )
    ts = traj.times(np.asarray(offsets_s))
    when = Time(ts.utc1, ts.utc2, format="jd", scale="utc")
    r, _ = traj.itrf(np.asarray(offsets_s))
    with iers.conf.set_temp("auto_download", False), warnings.catch_warnings():
        warnings.simplefilter("ignore")
        topo = r - u.Quantity(site.geocentric).to_value(u.km)
        frame = AltAz(obstime=when, location=site, pressure=0 * u.hPa)
        sat = ITRS(CartesianRepresentation(topo.T * u.km), obstime=when, location=site)
        sat_el = sat.transform_to(frame).alt.deg
        sun_el = get_sun(when).transform_to(frame).alt.deg
    return sat_el, sun_el


def test_horizon_angles_new_smad() -> None:
    # Wertz et al., The New SMAD: sin rho = R / (R + h), lambda_0 = 90 deg - rho. At 500 km
    # rho = 68.0 deg and lambda_0 = 22.0 deg (from memory, the handbook's worked numbers).
    sensor = Sensor(off_nadir_max_deg=89.0)
    lam0 = reach_central_angle_deg(sensor, 6378.0, 6878.0)
    assert abs(lam0 - 22.0) < 0.05  # deg
    # Off-nadir 0: the reach shrinks to the sub-satellite point.
    assert reach_central_angle_deg(Sensor(off_nadir_max_deg=1e-9), 6378.0, 6878.0) < 1e-6


@pytest.mark.parametrize("h_km, swath_km", [(500.0, 100.0), (540.0, 580.0), (800.0, 2000.0)])
def test_swath_to_off_nadir_against_plane_triangle(h_km: float, swath_km: float) -> None:
    # The New SMAD's tan eta = sin rho sin lambda / (1 - sin rho cos lambda) against the
    # triangle drawn out: centre at 0, satellite at (0, R + h), swath edge at angle lambda on
    # the circle of radius R; eta is the angle at the satellite between nadir and the edge.
    eta = swath_off_nadir_deg(swath_km, h_km, R_KM)
    lam = swath_km / (2.0 * R_KM)
    edge = R_KM * np.array([math.sin(lam), math.cos(lam)])
    sat = np.array([0.0, R_KM + h_km])
    los, nadir = edge - sat, -sat
    ref = math.degrees(math.acos(los @ nadir / np.linalg.norm(los) / np.linalg.norm(nadir)))
    assert abs(eta - ref) < 1e-9  # deg
    # and the off-nadir limit eta reaches back to the same central angle (round trip)
    back = reach_central_angle_deg(Sensor(off_nadir_max_deg=eta), R_KM, R_KM + h_km)
    assert abs(math.radians(back) * R_KM - swath_km / 2.0) < 1e-6  # km


def test_swath_beyond_the_horizon_is_refused() -> None:
    with pytest.raises(InputError, match="beyond the horizon"):
        swath_off_nadir_deg(6000.0, 500.0, R_KM)


def test_access_edges_match_astropy_elevation_and_new_smad() -> None:
    # At an edge set by the off-nadir limit eta, the satellite's elevation at the target obeys
    # cos eps = sin eta / sin rho, sin rho = |site| / |r| (The New SMAD, spherical Earth).
    # astropy measures eps from the geodetic vertical, which leans from the geocentric one by
    # at most 0.19 deg at 45 deg latitude (WGS-84, common practice): 0.25 deg tolerance.
    traj = _kestrel()
    eta = 30.0
    found = target_access(traj, [FENWICK_FEN, KURU_PLAIN], Sensor(eta), 2 * 86_400.0)
    assert len(found.accesses) >= 2
    sites = {t.name: itrf_from_geodetic(t.lat_deg, t.lon_deg, t.height_km) for t in found.targets}
    for target in found.targets:
        own = [a for a in found.accesses if a.target == target.name and not a.starts_open]
        edges = np.array([a.start_s for a in own] + [a.end_s for a in own])
        sat_el, _ = _astropy_altaz(traj, edges, target)
        r, _ = traj.itrf(edges)
        sin_rho = np.linalg.norm(sites[target.name]) / np.linalg.norm(r, axis=-1)
        expected = np.degrees(np.arccos(math.sin(math.radians(eta)) / sin_rho))
        assert np.max(np.abs(sat_el - expected)) < 0.25  # deg


def test_sun_elevation_against_astropy_get_sun() -> None:
    # astropy get_sun (apparent, with aberration) seen from the target without refraction:
    # ours is geometric and geocentric in direction (aberration 0.006 deg, parallax 0.0025
    # deg), so 0.05 deg.
    traj = _kestrel()
    found = target_access(traj, [FENWICK_FEN, KURU_PLAIN], Sensor(35.0), 86_400.0)
    for target in found.targets:
        own = [a for a in found.accesses if a.target == target.name]
        best = np.array([a.best_s for a in own])
        sat_el, sun_el = _astropy_altaz(traj, best, target)
        assert np.max(np.abs(sun_el - [a.sun_elevation_deg for a in own])) < 0.05  # deg
        assert np.max(np.abs(sat_el - [a.elevation_deg for a in own])) < 1e-3  # deg


def _brute_force(traj, target: Target, sensor: Sensor, duration_s: float):
    """Accesses from the margins at every second, written out here with plain vectors."""
    t = np.arange(0.0, duration_s + 0.5, 1.0)
    r, _ = traj.itrf(t)
    site = itrf_from_geodetic(target.lat_deg, target.lon_deg, target.height_km)
    phi, lam = math.radians(target.lat_deg), math.radians(target.lon_deg)
    up = np.array([math.cos(phi) * math.cos(lam), math.cos(phi) * math.sin(lam), math.sin(phi)])
    los = site - r
    cos_eta = np.sum(-r * los, -1) / np.linalg.norm(r, axis=-1) / np.linalg.norm(los, axis=-1)
    eta = np.degrees(np.arccos(np.clip(cos_eta, -1, 1)))
    el = np.degrees(np.arcsin(np.sum(-los * up, -1) / np.linalg.norm(los, axis=-1)))
    inside = (eta <= sensor.off_nadir_max_deg) & (el > 0.0)
    flips = np.flatnonzero(np.diff(inside.astype(int)))
    return t, inside, flips


def test_access_against_brute_force_1s_search() -> None:
    # Every access of three days at 1 s: same count, edges within 1 s.
    traj = _kestrel()
    sensor = Sensor(off_nadir_max_deg=25.0)
    duration = 3 * 86_400.0
    found = target_access(traj, [FENWICK_FEN, KURU_PLAIN], sensor, duration)
    for target in (FENWICK_FEN, KURU_PLAIN):
        t, inside, flips = _brute_force(traj, target, sensor, duration)
        own = [a for a in found.accesses if a.target == target.name]
        assert own and not inside[0] and not inside[-1]
        assert len(own) == len(flips) // 2
        ours = sorted([a.start_s for a in own] + [a.end_s for a in own])
        brute = sorted(t[flips] + 0.5)
        assert np.max(np.abs(np.array(ours) - brute)) <= 1.0  # s
        for a in own:
            assert a.min_off_nadir_deg <= sensor.off_nadir_max_deg
            assert a.start_s <= a.best_s <= a.end_s


def test_polar_orbit_revisits_the_pole_every_orbit_by_hand() -> None:
    # Hand calculation: a circular polar orbit passes over the pole once per orbit. The pole
    # lies at the polar radius b (WGS-84, 6356.752 km); with an off-nadir limit eta the reach
    # is the central angle lambda = 90 - eta - eps, cos eps = sin eta / (b / a), and the
    # track crosses it through its centre: an access lasts P * 2 lambda / 360 deg and the gap
    # between accesses is P minus that (The New SMAD's spherical relations; the orbit plane
    # holds the pole to within the CIP offset, 0.15 deg, which moves nothing here).
    b = EARTH.radius_km * (1.0 - EARTH.flattening)
    traj = circular(A_KM, *plane_basis(90.0, 0.0))
    eta = 30.0
    eps = math.degrees(math.acos(math.sin(math.radians(eta)) / (b / A_KM)))
    duration_ref = traj.period_s * 2.0 * (90.0 - eta - eps) / 360.0
    pole = Target("North pole", 90.0, 0.0)
    found = target_access(traj, [pole], Sensor(eta), 86_400.0)
    inner = [a for a in found.accesses if not (a.starts_open or a.ends_open)]
    assert len(found.accesses) in (15, 16)  # 86 400 s / 5 720 s
    assert max(abs(a.duration_s - duration_ref) for a in inner) < 1.0  # s
    assert abs(found.mean_gap_s["North pole"] - (traj.period_s - duration_ref)) < 1.0  # s


def test_min_sun_elevation_removes_night_accesses() -> None:
    traj = _kestrel()
    lit = target_access(traj, [FENWICK_FEN], Sensor(30.0, min_sun_elevation_deg=10.0), 3 * 86_400)
    every = target_access(traj, [FENWICK_FEN], Sensor(30.0), 3 * 86_400)
    assert 0 < len(lit.accesses) < len(every.accesses)
    assert all(a.sun_elevation_deg >= 10.0 - 1e-6 for a in lit.accesses)


def test_swath_sensor_keeps_targets_within_half_the_swath() -> None:
    traj = _kestrel()
    found = target_access(traj, [FENWICK_FEN, KURU_PLAIN], Sensor(swath_km=600.0), 3 * 86_400)
    assert found.accesses
    assert all(a.ground_distance_km <= 300.0 + 1e-6 for a in found.accesses)
    # At each edge the target is half the swath from the sub-satellite direction (central
    # angle times R, written out here with plain vectors), to the 0.01 s edge tolerance times
    # the ground speed (7.6 km/s): 80 m.
    sites = {t.name: itrf_from_geodetic(t.lat_deg, t.lon_deg, t.height_km) for t in found.targets}
    for a in found.accesses:
        r, _ = traj.itrf(np.array([a.start_s, a.end_s]))
        s = sites[a.target]
        cos_c = r @ s / np.linalg.norm(r, axis=-1) / np.linalg.norm(s)
        assert np.max(np.abs(np.arccos(cos_c) * R_KM - 300.0)) < 0.08  # km


def test_coverage_agrees_with_target_access_point_by_point() -> None:
    # Each grid point's first access equals the first access of the same point as a target,
    # to one sampling step (the coverage run stops at the first sample inside).
    traj = _kestrel()
    sensor = Sensor(30.0, min_sun_elevation_deg=5.0)
    lat, lon = coverage_grid(40.0, 56.0, -8.0, 8.0, 4.0)
    cov = region_coverage(traj, lat, lon, sensor, 2 * 86_400.0, step_deg=4.0)
    targets = [Target(f"p{k}", a, b) for k, (a, b) in enumerate(zip(lat, lon, strict=True))]
    found = target_access(traj, targets, sensor, 2 * 86_400.0)
    for k, target in enumerate(targets):
        own = [a.start_s for a in found.accesses if a.target == target.name]
        assert cov.access_count[k] == len(own)
        if own:
            assert 0.0 <= cov.first_access_s[k] - own[0] <= cov.search_step_s + 1.0
        else:
            assert math.isnan(cov.first_access_s[k])
    assert list(cov.fraction_by_day) == sorted(cov.fraction_by_day)
    assert cov.fraction_by_day[-1] == cov.fraction_covered


def test_coverage_grid_edges_and_antimeridian() -> None:
    lat, lon = coverage_grid(-10.0, 10.0, 170.0, 190.0, 5.0)
    assert lat.size == 5 * 5
    assert set(np.round(lon, 9)) == {170.0, 175.0, -180.0, -175.0, -170.0}
    lat, lon = coverage_grid(-90.0, 90.0, -180.0, 180.0, 10.0)  # the whole Earth
    assert lat.size == 19 * 36 and len(set(np.round(lon, 9))) == 36
    with pytest.raises(InputError, match="lon_max_deg"):
        coverage_grid(0.0, 10.0, 10.0, 0.0, 1.0)


def test_coverage_over_the_work_limit_is_refused_with_the_numbers(monkeypatch) -> None:
    monkeypatch.setattr(coverage_module, "MAX_COVERAGE_SAMPLES", 1000)
    lat, lon = coverage_grid(0.0, 10.0, 0.0, 10.0, 1.0)
    with pytest.raises(InputError, match=r"121 points.*needs [\d,]+ point-samples.*at most 1,000"):
        region_coverage(_kestrel(), lat, lon, Sensor(30.0), 86_400.0)


def test_swath_round_trip_property() -> None:
    # Identity of the New SMAD relations: the off-nadir angle of a swath's edge reaches back
    # to the same half swath on the ground, for any altitude and swath inside the horizon.
    from hypothesis import given, settings
    from hypothesis import strategies as st

    @settings(max_examples=200, deadline=None)
    @given(st.floats(200.0, 40_000.0), st.floats(0.01, 0.99))
    def check(h_km: float, share: float) -> None:
        lam0 = math.acos(R_KM / (R_KM + h_km))
        swath = 2.0 * R_KM * lam0 * share
        eta = swath_off_nadir_deg(swath, h_km, R_KM)
        back = reach_central_angle_deg(Sensor(off_nadir_max_deg=eta), R_KM, R_KM + h_km)
        assert abs(math.radians(back) * R_KM - swath / 2.0) < 1e-6 * max(1.0, swath)  # km

    check()


def test_coverage_figure_across_the_antimeridian_is_continuous() -> None:
    from orbitledger.figures.coverage import coverage_data

    lat, lon = coverage_grid(-10.0, 10.0, 170.0, 190.0, 5.0)
    cov = {"lat_deg": lat, "lon_deg": lon, "first_access_s": np.full(lat.size, 3600.0),
           "access_count": np.ones(lat.size), "window_s": 86_400.0}  # fmt: skip
    data = coverage_data(cov)
    assert np.min(data["covered"]["lon_deg"]) == 170.0
    assert np.max(data["covered"]["lon_deg"]) == 190.0


def test_target_search_over_the_work_limit_is_refused_with_the_numbers(monkeypatch) -> None:
    from orbitledger.kernel import targets as targets_module

    monkeypatch.setattr(targets_module, "MAX_ACCESS_SAMPLES", 1000)
    with pytest.raises(InputError, match=r"2 targets x 1 days.*needs [\d,]+ target-samples"):
        target_access(_kestrel(), [FENWICK_FEN, KURU_PLAIN], Sensor(30.0), 86_400.0)
