"""What CCSDS Orbit Data Messages share: KVN lines, epochs, frames and time systems.

CCSDS 502.0-B-2 (Orbit Data Messages, Blue Book, 2009; issue 3 of 2023 keeps the KVN layout)
writes an OPM or OEM in "keyword = value notation" (Sec. 7.4, 7.5): one keyword per line,
``KEYWORD = value [unit]``, ``COMMENT`` lines, blank lines ignored, keywords in upper case;
numbers in fixed or floating-point notation; epochs as ``YYYY-MM-DDThh:mm:ss[.d...][Z]`` or
``YYYY-DDDThh:mm:ss[.d...][Z]`` (Sec. 7.5.10). ``REF_FRAME`` and ``TIME_SYSTEM`` take the values
of Annex A (the SANA registry); ``CENTER_NAME`` a natural body or barycentre.

This module reads those lines (each kept with its line number, for messages that point at the
line), converts epochs of the supported time systems to UTC and states of the supported Earth
frames to GCRF, with the kernel's ERFA-based frames.
"""

from __future__ import annotations

import datetime as _dt
import re
import warnings
from dataclasses import dataclass

import erfa
import numpy as np

from ..kernel.errors import InputError
from ..kernel.frames import itrf_to_gcrf_state
from ..kernel.teme import teme_to_gcrf
from ..kernel.timescales import TimeScales, time_scales, utc_iso

__all__ = [
    "CCSDS_FRAMES",
    "CCSDS_TIME_SYSTEMS",
    "KvnLine",
    "ccsds_epoch_utc",
    "ccsds_time",
    "creation_time",
    "kvn_lines",
    "kvn_number",
    "message_lines",
    "number_text",
    "state_to_gcrf",
]

# REF_FRAME values of CCSDS 502.0-B-2 Annex A (A2), with the ITRF realisations and ICRF
# named in the SANA registry since.
CCSDS_FRAMES = (
    "EME2000", "GCRF", "GRC", "ICRF", "ITRF2000", "ITRF-93", "ITRF-97", "ITRF2005",
    "ITRF2008", "ITRF2014", "ITRF2020", "MCI", "TDR", "TEME", "TOD",
)  # fmt: skip
# TIME_SYSTEM values of CCSDS 502.0-B-2 Annex A (A2).
CCSDS_TIME_SYSTEMS = (
    "GMST", "GPS", "MET", "MRT", "SCLK", "TAI", "TCB", "TDB", "TCG", "TT", "UT1", "UTC",
)  # fmt: skip

SUPPORTED_FRAMES = ("GCRF", "ICRF", "EME2000", "TEME", "TOD", "ITRF2000", "ITRF-93", "ITRF-97",
                    "ITRF2005", "ITRF2008", "ITRF2014", "ITRF2020")  # fmt: skip
SUPPORTED_TIME_SYSTEMS = ("UTC", "TAI", "TT", "GPS")

GPS_MINUS_TAI_S = -19.0  # GPS time = TAI - 19 s, fixed since 1980 (IS-GPS-200, Sec. 3.3.4)


@dataclass(frozen=True)
class KvnLine:
    """One meaningful line: ``keyword`` and ``value`` (unit stripped) or a raw ``text`` line."""

    number: int
    keyword: str
    value: str
    unit: str
    text: str


_KVN = re.compile(r"^\s*([A-Z][A-Z0-9_]*)\s*=\s*(.*?)\s*$")
_UNIT = re.compile(r"^(.*?)\s*\[([^\]]*)\]$")


def kvn_lines(text: str) -> list[KvnLine]:
    """The non-blank lines of a KVN message, numbered from 1.

    ``KEY = value [unit]`` gives keyword, value and unit; ``COMMENT text`` gives keyword
    ``COMMENT`` and the text as value; a line without ``=`` (``META_START``, an OEM data line)
    gives keyword "" and its text.
    """
    out = []
    for number, raw in enumerate(text.replace("\r\n", "\n").split("\n"), start=1):
        line = raw.strip()
        if not line:
            continue
        if line.startswith("COMMENT"):
            out.append(KvnLine(number, "COMMENT", line[7:].strip(), "", line))
            continue
        m = _KVN.match(line)
        if m is None:
            out.append(KvnLine(number, "", "", "", line))
            continue
        value, unit = m.group(2), ""
        u = _UNIT.match(value)
        if u is not None:
            value, unit = u.group(1), u.group(2).strip()
        out.append(KvnLine(number, m.group(1), value, unit, line))
    return out


def message_lines(text: str, version_keyword: str, reason: str) -> list[KvnLine]:
    """``kvn_lines`` of a message whose first line (after comments) must be its version
    keyword (``CCSDS_OPM_VERS``, ``CCSDS_OEM_VERS``); ``reason`` says so when it is not."""
    lines = kvn_lines(text)
    first = next((ln for ln in lines if ln.keyword != "COMMENT"), None)
    if first is None or first.keyword != version_keyword:
        raise InputError(where(first.number if first else 1), first.text if first else "", reason)
    return lines


def where(line: KvnLine | int, keyword: str = "") -> str:
    """``line 12: EPOCH``: the field part of a message about a line."""
    number = line if isinstance(line, int) else line.number
    key = keyword or ("" if isinstance(line, int) else line.keyword)
    return f"line {number}" + (f": {key}" if key else "")


def kvn_number(line: KvnLine, value: str | None = None) -> float:
    """The value of a line as a finite float, or an InputError naming the line."""
    text = line.value if value is None else value
    try:
        x = float(text)
    except ValueError:
        raise InputError(where(line), text, "is not a number") from None
    if not np.isfinite(x):
        raise InputError(where(line), text, "must be a finite number")
    return x


_EPOCH = re.compile(
    r"^(\d{4})-(?:(\d{2})-(\d{2})|(\d{3}))T(\d{2}):(\d{2}):(\d{2}(?:\.\d*)?)Z?$", re.IGNORECASE
)


def ccsds_epoch_utc(text: str, time_system: str, line: KvnLine | int, keyword: str = "") -> str:
    """A CCSDS epoch in ``time_system`` as a UTC ISO 8601 string (Z).

    UTC text is kept digit for digit (only the day-of-year form is turned into a date); TAI,
    TT and GPS epochs are converted with ERFA (``dtf2d``, ``tttai``, ``taiutc``) and written to
    the nanosecond. Other time systems are refused.
    """
    m = _EPOCH.match(text.strip())
    if m is None:
        raise InputError(
            where(line, keyword),
            text,
            "is not a CCSDS epoch (YYYY-MM-DDThh:mm:ss[.d] or YYYY-DDDThh:mm:ss[.d])",
        )
    year, month, day, doy, hh, mm, ss = m.groups()
    if doy is not None:
        jd1, jd2 = erfa.cal2jd(int(year), 1, 1)
        _, month_i, day_i, _ = erfa.jd2cal(jd1, jd2 + int(doy) - 1)
        month, day = f"{int(month_i):02d}", f"{int(day_i):02d}"
    iso = f"{year}-{month}-{day}T{hh}:{mm}:{ss}Z"
    if time_system == "UTC":
        return iso
    if time_system not in SUPPORTED_TIME_SYSTEMS:
        raise InputError(
            where(line, "TIME_SYSTEM"),
            time_system,
            f"is not supported here; use one of {', '.join(SUPPORTED_TIME_SYSTEMS)}",
        )
    scale = "TT" if time_system == "TT" else "TAI"
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", erfa.ErfaWarning)
            t1, t2 = erfa.dtf2d(scale, int(year), int(month), int(day), int(hh), int(mm), float(ss))
            if time_system == "GPS":
                t2 = t2 - GPS_MINUS_TAI_S / 86_400.0
            if time_system == "TT":
                t1, t2 = erfa.tttai(t1, t2)
            u1, u2 = erfa.taiutc(t1, t2)
    except erfa.ErfaError as err:
        raise InputError(
            where(line, keyword), text, f"is not a valid date and time ({err})"
        ) from None
    return str(utc_iso(u1, u2, decimals=9))


def check_frame(frame: str, line: KvnLine) -> str:
    """Refuse a REF_FRAME that is not a CCSDS frame name (Annex A)."""
    if frame not in CCSDS_FRAMES:
        raise InputError(
            where(line), frame, f"is not a CCSDS reference frame; known: {', '.join(CCSDS_FRAMES)}"
        )
    return frame


def check_time_system(system: str, line: KvnLine) -> str:
    """Refuse a TIME_SYSTEM that is not a CCSDS time system name (Annex A)."""
    if system not in CCSDS_TIME_SYSTEMS:
        raise InputError(
            where(line),
            system,
            f"is not a CCSDS time system; known: {', '.join(CCSDS_TIME_SYSTEMS)}",
        )
    return system


def _frame_bias_matrix() -> np.ndarray:
    """GCRS -> mean equator and equinox of J2000.0 (the frame bias; ERFA bp06, IERS 2010 Eq.
    5.37)."""
    rb, _, _ = erfa.bp06(2451545.0, 0.0)
    return np.asarray(rb)


def state_to_gcrf(
    frame: str,
    r_km: np.ndarray,
    v_km_s: np.ndarray,
    epochs: TimeScales,
    frame_epochs: TimeScales | None = None,
    line: KvnLine | int = 0,
) -> tuple[np.ndarray, np.ndarray]:
    """Position (km) and velocity (km/s), (..., 3), in a CCSDS Earth frame, to GCRF.

    GCRF and ICRF (geocentric, ICRS axes): unchanged. EME2000: the frame bias (ERFA ``bp06``).
    TOD: true equator and equinox of date (ERFA ``pnm06a``, IAU 2006/2000A, at
    ``frame_epochs``, default the state epochs). TEME: ``kernel.teme``. ITRF realisations: the
    kernel's ITRF -> GCRF (IERS 2010; EOP taken as zero: the message states none; realisations
    differ by centimetres). Other frames are refused.
    """
    r, v = np.asarray(r_km, dtype=float), np.asarray(v_km_s, dtype=float)
    at = epochs if frame_epochs is None else frame_epochs
    if frame in ("GCRF", "ICRF"):
        return r, v
    if frame == "EME2000":
        rb = _frame_bias_matrix()
        return r @ rb, v @ rb  # r_GCRF = B^T r_EME2000
    if frame == "TOD":
        m = erfa.pnm06a(at.tt1, at.tt2)
        return (
            np.einsum("...ji,...j->...i", m, r),
            np.einsum("...ji,...j->...i", m, v),
        )
    if frame == "TEME":
        r_g, v_g = teme_to_gcrf(r, v, at)
        return r_g, v_g  # type: ignore[return-value]
    if frame.startswith("ITRF"):
        r_g, v_g = itrf_to_gcrf_state(r, v, epochs)
        return r_g, v_g  # type: ignore[return-value]
    raise InputError(
        where(line, "REF_FRAME"),
        frame,
        f"cannot be converted to GCRF here; use one of {', '.join(SUPPORTED_FRAMES)}",
    )


def utc_scales(epoch_utc: str | list[str], field: str = "EPOCH") -> TimeScales:
    """TimeScales of UTC ISO epochs (a thin alias, for the message modules)."""
    return time_scales(epoch_utc, field=field)


def number_text(x: float) -> str:
    """A float as the shortest text that reads back as the same double (``repr``; exponent as
    ``E``, CCSDS 502.0-B-2 Sec. 7.5.6)."""
    return repr(float(x)).upper()


def ccsds_time(epoch_utc: str) -> str:
    """A case's UTC text without its Z (CCSDS 502.0-B-2 Sec. 7.5.10 allows both)."""
    return epoch_utc.rstrip("Zz")


def creation_time(now: _dt.datetime | None = None) -> str:
    """CREATION_DATE text: now (or ``now``), UTC, to the second."""
    t = (now or _dt.datetime.now(_dt.timezone.utc)).astimezone(_dt.timezone.utc)
    return t.strftime("%Y-%m-%dT%H:%M:%S")
