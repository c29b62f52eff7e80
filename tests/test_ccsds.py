"""CCSDS OPM and OEM (KVN): the standard's examples, round trips to the bit, bad input by line."""

from __future__ import annotations

import datetime as dt
import warnings
from pathlib import Path

import numpy as np
import pytest

from orbitledger.case import starter_case
from orbitledger.exchange.ccsds import ccsds_epoch_utc, state_to_gcrf
from orbitledger.exchange.compare import ephemeris_difference
from orbitledger.exchange.csv_export import case_csv
from orbitledger.exchange.importing import opm_case
from orbitledger.exchange.oem import oem_text, parse_oem
from orbitledger.exchange.opm import opm_state_gcrf, parse_opm
from orbitledger.exchange.opm_export import opm_text
from orbitledger.kernel.elements import state_to_elements
from orbitledger.kernel.errors import InputError
from orbitledger.kernel.timescales import time_scales

DATA = Path(__file__).parent / "data"
FIG_3_1 = (DATA / "opm_502_figure_3_1.opm").read_text()
FIG_3_2 = (DATA / "opm_502_figure_3_2.opm").read_text()
OEM_EXAMPLE = (DATA / "oem_502_example.oem").read_text()
NOW = dt.datetime(2027, 3, 1, 12, 0, 0, tzinfo=dt.timezone.utc)


def _kestrel():
    return starter_case().with_changes(
        {
            "spacecraft.isp_s": 220.0,
            "burns": [
                {"name": "trim", "at": {"epoch_utc": "2027-03-21T12:00:00Z"},
                 "dv_rtn_km_s": [0.0, 0.0015, -0.0002]},
            ],
            "window.duration_s": 7200.0,
            "window.step_s": 60.0,
        }
    )  # fmt: skip


# --- the examples printed in CCSDS 502.0-B-2 (typed in from memory, tests/data/README.md) ---


def test_opm_figure_3_1():
    opm = parse_opm(FIG_3_1)
    assert (opm.version, opm.originator, opm.object_name, opm.object_id) == (
        "2.0",
        "JAXA",
        "GODZILLA 5",
        "1998-999A",
    )
    assert (opm.center_name, opm.ref_frame, opm.time_system) == ("EARTH", "ITRF-97", "UTC")
    assert opm.epoch == "1998-12-18T14:28:15.1172"
    assert opm.r_km == (6503.514, 1239.647, -717.49)
    assert opm.v_km_s == (-0.87316, 8.74042, -4.191076)
    assert opm.spacecraft == {"MASS": 3000.0, "SOLAR_RAD_AREA": 18.77, "SOLAR_RAD_COEFF": 1.0,
                              "DRAG_AREA": 18.77, "DRAG_COEFF": 2.5}  # fmt: skip
    # ITRF -> GCRF keeps the radius, and rotates the velocity into the inertial frame (the
    # Earth-rotation term omega x r adds ~0.47 km/s here: common practice)
    epoch, r, v = opm_state_gcrf(opm)
    assert abs(np.linalg.norm(r) - np.linalg.norm(opm.r_km)) < 1e-9
    assert 0.3 < abs(np.linalg.norm(v) - np.linalg.norm(opm.v_km_s)) < 0.6


def test_opm_figure_3_2_elements_agree_with_its_state():
    opm = parse_opm(FIG_3_2)
    assert opm.ref_frame == "TOD" and len(opm.maneuvers) == 2
    first, second = opm.maneuvers
    assert (first.duration_s, first.ref_frame, first.delta_mass_kg) == (132.6, "EME2000", -18.418)
    assert second.dv_km_s == (0.001015, -0.001873, 0.0) and second.ref_frame == "RTN"
    assert opm.spacecraft["MASS"] == 1913.0 and opm.keplerian["GM"] == 398600.4415
    # The message's Keplerian block describes its own state vector (CCSDS 502.0-B-2 Sec. 3.2.4):
    # our state_to_elements with its GM gives the printed a, e, i, RAAN, argp.
    el = state_to_elements(opm.r_km, opm.v_km_s, opm.keplerian["GM"])
    assert float(el.a_km) == pytest.approx(opm.keplerian["SEMI_MAJOR_AXIS"], abs=0.002)  # 2 m
    assert float(el.e) == pytest.approx(opm.keplerian["ECCENTRICITY"], abs=1e-7)
    for ours, key in ((el.i_deg, "INCLINATION"), (el.raan_deg, "RA_OF_ASC_NODE"),
                      (el.argp_deg, "ARG_OF_PERICENTER")):  # fmt: skip
        assert float(ours) == pytest.approx(opm.keplerian[key], abs=1e-4)  # deg


def test_opm_figure_3_2_becomes_a_case():
    with warnings.catch_warnings(record=True):
        warnings.simplefilter("always")
        imported = opm_case(FIG_3_2, file="w4.opm")
    case = imported.case
    assert case.spacecraft.mass_kg == 1913.0 and case.spacecraft.drag_coefficient == 2.3
    # the impulsive RTN maneuver is a burn; the finite EME2000 one is named, not dropped silently
    assert [b.dv_rtn_km_s for b in case.burns] == [[0.001015, -0.001873, 0.0]]
    assert case.burns[0].at.epoch_utc == "2000-06-05T18:59:21Z"
    assert any("132.6 s in EME2000" in w for w in imported.warnings)
    assert case.source.kind == "opm" and case.source.text == FIG_3_2
    assert case.source.file == "w4.opm"


def test_oem_example():
    oem = parse_oem(OEM_EXAMPLE)
    assert (oem.version, oem.originator, len(oem.segments)) == ("2.0", "NASA/JPL", 2)
    one, two = oem.segments
    assert one.metadata["CENTER_NAME"] == "MARS BARYCENTER"
    assert (
        one.metadata["INTERPOLATION"] == "HERMITE" and one.metadata["INTERPOLATION_DEGREE"] == "7"
    )
    assert len(one.epochs) == 4 and len(two.epochs) == 4
    assert list(one.r_km[0]) == [2789.619, -280.045, -1746.755]
    assert list(two.v_km_s[-1]) == [-3.53328, -2.88452, 0.88535]
    assert "TCM-3" in two.comments[0]
    with pytest.raises(InputError, match="only Earth-centred"):
        ephemeris_difference(oem, starter_case())


# --- round trips: export, import, the same doubles ------------------------------------------


def test_opm_round_trip_to_the_bit():
    case = _kestrel()
    text = opm_text(case, now=NOW)
    back = opm_case(text).case
    r0, v0 = case.state()
    r1, v1 = back.state()
    assert [x.hex() for x in np.concatenate([r0, v0])] == [
        x.hex() for x in np.concatenate([r1, v1])
    ]
    assert back.epoch_utc == case.epoch_utc
    assert back.spacecraft.mass_kg == case.spacecraft.mass_kg
    assert back.spacecraft.drag_area_m2 == case.spacecraft.drag_area_m2
    assert [(b.name, b.at.epoch_utc, b.dv_rtn_km_s) for b in back.burns] == [
        ("trim", "2027-03-21T12:00:00Z", [0.0, 0.0015, -0.0002])
    ]
    # header fields the standard requires (CCSDS 502.0-B-2 Tables 3-1, 3-2)
    opm = parse_opm(text)
    assert (opm.creation_date, opm.ref_frame, opm.time_system) == (
        "2027-03-01T12:00:00",
        "GCRF",
        "UTC",
    )
    # the rocket equation's mass change of the 1.51 m/s burn (Tsiolkovsky; Isp 220 s)
    dm = -48.0 * (1.0 - np.exp(-np.hypot(1.5, 0.2) / (220.0 * 9.80665)))
    assert opm.maneuvers[0].delta_mass_kg == pytest.approx(dm, rel=1e-12)


def test_oem_round_trip_to_the_bit():
    from orbitledger.analysis import case_trajectory

    case = _kestrel()
    oem = parse_oem(oem_text(case, now=NOW))
    seg = oem.segments[0]
    traj = case_trajectory(case)
    t = np.arange(0.0, 7200.0 + 1.0, 60.0)
    r, v = traj.gcrf(t)
    assert np.array_equal(seg.r_km, r) and np.array_equal(seg.v_km_s, v)  # every bit
    assert seg.epochs[0] == "2027-03-21T10:30:00.000000"
    assert seg.epochs[-1] == "2027-03-21T12:30:00.000000"
    for key in ("OBJECT_NAME", "OBJECT_ID", "CENTER_NAME", "REF_FRAME", "TIME_SYSTEM",
                "START_TIME", "STOP_TIME"):  # fmt: skip
        assert key in seg.metadata  # CCSDS 502.0-B-2 Table 5-3, required keywords
    # compared with the case itself: zero but for the microsecond rounding of the epochs
    diff = ephemeris_difference(oem, case)
    assert diff.max_distance_km < 0.01e-3  # 1 cm


def test_ephemeris_difference_figure_has_units():
    from orbitledger.figures.ephemeris_difference import ephemeris_difference_figure

    case = _kestrel()
    oem = parse_oem(oem_text(case.with_changes({"force_model.propagator": "j2-mean"}), now=NOW))
    diff = ephemeris_difference(oem, case)
    assert diff.max_distance_km > 0.1  # J2 against two-body over 2 h: reported, not judged
    fig = ephemeris_difference_figure(diff)
    assert fig.yaxis[0].axis_label in ("position difference (m)", "position difference (km)")
    assert fig.xaxis[0].axis_label == "time (UTC)"


def test_csv_headers_carry_units_and_values_read_back():
    import csv
    import io

    case = _kestrel()
    text, data = case_csv(case, "ephemeris")
    rows = list(csv.reader(io.StringIO(text)))
    assert rows[0][:4] == ["time_utc", "offset_s", "x_gcrf_km", "y_gcrf_km"]
    assert "vz_itrf_km_s" in rows[0]
    assert float(rows[1][2]) == data["columns"]["x_gcrf_km"][0]  # repr: the same double


# --- time systems and frames -----------------------------------------------------------------


def test_time_systems_to_utc():
    # IERS Bulletin C: TAI - UTC = 34 s from 2009-01-01 to 2012-06-30; GPS = TAI - 19 s
    assert ccsds_epoch_utc("2010-01-01T00:00:34", "TAI", 1) == "2010-01-01T00:00:00.000000000Z"
    assert ccsds_epoch_utc("2010-01-01T00:00:15", "GPS", 1) == "2010-01-01T00:00:00.000000000Z"
    assert ccsds_epoch_utc("2010-01-01T00:01:06.184", "TT", 1) == "2010-01-01T00:00:00.000000000Z"
    assert ccsds_epoch_utc("2010-032T06:00:00", "UTC", 1) == "2010-02-01T06:00:00Z"  # day 32


def test_eme2000_frame_bias_size():
    # IERS Conventions 2010, Eq. 5.33: the frame bias is dα0 = -14.6 mas, ξ0 = -16.617 mas,
    # η0 = -6.819 mas; a position 7000 km out moves by ~0.5-0.8 m.
    ts = time_scales("2027-03-21T10:30:00Z")
    for axis in np.eye(3) * 7000.0:
        r, _ = state_to_gcrf("EME2000", axis, np.zeros(3), ts)
        assert 0.2e-3 < np.linalg.norm(r - axis) < 0.8e-3


# --- bad input, named by line ----------------------------------------------------------------


def _replace(text: str, old: str, new: str) -> str:
    assert old in text
    return text.replace(old, new)


@pytest.mark.parametrize(
    ("text", "message"),
    [
        (_replace(FIG_3_1, "ORIGINATOR = JAXA\n", ""), "line 2: ORIGINATOR"),
        (_replace(FIG_3_1, "Z_DOT = -4.191076\n", ""), "line 15: Z_DOT"),
        (_replace(FIG_3_1, "REF_FRAME = ITRF-97", "REF_FRAME = J2001"), "line 8: REF_FRAME"),
        (_replace(FIG_3_1, "TIME_SYSTEM = UTC", "TIME_SYSTEM = LOCAL"), "line 9: TIME_SYSTEM"),
        (_replace(FIG_3_1, "X = 6503.514000", "X = 6503.514000 [m]"), "line 11: X = '[m]'"),
        (_replace(FIG_3_1, "Y = 1239.647000", "Y = 12x9"), "line 12: Y"),
        (_replace(FIG_3_1, "MASS = 3000.000000", "MASS = 3000\nMASS = 1"), "given twice"),
        (_replace(FIG_3_1, "DRAG_COEFF", "DRAG_COEF"), "line 21: DRAG_COEF"),
        ("COMMENT only\nOBJECT_NAME = X\n", "begins with CCSDS_OPM_VERS"),
    ],
)
def test_opm_bad_input_names_the_line(text, message):
    with pytest.raises(InputError) as err:
        parse_opm(text)
    assert message in str(err.value)


@pytest.mark.parametrize(
    ("old", "new", "message"),
    [
        ("1996-12-18T12:02:00.331  2776.033", "1996-12-18T12:00:30.331  2776.033",
         "line 23 = '1996-12-18T12:00:30.331': epochs must increase: not after line 22"),
        ("REF_FRAME = EME2000\nTIME_SYSTEM = UTC\nSTART_TIME = 1996-12-18",
         "REF_FRAME = EME2001\nTIME_SYSTEM = UTC\nSTART_TIME = 1996-12-18", "line 9: REF_FRAME"),
        ("TIME_SYSTEM = UTC\nSTART_TIME = 1996-12-18", "TIME_SYSTEM = UTX\nSTART_TIME = 1996-12-18",
         "line 10: TIME_SYSTEM"),
        ("OBJECT_ID = 1996-062A\nCENTER_NAME = MARS BARYCENTER\nREF_FRAME = EME2000\n"
         "TIME_SYSTEM = UTC\nSTART_TIME = 1996-12-18",
         "CENTER_NAME = MARS BARYCENTER\nREF_FRAME = EME2000\nTIME_SYSTEM = UTC\n"
         "START_TIME = 1996-12-18", "line 16: OBJECT_ID: required in the metadata block that starts at line 5"),
        ("2789.619 -280.045 -1746.755  4.73372", "2789.619 -280.045 4.73372", "line 21 = "),
        ("1996-12-18T12:00:00.331  2789.619", "1996-12-18T11:00:00.331  2789.619",
         "outside the segment's START_TIME (line 11)"),
    ],
)  # fmt: skip
def test_oem_bad_input_names_the_line(old, new, message):
    with pytest.raises(InputError) as err:
        parse_oem(_replace(OEM_EXAMPLE, old, new))
    assert message in str(err.value)
