"""A case's Earth orientation: the stated values, or the IERS table looked up per epoch.

``earth_orientation: {"source": "iers"}`` reads the daily UT1 - UTC and pole coordinates of
the IERS Rapid Service/Prediction Center's ``finals2000A.all`` as shipped inside the
``astropy-iers-data`` package (read from the package's folder: nothing is downloaded, and
astropy itself is not used), or of a file in the same format that the analyst names with
``"file"`` (``finals2000A.all``, ``.data`` or ``.daily`` from the IERS; a relative path is
taken from the current folder). Where the file has Bulletin B (final) values they are used,
else the Bulletin A (rapid and predicted) ones, as astropy's ``IERS_A`` does.

The kernel (``kernel.earth_orientation``) interpolates the table at every epoch; this module
reads the file (once per file and modification time), and states what was used: the table,
its date (the last observed row), the values at the window's start, and a caution when the
window reaches past the table (the last row's values are then held).
"""

from __future__ import annotations

import functools
import hashlib
import os
from pathlib import Path
from typing import Any

import numpy as np

from ..kernel.earth_orientation import (
    BEFORE_TABLE,
    BEYOND_TABLE,
    MJD_ZERO,
    PREDICTED,
    EopTable,
    eop_at,
)
from ..kernel.errors import InputError
from ..kernel.propagation import EarthOrientation as KernelEarthOrientation
from ..kernel.timescales import time_scales, utc_iso

__all__ = [
    "earth_orientation_results",
    "earth_orientation_rows",
    "earth_orientation_summary",
    "eop_for_case",
    "eop_lookup",
    "iers_table",
    "packaged_table_path",
    "parse_finals",
    "table_caution",
    "table_dates",
]

_FIELD = "earth_orientation.file"


def packaged_table_path() -> Path:
    """The ``finals2000A.all`` inside the installed ``astropy-iers-data`` package."""
    import astropy_iers_data

    return Path(astropy_iers_data.IERS_A_FILE)


def _packaged_name() -> str:
    import astropy_iers_data

    return f"IERS finals2000A.all (astropy-iers-data {astropy_iers_data.__version__})"


_WIDTH = 187  # bytes of a full finals2000A line (ReadMe.finals2000A)


def _columns(lines: list[bytes], spans: dict[str, tuple[int, int]]) -> dict[str, np.ndarray]:
    """Fixed-width float columns (1-based inclusive byte ranges); blank fields become NaN."""
    block = b"".join(line[:_WIDTH].ljust(_WIDTH) for line in lines)
    chars = np.frombuffer(block, dtype="S1").reshape(len(lines), _WIDTH)
    out = {}
    for key, (lo, hi) in spans.items():
        cells = np.char.strip(np.ascontiguousarray(chars[:, lo - 1 : hi]).view(f"S{hi - lo + 1}"))
        out[key] = np.where(cells == b"", b"nan", cells).ravel().astype(float)
    return out


_SPANS = {
    "mjd": (8, 15), "xp_a": (19, 27), "yp_a": (38, 46), "ut1_a": (59, 68),
    "xp_b": (135, 144), "yp_b": (145, 154), "ut1_b": (155, 165),
}  # fmt: skip


def _readable(line: bytes) -> bool:
    try:
        _columns([line], _SPANS)
    except ValueError:
        return False
    return True


def parse_finals(data: bytes, name: str, sha256: str = "") -> EopTable:
    """An ``EopTable`` from the bytes of an IERS ``finals2000A`` file (fixed columns, as its
    ReadMe.finals2000A gives them: MJD in bytes 8-15, Bulletin A x_p 19-27, y_p 38-46 and
    UT1 - UTC 59-68 with their I/P flags in bytes 17 and 58, Bulletin B x_p 135-144, y_p
    145-154 and UT1 - UTC 155-165). Rows without Bulletin A values (the file's empty tail)
    are left out; Bulletin B values are used where a row has them."""
    lines = [line.rstrip(b"\r") for line in data.split(b"\n") if line.strip()]
    if not lines:
        raise InputError(_FIELD, name, "holds no rows of Earth orientation values")
    try:
        c = _columns(lines, _SPANS)
    except ValueError:
        k = next((k for k, line in enumerate(lines) if not _readable(line)), len(lines) - 1)
        raise InputError(
            _FIELD, name, f"row {k + 1} is not in the IERS finals2000A format"
        ) from None
    if not np.all(np.isfinite(c["mjd"])):
        k = int(np.argmin(np.isfinite(c["mjd"])))
        raise InputError(_FIELD, name, f"row {k + 1} has no MJD (bytes 8-15)")
    keep = np.isfinite(c["ut1_a"]) & np.isfinite(c["xp_a"]) & np.isfinite(c["yp_a"])
    if np.count_nonzero(keep) < 2:
        raise InputError(_FIELD, name, "holds no rows of Earth orientation values")
    flags = np.array([line[16:17] + line[57:58] for line in lines], dtype="S2")[keep]
    c = {key: value[keep] for key, value in c.items()}
    has_b_ut1 = np.isfinite(c["ut1_b"])
    has_b_pole = np.isfinite(c["xp_b"]) & np.isfinite(c["yp_b"])
    predicted = (np.char.find(flags, b"P") >= 0) & ~has_b_ut1
    mjd = c["mjd"]
    predicted_from = float(mjd[predicted][0]) if np.any(predicted) else float(mjd[-1] + 1.0)
    try:
        return EopTable(
            mjd,
            np.where(has_b_ut1, c["ut1_b"], c["ut1_a"]),
            np.where(has_b_pole, c["xp_b"], c["xp_a"]),
            np.where(has_b_pole, c["yp_b"], c["yp_a"]),
            predicted_from,
            name=name,
            sha256=sha256,
        )
    except InputError as err:
        raise InputError(_FIELD, name, err.reason) from None


@functools.lru_cache(maxsize=8)
def _read_table(path: str, mtime_ns: int, size: int, name: str) -> EopTable:
    data = Path(path).read_bytes()
    return parse_finals(data, name, hashlib.sha256(data).hexdigest())


def iers_table(file: str | os.PathLike | None = None) -> EopTable:
    """The Earth orientation table: the packaged ``finals2000A.all``, or the named file.

    Read once per file and modification time. Raises ``InputError`` (field
    ``earth_orientation.file``) for a missing or unreadable file.
    """
    path = packaged_table_path() if file is None else Path(file)
    name = _packaged_name() if file is None else f"IERS finals2000A-format file {file}"
    try:
        info = path.stat()
    except OSError as err:
        raise InputError(_FIELD, str(file), f"cannot be read: {err.strerror}") from None
    if not path.is_file():
        raise InputError(_FIELD, str(file), "is not a file")
    return _read_table(str(path.resolve()), info.st_mtime_ns, info.st_size, name)


def _mjd_utc_text(mjd: float) -> str:
    return str(utc_iso(MJD_ZERO, float(mjd), 0))[:10]


def table_dates(table: EopTable) -> dict[str, str]:
    """The table's first row, last observed row (its date) and last row, as UTC dates."""
    return {
        "first_utc": _mjd_utc_text(table.first_mjd),
        "observed_until_utc": _mjd_utc_text(min(table.predicted_from_mjd - 1.0, table.last_mjd)),
        "last_utc": _mjd_utc_text(table.last_mjd),
    }


def eop_lookup(table: EopTable, epoch_utc: Any) -> dict[str, Any]:
    """dUT1, x_p, y_p and their source ("observed", "predicted", "held") at one UTC epoch."""
    ts = time_scales(epoch_utc)
    dut1, xp, yp, status = eop_at(table, ts.utc1, ts.utc2)
    return {
        "dut1_s": float(dut1),
        "xp_arcsec": float(xp),
        "yp_arcsec": float(yp),
        "from": {0: "observed", PREDICTED: "predicted", BEYOND_TABLE: "held after the table's end",
                 BEFORE_TABLE: "held before the table's start"}[int(status)],
    }  # fmt: skip


def _source(case: Any) -> str:
    return getattr(case.earth_orientation, "source", "values")


def eop_for_case(case: Any) -> KernelEarthOrientation:
    """The kernel ``EarthOrientation`` of a case: its stated values, or the IERS table with
    the values at the window's start."""
    eop = case.earth_orientation
    if _source(case) != "iers":
        return KernelEarthOrientation(eop.dut1_s, eop.xp_arcsec, eop.yp_arcsec)
    table = iers_table(eop.file)
    at = eop_lookup(table, case.window_start_utc)
    return KernelEarthOrientation(at["dut1_s"], at["xp_arcsec"], at["yp_arcsec"], table=table)


def table_caution(case: Any, table: EopTable) -> str:
    """The caution for a window that reaches past the table (or before it), else ""."""
    dates = table_dates(table)
    start = time_scales(case.window_start_utc)
    end = time_scales(start, offset_s=case.window.duration_s)
    mjd = [float(t.utc1 - MJD_ZERO + t.utc2) for t in (start, end)]
    if mjd[1] > table.last_mjd:
        return (
            f"the window reaches past the Earth orientation table's last row "
            f"({dates['last_utc']}): its values are held there (dUT1 is then uncertain by "
            "tens of milliseconds or more, and a leap second may intervene); use a newer table"
        )
    if mjd[0] < table.first_mjd:
        return (
            f"the window starts before the Earth orientation table's first row "
            f"({dates['first_utc']}): its values are held there"
        )
    return ""


def earth_orientation_rows(case: Any) -> list[dict[str, str]]:
    """The record's rows on Earth orientation (topic, value): what was used and from where."""
    eop = case.earth_orientation
    if _source(case) != "iers":
        return [
            {"topic": "dUT1", "value": f"{eop.dut1_s} s"},
            {"topic": "Polar motion", "value": f"xp {eop.xp_arcsec} arcsec, yp {eop.yp_arcsec} arcsec"},
        ]  # fmt: skip
    table = iers_table(eop.file)
    dates = table_dates(table)
    at = eop_lookup(table, case.window_start_utc)
    rows = [
        {
            "topic": "Earth orientation table",
            "value": f"{table.name}, rows {dates['first_utc']} to {dates['last_utc']}, observed "
            f"to {dates['observed_until_utc']} (predictions after); SHA-256 {table.sha256}",
        },
        {
            "topic": "dUT1 and polar motion",
            "value": "interpolated linearly between the table's daily values at every epoch; at "
            f"the window start {case.window_start_utc} ({at['from']}): dUT1 "
            f"{at['dut1_s']:.7f} s, xp {at['xp_arcsec']:.6f} arcsec, yp "
            f"{at['yp_arcsec']:.6f} arcsec",
        },
    ]
    caution = table_caution(case, table)
    if caution:
        rows.append({"topic": "Earth orientation caution", "value": caution})
    return rows


def earth_orientation_results(case: Any) -> list[Any]:
    """dUT1, x_p and y_p at the window's start, when looked up in the IERS table."""
    if _source(case) != "iers":
        return []
    from .result import Result

    table = iers_table(case.earth_orientation.file)
    at = eop_lookup(table, case.window_start_utc)
    where = f"{at['from']}; {table.name}, observed to {table_dates(table)['observed_until_utc']}"
    caution = table_caution(case, table)
    return [
        Result(
            f"eop_{key}",
            at[key],
            unit,
            f"{what} at the window start ({where})",
            "earth_orientation",
            abs_tol=tol,
            caution=caution,
        )
        for key, unit, what, tol in (
            ("dut1_s", "s", "UT1 - UTC", 1e-9),
            ("xp_arcsec", "arcsec", "Pole x_p", 1e-9),
            ("yp_arcsec", "arcsec", "Pole y_p", 1e-9),
        )
    ]


def earth_orientation_summary(case: Any, eop: KernelEarthOrientation) -> dict[str, Any]:
    """JSON-ready statement of the Earth orientation a computation used (CLI output)."""
    out: dict[str, Any] = {
        "source": "iers" if eop.table is not None else "values",
        "dut1_s": eop.dut1_s,
        "xp_arcsec": eop.xp_arcsec,
        "yp_arcsec": eop.yp_arcsec,
    }
    if eop.table is not None:
        out.update(
            table=eop.table.name,
            table_sha256=eop.table.sha256,
            **table_dates(eop.table),
            values_at="window start, then interpolated per epoch",
            caution=table_caution(case, eop.table),
        )
    return out
