"""UTC epochs as case files write them: ISO 8601 text, checked and normalised with ERFA.

A case writes every instant as ``YYYY-MM-DDTHH:MM:SS[.fff]Z`` (UTC, ISO 8601 / RFC 3339). The
text is parsed here, checked against the calendar and the leap-second table of ERFA
(``eraDtf2d``: a second of 60 is valid only in a leap second), and written back in one
normal form, so that two spellings of the same instant give the same case fingerprint.
"""

from __future__ import annotations

import warnings

import erfa

from ..kernel.timescales import ISO_DATE_TIME, zone_offset_minutes

__all__ = ["LAST_UTC_YEAR", "normalise_utc", "utc_to_jd", "utc_seconds_between"]

LAST_UTC_YEAR = 2099
"""The last year of an epoch or window start: ERFA's Earth ephemeris (eraEpv00, behind the
Sun's position) is valid 1900-2100 AD, and the leap-second table is extrapolated long before."""

_MAX_FRACTION_DIGITS = 12  # a picosecond: far below any case's need, and a bound on the text


def _fields(text: str) -> tuple[int, int, int, int, int, float, str]:
    """The calendar fields of a case's UTC text, read with the kernel's one ISO 8601 grammar
    (``kernel.timescales.ISO_DATE_TIME``); a case also needs the time of day and UTC itself."""
    if not isinstance(text, str):
        raise ValueError("must be a UTC time as ISO 8601 text, e.g. '2027-03-21T10:30:00Z'")
    match = ISO_DATE_TIME.match(text)
    fraction_digits = match["f"] if match else None
    bad_fraction = fraction_digits is not None and not (
        0 < len(fraction_digits) <= _MAX_FRACTION_DIGITS
    )
    if not match or match["h"] is None or bad_fraction:
        raise ValueError("not an ISO 8601 UTC time; write it like '2027-03-21T10:30:00Z'")
    if zone_offset_minutes(match["zone"]):
        raise ValueError("give the time in UTC (suffix Z), not with a zone offset")
    fraction = (fraction_digits or "").rstrip("0")
    seconds = int(match["s"] or 0)
    return (
        int(match["y"]),
        int(match["mo"]),
        int(match["d"]),
        int(match["h"]),
        int(match["mi"]),
        seconds + (float("0." + fraction) if fraction else 0.0),
        f"{seconds:02d}" + (f".{fraction}" if fraction else ""),
    )


def _dtf2d(y: int, mo: int, d: int, h: int, mi: int, s: float) -> tuple[float, float]:
    """ERFA's calendar check (eraDtf2d); returns the two-part UTC quasi Julian date."""
    if y < 1960:  # as the kernel's parse_utc: UTC with leap seconds begins in 1960
        raise ValueError("lies before 1960, where UTC is not defined")
    if y > LAST_UTC_YEAR:  # far beyond the leap-second table, which ERFA extrapolates
        raise ValueError(
            f"lies after {LAST_UTC_YEAR}: beyond the range of the time-scale and ephemeris "
            "tables (ERFA eraEpv00 is valid 1900-2100 AD; eraDat extrapolates UTC - TAI)"
        )
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", erfa.ErfaWarning)
        try:
            jd1, jd2 = erfa.dtf2d("UTC", y, mo, d, h, mi, s)
        except erfa.ErfaError as err:
            reason = str(err).split('"')[-2] if '"' in str(err) else str(err)
            raise ValueError(f"not a valid UTC date and time ({reason})") from None
    # "dubious year" (beyond the leap-second table) is left to the kernel, which records
    # the extrapolation of UTC - TAI where a computation uses it.
    if any("after end of day" in str(w.message) for w in caught):
        raise ValueError("a second of 60 exists only in a leap second (IERS), not on this day")
    return float(jd1), float(jd2)


def normalise_utc(text: str) -> str:
    """Check a UTC time and return it as ``YYYY-MM-DDTHH:MM:SS[.fff]Z`` (trailing zeros dropped).

    Raises ValueError with a plain-words reason for text that is not an ISO 8601 UTC time,
    a date that does not exist, a zone offset other than +00:00, or second 60 outside a leap
    second (ERFA eraDtf2d, IAU SOFA).
    """
    y, mo, d, h, mi, s, seconds_text = _fields(text)
    _dtf2d(y, mo, d, h, mi, s)
    return f"{y:04d}-{mo:02d}-{d:02d}T{h:02d}:{mi:02d}:{seconds_text}Z"


def utc_to_jd(text: str) -> tuple[float, float]:
    """Two-part Julian date (UTC, ERFA's quasi-JD convention for leap-second days) of a UTC text."""
    return _dtf2d(*_fields(text)[:6])


def utc_seconds_between(start: str, end: str) -> float:
    """UTC seconds from ``start`` to ``end`` (negative when ``end`` is earlier).

    Computed in TAI (ERFA eraUtctai), so a leap second in between counts as the second it is.
    """
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", erfa.ErfaWarning)  # dubious year: the kernel records it
        a1, a2 = erfa.utctai(*utc_to_jd(start))
        b1, b2 = erfa.utctai(*utc_to_jd(end))
    return float(((b1 - a1) + (b2 - a2)) * 86400.0)
