"""Time scales against IERS facts and a textbook worked example."""

from __future__ import annotations

import datetime as dt
import warnings

import erfa
import numpy as np
import pytest

from orbitledger.kernel import timescales
from orbitledger.kernel.errors import InputError
from orbitledger.kernel.timescales import (
    LeapSecondExtrapolationWarning,
    parse_utc,
    time_scales,
    utc_iso,
)

US = 1e-6 / 86_400.0  # one microsecond, in days


def _seconds(a1, a2, b1, b2) -> float:
    return float(((a1 - b1) + (a2 - b2)) * 86_400.0)


def test_tai_minus_utc_across_the_2016_leap_second() -> None:
    # IERS Bulletin C 52 (July 2016): a positive leap second at the end of 2016-12-31, after
    # which TAI - UTC = 37 s (36 s before). (On the leap day itself a UTC quasi Julian date
    # is not a uniform time scale, so the check uses the days either side.)
    before = time_scales("2016-12-30T12:00:00Z")
    after = time_scales("2017-01-01T12:00:00Z")
    assert _seconds(before.tai1, before.tai2, before.utc1, before.utc2) == pytest.approx(
        36.0, abs=1e-6
    )
    assert _seconds(after.tai1, after.tai2, after.utc1, after.utc2) == pytest.approx(37.0, abs=1e-6)
    # The leap second itself is a valid label, and offsets in SI seconds step through it.
    steps = time_scales("2016-12-31T23:59:59Z", offset_s=np.arange(3.0))
    assert list(utc_iso(steps.utc1, steps.utc2, 0)) == [
        "2016-12-31T23:59:59Z",
        "2016-12-31T23:59:60Z",
        "2017-01-01T00:00:00Z",
    ]


@pytest.mark.parametrize(
    ("start", "holds_leap_second"),
    [
        ("2027-03-21T10:30:00Z", False),
        ("2016-12-31T00:00:10Z", True),
        ("2016-12-30T23:59:55Z", False),
        ("1971-12-31T12:00:00Z", False),
    ],
)
def test_window_steps_match_erfa_epoch_by_epoch(start: str, holds_leap_second: bool) -> None:
    # A day at 10 s steps: UTC and UT1 equal ERFA's own conversion of each epoch (taiutc,
    # utcut1: the reference) to 1 ns, whether the window holds no leap second (one TAI - UTC
    # for the whole window), the 2016-12-31 leap second (IERS Bulletin C 52) or only part of
    # its 86 401 s day, or the switch to whole-second UTC on 1972-01-01 (IERS; TAI - UTC =
    # 10 s from then on).
    offsets = np.arange(0.0, 86_401.0, 10.0)
    ts = time_scales(start, offset_s=offsets, dut1_s=0.3)
    u1, u2 = erfa.taiutc(ts.tai1, ts.tai2)
    b1, b2 = erfa.utcut1(u1, u2, 0.3)
    ns = 1e-9 / 86_400.0
    assert np.max(np.abs((ts.utc1 - u1) + (ts.utc2 - u2))) < ns
    assert np.max(np.abs((ts.ut11 - b1) + (ts.ut12 - b2))) < ns
    labels = utc_iso(ts.utc1, ts.utc2, 0)
    assert ("2016-12-31T23:59:60Z" in set(labels)) == holds_leap_second


def test_tt_minus_tai_and_dut1() -> None:
    # TT - TAI = 32.184 s exactly (IAU 1991 Resolution A4; IERS Conventions 2010, Ch. 10).
    ts = time_scales("2010-06-01T00:00:00Z", dut1_s=-0.25)
    assert _seconds(ts.tt1, ts.tt2, ts.tai1, ts.tai2) == pytest.approx(32.184, abs=1e-6)
    assert _seconds(ts.ut11, ts.ut12, ts.utc1, ts.utc2) == pytest.approx(-0.25, abs=1e-6)


def test_vallado_example_3_7_time_quantities() -> None:
    # Vallado, Fundamentals of Astrodynamics and Applications, 4th ed. (2013), Example 3-7:
    # 2004-05-14 16:43:00 UTC, dUT1 = -0.463326 s, TAI - UTC = 32 s give
    # JD_TT = 2453140.197270648 and T_TT = 0.043674121031 centuries (values from memory).
    ts = time_scales("2004-05-14T16:43:00Z", dut1_s=-0.463326)
    jd_tt = ts.tt1 + ts.tt2
    assert jd_tt == pytest.approx(2453140.197270648, abs=2 * US)
    assert (jd_tt - 2451545.0) / 36525.0 == pytest.approx(0.043674121031, abs=1e-11)
    assert _seconds(ts.ut11, ts.ut12, ts.utc1, ts.utc2) == pytest.approx(-0.463326, abs=1e-6)


def test_epoch_forms_agree() -> None:
    ref = parse_utc("2027-03-21T10:30:00Z")
    forms = [
        "2027-03-21T10:30:00",
        "2027-03-21 10:30:00 UTC",
        "2027-03-21T12:30:00+02:00",
        dt.datetime(2027, 3, 21, 10, 30),
        dt.datetime(2027, 3, 21, 5, 30, tzinfo=dt.timezone(dt.timedelta(hours=-5))),
        np.datetime64("2027-03-21T10:30:00"),
        (ref[0], ref[1]),
    ]
    for form in forms:
        jd1, jd2 = parse_utc(form)
        assert abs((jd1 - ref[0]) + (jd2 - ref[1])) < US, form
    many = parse_utc(["2027-03-21T10:30:00Z", "2027-03-22T10:30:00Z"])
    assert many[0].shape == (2,)
    assert utc_iso(*ref) == "2027-03-21T10:30:00.000Z"


@pytest.mark.parametrize(
    "bad", ["21/03/2027", "2027-02-30T00:00:00Z", "2027-03-21T24:30:00Z", "1955-01-01"]
)
def test_bad_epochs_are_refused_with_the_field(bad: str) -> None:
    with pytest.raises(InputError, match="window.start_utc"):
        time_scales(bad, field="window.start_utc")


def test_extrapolated_utc_tai_is_flagged_and_warned_once(monkeypatch: pytest.MonkeyPatch) -> None:
    # Leap seconds are announced about six months ahead (IERS Bulletin C; common practice):
    # far-future epochs must be marked, once per process, and recorded in the result.
    monkeypatch.setattr(timescales._WarnOnce, "issued", False)
    assert time_scales("2020-01-01T00:00:00Z").utc_tai_extrapolated is False
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        first = time_scales("2040-01-01T00:00:00Z")
        second = time_scales("2041-01-01T00:00:00Z", offset_s=np.arange(5.0))
    assert first.utc_tai_extrapolated and second.utc_tai_extrapolated
    ours = [w for w in caught if issubclass(w.category, LeapSecondExtrapolationWarning)]
    assert len(ours) == 1
    assert not [w for w in caught if "dubious" in str(w.message)]


def test_dut1_out_of_range_is_refused() -> None:
    with pytest.raises(InputError, match="dut1_s"):
        time_scales("2020-01-01T00:00:00Z", dut1_s=1.5)
