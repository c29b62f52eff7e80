"""Time scales UTC, TAI, TT and UT1 from ISO 8601 epochs, as two-part Julian dates (via ERFA).

Every conversion is an ERFA routine (the IAU SOFA library; pyerfa): ``dtf2d`` parses a UTC
calendar date (leap-second days included), ``utctai``/``taiutc`` apply the leap-second table
of ``dat``, ``taitt`` adds the fixed TT - TAI = 32.184 s, and ``utcut1`` adds the user's
dUT1 = UT1 - UTC (from IERS Bulletin A or B; |dUT1| < 0.9 s by the definition of UTC).

Two-part Julian dates keep sub-microsecond resolution: the first part holds the day, the
second part the fraction, and offsets in SI seconds are added to the second part in TAI (so
that a window spanning a leap second keeps uniform steps).

UTC - TAI is known only up to the validity date of the leap-second table in use. Beyond it the
last value is extrapolated (assumed constant): ``TimeScales.utc_tai_extrapolated`` says so for
each result, and one ``LeapSecondExtrapolationWarning`` per process says so once.
"""

from __future__ import annotations

import datetime as _dt
import re
import warnings
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any, Union

import erfa
import numpy as np

from .errors import InputError

__all__ = [
    "EpochLike",
    "LeapSecondExtrapolationWarning",
    "TimeScales",
    "leap_seconds_known_until_utc",
    "parse_utc",
    "time_scales",
    "utc_iso",
]

EpochLike = Union[str, _dt.datetime, np.datetime64, Sequence[Any], np.ndarray, tuple, "TimeScales"]

# IERS Bulletin C 72 (July 2026): no leap second at the end of December 2026, so UTC - TAI is
# announced until 2027-06-28, the expiry of the IERS Leap_Second.dat that goes with it (as
# shipped in astropy-iers-data 0.2026.11.2). A newer table loaded into ERFA wins; an older
# one (pyerfa's built-in table expires 2017-06-30) never shortens this date, so a result does
# not depend on whether another library loaded its table first.
_ANNOUNCED_UNTIL = _dt.date(2027, 6, 28)

# The one ISO 8601 date-time grammar of the package (the case files' epochs go through it too,
# orbitledger.case.utc, which then refuses zone offsets): a date, optionally a time to the
# minute or second with a decimal fraction, and a zone (Z, UTC or +HH:MM / +HHMM).
ISO_DATE_TIME = re.compile(
    r"^\s*(?P<y>\d{4})-(?P<mo>\d{2})-(?P<d>\d{2})"
    r"(?:[T ](?P<h>\d{2}):(?P<mi>\d{2})(?::(?P<s>\d{2})(?P<dot>\.(?P<f>\d*))?)?)?"
    r"\s*(?P<zone>Z|UTC|[+-]\d{2}:?\d{2})?\s*$",
    re.IGNORECASE,
)


def zone_offset_minutes(zone: str | None) -> int:
    """Minutes east of UTC of an ISO 8601 zone of :data:`ISO_DATE_TIME` (0 for none, Z, UTC)."""
    if not zone or zone.upper() in ("Z", "UTC"):
        return 0
    sign = 1 if zone[0] == "+" else -1
    digits = zone[1:].replace(":", "")
    return sign * (int(digits[:2]) * 60 + int(digits[2:]))


class LeapSecondExtrapolationWarning(UserWarning):
    """UTC - TAI was extrapolated beyond the leap-second table (issued once per process)."""


@dataclass(frozen=True)
class TimeScales:
    """One or many epochs in four time scales, each a two-part Julian date (arrays broadcast).

    utc1, utc2: UTC as ERFA's quasi Julian date (days of 86 399, 86 400 or 86 401 s)
    tai1, tai2, tt1, tt2, ut11, ut12: TAI, TT and UT1 Julian dates
    dut1_s: UT1 - UTC used, s (an array of one value per epoch when looked up in a table,
    ``earth_orientation.time_scales_with_table``)
    utc_tai_extrapolated: True when any epoch lies beyond the leap-second table's validity
    """

    utc1: np.ndarray
    utc2: np.ndarray
    tai1: np.ndarray
    tai2: np.ndarray
    tt1: np.ndarray
    tt2: np.ndarray
    ut11: np.ndarray
    ut12: np.ndarray
    dut1_s: float | np.ndarray
    utc_tai_extrapolated: bool

    @property
    def shape(self) -> tuple[int, ...]:
        return np.shape(self.tt2)

    def seconds_since(self, other: TimeScales) -> np.ndarray:
        """Elapsed SI seconds (in TAI) from ``other`` to these epochs."""
        return ((self.tai1 - other.tai1) + (self.tai2 - other.tai2)) * 86_400.0


def _parse_one(text: str, field: str) -> tuple[int, int, int, int, int, float]:
    m = ISO_DATE_TIME.match(text)
    if not m:
        raise InputError(field, text, "is not an ISO 8601 date-time (e.g. 2027-03-21T10:30:00Z)")
    year, month, day = int(m["y"]), int(m["mo"]), int(m["d"])
    hour, minute = int(m["h"] or 0), int(m["mi"] or 0)
    sec = float((m["s"] or "0") + (m["dot"] or ""))
    offset_min = zone_offset_minutes(m["zone"])
    if offset_min:
        base = _dt.datetime(year, month, day, hour, minute) - _dt.timedelta(minutes=offset_min)
        year, month, day, hour, minute = base.year, base.month, base.day, base.hour, base.minute
    return year, month, day, hour, minute, sec


def _from_datetime(t: _dt.datetime) -> tuple[int, int, int, int, int, float]:
    if t.tzinfo is not None:  # naive datetimes are taken as UTC
        t = t.astimezone(_dt.timezone.utc)
    return t.year, t.month, t.day, t.hour, t.minute, t.second + t.microsecond * 1e-6


def _calendar_fields(epoch: Any, field: str) -> tuple[int, int, int, int, int, float]:
    if isinstance(epoch, str):
        return _parse_one(epoch, field)
    if isinstance(epoch, _dt.datetime):
        return _from_datetime(epoch)
    if isinstance(epoch, np.datetime64):
        us = epoch.astype("datetime64[us]").astype(_dt.datetime)
        return _from_datetime(us)
    raise InputError(field, epoch, "is not an epoch (ISO 8601 string, datetime or JD pair)")


def _is_jd_pair(epoch: Any) -> bool:
    if not (isinstance(epoch, tuple) and len(epoch) == 2):
        return False
    return all(np.issubdtype(np.asarray(p).dtype, np.number) for p in epoch)


def parse_utc(epoch_utc: EpochLike, field: str = "epoch_utc") -> tuple[np.ndarray, np.ndarray]:
    """UTC two-part quasi Julian date of an epoch or of many epochs.

    Given an ISO 8601 string (``Z``, ``UTC`` or a numeric offset; no zone means UTC; seconds may
    read 60 during a leap second), a ``datetime`` (naive = UTC), a ``numpy.datetime64``, a
    sequence or array of these, or a tuple ``(jd1, jd2)`` of UTC quasi Julian dates (passed
    through). Dates before 1960 (no UTC) are refused. ERFA ``dtf2d``.
    """
    if isinstance(epoch_utc, TimeScales):
        return epoch_utc.utc1, epoch_utc.utc2
    if _is_jd_pair(epoch_utc):
        pair: tuple[Any, Any] = epoch_utc  # type: ignore[assignment]
        jd1, jd2 = np.broadcast_arrays(np.asarray(pair[0], float), np.asarray(pair[1], float))
        return jd1, jd2
    if isinstance(epoch_utc, (str, _dt.datetime, np.datetime64)):
        parts = [_calendar_fields(epoch_utc, field)]
        shape: tuple[int, ...] = ()
    else:
        flat = np.asarray(epoch_utc, dtype=object)
        shape = flat.shape
        parts = [_calendar_fields(e, f"{field}[{k}]") for k, e in enumerate(flat.ravel())]
    fields = np.array(parts, dtype=float).reshape(*shape, 6) if parts else np.zeros((0, 6))
    if np.any(fields[..., 0] < 1960):
        raise InputError(field, epoch_utc, "lies before 1960, where UTC is not defined")
    cols = [fields[..., k] for k in range(6)]
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", erfa.ErfaWarning)  # dubious year: handled below
            jd1, jd2 = erfa.dtf2d("UTC", *(c.astype(int) for c in cols[:5]), cols[5])
    except erfa.ErfaError as err:
        raise InputError(field, epoch_utc, f"is not a valid calendar date-time ({err})") from None
    return np.asarray(jd1), np.asarray(jd2)


def leap_seconds_known_until_utc() -> _dt.date:
    """Last date to which UTC - TAI is known: the later of ERFA's table expiry and the latest
    announcement this module cites (IERS Bulletin C 72)."""
    expires = erfa.leap_seconds.expires
    table_date = expires.date() if isinstance(expires, _dt.datetime) else _ANNOUNCED_UNTIL
    return max(table_date, _ANNOUNCED_UNTIL)


class _WarnOnce:
    """Remembers whether the extrapolation warning was issued (the kernel's one bit of state)."""

    issued = False


def _check_extrapolation(utc1: np.ndarray, utc2: np.ndarray) -> bool:
    until = leap_seconds_known_until_utc()
    jd_until = sum(erfa.cal2jd(until.year, until.month, until.day))
    extrapolated = bool(np.any((utc1 - jd_until) + utc2 > 0.0))
    if extrapolated and not _WarnOnce.issued:
        _WarnOnce.issued = True
        warnings.warn(
            f"UTC - TAI is extrapolated after {until.isoformat()} (the leap-second table's "
            "validity): the last value is assumed; results record this",
            LeapSecondExtrapolationWarning,
            stacklevel=3,
        )
    return extrapolated


def _ends(jd1: np.ndarray, jd2: np.ndarray) -> np.ndarray:
    """Indices (into the flattened arrays) of the earliest and the latest of the epochs."""
    jd = np.ravel(jd1 + jd2)
    if jd.size == 0:
        return np.zeros(0, dtype=int)
    return np.array([int(np.argmin(jd)), int(np.argmax(jd))])


def _constant_tai_utc_s(end1: np.ndarray, end2: np.ndarray) -> float | None:
    """TAI - UTC, s, when it is one value over every UTC day from the first to the last of the
    epochs whose UTC quasi Julian dates ``end1 + end2`` are the earliest and the latest; None
    when it may change in between (or there are no epochs).

    From 1972 TAI - UTC changes only by whole leap seconds at the end of a UTC day and never
    decreases (IERS Bulletin C; ERFA ``dat``), so equal values at 0 h of the first day and at
    0 h of the day after the last mean no leap second falls inside, and no day of the span is
    a 86 401 s day. Before 1972 it drifted within the day: None, so each epoch is converted
    by ERFA itself. Past the table's validity ``dat`` keeps its last value, as it does epoch
    by epoch (the extrapolation flag is set from the epochs in any case).
    """
    end1, end2 = np.ravel(end1), np.ravel(end2)
    if end1.size == 0:
        return None
    iy, im, iday, _ = erfa.jd2cal(end1, end2)
    if int(iy[0]) < 1972:
        return None
    first = erfa.dat(iy[0], im[0], iday[0], 0.0)
    day1, day2 = erfa.cal2jd(iy[-1], im[-1], iday[-1])
    ny, nm, nd, _ = erfa.jd2cal(day1, day2 + 1.0)
    after_last = erfa.dat(ny, nm, nd, 0.0)
    return float(first) if first == after_last else None


def time_scales(
    epoch_utc: EpochLike,
    *,
    offset_s: Any = 0.0,
    dut1_s: float = 0.0,
    field: str = "epoch_utc",
) -> TimeScales:
    """UTC, TAI, TT and UT1 of ``epoch_utc`` plus ``offset_s`` elapsed SI seconds (broadcast).

    Given an epoch or epochs (see ``parse_utc``), optional offsets in s (e.g. a window's steps:
    one start epoch and a million offsets cost one parse), and dUT1 = UT1 - UTC in s (|dUT1| <=
    1 s). Returns ``TimeScales``. ERFA ``utctai``, ``taiutc``, ``taitt``, ``utcut1``.
    """
    if not np.isfinite(dut1_s) or abs(dut1_s) > 1.0:
        raise InputError("earth_orientation.dut1_s", dut1_s, "must be a UT1 - UTC within +-1 s")
    offset = np.asarray(offset_s, dtype=float)
    if not np.all(np.isfinite(offset)):
        raise InputError("offset_s", offset_s, "must be finite seconds")
    utc1, utc2 = parse_utc(epoch_utc, field)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", erfa.ErfaWarning)  # dubious year: reported once, below
        tai1, tai2 = erfa.utctai(utc1, utc2)
        if np.any(offset != 0.0):
            tai1, tai2 = np.broadcast_arrays(tai1, tai2 + offset / 86_400.0)
            ends = _ends(np.asarray(tai1, dtype=float), np.asarray(tai2, dtype=float))
            tai_utc_s = _constant_tai_utc_s(
                *erfa.taiutc(np.ravel(tai1)[ends], np.ravel(tai2)[ends])
            )
            if tai_utc_s is None:  # a leap second (or pre-1972 UTC) inside: epoch by epoch
                utc1, utc2 = erfa.taiutc(tai1, tai2)
            else:
                utc1, utc2 = tai1, tai2 - tai_utc_s / 86_400.0
        else:
            ends = _ends(np.asarray(utc1, dtype=float), np.asarray(utc2, dtype=float))
            tai_utc_s = _constant_tai_utc_s(np.ravel(utc1)[ends], np.ravel(utc2)[ends])
        tt1, tt2 = erfa.taitt(tai1, tai2)
        if tai_utc_s is None:
            ut11, ut12 = erfa.utcut1(utc1, utc2, dut1_s)
        else:  # UT1 = TAI + (dUT1 - (TAI - UTC)), as ERFA utcut1 -> taiut1 does
            ut11, ut12 = np.broadcast_arrays(tai1, tai2 + (dut1_s - tai_utc_s) / 86_400.0)
    extrapolated = _check_extrapolation(np.asarray(utc1), np.asarray(utc2))
    u1, u2, a1, a2, t1, t2, b1, b2 = (
        np.asarray(x, dtype=float) for x in (utc1, utc2, tai1, tai2, tt1, tt2, ut11, ut12)
    )
    return TimeScales(u1, u2, a1, a2, t1, t2, b1, b2, float(dut1_s), extrapolated)


def utc_iso(utc1: Any, utc2: Any, decimals: int = 3) -> np.ndarray | str:
    """ISO 8601 UTC strings (``2027-03-21T10:30:00.000Z``) of UTC quasi Julian dates.

    ERFA ``d2dtf`` (leap seconds print as second 60). Returns a str for one epoch, else an
    array of str with the epochs' shape.
    """
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", erfa.ErfaWarning)
        iy, im, iday, ihmsf = erfa.d2dtf("UTC", decimals, utc1, utc2)
    iy, im, iday = np.atleast_1d(iy), np.atleast_1d(im), np.atleast_1d(iday)
    hmsf = np.atleast_1d(ihmsf)
    text = [
        f"{y:04d}-{mo:02d}-{d:02d}T{t['h']:02d}:{t['m']:02d}:{t['s']:02d}"
        + (f".{t['f']:0{decimals}d}" if decimals > 0 else "")
        + "Z"
        for y, mo, d, t in zip(iy.ravel(), im.ravel(), iday.ravel(), hmsf.ravel(), strict=True)
    ]
    out = np.array(text, dtype=object).reshape(np.shape(np.asarray(utc2) + np.asarray(utc1)))
    return str(out.item()) if out.ndim == 0 else out
