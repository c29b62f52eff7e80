"""Earth orientation from the IERS table: look-up against astropy, GCRF -> ITRF against astropy.

Outside references: astropy's ``IERS_A`` table look-up (``ut1_utc``, ``pm_xy``) of the same
``finals2000A.all`` shipped by astropy-iers-data, and astropy's GCRS -> ITRS transformation
(ERFA underneath, with that table's dUT1 and pole per epoch). astropy's automatic download is
switched off for every test here, so nothing reaches the network.
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from orbitledger.analysis import case_results
from orbitledger.analysis.earth_orientation import (
    earth_orientation_rows,
    eop_for_case,
    eop_lookup,
    iers_table,
    packaged_table_path,
    parse_finals,
)
from orbitledger.case import CaseError, parse_case
from orbitledger.kernel import Elements, trajectory
from orbitledger.kernel.earth_orientation import (
    BEFORE_TABLE,
    BEYOND_TABLE,
    OBSERVED,
    PREDICTED,
    eop_at,
)
from orbitledger.kernel.errors import InputError
from orbitledger.kernel.timescales import time_scales

MM = 1e-6  # km


def minimal_data(**sections):
    """A small Earth case (540 km, near polar) with sections replaced or added."""
    base = {
        "schema": "orbitledger.case/1",
        "meta": {"title": "EOP test", "record_id": "T-EOP"},
        "epoch_utc": "2027-03-21T10:30:00Z",
        "orbit": {"form": "classical", "altitude_km": 540.0, "e": 0.001, "i_deg": 97.5,
                  "raan_deg": 30.0, "argp_deg": 40.0, "nu_deg": 10.0},
    }  # fmt: skip
    return base | sections


iers = pytest.importorskip("astropy.utils.iers")


@pytest.fixture(scope="module")
def astropy_table():
    """astropy's IERS_A on the packaged file, with automatic downloads off."""
    from astropy_iers_data import IERS_A_FILE

    with iers.conf.set_temp("auto_download", False):
        table = iers.IERS_A.open(IERS_A_FILE)
        with iers.earth_orientation_table.set(table):
            yield table


# Observed days (1992, 2004, either side of the 2016-12-31 leap second), a Bulletin A day of
# 2026 and a predicted day of 2027.
DATES = [
    "1992-06-30T23:00:00Z",
    "2004-04-06T07:51:28.386009Z",
    "2016-12-31T12:00:00Z",
    "2016-12-31T23:59:59Z",
    "2017-01-01T00:00:00Z",
    "2017-01-01T06:00:00Z",
    "2026-10-30T15:20:00Z",
    "2027-03-21T10:30:00Z",
]


@pytest.mark.parametrize("epoch", DATES)
def test_lookup_matches_astropy_iers_a(epoch, astropy_table):
    from astropy.time import Time

    t = Time(epoch.rstrip("Z"), scale="utc")
    ours = eop_lookup(iers_table(), epoch)
    # astropy IERS_A.ut1_utc / pm_xy (linear interpolation, Bulletin B where present): the
    # same table, so agreement to rounding (1e-9 s is 0.5 micrometre at the equator).
    assert abs(ours["dut1_s"] - float(astropy_table.ut1_utc(t.jd1, t.jd2).value)) < 1e-9
    xp, yp = astropy_table.pm_xy(t.jd1, t.jd2)
    assert abs(ours["xp_arcsec"] - float(xp.value)) < 1e-9
    assert abs(ours["yp_arcsec"] - float(yp.value)) < 1e-9


def test_status_observed_predicted_and_held(astropy_table):
    table = iers_table()
    ts = time_scales(["2004-04-06T00:00:00Z", "2027-03-21T00:00:00Z", "1972-06-01T00:00:00Z"])
    dut1, xp, _, status = eop_at(table, ts.utc1, ts.utc2)
    assert list(status) == [OBSERVED, PREDICTED, BEFORE_TABLE]
    # astropy's first predicted MJD is the table's first predicted row.
    assert table.predicted_from_mjd == astropy_table.meta["predictive_mjd"]
    assert dut1[2] == table.dut1_s[0] and xp[2] == table.xp_arcsec[0]
    last = table.mjd_utc[-1]
    after = eop_at(table, 2_400_000.5 + last, 30.0)
    assert int(after[3]) == BEYOND_TABLE and float(after[0]) == table.dut1_s[-1]


def test_leap_second_jump_stays_at_the_row(astropy_table):
    # IERS Bulletin C 52: a leap second at the end of 2016-12-31, dUT1 jumps by +1 s at
    # 2017-01-01 0 h UTC. Just before midnight dUT1 is near -0.41 s, just after near +0.59 s.
    before = eop_lookup(iers_table(), "2016-12-31T23:59:59Z")["dut1_s"]
    after = eop_lookup(iers_table(), "2017-01-01T00:00:00Z")["dut1_s"]
    assert -0.5 < before < -0.3 and 0.5 < after < 0.7
    assert abs((after - before) - 1.0) < 1e-3


START = ["2016-12-31T18:00:00Z", "2024-05-01T00:00:00Z", "2027-03-21T10:30:00Z"]


@pytest.mark.parametrize("start", START)
def test_itrf_with_the_table_matches_astropy_itrs(start, astropy_table):
    # astropy GCRS -> ITRS (IAU 2006/2000A via ERFA, dUT1 and pole from the same table per
    # epoch) for a 540 km orbit over a day (the first crosses the 2016 leap second).
    import astropy.units as u
    from astropy.coordinates import GCRS, ITRS, CartesianRepresentation
    from astropy.time import Time

    table = iers_table()
    case = parse_case(
        json.dumps(minimal_data(epoch_utc=start, earth_orientation={"source": "iers"}))
    )
    eop = eop_for_case(case)
    elements = Elements(a_km=6918.137, e=0.001, i_deg=97.5, raan_deg=30.0, argp_deg=40.0,
                        nu_deg=10.0)  # fmt: skip
    traj = trajectory("two-body", elements, start, duration_s=86_400.0, eop=eop)
    assert eop.table is table
    t = np.linspace(0.0, 86_400.0, 9)
    r, _ = traj.gcrf(t)
    r_itrf, _ = traj.itrf(t)
    ts = traj.times(t)
    when = Time(ts.utc1, ts.utc2, format="jd", scale="utc")
    ref = GCRS(CartesianRepresentation(r.T * u.km), obstime=when).transform_to(ITRS(obstime=when))
    ref_km = ref.cartesian.xyz.to_value(u.km).T
    assert np.max(np.abs(r_itrf - ref_km)) < 1 * MM  # seen: 4e-5 mm
    # the zero default differs by tens of metres or more: the table is what makes it agree
    flat = trajectory("two-body", elements, start, duration_s=86_400.0)
    assert np.max(np.abs(flat.itrf(t)[0] - ref_km)) > 0.005


def _case(**eop):
    return parse_case(json.dumps(minimal_data(earth_orientation=eop)))


def test_case_fields_default_and_canonical_form_unchanged():
    plain = _case()
    assert plain.earth_orientation.source == "values"
    # the form written before the source field existed (tests/test_case_canonical.py)
    old = '"earth_orientation":{"dut1_s":0.0,"xp_arcsec":0.0,"yp_arcsec":0.0}'
    assert old in plain.canonical_json()
    assert '"source":"iers"' in _case(source="iers").canonical_json()


@pytest.mark.parametrize(
    "eop, path",
    [
        ({"source": "iers", "dut1_s": 0.1}, "earth_orientation.dut1_s"),
        ({"file": "finals.all"}, "earth_orientation.file"),
        ({"source": "bulletin"}, "earth_orientation.source"),
    ],
)
def test_case_refuses_mixed_or_unknown_sources(eop, path):
    with pytest.raises(CaseError) as err:
        _case(**eop)
    assert err.value.field == path


def _slice_of_packaged(tmp_path: Path, first: str, days: int) -> Path:
    lines = packaged_table_path().read_bytes().split(b"\n")
    k = next(i for i, line in enumerate(lines) if line.startswith(first.encode()))
    path = tmp_path / "finals-slice.all"
    path.write_bytes(b"\n".join(lines[k : k + days]) + b"\n")
    return path


def test_analyst_file_is_read_and_its_end_cautioned(tmp_path, astropy_table):
    from astropy.time import Time

    path = _slice_of_packaged(tmp_path, "24 5 1", 5)  # 2024-05-01 .. 2024-05-05
    case = parse_case(
        json.dumps(
            minimal_data(
                epoch_utc="2024-05-02T06:00:00Z",
                earth_orientation={"source": "iers", "file": str(path)},
                window={"duration_s": 5 * 86_400.0, "step_s": 60.0},
            )
        )
    )
    eop = eop_for_case(case)
    assert eop.table.mjd_utc.size == 5 and eop.table.name.endswith(str(path))
    t = Time("2024-05-02T06:00:00", scale="utc")
    assert abs(eop.dut1_s - float(astropy_table.ut1_utc(t.jd1, t.jd2).value)) < 1e-9
    rows = {row["topic"]: row["value"] for row in earth_orientation_rows(case)}
    assert "2024-05-05" in rows["Earth orientation table"]
    assert "held" in rows["Earth orientation caution"]
    results = case_results(case, ["earth_orientation"])
    assert results["eop_dut1_s"].value == eop.dut1_s
    assert "held" in results["eop_dut1_s"].caution


def test_bad_and_missing_files_name_the_field(tmp_path):
    bad = tmp_path / "bad.all"
    bad.write_text("73 1 2 41684.00 I  0.12x733 0.009786\n")
    with pytest.raises(InputError) as err:
        parse_finals(bad.read_bytes(), str(bad))
    assert err.value.field == "earth_orientation.file" and "row 1" in err.value.reason
    with pytest.raises(InputError) as err:
        iers_table(tmp_path / "absent.all")
    assert err.value.field == "earth_orientation.file"


def test_cli_names_a_missing_table_in_one_line(tmp_path):
    case = tmp_path / "c.case.json"
    data = minimal_data(earth_orientation={"source": "iers", "file": str(tmp_path / "no.all")})
    data["stations"] = [{"name": "Harrow Fell", "lat_deg": 60.2, "lon_deg": -1.3}]
    case.write_text(json.dumps(data))
    done = subprocess.run(
        [sys.executable, "-m", "orbitledger", "passes", str(case)],
        capture_output=True,
        text=True,
        check=False,
    )
    assert done.returncode == 2
    lines = done.stderr.strip().splitlines()
    assert len(lines) == 1 and "earth_orientation.file" in lines[0]
