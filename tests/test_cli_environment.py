"""The environment verbs end to end on the Kestrel-2 starter case."""

from __future__ import annotations

import csv
import io
import json
import math
import warnings
from pathlib import Path

import numpy as np
import pytest

from orbitledger.cli.main import main

EXAMPLE = Path(__file__).resolve().parents[1] / "examples" / "candidate-a.case.json"


def _case(tmp_path: Path, **changes) -> Path:
    data = json.loads(EXAMPLE.read_text())
    data["window"] = {"start_utc": None, "duration_s": 21600.0, "step_s": 10.0}
    for key, value in changes.items():
        data[key] = value
    path = tmp_path / "kestrel.case.json"
    path.write_text(json.dumps(data))
    return path


def _run(capsys, *argv) -> tuple[int, str, str]:
    code = main(list(argv))
    out = capsys.readouterr()
    return code, out.out, out.err


def test_passes_json_and_astropy_elevation_at_max(tmp_path: Path, capsys, monkeypatch) -> None:
    from orbitledger.kernel import timescales

    monkeypatch.setattr(timescales._WarnOnce, "issued", False)  # a fresh process, as the CLI
    path = _case(tmp_path, window={"start_utc": None, "duration_s": 21600.0, "step_s": 1.0})
    code, out, err = _run(capsys, "passes", str(path), "--json")
    assert code == 0
    data = json.loads(out)
    # 2027-03-21 lies within the leap seconds announced by IERS Bulletin C 72 (to 2027-06-28).
    assert data["utc_tai_extrapolated"] is False
    assert "UTC - TAI is extrapolated" not in err
    assert len(data["passes"]) >= 3
    masks = {s["name"]: s["elevation_mask_deg"] for s in data["stations"]}
    for p in data["passes"]:
        assert p["max_elevation_deg"] >= masks[p["station"]] - 1e-9
        assert 0.0 < p["duration_s"] < 20 * 60  # LEO passes last minutes (common practice)
    # Outside check: astropy's AltAz of the ephemeris verb's ITRF position at the time of
    # maximum elevation (no refraction) reproduces the pass table's maximum to 0.002 deg.
    from astropy import units as u
    from astropy.coordinates import ITRS, AltAz, CartesianRepresentation, EarthLocation
    from astropy.time import Time

    code, out, _ = _run(capsys, "ephemeris", str(path), "--csv")
    rows = list(csv.DictReader(io.StringIO(out)))
    t = np.array([float(r["offset_s"]) for r in rows])
    best = max(
        (p for p in data["passes"] if not p["ends_in_view"]), key=lambda p: p["max_elevation_deg"]
    )
    k = int(np.argmin(np.abs(t - best["tmax_s"])))
    station = next(s for s in data["stations"] if s["name"] == best["station"])
    site = EarthLocation.from_geodetic(
        lon=station["lon_deg"] * u.deg,
        lat=station["lat_deg"] * u.deg,
        height=station["height_km"] * u.km,
    )
    r_itrf = np.array([float(rows[k][f"{a}_itrf_km"]) for a in "xyz"])
    when = Time(rows[k]["time_utc"].rstrip("Z"), scale="utc")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        topo = r_itrf - u.Quantity(site.geocentric).to_value(u.km)
        aa = ITRS(CartesianRepresentation(topo * u.km), obstime=when, location=site).transform_to(
            AltAz(obstime=when, location=site, pressure=0 * u.hPa)
        )
    # The 1 s sample is within 0.5 s of the maximum, where elevation falls by < 0.001 deg
    # (curvature of a 45 deg pass about 0.002 deg/s^2).
    assert aa.alt.deg == pytest.approx(best["max_elevation_deg"], abs=0.002)
    assert aa.alt.deg <= best["max_elevation_deg"] + 1e-4


def test_passes_table_and_coarse_step_warning(tmp_path: Path, capsys) -> None:
    path = _case(tmp_path, window={"start_utc": None, "duration_s": 21600.0, "step_s": 600.0})
    code, out, err = _run(capsys, "passes", str(path))
    assert code == 0
    assert "too coarse to resolve passes" in err
    assert "AOS (UTC)" in out and "Harrow Fell" in out and "Caution:" in out


def test_eclipses_match_the_cylindrical_closed_form(tmp_path: Path, capsys) -> None:
    path = _case(tmp_path)
    code, out, _ = _run(capsys, "eclipses", str(path), "--json", "--cylindrical")
    assert code == 0
    data = json.loads(out)
    a_km = 6378.137 + 540.0  # candidate A: altitude 540 km, e = 0.001
    h = a_km - 6378.137
    full = [o for o in data["per_orbit"] if o["end_s"] - o["start_s"] > 5000]
    assert len(full) >= 2
    for orbit in full:
        beta = math.radians(orbit["beta_deg"])
        # Closed form for a circular orbit (derived in tests/test_eclipses.py); e = 0.001 moves
        # the radius by 7 km, so the tolerance is 0.003 of the orbit.
        expected = (
            math.acos(math.sqrt(h * h + 2 * 6378.137 * h) / (a_km * math.cos(beta))) / math.pi
        )
        assert orbit["fraction"] == pytest.approx(expected, abs=3e-3)
    code, out, _ = _run(capsys, "eclipses", str(path))
    assert code == 0 and "LTAN" in out and "beta angle" in out


def test_groundtrack_and_ephemeris_csv(tmp_path: Path, capsys) -> None:
    path = _case(tmp_path)
    code, out, err = _run(capsys, "groundtrack", str(path), "--csv")
    assert code == 0 and "caution" in err.lower()
    rows = list(csv.DictReader(io.StringIO(out)))
    assert len(rows) == 21600 // 10 + 1
    lat = np.array([float(r["lat_deg"]) for r in rows])
    assert np.max(np.abs(lat)) < 180.0 - 97.55 + 0.3
    assert {r["in_eclipse"] for r in rows} == {"true", "false"}
    code, out, _ = _run(capsys, "ephemeris", str(path), "--csv")
    rows = list(csv.DictReader(io.StringIO(out)))
    r_g = np.array([[float(r[f"{a}_gcrf_km"]) for a in "xyz"] for r in rows])
    r_i = np.array([[float(r[f"{a}_itrf_km"]) for a in "xyz"] for r in rows])
    assert np.allclose(np.linalg.norm(r_g, axis=1), np.linalg.norm(r_i, axis=1), atol=1e-5)
    a_km = 6378.137 + 540.0
    assert np.all(np.abs(np.linalg.norm(r_g, axis=1) - a_km) < a_km * 0.001 + 1e-3)


@pytest.mark.parametrize("propagator", ["j2-mean", "numerical"])
def test_other_propagators(tmp_path: Path, capsys, propagator: str) -> None:
    path = _case(
        tmp_path,
        window={"start_utc": None, "duration_s": 10800.0, "step_s": 30.0},
        force_model={"propagator": propagator},
    )
    code, out, _ = _run(capsys, "passes", str(path), "--json")
    assert code == 0
    data = json.loads(out)
    assert data["propagator"] == propagator and data["model_notes"]


@pytest.mark.parametrize(
    ("changes", "field"),
    [
        ({"stations": [{"name": "X", "lat_deg": 95.0, "lon_deg": 0.0}]}, "stations[0].lat_deg"),
        (
            {"stations": [{"name": "X", "lat_deg": 5.0, "lon_deg": 0.0, "elevation_mask_deg": -7}]},
            "elevation_mask_deg",
        ),
        ({"window": {"duration_s": -5.0, "step_s": 10.0}}, "window.duration_s"),
        ({"window": {"duration_s": 3600.0, "step_s": 0.0}}, "window.step_s"),
        ({"epoch_utc": "2027-13-40T00:00:00Z"}, "epoch_utc"),
        ({"stations": []}, "stations"),
    ],
)
def test_bad_input_is_one_line_and_exit_2(
    tmp_path: Path, capsys, changes: dict, field: str
) -> None:
    path = _case(tmp_path, **changes)
    code, out, err = _run(capsys, "passes", str(path))
    assert code == 2
    assert field in err and "Traceback" not in err
    assert len(err.strip().splitlines()) == 1


def test_orbit_decaying_inside_the_window_is_reported_not_a_crash(tmp_path: Path, capsys) -> None:
    # 160 km with drag at high solar activity re-enters within two days (the exponential
    # atmosphere of kernel-propagation.md); the verbs stop at the decay and say when.
    orbit = json.loads(EXAMPLE.read_text())["orbit"] | {"altitude_km": 160.0}
    path = _case(
        tmp_path,
        orbit=orbit,
        window={"start_utc": None, "duration_s": 3 * 86400.0, "step_s": 30.0},
        force_model={"propagator": "numerical", "drag": True, "solar_activity": "high"},
    )
    code, out, _ = _run(capsys, "eclipses", str(path), "--json")
    assert code == 0
    data = json.loads(out)
    decay = [note for note in data["model_notes"] if "re-entry" in note]
    assert decay
    decay_s = float(decay[0].split(" at ")[1].split(" s")[0])
    assert 0.0 < decay_s < 3 * 86400.0
    assert max(e["exit_s"] for e in data["eclipses"]) <= decay_s + 1.0


def test_far_future_window_records_the_extrapolated_utc_tai(
    tmp_path: Path, capsys, monkeypatch
) -> None:
    # Leap seconds are announced about six months ahead (IERS Bulletin C; common practice):
    # a 2031 window is flagged in the JSON and warned about once on stderr.
    from orbitledger.kernel import timescales

    monkeypatch.setattr(timescales._WarnOnce, "issued", False)
    path = _case(
        tmp_path,
        epoch_utc="2031-03-21T10:30:00Z",
        window={"start_utc": None, "duration_s": 7200.0, "step_s": 30.0},
    )
    code, out, err = _run(capsys, "eclipses", str(path), "--json")
    assert code == 0
    assert json.loads(out)["utc_tai_extrapolated"] is True
    assert err.count("UTC - TAI is extrapolated") == 1


def test_eclipse_summary_is_over_whole_orbits_and_agrees_with_the_record(
    tmp_path: Path, capsys
) -> None:
    from orbitledger.analysis.window_groups import eclipse_results
    from orbitledger.case.io import load_case

    # 21600 s is 3.8 periods of candidate A: three whole orbits and a trailing partial one.
    path = _case(tmp_path)
    code, out, _ = _run(capsys, "eclipses", str(path), "--json")
    assert code == 0
    data = json.loads(out)
    period = data["per_orbit"][0]["end_s"] - data["per_orbit"][0]["start_s"]
    whole = [o for o in data["per_orbit"] if o["end_s"] - o["start_s"] >= 0.999 * period]
    assert len(data["per_orbit"]) == 4 and len(whole) == 3
    assert [o["whole"] for o in data["per_orbit"]] == [True, True, True, False]
    s = data["summary"]
    # By hand: the mean and the largest of the whole orbits' fractions.
    assert s["whole_orbits"] == 3
    assert s["mean_fraction"] == pytest.approx(sum(o["fraction"] for o in whole) / 3, abs=1e-12)
    assert s["max_fraction"] == max(o["fraction"] for o in whole)
    assert s["mean_fraction"] <= s["max_fraction"]
    # The record's values (analysis group "eclipses") are the same numbers.
    record = {r.name: r.value for r in eclipse_results(load_case(path))}
    assert record["eclipse_fraction_mean"] == pytest.approx(s["mean_fraction"], abs=1e-9)
    assert record["eclipse_fraction_max"] == pytest.approx(s["max_fraction"], abs=1e-9)
    code, out, _ = _run(capsys, "eclipses", str(path))
    assert code == 0
    assert f"over 3 whole orbits: mean {100 * s['mean_fraction']:.1f} %" in out
    # A window shorter than one period holds no whole orbit: no fraction per orbit is claimed.
    short = _case(tmp_path, window={"start_utc": None, "duration_s": 3000.0, "step_s": 10.0})
    code, out, _ = _run(capsys, "eclipses", str(short), "--json")
    assert code == 0 and json.loads(out)["summary"]["mean_fraction"] is None
    code, out, _ = _run(capsys, "eclipses", str(short))
    assert code == 0 and "no whole orbit in the window" in out


def test_any_station_in_the_cli_and_the_record_follow_one_rule(tmp_path: Path, capsys) -> None:
    from orbitledger.analysis.window_groups import contact_results
    from orbitledger.case.io import load_case

    path = _case(tmp_path)
    code, out, _ = _run(capsys, "passes", str(path), "--json")
    assert code == 0
    data = json.loads(out)
    passes = data["passes"]
    # By hand from the listed passes: passes added over stations; contact time the length of
    # the union of [AOS, LOS] intervals (overlaps counted once).
    union, end = 0.0, -math.inf
    for aos, los in sorted((p["aos_s"], p["los_s"]) for p in passes):
        union += max(0.0, los - max(aos, end))
        end = max(end, los)
    network = [d for d in data["daily"] if d["station"] == "any station"]
    assert sum(d["passes"] for d in network) == len(passes)
    assert sum(d["contact_min"] for d in network) == pytest.approx(union / 60.0, abs=1e-6)
    days = 21600.0 / 86400.0
    record = {r.name: r for r in contact_results(load_case(path))}
    assert record["passes_in_window"].value == len(passes)
    assert record["contact_min_per_day"].value == pytest.approx(union / 60.0 / days, abs=1e-6)
    assert "added" in record["passes_in_window"].description
    assert "counted once" in record["contact_min_per_day"].description
    code, out, _ = _run(capsys, "passes", str(path))
    assert code == 0 and "overlaps counted once" in out
