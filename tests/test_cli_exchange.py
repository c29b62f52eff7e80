"""The exchange verbs end to end: import (TLE, OPM), export (OPM, OEM, CSV), ephemeris-diff."""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

import pytest

from orbitledger.case import load_case
from orbitledger.cli.main import main
from orbitledger.exchange.oem import parse_oem
from orbitledger.exchange.opm import parse_opm

DATA = Path(__file__).parent / "data"
TLE = DATA / "sgp4_ver_06251.tle"


def _run(capsys, *argv) -> tuple[int, str, str]:
    code = main([str(a) for a in argv])
    out = capsys.readouterr()
    return code, out.out, out.err


def _imported(tmp_path: Path, capsys, **changes) -> Path:
    path = tmp_path / "delta.case.json"
    code, _, err = _run(capsys, "import", TLE, "-o", path)
    assert code == 0, err
    if changes:
        path.write_text(load_case(path).with_changes(changes).to_json())
    return path


def test_import_tle_makes_a_case_and_never_overwrites(tmp_path, capsys):
    path = tmp_path / "delta.case.json"
    code, out, err = _run(capsys, "import", TLE, "-o", path)
    assert code == 0 and "TLE -> case TLE-06251" in out and err == ""
    case = load_case(path)
    lines = [r for r in TLE.read_text().splitlines()[1:]]
    # docs/case-file.md: the source fingerprint is the SHA-256 of the lines joined by "\n"
    assert case.source.fingerprint == hashlib.sha256("\n".join(lines).encode()).hexdigest()
    assert case.force_model.propagator == "sgp4"
    before = path.read_bytes()
    code, _, err = _run(capsys, "import", TLE, "-o", path)
    assert code == 2 and "already exists; not overwritten" in err
    assert path.read_bytes() == before


def test_bad_checksum_is_one_line_exit_2(tmp_path, capsys):
    bad = tmp_path / "bad.tle"
    text = TLE.read_text().splitlines()
    text[1] = text[1][:68] + "0"  # the true checksum is 5 (Spacetrack Report No. 3 rule)
    bad.write_text("\n".join(text) + "\n")
    code, _, err = _run(capsys, "import", bad, "-o", tmp_path / "x.case.json")
    assert code == 2
    assert err.count("\n") == 1 and "TLE line 1, column 69 (checksum)" in err
    assert not (tmp_path / "x.case.json").exists()


def test_far_epoch_warns_with_days(tmp_path, capsys):
    out_path = tmp_path / "late.case.json"
    code, _, err = _run(capsys, "import", TLE, "--epoch", "2006-07-01T00:00:00Z", "-o", out_path)
    assert code == 0
    assert "warning: the requested epoch is 5.2 days after the TLE epoch" in err
    assert load_case(out_path).epoch_utc == "2006-07-01T00:00:00Z"


def test_import_opm_and_refusals(tmp_path, capsys):
    out_path = tmp_path / "godzilla.case.json"
    code, out, err = _run(capsys, "import", DATA / "opm_502_figure_3_1.opm", "-o", out_path)
    assert code == 0 and "OPM -> case OPM-1998-999A" in out
    assert "ITRF-97" in err and "UT1 - UTC and polar motion taken as zero" in err
    case = load_case(out_path)
    assert case.source.kind == "opm" and case.source.file == "opm_502_figure_3_1.opm"
    assert case.spacecraft.mass_kg == 3000.0
    code, _, err = _run(capsys, "import", DATA / "oem_502_example.oem", "-o", tmp_path / "o.json")
    assert code == 2 and "ephemeris-diff" in err
    code, _, err = _run(
        capsys, "import", DATA / "opm_502_figure_3_1.opm", "--epoch", "1998-12-19T00:00:00Z",
        "-o", tmp_path / "e.case.json",
    )  # fmt: skip
    assert code == 2 and "--epoch is for TLEs" in err


def test_sgp4_passes_against_astropy(tmp_path, capsys):
    """Passes of an SGP4 case: elevation at maximum against astropy's TEME -> ITRS.

    astropy (coordinates.TEME, IERS-B values bundled offline) rotates the SGP4 TEME state to
    ITRS with GMST82, its dUT1 and polar motion; the case is given the same dUT1 and no polar
    motion (about 10 m, under 0.002 deg at these ranges). The elevation is then the
    site geometry of kernel.frames.topocentric_view.
    """
    from astropy import units as u
    from astropy.coordinates import ITRS, TEME, CartesianRepresentation
    from astropy.time import Time
    from astropy.utils import iers

    from orbitledger.exchange.tle import parse_tle, tle_teme_states
    from orbitledger.kernel.frames import topocentric_view

    iers.conf.auto_download = False
    tle = parse_tle(TLE.read_text())
    dut1 = float(Time(tle.epoch_utc.rstrip("Z"), scale="utc").delta_ut1_utc)
    station = {"name": "Saltmarsh Point", "lat_deg": 40.0, "lon_deg": -100.0, "height_km": 0.3}
    path = _imported(
        tmp_path,
        capsys,
        stations=[station],
        **{"window.step_s": 5.0, "earth_orientation.dut1_s": dut1},
    )
    code, out, err = _run(capsys, "passes", path, "--json")
    assert code == 0, err
    data = json.loads(out)
    assert data["propagator"] == "sgp4" and len(data["passes"]) >= 2
    for p in data["passes"]:
        t = Time(p["tmax_utc"].rstrip("Z"), scale="utc")
        tsince = (t - Time(tle.epoch_utc.rstrip("Z"), scale="utc")).to_value(u.min)
        r, _ = tle_teme_states(tle, tsince)
        itrs = TEME(CartesianRepresentation(r * u.km), obstime=t).transform_to(ITRS(obstime=t))
        el = topocentric_view(itrs.cartesian.xyz.to_value(u.km), 40.0, -100.0, 0.3)["el_deg"]
        assert abs(el - p["max_elevation_deg"]) < 0.005


def test_export_opm_oem_csv(tmp_path, capsys):
    path = _imported(tmp_path, capsys, **{"window.duration_s": 3600.0, "window.step_s": 60.0})
    code, out, err = _run(capsys, "export", path, "--format", "opm")
    assert code == 0 and "caution" in err
    opm = parse_opm(out)
    assert (opm.ref_frame, opm.time_system, opm.center_name) == ("GCRF", "UTC", "EARTH")
    target = tmp_path / "delta.oem"
    assert _run(capsys, "export", path, "--format", "oem", "-o", target)[0] == 0
    oem = parse_oem(target.read_text())
    assert len(oem.segments[0].epochs) == 61
    before = target.read_bytes()
    code, _, err = _run(capsys, "export", path, "--format", "oem", "--step", "120", "-o", target)
    assert code == 2 and "already exists" in err and target.read_bytes() == before
    code, _, _ = _run(
        capsys, "export", path, "--format", "oem", "--step", "120", "-o", target, "--force"
    )
    assert code == 0 and len(parse_oem(target.read_text()).segments[0].epochs) == 31
    code, out, _ = _run(capsys, "export", path, "--format", "csv", "--what", "groundtrack")
    assert code == 0 and out.splitlines()[0].startswith("time_utc,offset_s,lat_deg,lon_deg")
    code, out, _ = _run(capsys, "export", path, "--format", "csv", "--what", "eclipses")
    assert code == 0 and out.splitlines()[0].startswith("entry_utc,exit_utc,entry_s")


def test_ephemeris_diff_reports_in_metres(tmp_path, capsys):
    path = _imported(tmp_path, capsys, **{"window.duration_s": 3600.0, "window.step_s": 300.0})
    oem = tmp_path / "delta.oem"
    assert _run(capsys, "export", path, "--format", "oem", "-o", oem)[0] == 0
    two_body = tmp_path / "two-body.case.json"
    two_body.write_text(
        load_case(path).with_changes({"force_model.propagator": "two-body"}).to_json()
    )
    code, out, _ = _run(capsys, "ephemeris-diff", two_body, oem)
    assert code == 0 and "distance   rms" in out and "radial" in out
    code, out, _ = _run(capsys, "ephemeris-diff", two_body, oem, "--csv")
    rows = out.splitlines()
    assert rows[0] == "time_utc,offset_s,dradial_km,dtransverse_km,dnormal_km,distance_km"
    assert float(rows[1].split(",")[-1]) < 1e-6  # same state at the epoch (1 mm)
    assert float(rows[-1].split(",")[-1]) > 0.1  # SGP4 vs two-body after an hour: reported


def test_records_list_the_source_and_its_fingerprint(tmp_path, capsys):
    # The record's inputs table (reporting.templating.inputs_side_by_side) of an imported case
    from reporting.templating import inputs_side_by_side

    case = load_case(_imported(tmp_path, capsys))
    tables = inputs_side_by_side([{"name": "delta", "canonical": case.canonical_json()}])
    sections = {s["title"]: s for s in tables[0]["sections"]}
    rows = {r["field"]: r["cells"][0]["text"] for r in sections["source"]["rows"]}
    assert rows["fingerprint"] == case.source.fingerprint and rows["kind"] == "tle"
    assert "not osculating" in rows["note"]


def test_unknown_format_is_refused(tmp_path, capsys):
    other = tmp_path / "notes.txt"
    other.write_text("hello\n")
    code, _, err = _run(capsys, "import", other, "-o", tmp_path / "x.case.json")
    assert code == 2 and "neither a TLE nor a CCSDS OPM" in err


@pytest.mark.parametrize("verb", ["import", "export", "ephemeris-diff"])
def test_verbs_are_registered(verb, capsys):
    with pytest.raises(SystemExit) as stop:
        main([verb, "--help"])
    assert stop.value.code == 0 and verb in capsys.readouterr().out
