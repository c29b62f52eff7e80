"""CCSDS Orbit Ephemeris Message (OEM), KVN form: write a case's ephemeris, read one back,
and compare it with our own propagation.

Layout: CCSDS 502.0-B-2 Sec. 5 and 7. A header (``CCSDS_OEM_VERS`` first, ``CREATION_DATE``,
``ORIGINATOR``), then one or more segments, each a metadata block between ``META_START`` and
``META_STOP`` (``OBJECT_NAME``, ``OBJECT_ID``, ``CENTER_NAME``, ``REF_FRAME``, ``TIME_SYSTEM``,
``START_TIME``, ``STOP_TIME`` required; ``REF_FRAME_EPOCH``, ``USEABLE_START_TIME``,
``USEABLE_STOP_TIME``, ``INTERPOLATION``, ``INTERPOLATION_DEGREE`` optional; Table 5-3) and
data lines ``epoch x y z x_dot y_dot z_dot [x_ddot y_ddot z_ddot]`` in km, km/s (km/s**2), with
optional ``COVARIANCE_START`` ... ``COVARIANCE_STOP`` blocks (skipped here).

``parse_oem`` refuses, naming the line: a missing required keyword, an unknown frame or time
system, a data line that is not 7 or 10 fields, epochs that do not increase, epochs outside the
segment's START_TIME..STOP_TIME.
"""

from __future__ import annotations

import datetime as _dt
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..kernel.errors import InputError
from ..kernel.timescales import time_scales, utc_iso
from .ccsds import (
    KvnLine,
    ccsds_epoch_utc,
    ccsds_time,
    check_frame,
    check_time_system,
    creation_time,
    kvn_number,
    message_lines,
    number_text,
    where,
)
from .opm_export import header_comments, object_fields

__all__ = ["Oem", "OemSegment", "oem_text", "parse_oem"]

_HEADER = ("CCSDS_OEM_VERS", "CREATION_DATE", "ORIGINATOR")
_META = ("OBJECT_NAME", "OBJECT_ID", "CENTER_NAME", "REF_FRAME", "TIME_SYSTEM",
         "START_TIME", "STOP_TIME")  # fmt: skip
_META_OPTIONAL = ("REF_FRAME_EPOCH", "USEABLE_START_TIME", "USEABLE_STOP_TIME",
                  "INTERPOLATION", "INTERPOLATION_DEGREE")  # fmt: skip


@dataclass(frozen=True)
class OemSegment:
    """One metadata block and its data: epochs as written and in UTC, r_km and v_km_s (n, 3),
    in ``metadata["REF_FRAME"]`` and ``metadata["TIME_SYSTEM"]``; ``data_lines`` numbers."""

    metadata: dict[str, str]
    epochs: tuple[str, ...]
    epochs_utc: tuple[str, ...]
    r_km: np.ndarray
    v_km_s: np.ndarray
    data_lines: tuple[int, ...]
    meta_line: int
    comments: tuple[str, ...] = ()


@dataclass(frozen=True)
class Oem:
    version: str
    creation_date: str
    originator: str
    segments: tuple[OemSegment, ...]
    comments: tuple[str, ...] = field(default_factory=tuple)


def _seconds(a_utc: str, b_utc: str) -> float:
    """b - a in SI seconds (UTC ISO texts)."""
    return float(time_scales(b_utc).seconds_since(time_scales(a_utc)))


def _segment(meta: list[KvnLine], data: list[KvnLine], comments: list[str]) -> OemSegment:
    start, stop_line = meta[0].number, meta[-1].number  # META_START and META_STOP
    values: dict[str, KvnLine] = {}
    for line in meta[1:-1]:
        if line.keyword == "COMMENT":
            continue
        if line.keyword not in _META + _META_OPTIONAL:
            raise InputError(where(line), line.value, "is not an OEM metadata keyword")
        if line.keyword in values:
            raise InputError(where(line), line.value, "given twice in this metadata block")
        values[line.keyword] = line
    for key in _META:
        if key not in values:
            raise InputError(
                where(stop_line, key),
                InputError.MISSING,  # type: ignore[attr-defined]
                f"required in the metadata block that starts at line {start} "
                "(CCSDS 502.0-B-2, Table 5-3)",
            )
    system = check_time_system(values["TIME_SYSTEM"].value, values["TIME_SYSTEM"])
    check_frame(values["REF_FRAME"].value, values["REF_FRAME"])
    if not data:
        raise InputError(where(stop_line), "META_STOP", "the segment has no data lines")
    epochs, utc, rows = [], [], []
    for line in data:
        parts = line.text.split()
        if len(parts) not in (7, 10):
            raise InputError(
                where(line),
                line.text,
                "an OEM data line is an epoch and 6 numbers (or 9 with accelerations)",
            )
        epochs.append(parts[0])
        utc.append(ccsds_epoch_utc(parts[0], system, line))
        rows.append([kvn_number(line, p) for p in parts[1:7]])
    ts = time_scales(utc, field="epoch")
    t = ts.seconds_since(time_scales(utc[0]))
    steps = np.diff(t)
    if np.any(steps <= 0.0):
        k = int(np.flatnonzero(steps <= 0.0)[0]) + 1
        raise InputError(
            where(data[k]), epochs[k], f"epochs must increase: not after line {data[k - 1].number}"
        )
    for key, k, sign in (("START_TIME", 0, 1.0), ("STOP_TIME", -1, -1.0)):
        bound = ccsds_epoch_utc(values[key].value, system, values[key])
        if sign * _seconds(bound, utc[k]) < -1e-6:
            raise InputError(
                where(data[k]),
                epochs[k],
                f"lies outside the segment's {key} (line {values[key].number})",
            )
    arr = np.asarray(rows, dtype=float)
    return OemSegment(
        metadata={k: v.value for k, v in values.items()},
        epochs=tuple(epochs),
        epochs_utc=tuple(utc),
        r_km=arr[:, :3],
        v_km_s=arr[:, 3:],
        data_lines=tuple(line.number for line in data),
        meta_line=start,
        comments=tuple(comments),
    )


def parse_oem(text: str) -> Oem:
    """Read an OEM in KVN form (CCSDS 502.0-B-2 Sec. 5 and 7); see the module docstring."""
    lines = message_lines(
        text,
        "CCSDS_OEM_VERS",
        "an OEM begins with CCSDS_OEM_VERS = 2.0 (CCSDS 502.0-B-2, Table 5-2)",
    )
    header: dict[str, KvnLine] = {}
    segments: list[OemSegment] = []
    comments: list[str] = []
    k = 0
    while k < len(lines) and lines[k].text != "META_START":
        line = lines[k]
        if line.keyword == "COMMENT":
            comments.append(line.value)
        elif line.keyword in _HEADER and line.keyword not in header:
            header[line.keyword] = line
        else:
            raise InputError(where(line), line.text, "is not an OEM header line")
        k += 1
    for key in _HEADER:
        if key not in header:
            at = lines[k].number if k < len(lines) else lines[-1].number
            raise InputError(
                where(at, key),
                InputError.MISSING,  # type: ignore[attr-defined]
                "required in the OEM header (CCSDS 502.0-B-2, Table 5-2)",
            )
    if k == len(lines):
        raise InputError(where(lines[-1]), "", "the OEM has no segment (META_START)")
    while k < len(lines):
        meta = [lines[k]]
        k += 1
        while k < len(lines) and lines[k].text != "META_STOP":
            if lines[k].text == "META_START" or lines[k].keyword == "":
                raise InputError(where(lines[k]), lines[k].text, "META_STOP expected first")
            meta.append(lines[k])
            k += 1
        if k == len(lines):
            raise InputError(where(meta[0]), "META_START", "has no META_STOP")
        meta.append(lines[k])
        k += 1
        data: list[KvnLine] = []
        notes: list[str] = []
        in_covariance = False
        while k < len(lines) and lines[k].text != "META_START":
            line = lines[k]
            if line.text in ("COVARIANCE_START", "COVARIANCE_STOP"):
                in_covariance = line.text == "COVARIANCE_START"
            elif line.keyword == "COMMENT":
                notes.append(line.value)
            elif not in_covariance:
                if line.keyword:
                    raise InputError(where(line), line.value, "a data line was expected here")
                data.append(line)
            k += 1
        segments.append(_segment(meta, data, notes))
    version = header["CCSDS_OEM_VERS"].value
    if version not in ("1.0", "2.0", "3.0"):
        raise InputError(where(header["CCSDS_OEM_VERS"]), version, "must be 1.0, 2.0 or 3.0")
    return Oem(
        version=version,
        creation_date=header["CREATION_DATE"].value,
        originator=header["ORIGINATOR"].value,
        segments=tuple(segments),
        comments=tuple(comments),
    )


def oem_text(
    case: Any,
    *,
    originator: str = "orbitledger",
    step_s: float | None = None,
    now: _dt.datetime | None = None,
) -> str:
    """The OEM (KVN, version 2.0) of ``case`` over its analysis window, every ``step_s``
    (default ``window.step_s``), propagated as every face does (``analysis.case_trajectory``),
    GCRF, UTC. Times to the microsecond, numbers by ``repr``. Interpolation: Hermite of
    degree 5 (positions and velocities of three neighbouring points)."""
    from ..analysis import case_trajectory
    from ..analysis.estimates import check_estimate, window_estimate

    step = case.window.step_s if step_s is None else float(step_s)
    if not step > 0.0:
        raise InputError("step_s", step_s, "must be a positive number of seconds")
    field = "window.step_s" if step_s is None else "step_s"
    check_estimate(window_estimate(case, "ephemeris", step_s=step, step_field=field))
    traj = case_trajectory(case)
    duration = min(case.window.duration_s, traj.end_s)
    t = np.arange(0.0, duration, step)
    t = np.append(t, duration) if t[-1] < duration else t
    r, v = traj.gcrf(t)
    ts = traj.times(t)
    stamps = [ccsds_time(str(s)) for s in utc_iso(ts.utc1, ts.utc2, 6)]
    name, object_id = object_fields(case)
    lines = [
        "CCSDS_OEM_VERS = 2.0",
        *header_comments(case),
        f"CREATION_DATE = {creation_time(now)}",
        f"ORIGINATOR = {originator}",
        "",
        "META_START",
        f"OBJECT_NAME = {name}",
        f"OBJECT_ID = {object_id}",
        f"CENTER_NAME = {case.body.name.upper()}",
        "REF_FRAME = GCRF",
        "TIME_SYSTEM = UTC",
        f"START_TIME = {stamps[0]}",
        f"USEABLE_START_TIME = {stamps[0]}",
        f"USEABLE_STOP_TIME = {stamps[-1]}",
        f"STOP_TIME = {stamps[-1]}",
        "INTERPOLATION = HERMITE",
        "INTERPOLATION_DEGREE = 5",
        "META_STOP",
        "",
        f"COMMENT Propagator: {traj.propagator}" + "".join(f"; {n}" for n in traj.notes),
    ]
    for k, stamp in enumerate(stamps):
        values = " ".join(number_text(x) for x in (*r[k], *v[k]))
        lines.append(f"{stamp} {values}")
    return "\n".join(lines) + "\n"
