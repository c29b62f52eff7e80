"""``export --format tle``: the fitted TLE, read by sgp4's own parser, stays within the residual
it reports; the format's columns and checksums as CelesTrak's "NORAD Two-Line Element Set
Format" describes them."""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pytest
from sgp4.api import WGS72, Satrec

from orbitledger.analysis import case_trajectory
from orbitledger.case import load_case, starter_case
from orbitledger.cli.main import main
from orbitledger.exchange.tle_fit import fit_tle
from orbitledger.exchange.tle_format import format_tle, parse_tle

DATA = Path(__file__).parent / "data"
PUBLISHED = (DATA / "sgp4_ver_06251.tle").read_text().splitlines()  # AIAA 2006-6753 test set


def _run(capsys, *argv) -> tuple[int, str, str]:
    code = main([str(a) for a in argv])
    out = capsys.readouterr()
    return code, out.out, out.err


def _numerical_case(tmp_path: Path, **force) -> Path:
    case = starter_case().with_changes(
        {
            "epoch_utc": "2024-06-01T06:00:00Z",
            "force_model": {"propagator": "numerical", **force},
        }
    )
    path = tmp_path / "n.case.json"
    path.write_text(case.to_json())
    return path


def _celestrak_checksum(line: str) -> int:
    # CelesTrak, "NORAD Two-Line Element Set Format": the checksum (column 69) is the sum of
    # all digits of columns 1-68 plus 1 for each minus sign, modulo 10; letters, blanks,
    # periods and plus signs count 0.
    return sum(int(c) if c.isdigit() else int(c == "-") for c in line[:68]) % 10


def _residual_m(err: str) -> tuple[float, float]:
    found = re.search(r"RMS ([0-9.]+) m, max ([0-9.]+) m", err)
    assert found, err
    return float(found[1]), float(found[2])


def test_written_tle_read_by_sgp4_stays_within_the_printed_residual(tmp_path, capsys):
    path = _numerical_case(tmp_path)
    out = tmp_path / "k.tle"
    code, stdout, err = _run(
        capsys, "export", path, "--format", "tle", "--out", out, "--norad-id", 90001,
        "--name", "KESTREL-2 PLAN", "--fit-days", 0.5,
    )  # fmt: skip
    assert code == 0 and stdout == "", err
    rms_m, max_m = _residual_m(err)
    assert "warning" not in err and max_m < 1000.0  # a J2 numerical orbit: SGP4 follows it
    name, line1, line2 = out.read_text().splitlines()
    assert name == "KESTREL-2 PLAN" and line1[2:7] == "90001" and line2[2:7] == "90001"
    for line in (line1, line2):
        assert len(line) == 69 and int(line[68]) == _celestrak_checksum(line)

    # Outside references: sgp4's own parser and propagator; astropy's TEME -> GCRS.
    from astropy import units as u
    from astropy.coordinates import GCRS, TEME, CartesianRepresentation
    from astropy.time import Time, TimeDelta
    from astropy.utils import iers

    iers.conf.auto_download = False
    sat = Satrec.twoline2rv(line1, line2, WGS72)
    case = load_case(path)
    traj = case_trajectory(case, duration_s=43_200.0)
    t_s = np.linspace(0.0, 43_200.0, 97)
    r_case, _ = traj.gcrf(t_s)
    times = Time(case.epoch_utc.rstrip("Z"), scale="utc") + TimeDelta(t_s, format="sec")
    err_code, r_teme, _ = sat.sgp4_array(times.utc.jd1, times.utc.jd2)
    assert not err_code.any()
    gcrs = TEME(CartesianRepresentation(r_teme.T * u.km), obstime=times).transform_to(
        GCRS(obstime=times)
    )
    r_ref = gcrs.cartesian.xyz.to_value(u.km).T
    miss_m = np.linalg.norm(r_ref - r_case, axis=-1) * 1000.0
    # Within the printed largest residual; 1 m for the printed rounding and the frames
    # (astropy's TEME route agrees with ours to millimetres: tests/test_teme.py).
    assert miss_m.max() <= max_m + 1.0
    assert np.sqrt(np.mean(miss_m**2)) <= 1.5 * rms_m + 1.0  # a coarser sample of the same fit


def test_refit_of_a_published_tle_recovers_it(tmp_path, capsys):
    # The SGP4 trajectory of the AIAA 2006-6753 test set 06251 (BSTAR 1.2808e-4), fitted
    # again with BSTAR free: every element comes back to its last printed digit, and the
    # residual is below a millimetre.
    case = tmp_path / "d.case.json"
    assert _run(capsys, "import", DATA / "sgp4_ver_06251.tle", "-o", case)[0] == 0
    code, stdout, err = _run(capsys, "export", case, "--format", "tle", "--norad-id", 6251,
                             "--fit-days", 0.5)  # fmt: skip
    assert code == 0, err
    assert "BSTAR fitted" in err
    fitted, published = parse_tle(stdout), parse_tle("\n".join(PUBLISHED))
    assert fitted.name == "DELTA 1 DEB"  # the imported TLE's line 0
    assert fitted.line2[:63] == published.line2[:63]  # i, RAAN, e, argp, M, n: all columns
    assert fitted.line1[18:32] == published.line1[18:32]  # the epoch
    assert fitted.line1[53:61] == published.line1[53:61]  # BSTAR " 12808-3"
    assert _residual_m(err)[1] < 0.001


def test_format_matches_published_columns():
    # Line 2 of the published set, columns 1-63 (CelesTrak's column table: inclination 9-16,
    # RAAN 18-25, eccentricity 27-33, argument of perigee 35-42, mean anomaly 44-51, mean
    # motion 53-63), and line 1's epoch and BSTAR columns, rewritten from the parsed fields.
    pub = parse_tle("\n".join(PUBLISHED))
    text = format_tle(
        catalog_number=int(pub.catalog_number),
        epoch_jd_utc=pub.epoch_jd_utc,
        mean_motion_rev_day=pub.mean_motion_rev_day,
        e=pub.e,
        i_deg=pub.i_deg,
        raan_deg=pub.raan_deg,
        argp_deg=pub.argp_deg,
        mean_anomaly_deg=pub.mean_anomaly_deg,
        bstar_per_earth_radius=pub.bstar_per_earth_radius,
        name=pub.name,
        international_designator=pub.international_designator,
    )
    name, line1, line2 = text.splitlines()
    assert name == "DELTA 1 DEB"
    assert line2[:63] == PUBLISHED[2][:63]
    assert line1[:32] == PUBLISHED[1][:32]  # number, classification, designator, epoch
    assert line1[53:61] == PUBLISHED[1][53:61]  # BSTAR " 12808-3"
    assert int(line1[68]) == _celestrak_checksum(line1)
    assert int(line2[68]) == _celestrak_checksum(line2)
    # the published lines' own checksums by the same rule: the rule is the format's
    assert all(int(r[68]) == _celestrak_checksum(r) for r in PUBLISHED[1:])


def test_angles_near_360_and_negative_bstar_format():
    text = format_tle(catalog_number=1, epoch_jd_utc=(2460000.5, 0.25), mean_motion_rev_day=15.0,
                      e=0.0, i_deg=97.0, raan_deg=359.99999, argp_deg=-10.0,
                      mean_anomaly_deg=0.0, bstar_per_earth_radius=-3.4e-5)  # fmt: skip
    tle = parse_tle(text)
    assert tle.raan_deg == 0.0 and tle.argp_deg == 350.0
    assert tle.bstar_per_earth_radius == pytest.approx(-3.4e-5)
    assert tle.lines[0][53:61] == "-34000-4"


def test_poor_fit_warns_and_two_body_is_poor(tmp_path, capsys):
    path = tmp_path / "k.case.json"
    path.write_text(starter_case().to_json())  # two-body: SGP4 always carries J2
    code, stdout, err = _run(capsys, "export", path, "--format", "tle", "--fit-days", 0.25)
    assert code == 0 and stdout.count("\n") == 3
    assert "warning: the largest fit residual" in err and "exceeds 1 km" in err
    code, _, err = _run(capsys, "export", path, "--format", "tle", "--fit-days", 0.25,
                        "--warn-km", 1000)  # fmt: skip
    assert code == 0 and "warning" not in err


def test_drag_case_fits_bstar():
    case = starter_case().with_changes({"force_model": {"propagator": "numerical", "drag": True}})
    fit = fit_tle(case, span_s=21_600.0)
    assert fit.fitted_bstar and fit.max_km < 1.0


@pytest.mark.parametrize(
    ("option", "value", "reason"),
    [
        ("--norad-id", "123456", "must be 0 to 99999"),
        ("--name", "N" * 25, "at most 24 ASCII characters"),
        ("--fit-days", "0", "must be a positive number"),
        ("--fit-step", "-5", "must be a positive number"),
    ],
)
def test_bad_options_are_one_line_and_nothing_is_written(tmp_path, capsys, option, value, reason):
    path = tmp_path / "k.case.json"
    path.write_text(starter_case().to_json())
    out = tmp_path / "k.tle"
    code, stdout, err = _run(capsys, "export", path, "--format", "tle", "--out", out, option, value)
    assert code == 2 and stdout == "" and err.count("\n") == 1
    assert option in err and reason in err and not out.exists()


def test_existing_out_is_not_overwritten(tmp_path, capsys):
    path = tmp_path / "k.case.json"
    path.write_text(starter_case().to_json())
    out = tmp_path / "k.tle"
    out.write_text("keep me\n")
    code, _, err = _run(capsys, "export", path, "--format", "tle", "--out", out, "--fit-days", 0.1)
    assert code == 2 and "already exists" in err and out.read_text() == "keep me\n"
