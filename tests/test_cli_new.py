"""``orbitledger new PATH --title --record-id --altitude-km --sso-ltdn``: a new study's starter case.

Outside references: the sun-synchronous inclination at 500 km (Vallado, "Fundamentals of
Astrodynamics and Applications"), the node's local time from astropy (the Sun's right
ascension, GCRS -> ITRS, UT1), the equation of time near the March equinox.
"""

from __future__ import annotations

import json

import numpy as np
import pytest

from orbitledger.case import load_case
from orbitledger.cli.main import main
from orbitledger.kernel.node_time import node_local_time_h, raan_for_node_local_time_deg


def _run(capsys, *argv) -> tuple[int, str, str]:
    code = main([str(a) for a in argv])
    out = capsys.readouterr()
    return code, out.out, out.err


def test_new_sets_the_fields_and_a_sun_synchronous_orbit(tmp_path, capsys):
    path = tmp_path / "plover.case.json"
    code, out, err = _run(capsys, "new", path, "--title", "Plover study", "--record-id",
                          "PLV-ORB-001", "--altitude-km", 500, "--sso-ltdn", "10:30")  # fmt: skip
    assert code == 0 and err == "", err
    assert "sun-synchronous: i 97.40" in out
    case = load_case(path)
    assert case.meta.title == "Plover study" and case.meta.record_id == "PLV-ORB-001"
    assert case.orbit.altitude_km == 500.0
    # Vallado, "Fundamentals of Astrodynamics and Applications" (sun-synchronous orbits, Sec.
    # 11.4.1): about 97.4 deg at 500 km circular (from memory); e = 0.001 here changes it by
    # under 0.001 deg.
    assert case.orbit.i_deg == pytest.approx(97.40, abs=0.02)
    assert [b.transfer.altitude_km for b in case.burns] == [505.0]

    # astropy: the descending node's ITRS longitude and UT1 give its local mean solar time.
    from astropy import units as u
    from astropy.coordinates import GCRS, ITRS, CartesianRepresentation, get_sun
    from astropy.time import Time
    from astropy.utils import iers

    iers.conf.auto_download = False
    t = Time(case.epoch_utc.rstrip("Z"), scale="utc")
    ra_dn = np.radians(case.orbit.raan_deg + 180.0)
    node = GCRS(CartesianRepresentation([np.cos(ra_dn)], [np.sin(ra_dn)], [0.0], unit=u.km),
                obstime=t).transform_to(ITRS(obstime=t))  # fmt: skip
    lon_deg = float(np.degrees(np.arctan2(node.cartesian.y.value, node.cartesian.x.value))[0])
    ut1_h = (((t.ut1.jd1 - 0.5) % 1.0 + t.ut1.jd2 % 1.0) % 1.0) * 24.0
    mean_h = (ut1_h + lon_deg / 15.0) % 24.0
    assert abs(mean_h - 10.5) * 3600.0 < 1.0  # s (UT1 cancels: the node's longitude follows it)
    # The apparent local time, 12 h + (RA node - RA Sun) / 15 deg/h with astropy's Sun, is
    # earlier by the equation of time, about -7 min on 21 March (from memory; within 1 min).
    ra_sun = get_sun(t).ra.deg
    apparent_h = (12.0 + (np.degrees(ra_dn) - ra_sun) / 15.0) % 24.0
    assert (apparent_h - 10.5) * 60.0 == pytest.approx(-7.2, abs=1.0)


def test_the_product_reports_the_ltdn_it_was_given(tmp_path, capsys):
    path = tmp_path / "c.case.json"
    assert _run(capsys, "new", path, "--altitude-km", 600, "--sso-ltdn", "06:00")[0] == 0
    code, out, _ = _run(capsys, "eclipses", path)
    assert code == 0 and "LTDN 06:00" in out


@pytest.mark.parametrize("ltdn_h", [0.0, 6.0, 10.5, 13.75, 23.99])
def test_raan_for_node_local_time_inverts_node_local_time(ltdn_h):
    raan = raan_for_node_local_time_deg(ltdn_h, "2026-01-01T00:00:00Z")
    back = node_local_time_h(raan, "2026-01-01T00:00:00Z", node="descending")
    assert (back - ltdn_h + 12.0) % 24.0 - 12.0 == pytest.approx(0.0, abs=1e-9)
    asc = node_local_time_h(raan, "2026-01-01T00:00:00Z", node="ascending")
    assert (asc - back) % 24.0 == pytest.approx(12.0, abs=1e-9)


def test_without_options_new_writes_the_starter(tmp_path, capsys):
    path = tmp_path / "s.case.json"
    assert _run(capsys, "new", path)[0] == 0
    assert json.loads(path.read_text())["meta"]["record_id"] == "KES2-ORB-001"


@pytest.mark.parametrize(
    ("argv", "option", "reason"),
    [
        (["--sso-ltdn", "25:00"], "--sso-ltdn", "HH:MM from 00:00 to 23:59"),
        (["--sso-ltdn", "10.5"], "--sso-ltdn", "HH:MM"),
        (["--record-id", "a b"], "--record-id", "letters, digits"),
        (["--title", ""], "--title", "must not be empty"),
        (["--altitude-km", "-3"], "--altitude-km", "positive"),
        (["--altitude-km", "20000", "--sso-ltdn", "10:00"], "--altitude-km",
         "no sun-synchronous orbit"),
    ],
)  # fmt: skip
def test_bad_values_are_one_line_exit_2_nothing_written(tmp_path, capsys, argv, option, reason):
    path = tmp_path / "bad.case.json"
    code, out, err = _run(capsys, "new", path, *argv)
    assert code == 2 and out == "" and err.count("\n") == 1
    assert option in err and reason in err and not path.exists()


def test_an_existing_path_is_never_overwritten(tmp_path, capsys):
    path = tmp_path / "mine.case.json"
    path.write_text("my own notes\n")
    code, _, err = _run(capsys, "new", path, "--altitude-km", 500)
    assert code == 2 and f"{path}: already exists; not overwritten" in err and err.count("\n") == 1
    assert path.read_text() == "my own notes\n"
