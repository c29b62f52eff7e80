"""Stations as sites are: terrain masks, shortest passes and data volume.

Outside references: a brute-force search at 1 s with an independent frame chain (ERFA
c2i06a and era00, the WGS-84 site of gd2gc, azimuth and elevation written out here), the mask
read off the table by hand, and the data volume worked by hand (rate x time above each step's
elevation).
"""

from __future__ import annotations

import json
import math
import subprocess
import sys

import erfa
import numpy as np
import pytest
from _circular_orbit import circular, plane_basis

from orbitledger.case import CaseError, case_from_data
from orbitledger.kernel.errors import InputError
from orbitledger.kernel.passes import Station, station_passes
from orbitledger.kernel.sites import DownlinkStep, Site, TerrainMask, site_passes

pytestmark = pytest.mark.filterwarnings(
    "ignore::orbitledger.kernel.timescales.LeapSecondExtrapolationWarning"
)

HARROW_FELL = Station("Harrow Fell", 60.2, -1.3, 0.08, 5.0)
A_KM = 6378.137 + 540.0
# A valley to the east, a ridge to the south, hills to the north-west (deg).
MASK_AZ = (0.0, 90.0, 180.0, 270.0, 315.0)
MASK_EL = (12.0, 3.0, 20.0, 8.0, 14.0)


def test_mask_interpolation_by_hand():
    mask = TerrainMask((270.0, 0.0, 90.0, 180.0), (8.0, 12.0, 3.0, 20.0))
    # by hand: halfway between 0 deg (12) and 90 deg (3) is 7.5; 135 deg halfway 3 -> 20 is
    # 11.5; 315 deg halfway 270 (8) -> 360 (12) is 10; 359 deg: 8 + 4 * 89/90; 360 is north.
    az = [45.0, 135.0, 315.0, 359.0, 360.0, -45.0, 90.0]
    expected = [7.5, 11.5, 10.0, 8.0 + 4.0 * 89.0 / 90.0, 12.0, 10.0, 3.0]
    assert np.allclose(mask.elevation_deg(az), expected, atol=1e-12)
    # the station's elevation mask is a floor under the terrain
    site = Site(Station("S", 0.0, 0.0, 0.0, 9.0), mask)
    assert np.allclose(site.mask_deg([45.0, 180.0]), [9.0, 20.0])
    assert site.lowest_mask_deg == 9.0


def _brute_force(traj, station: Station, duration_s: float):
    """Elevation and azimuth every second from an independent chain (GCRS-to-CIRS matrix of
    ERFA c2i06a at mid-window, ERA per second, east-north-up written out here)."""
    t = np.arange(0.0, duration_s + 0.5, 1.0)
    ts = traj.times(t)
    c2i = erfa.c2i06a(ts.tt1[len(t) // 2], ts.tt2[len(t) // 2])
    era = erfa.era00(ts.ut11, ts.ut12)
    cirs = traj.gcrf(t)[0] @ c2i.T
    ce, se = np.cos(era), np.sin(era)
    r = np.stack(
        [ce * cirs[:, 0] + se * cirs[:, 1], -se * cirs[:, 0] + ce * cirs[:, 1], cirs[:, 2]], -1
    )
    lat, lon = math.radians(station.lat_deg), math.radians(station.lon_deg)
    site = np.asarray(erfa.gd2gc(1, lon, lat, station.height_km * 1e3)) / 1e3
    east = np.array([-math.sin(lon), math.cos(lon), 0.0])
    north = np.array(
        [-math.sin(lat) * math.cos(lon), -math.sin(lat) * math.sin(lon), math.cos(lat)]
    )
    up = np.cross(east, north)
    d = r - site
    el = np.degrees(np.arctan2(d @ up, np.hypot(d @ east, d @ north)))
    az = np.degrees(np.arctan2(d @ east, d @ north)) % 360.0
    return t, el, az


def _mask_by_hand(az: np.ndarray, floor: float) -> np.ndarray:
    x = np.concatenate([[MASK_AZ[-1] - 360.0], MASK_AZ, [MASK_AZ[0] + 360.0]])
    y = np.concatenate([[MASK_EL[-1]], MASK_EL, [MASK_EL[0]]])
    return np.maximum(floor, np.interp(az, x, y))


def _intervals(t: np.ndarray, f: np.ndarray) -> list[tuple[float, float]]:
    k = np.flatnonzero((f[1:] > 0) != (f[:-1] > 0))
    cross = t[k] + f[k] / (f[k] - f[k + 1])
    ups, downs = cross[f[k] <= 0], cross[f[k] > 0]
    if f[0] > 0:
        ups = np.concatenate([[t[0]], ups])
    if f[-1] > 0:
        downs = np.concatenate([downs, [t[-1]]])
    return list(zip(ups, downs, strict=True))


def _kestrel(u0_deg: float = 0.0):
    p, q = plane_basis(97.5, 30.0)
    return circular(A_KM, p, q, u0_deg=u0_deg)


STEPS = (DownlinkStep(50.0), DownlinkStep(150.0, 30.0))


def test_terrain_mask_passes_and_volume_match_brute_force():
    traj = _kestrel()
    days = 2 * 86_400.0
    site = Site(HARROW_FELL, TerrainMask(MASK_AZ, MASK_EL), 0.0, STEPS)
    found = site_passes(traj, [site], days)
    t, el, az = _brute_force(traj, HARROW_FELL, days)
    mask = _mask_by_hand(az, HARROW_FELL.elevation_mask_deg)
    ref = _intervals(t, el - mask)
    passes = found.search.passes
    assert len(passes) == len(ref) >= 8
    for p, (aos, los), volume in zip(passes, ref, found.volumes_mbit, strict=True):
        # 0.05 s: linear interpolation of 1 s samples is good to a few ms away from the
        # mask's corners; ours is refined to 0.01 s
        assert abs(p.aos_s - aos) < 0.05 and abs(p.los_s - los) < 0.05
        inside = (t >= aos) & (t <= los)
        assert abs(p.max_elevation_deg - el[inside].max()) < 1e-3
        # by hand: 50 Mbit/s over the pass, 100 more above 30 deg (and above the mask)
        above30 = sum(b - a for a, b in _intervals(t, el - np.maximum(mask, 30.0))
                      if a >= aos - 1 and b <= los + 1)  # fmt: skip
        hand = 50.0 * (los - aos) + 100.0 * above30
        assert abs(volume - hand) < 150.0 * 0.1  # Mbit: 0.1 s at the top rate
    # the terrain removes contact against the plain 5 deg mask
    plain = station_passes(traj, [HARROW_FELL], days)
    assert sum(p.duration_s for p in passes) < sum(p.duration_s for p in plain.passes) - 600
    day_total = sum(d.volume_mbit for d in found.daily_volume if d.station == "any station")
    assert abs(day_total - sum(found.volumes_mbit)) < 1e-6


def test_min_pass_duration_drops_short_passes_but_not_cut_ones():
    traj = _kestrel(u0_deg=200.0)
    floor = Site(HARROW_FELL)
    everything = site_passes(traj, [floor], 86_400.0).search.passes
    limit = float(np.median([p.duration_s for p in everything]))  # half of them are shorter
    short = [
        p for p in everything if p.duration_s < limit and not (p.starts_in_view or p.ends_in_view)
    ]
    assert short, "the test needs short passes"
    kept = site_passes(traj, [Site(HARROW_FELL, None, limit)], 86_400.0)
    assert kept.dropped_short == len(short)
    assert len(kept.search.passes) == len(everything) - len(short)
    assert all(p.duration_s >= limit for p in kept.search.passes)


def test_single_rate_volume_is_rate_times_duration():
    traj = _kestrel()
    found = site_passes(traj, [Site(HARROW_FELL, None, 0.0, (DownlinkStep(20.0),))], 86_400.0)
    for p, v in zip(found.search.passes, found.volumes_mbit, strict=True):
        assert v == pytest.approx(20.0 * p.duration_s, rel=1e-12)  # by hand


@pytest.mark.parametrize(
    "change, field",
    [
        ({"terrain_mask": [{"az_deg": 10.0, "el_deg": 3.0}, {"az_deg": 10.0, "el_deg": 5.0}]},
         "stations[0].terrain_mask[1].az_deg"),
        ({"terrain_mask": [{"az_deg": 360.0, "el_deg": 3.0}]}, "stations[0].terrain_mask[0].az_deg"),
        ({"downlink": [{"rate_mbps": 50.0, "min_elevation_deg": 20.0}, {"rate_mbps": 80.0}]},
         "stations[0].downlink[1].min_elevation_deg"),
        ({"downlink": [{"rate_mbps": 50.0}, {"rate_mbps": 40.0, "min_elevation_deg": 30.0}]},
         "stations[0].downlink[1].rate_mbps"),
        ({"min_pass_duration_s": -1.0}, "stations[0].min_pass_duration_s"),
    ],
)  # fmt: skip
def test_case_refuses_bad_site_tables(change, field):
    data = _case_data()
    data["stations"][0].update(change)
    with pytest.raises(CaseError) as err:
        case_from_data(data)
    assert err.value.field == field


def test_kernel_refuses_unordered_steps():
    with pytest.raises(InputError):
        Site(HARROW_FELL, None, 0.0, (DownlinkStep(50.0, 30.0), DownlinkStep(60.0, 10.0)))


def _case_data():
    return {
        "schema": "orbitledger.case/1",
        "meta": {"title": "Sites test", "record_id": "T-SITES"},
        "epoch_utc": "2027-03-21T10:30:00Z",
        "orbit": {"form": "classical", "altitude_km": 540.0, "e": 0.0, "i_deg": 97.5,
                  "raan_deg": 30.0, "argp_deg": 0.0, "nu_deg": 0.0},
        "stations": [{"name": "Harrow Fell", "lat_deg": 60.2, "lon_deg": -1.3, "height_km": 0.08}],
    }  # fmt: skip


def test_old_station_keeps_its_canonical_form():
    case = case_from_data(_case_data())
    assert "terrain_mask" not in case.canonical_json()
    assert "downlink" not in case.canonical_json()


def test_passes_verb_options_and_volume_columns(tmp_path):
    data = _case_data()
    data["stations"][0]["terrain_mask"] = [
        {"az_deg": a, "el_deg": e} for a, e in zip(MASK_AZ, MASK_EL, strict=True)
    ]
    data["stations"][0]["downlink"] = [
        {"rate_mbps": 50.0},
        {"rate_mbps": 150.0, "min_elevation_deg": 30.0},
    ]
    path = tmp_path / "s.case.json"
    path.write_text(json.dumps(data))
    args = [sys.executable, "-m", "orbitledger", "passes", str(path), "--json", "--days", "2",
            "--start", "2027-04-01T00:00:00Z", "--min-elevation-deg", "10"]  # fmt: skip
    done = subprocess.run(args, capture_output=True, text=True, check=False)
    assert done.returncode == 0, done.stderr
    out = json.loads(done.stdout)
    assert out["window"]["start_utc"].startswith("2027-04-01T00:00:00")
    assert out["window"]["duration_s"] == 2 * 86_400.0
    assert out["stations"][0]["elevation_mask_deg"] == 10.0
    assert all(p["max_elevation_deg"] > 10.0 for p in out["passes"])
    assert out["data_volume"]["total_mbit"] == pytest.approx(
        sum(p["data_volume_mbit"] for p in out["passes"])
    )
    assert json.loads(path.read_text()) == data  # the file is not changed
    bad = subprocess.run(args[:5] + ["--start", "2027-02-30T00:00Z"], capture_output=True,
                         text=True, check=False)  # fmt: skip
    assert bad.returncode == 2 and "--start" in bad.stderr and len(bad.stderr.splitlines()) == 1
