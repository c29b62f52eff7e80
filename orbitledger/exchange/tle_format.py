"""The two-line element format: fixed columns, checksums, ranges (no propagation here).

Each line has 69 columns (Hoots & Roehrich 1980, Spacetrack Report No. 3, Sec. 12; Vallado,
Crawford, Hujsak & Kelso 2006, "Revisiting Spacetrack Report #3", AIAA 2006-6753); column 69
is a modulo-10 checksum of columns 1-68 (digits count their value, a minus sign counts 1,
everything else 0). ``parse_tle`` checks the layout, each field and the checksums, and names
the line and columns of the first problem. ``exchange.tle`` propagates what it returns.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import erfa

from ..kernel.errors import InputError
from ..kernel.timescales import utc_iso

__all__ = ["TwoLineElements", "format_tle", "parse_tle", "tle_checksum", "tle_epoch_field"]


# (name, first column, last column) of each field, 1-based inclusive, per line.
_LINE1 = (
    ("line number", 1, 1),
    ("catalog number", 3, 7),
    ("classification", 8, 8),
    ("international designator", 10, 17),
    ("epoch year", 19, 20),
    ("epoch day", 21, 32),
    ("first derivative of mean motion", 34, 43),
    ("second derivative of mean motion", 45, 52),
    ("BSTAR drag term", 54, 61),
    ("ephemeris type", 63, 63),
    ("element set number", 65, 68),
    ("checksum", 69, 69),
)
_LINE2 = (
    ("line number", 1, 1),
    ("catalog number", 3, 7),
    ("inclination", 9, 16),
    ("right ascension of the ascending node", 18, 25),
    ("eccentricity", 27, 33),
    ("argument of perigee", 35, 42),
    ("mean anomaly", 44, 51),
    ("mean motion", 53, 63),
    ("revolution number at epoch", 64, 68),
    ("checksum", 69, 69),
)
_BLANKS = {1: (2, 9, 18, 33, 44, 53, 62, 64), 2: (2, 8, 17, 26, 34, 43, 52)}


@dataclass(frozen=True)
class TwoLineElements:
    """One validated element set. Angles in deg, mean motion in rev/day (SGP4 mean elements).

    ``epoch_utc``: the TLE epoch as ISO 8601 UTC to the microsecond; ``epoch_jd_utc``: the
    same as a two-part UTC Julian date (exact to the TLE's eight decimals of a day).
    """

    name: str
    line1: str
    line2: str
    catalog_number: str
    classification: str
    international_designator: str
    epoch_utc: str
    epoch_jd_utc: tuple[float, float]
    mean_motion_rev_day: float
    e: float
    i_deg: float
    raan_deg: float
    argp_deg: float
    mean_anomaly_deg: float
    bstar_per_earth_radius: float
    element_set_number: int
    revolution_number: int

    @property
    def lines(self) -> tuple[str, str]:
        return self.line1, self.line2

    @property
    def period_s(self) -> float:
        """The period 1 / mean motion, s."""
        return 86_400.0 / self.mean_motion_rev_day


def tle_checksum(line: str) -> int:
    """Modulo-10 checksum of columns 1-68: digits count their value, '-' counts 1."""
    return sum(int(c) if c.isdigit() else (1 if c == "-" else 0) for c in line[:68]) % 10


def _where(n: int, name: str, first: int, last: int) -> str:
    cols = f"column {first}" if first == last else f"columns {first}-{last}"
    return f"TLE line {n}, {cols} ({name})"


def _field(line: str, n: int, spec: tuple[str, int, int]) -> tuple[str, str]:
    name, first, last = spec
    return line[first - 1 : last], _where(n, name, first, last)


def _number(text: str, where: str, what: str = "a decimal number") -> float:
    try:
        value = float(text)
    except ValueError:
        raise InputError(where, text, f"is not {what}") from None
    if not math.isfinite(value):
        raise InputError(where, text, f"is not {what}")
    return value


def _assumed_decimal(text: str, where: str) -> float:
    """' 28098-4' -> 0.28098e-4: sign, mantissa digits after an assumed point, exponent."""
    body = text.strip()
    if not body:
        return 0.0
    sign = -1.0 if body[0] == "-" else 1.0
    body = body.lstrip("+-")
    if len(body) < 3 or body[-2] not in "+-" or not body[-1].isdigit():
        raise InputError(where, text, "is not of the form ±NNNNN±E (assumed leading decimal point)")
    mantissa, exponent = body[:-2], body[-2:]
    if not mantissa.isdigit():
        raise InputError(where, text, "is not of the form ±NNNNN±E (assumed leading decimal point)")
    return sign * float("0." + mantissa) * 10.0 ** int(exponent)


def _check_line(line: str, n: int) -> str:
    line = line.rstrip()
    if len(line) != 69:
        raise InputError(
            f"TLE line {n}", line, f"has {len(line)} characters; a TLE line has exactly 69"
        )
    if not line.isascii():
        raise InputError(f"TLE line {n}", line, "holds characters other than ASCII")
    if line[0] != str(n):
        raise InputError(_where(n, "line number", 1, 1), line[0], f"must be {n}")
    for col in _BLANKS[n]:
        if line[col - 1] != " ":
            raise InputError(
                _where(n, "separator", col, col), line[col - 1], "must be blank in this format"
            )
    if not line[68].isdigit():
        raise InputError(_where(n, "checksum", 69, 69), line[68], "must be a digit")
    expected = tle_checksum(line)
    if int(line[68]) != expected:
        raise InputError(
            _where(n, "checksum", 69, 69),
            line[68],
            f"does not match the modulo-10 sum of columns 1-68, {expected}: the line is damaged",
        )
    return line


def _angle(line: str, n: int, spec: tuple[str, int, int], upper: float) -> float:
    text, where = _field(line, n, spec)
    value = _number(text, where)
    if not 0.0 <= value <= upper:
        raise InputError(where, text.strip(), f"must lie in [0, {upper:g}] deg")
    return value


def _catalog(line: str, n: int) -> str:
    text, where = _field(line, n, _LINE1[1])
    ok = text[1:].strip().isdigit() and (text[0].isdigit() or text[0] in "ABCDEFGHJKLMNPQRSTUVWXYZ")
    if not ok and not text.strip().isdigit():
        raise InputError(where, text, "is not a catalog number (5 digits, or Alpha-5)")
    return text.strip()


def _epoch(line: str) -> tuple[str, tuple[float, float]]:
    year_text, where = _field(line, 1, _LINE1[4])
    if not year_text.isdigit():
        raise InputError(where, year_text, "is not a two-digit year")
    yy = int(year_text)
    year = 1900 + yy if yy >= 57 else 2000 + yy  # 57-99: 1957-1999 (Spacetrack Report 3)
    day_text, where = _field(line, 1, _LINE1[5])
    day = _number(day_text, where, "a day of the year with its fraction")
    days_in_year = 366 if (year % 4 == 0 and (year % 100 != 0 or year % 400 == 0)) else 365
    if not 1.0 <= day < days_in_year + 1:
        raise InputError(where, day_text.strip(), f"must lie in [1, {days_in_year + 1}) in {year}")
    jd1 = sum(erfa.cal2jd(year, 1, 1))
    jd = (float(jd1), day - 1.0)
    return str(utc_iso(*jd, decimals=6)), jd


def parse_tle(text: str) -> TwoLineElements:
    """Validate one element set: two lines, or three with a name line first (``0 NAME`` or NAME).

    Raises ``InputError`` naming the line and columns ("TLE line 2, columns 27-33
    (eccentricity)") for a wrong length, a non-blank separator, a bad checksum, a field that
    is not a number or out of range (angles, 0 <= e < 1, 0 < mean motion < 20 rev/day), or
    catalog numbers that differ between the lines.
    """
    rows = [row for row in text.replace("\r\n", "\n").split("\n") if row.strip()]
    name = ""
    if len(rows) == 3 and not rows[0].startswith("1 "):
        name = rows[0][2:].strip() if rows[0].startswith("0 ") else rows[0].strip()
        rows = rows[1:]
    if len(rows) != 2:
        raise InputError(
            "TLE",
            f"{len(rows)} lines",
            "must be one element set: two lines of 69 characters, optionally after a name line",
        )
    line1, line2 = _check_line(rows[0], 1), _check_line(rows[1], 2)
    cat1, cat2 = _catalog(line1, 1), _catalog(line2, 2)
    if cat1 != cat2:
        raise InputError(
            _where(2, "catalog number", 3, 7), cat2, f"differs from line 1's catalog number {cat1}"
        )
    epoch_utc, epoch_jd = _epoch(line1)
    ecc_text, where = _field(line2, 2, _LINE2[4])
    if not ecc_text.strip().isdigit():
        raise InputError(where, ecc_text, "is not an eccentricity (digits after an assumed '0.')")
    n_text, n_where = _field(line2, 2, _LINE2[7])
    n = _number(n_text, n_where)
    if not 0.0 < n < 20.0:
        raise InputError(n_where, n_text.strip(), "must lie in (0, 20) rev/day")
    bstar_text, bstar_where = _field(line1, 1, _LINE1[8])
    _number(*_field(line1, 1, _LINE1[6]))  # n-dot / 2: checked, not used by SGP4
    _assumed_decimal(*_field(line1, 1, _LINE1[7]))  # n-double-dot / 6: likewise
    set_text, rev_text = line1[64:68].strip(), line2[63:68].strip()
    return TwoLineElements(
        name=name,
        line1=line1,
        line2=line2,
        catalog_number=cat1,
        classification=line1[7],
        international_designator=line1[9:17].strip(),
        epoch_utc=epoch_utc,
        epoch_jd_utc=epoch_jd,
        mean_motion_rev_day=n,
        e=float("0." + ecc_text.strip()),
        i_deg=_angle(line2, 2, _LINE2[2], 180.0),
        raan_deg=_angle(line2, 2, _LINE2[3], 360.0),
        argp_deg=_angle(line2, 2, _LINE2[5], 360.0),
        mean_anomaly_deg=_angle(line2, 2, _LINE2[6], 360.0),
        bstar_per_earth_radius=_assumed_decimal(bstar_text, bstar_where),
        element_set_number=int(set_text) if set_text.isdigit() else 0,
        revolution_number=int(rev_text) if rev_text.isdigit() else 0,
    )


# --- writing -------------------------------------------------------------------------------


def tle_epoch_field(jd1_utc: float, jd2_utc: float) -> str:
    """Columns 19-32 of line 1, ``YYDDD.DDDDDDDD``: the UTC epoch rounded to 1e-8 day."""
    year = int(erfa.jd2cal(jd1_utc, jd2_utc)[0])
    if not 1957 <= year <= 2056:
        raise InputError("epoch", year, "lies outside the TLE's two-digit years 1957-2056")
    jan1 = float(sum(erfa.cal2jd(year, 1, 1)))
    units = round(((jd1_utc - jan1) + jd2_utc + 1.0) * 1e8)  # day of year in 1e-8 day
    days_in_year = 366 if (year % 4 == 0 and (year % 100 != 0 or year % 400 == 0)) else 365
    if units >= (days_in_year + 1) * 10**8:  # rounded up into the next year
        year, units = year + 1, units - days_in_year * 10**8
    return f"{year % 100:02d}{units // 10**8:03d}.{units % 10**8:08d}"


def _assumed_decimal_text(value: float, where: str) -> str:
    """0.28098e-4 -> ' 28098-4' (8 columns: sign, five digits, exponent sign and digit)."""
    if value == 0.0:
        return " 00000+0"
    exponent = math.floor(math.log10(abs(value))) + 1
    digits = round(abs(value) / 10.0**exponent * 1e5)
    if digits == 100_000:
        digits, exponent = 10_000, exponent + 1
    if not -9 <= exponent <= 9:
        raise InputError(where, value, "does not fit the TLE's one-digit exponent")
    sign = "-" if value < 0 else " "
    return f"{sign}{digits:05d}{'-' if exponent < 0 else '+'}{abs(exponent)}"


def _with_checksum(line: str) -> str:
    assert len(line) == 68, line
    return line + str(tle_checksum(line))


def format_tle(
    *,
    catalog_number: int,
    epoch_jd_utc: tuple[float, float],
    mean_motion_rev_day: float,
    e: float,
    i_deg: float,
    raan_deg: float,
    argp_deg: float,
    mean_anomaly_deg: float,
    bstar_per_earth_radius: float = 0.0,
    name: str = "",
    classification: str = "U",
    international_designator: str = "",
    element_set_number: int = 1,
    revolution_number: int = 0,
) -> str:
    """The element set as text: an optional name line, then lines 1 and 2, each ending "\n".

    Columns and checksums as CelesTrak's "NORAD Two-Line Element Set Format" describes them
    (after Spacetrack Report No. 3): angles to 1e-4 deg, eccentricity to 1e-7, mean motion to
    1e-8 rev/day, the epoch to 1e-8 day. The derivatives of the mean motion are written as zero
    (SGP4 does not use them). ``parse_tle`` reads the result back.
    """
    if not 0 <= catalog_number <= 99_999:
        raise InputError("catalog number", catalog_number, "must be 0 to 99999 (five digits)")
    if len(name) > 24 or not name.isascii():
        raise InputError("name", name, "must be at most 24 ASCII characters (TLE line 0)")
    if len(international_designator) > 8:
        raise InputError("international designator", international_designator, "exceeds 8 columns")
    if not 0.0 <= e < 1.0:
        raise InputError("eccentricity", e, "must lie in [0, 1)")
    if not 0.0 < mean_motion_rev_day < 100.0:
        raise InputError("mean motion", mean_motion_rev_day, "must lie in (0, 100) rev/day")
    ecc = round(e * 1e7)
    if ecc >= 10**7:
        raise InputError("eccentricity", e, "rounds to 1 in seven digits")
    if not 0.0 <= i_deg <= 180.0:
        raise InputError("inclination", i_deg, "must lie in [0, 180] deg")
    angles = [f"{i_deg:8.4f}"] + [
        f"{round(x % 360.0, 4) % 360.0:8.4f}" for x in (raan_deg, argp_deg, mean_anomaly_deg)
    ]
    line1 = (
        f"1 {catalog_number:05d}{classification} {international_designator:<8} "
        f"{tle_epoch_field(*epoch_jd_utc)}  .00000000  00000+0 "
        f"{_assumed_decimal_text(bstar_per_earth_radius, 'BSTAR')} 0 "
        f"{element_set_number % 10_000:4d}"
    )
    line2 = (
        f"2 {catalog_number:05d} {angles[0]} {angles[1]} {ecc:07d} {angles[2]} {angles[3]} "
        f"{mean_motion_rev_day:11.8f}{revolution_number % 100_000:5d}"
    )
    head = f"{name}\n" if name else ""
    return f"{head}{_with_checksum(line1)}\n{_with_checksum(line2)}\n"
