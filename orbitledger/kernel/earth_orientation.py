"""Earth orientation parameters from a daily table: UT1 - UTC and the pole, per epoch.

The IERS publishes UT1 - UTC (dUT1) and the pole coordinates x_p, y_p at 0 h UTC of each day
(IERS Rapid Service/Prediction Center, ``finals2000A`` files: observed values, then about a
year of predictions; IERS Conventions 2010, Ch. 5, Sec. 5.5). Between two daily rows the values
are interpolated linearly in UTC, as astropy's ``IERS.ut1_utc`` and ``pm_xy`` do (and as TEMPO
does for UT1 - UTC). The sub-daily tidal and libration terms that IERS Gazette 13 adds to a
4-point Lagrange interpolation (below 0.1 ms of UT1 and 1 mas of pole, so under 5 cm at the
surface) are not applied.

A leap second makes dUT1 jump by one second between two rows: a difference between rows is
taken modulo whole seconds (rounded away) before interpolating, so the interpolated value
follows UT1 smoothly and the jump stays at the row where it happens (astropy does the same).

Before the first row and after the last, the first or last row's values are held (no
extrapolation of the trend); ``eop_at`` says, epoch by epoch, whether the value came from
observed rows, predicted rows, or was held beyond the table.

The reading of a table file lives outside the kernel (``orbitledger.analysis``); this module
takes arrays.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
from numpy.typing import ArrayLike

from .errors import InputError
from .timescales import TimeScales, time_scales

__all__ = [
    "BEFORE_TABLE",
    "BEYOND_TABLE",
    "EopTable",
    "OBSERVED",
    "PREDICTED",
    "eop_at",
    "time_scales_with_table",
]

MJD_ZERO = 2_400_000.5
"""Julian date of MJD 0 (1858-11-17 0 h)."""

OBSERVED, PREDICTED, BEYOND_TABLE, BEFORE_TABLE = 0, 1, 2, 3
"""Where a looked-up value came from: observed rows, predicted rows, held after the last row,
held before the first row."""


@dataclass(frozen=True, eq=False)
class EopTable:
    """Daily Earth orientation values, rows at 0 h UTC in increasing MJD.

    mjd_utc: the rows' MJD (UTC), increasing; dut1_s: UT1 - UTC, s; xp_arcsec, yp_arcsec: the
    pole coordinates, arcsec; predicted_from_mjd: the MJD of the first predicted row (the last
    row + 1 when none is); name: the table as a reader should find it (file and version);
    sha256: the SHA-256 of the file the rows came from.
    """

    mjd_utc: np.ndarray
    dut1_s: np.ndarray
    xp_arcsec: np.ndarray
    yp_arcsec: np.ndarray
    predicted_from_mjd: float
    name: str = ""
    sha256: str = ""

    def __post_init__(self) -> None:
        mjd = np.asarray(self.mjd_utc, dtype=float)
        cols = [np.asarray(c, dtype=float) for c in (self.dut1_s, self.xp_arcsec, self.yp_arcsec)]
        if mjd.ndim != 1 or mjd.size < 2:
            raise InputError("earth_orientation", mjd.size, "the table needs at least two rows")
        if any(c.shape != mjd.shape for c in cols):
            raise InputError("earth_orientation", mjd.shape, "every column needs one value a row")
        if not (np.all(np.isfinite(mjd)) and all(np.all(np.isfinite(c)) for c in cols)):
            raise InputError("earth_orientation", "", "the table holds a missing or bad value")
        if np.any(np.diff(mjd) <= 0.0):
            raise InputError("earth_orientation", "", "the table's dates must increase")
        if np.any(np.abs(cols[0]) > 1.0):
            raise InputError("earth_orientation.dut1_s", "", "UT1 - UTC beyond +-1 s in the table")
        if np.any(np.abs(cols[1]) > 2.0) or np.any(np.abs(cols[2]) > 2.0):
            raise InputError("earth_orientation.xp_arcsec", "", "a pole offset beyond 2 arcsec")
        for name, value in zip(
            ("mjd_utc", "dut1_s", "xp_arcsec", "yp_arcsec"), [mjd, *cols], strict=True
        ):
            value.setflags(write=False)
            object.__setattr__(self, name, value)

    @property
    def first_mjd(self) -> float:
        return float(self.mjd_utc[0])

    @property
    def last_mjd(self) -> float:
        return float(self.mjd_utc[-1])


def _interpolate(column: np.ndarray, i0: np.ndarray, frac: np.ndarray, leap: bool) -> np.ndarray:
    v0, v1 = column[i0], column[i0 + 1]
    step = v1 - v0
    if leap:  # a leap second between the rows: interpolate UT1, not the jump
        step = step - np.round(step)
    return v0 + frac * step


def eop_at(
    table: EopTable, utc1: ArrayLike, utc2: ArrayLike = 0.0
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """dUT1 (s), x_p and y_p (arcsec) and the source flag at UTC epochs (two-part JD).

    Given the table and UTC as ERFA quasi Julian dates (any shape, broadcast). Returns four
    arrays of the epochs' shape: dut1_s, xp_arcsec, yp_arcsec and ``status``, one of OBSERVED,
    PREDICTED, BEYOND_TABLE (the last row held), BEFORE_TABLE (the first row held). Linear
    interpolation between the daily rows (see the module docstring).
    """
    j1, j2 = np.broadcast_arrays(np.asarray(utc1, dtype=float), np.asarray(utc2, dtype=float))
    mjd_day = np.floor((j1 - MJD_ZERO) + j2)
    mjd = mjd_day + ((j1 - MJD_ZERO - mjd_day) + j2)  # day + fraction, without losing digits
    rows = table.mjd_utc
    i = np.searchsorted(rows, mjd, side="right")
    i0 = np.clip(i - 1, 0, rows.size - 2)
    frac = np.clip((mjd - rows[i0]) / (rows[i0 + 1] - rows[i0]), 0.0, 1.0)
    out = tuple(
        _interpolate(col, i0, frac, leap)
        for col, leap in ((table.dut1_s, True), (table.xp_arcsec, False), (table.yp_arcsec, False))
    )
    # A value leans on a predicted row when the row after the epoch is one.
    status = np.where(rows[i0 + 1] >= table.predicted_from_mjd, PREDICTED, OBSERVED)
    before, after = mjd < rows[0], mjd > rows[-1]
    status = np.where(after, BEYOND_TABLE, np.where(before, BEFORE_TABLE, status))
    dut1, xp, yp = (
        np.where(after, series[-1], np.where(before, series[0], col))
        for col, series in zip(out, (table.dut1_s, table.xp_arcsec, table.yp_arcsec), strict=True)
    )
    return dut1, xp, yp, status.astype(int)


def time_scales_with_table(start: TimeScales, offset_s: ArrayLike, table: EopTable) -> TimeScales:
    """UTC/TAI/TT/UT1 of epochs ``offset_s`` SI seconds after ``start``, with dUT1 per epoch.

    UT1 = UTC + dUT1(UTC), dUT1 looked up in ``table`` at each epoch (``eop_at``). ERFA's
    ``utcut1`` is UTC -> TAI -> UT1 with UT1 - TAI = dUT1 - (TAI - UTC), so UT1 for a dUT1 is
    the UT1 for zero plus dUT1 / 86 400 days; ``dut1_s`` of the result is the per-epoch array.
    """
    base = time_scales(start, offset_s=offset_s, dut1_s=0.0)
    dut1, _, _, _ = eop_at(table, base.utc1, base.utc2)
    ut11, ut12 = np.broadcast_arrays(base.ut11, base.ut12 + dut1 / 86_400.0)
    return replace(base, ut11=np.asarray(ut11), ut12=np.asarray(ut12), dut1_s=dut1)  # type: ignore[arg-type]
