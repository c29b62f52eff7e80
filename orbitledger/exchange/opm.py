"""CCSDS Orbit Parameter Message (OPM), KVN form: read, write, and cases from it.

Layout and keywords: CCSDS 502.0-B-2, Orbit Data Messages, Sec. 3 (Tables 3-1 header, 3-2
metadata, 3-3 data), Sec. 7 (KVN). A message is a header (``CCSDS_OPM_VERS`` first, then
``CREATION_DATE``, ``ORIGINATOR``), metadata (``OBJECT_NAME``, ``OBJECT_ID``, ``CENTER_NAME``,
``REF_FRAME``, optional ``REF_FRAME_EPOCH``, ``TIME_SYSTEM``), the state vector (``EPOCH``,
``X`` ... ``Z_DOT`` in km and km/s), then optional Keplerian elements (all of them with ``GM``),
spacecraft parameters, a covariance matrix and maneuver blocks (seven keywords each, starting
with ``MAN_EPOCH_IGNITION``), and ``USER_DEFINED_*`` parameters.

``parse_opm`` refuses, naming the line: a keyword unknown to the OPM, one repeated, a missing
required keyword (at the line where its block ends), a unit other than the standard's, a frame
or time system outside Annex A. ``opm_text`` writes a case's state (GCRF, UTC) with every
number by ``repr``, so that an export read back gives the same doubles.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from ..kernel.errors import InputError
from .ccsds import (
    KvnLine,
    ccsds_epoch_utc,
    check_frame,
    check_time_system,
    kvn_number,
    message_lines,
    state_to_gcrf,
    utc_scales,
    where,
)

__all__ = ["Opm", "OpmManeuver", "opm_state_gcrf", "parse_opm"]

_HEADER = ("CCSDS_OPM_VERS", "CREATION_DATE", "ORIGINATOR")
_META = ("OBJECT_NAME", "OBJECT_ID", "CENTER_NAME", "REF_FRAME", "TIME_SYSTEM")
_META_OPTIONAL = ("REF_FRAME_EPOCH", "MESSAGE_ID")
_STATE = ("EPOCH", "X", "Y", "Z", "X_DOT", "Y_DOT", "Z_DOT")
_KEPLER = ("SEMI_MAJOR_AXIS", "ECCENTRICITY", "INCLINATION", "RA_OF_ASC_NODE",
           "ARG_OF_PERICENTER", "GM")  # fmt: skip
_ANOMALY = ("TRUE_ANOMALY", "MEAN_ANOMALY")
_SPACECRAFT = ("MASS", "SOLAR_RAD_AREA", "SOLAR_RAD_COEFF", "DRAG_AREA", "DRAG_COEFF")
_MANEUVER = ("MAN_EPOCH_IGNITION", "MAN_DURATION", "MAN_DELTA_MASS", "MAN_REF_FRAME",
             "MAN_DV_1", "MAN_DV_2", "MAN_DV_3")  # fmt: skip
_COVARIANCE = ("COV_REF_FRAME",) + tuple(
    f"C{a}_{b}"
    for k, a in enumerate(("X", "Y", "Z", "X_DOT", "Y_DOT", "Z_DOT"))
    for b in ("X", "Y", "Z", "X_DOT", "Y_DOT", "Z_DOT")[: k + 1]
)
# The standard's units (CCSDS 502.0-B-2 Table 3-3); a unit in brackets must be one of these.
_UNITS = {
    **{k: "km" for k in ("X", "Y", "Z", "SEMI_MAJOR_AXIS")},
    **{k: "km/s" for k in ("X_DOT", "Y_DOT", "Z_DOT", "MAN_DV_1", "MAN_DV_2", "MAN_DV_3")},
    **{k: "deg" for k in ("INCLINATION", "RA_OF_ASC_NODE", "ARG_OF_PERICENTER") + _ANOMALY},
    "GM": "km**3/s**2",
    "MASS": "kg",
    "MAN_DELTA_MASS": "kg",
    "SOLAR_RAD_AREA": "m**2",
    "DRAG_AREA": "m**2",
    "MAN_DURATION": "s",
}
_TEXT = set(_HEADER + _META + _META_OPTIONAL + ("EPOCH", "MAN_EPOCH_IGNITION", "MAN_REF_FRAME",
                                                 "COV_REF_FRAME"))  # fmt: skip


@dataclass(frozen=True)
class OpmManeuver:
    """One maneuver block: ignition epoch (as written), duration s, mass change kg, frame,
    delta-v km/s in that frame, and the line where the block starts."""

    epoch_ignition: str
    duration_s: float
    delta_mass_kg: float
    ref_frame: str
    dv_km_s: tuple[float, float, float]
    line: int
    comments: tuple[str, ...] = ()


@dataclass(frozen=True)
class Opm:
    """A parsed OPM: every value as read (epochs as written, numbers as floats).

    ``keplerian`` and ``spacecraft`` map keywords to floats (empty when absent);
    ``covariance`` maps CX_X... to floats; ``lines`` gives the line number of each keyword.
    """

    version: str
    creation_date: str
    originator: str
    object_name: str
    object_id: str
    center_name: str
    ref_frame: str
    time_system: str
    epoch: str
    r_km: tuple[float, float, float]
    v_km_s: tuple[float, float, float]
    ref_frame_epoch: str | None = None
    keplerian: dict[str, float] = field(default_factory=dict)
    spacecraft: dict[str, float] = field(default_factory=dict)
    covariance: dict[str, float] = field(default_factory=dict)
    maneuvers: tuple[OpmManeuver, ...] = ()
    user_defined: dict[str, str] = field(default_factory=dict)
    comments: tuple[str, ...] = ()
    lines: dict[str, int] = field(default_factory=dict)


def _check_unit(line: KvnLine) -> None:
    wanted = _UNITS.get(line.keyword)
    if line.unit and (wanted is None or line.unit.lower() != wanted.lower()):
        raise InputError(
            where(line),
            f"[{line.unit}]",
            f"the OPM gives this keyword in {wanted}" if wanted else "takes no unit",
        )


def _known(keyword: str) -> bool:
    return keyword in (
        _HEADER + _META + _META_OPTIONAL + _STATE + _KEPLER + _ANOMALY + _SPACECRAFT + _COVARIANCE
    ) or keyword.startswith("USER_DEFINED_")


def _maneuver(block: list[KvnLine], end_line: int, comments: list[str]) -> OpmManeuver:
    got = {ln.keyword: ln for ln in block}
    for key in _MANEUVER:
        if key not in got:
            raise InputError(
                where(block[-1].number if block else end_line, key),
                InputError.MISSING,  # type: ignore[attr-defined]
                f"required in the maneuver block that starts at line {block[0].number}",
            )
    return OpmManeuver(
        epoch_ignition=got["MAN_EPOCH_IGNITION"].value,
        duration_s=kvn_number(got["MAN_DURATION"]),
        delta_mass_kg=kvn_number(got["MAN_DELTA_MASS"]),
        ref_frame=got["MAN_REF_FRAME"].value,
        dv_km_s=tuple(kvn_number(got[f"MAN_DV_{k}"]) for k in (1, 2, 3)),  # type: ignore[arg-type]
        line=block[0].number,
        comments=tuple(comments),
    )


def _missing(key: str, at_line: int, block: str) -> InputError:
    return InputError(
        where(at_line, key),
        InputError.MISSING,  # type: ignore[attr-defined]
        f"required keyword of the OPM {block} is missing; the {block} ends at line {at_line} "
        "(CCSDS 502.0-B-2, Sec. 3.2)",
    )


def parse_opm(text: str) -> Opm:
    """Read an OPM in KVN form (CCSDS 502.0-B-2 Sec. 3 and 7); see the module docstring."""
    lines = message_lines(
        text,
        "CCSDS_OPM_VERS",
        "an OPM begins with CCSDS_OPM_VERS = 2.0 (CCSDS 502.0-B-2, Table 3-1)",
    )
    values: dict[str, KvnLine] = {}
    maneuvers: list[list[KvnLine]] = []
    comments: list[str] = []
    recent: list[str] = []  # the comments just before a line (a maneuver's own comments)
    man_comments: list[list[str]] = []
    for line in lines:
        key = line.keyword
        if key == "COMMENT":
            comments.append(line.value)
            recent.append(line.value)
            continue
        before, recent = recent, []
        if key == "":
            raise InputError(where(line), line.text, "is not a 'KEYWORD = value' line")
        _check_unit(line)
        if key in _MANEUVER:
            if key == "MAN_EPOCH_IGNITION":
                maneuvers.append([])
                man_comments.append(before)
            elif not maneuvers or any(ln.keyword == key for ln in maneuvers[-1]):
                raise InputError(
                    where(line), line.value, "a maneuver block begins with MAN_EPOCH_IGNITION"
                )
            maneuvers[-1].append(line)
            continue
        if not _known(key):
            raise InputError(where(line), line.value, "is not an OPM keyword (CCSDS 502.0-B-2)")
        if key in values:
            raise InputError(
                where(line), line.value, f"given twice (first at line {values[key].number})"
            )
        values[key] = line
    end = lines[-1].number
    for block, keys in (("header", _HEADER), ("metadata", _META), ("state vector", _STATE)):
        for key in keys:
            if key not in values:
                present = [values[k].number for k in keys if k in values]
                raise _missing(key, max(present) if present else end, block)
    version = values["CCSDS_OPM_VERS"].value
    if version not in ("1.0", "2.0", "3.0"):
        raise InputError(where(values["CCSDS_OPM_VERS"]), version, "must be 1.0, 2.0 or 3.0")
    check_frame(values["REF_FRAME"].value, values["REF_FRAME"])
    check_time_system(values["TIME_SYSTEM"].value, values["TIME_SYSTEM"])
    kepler = {k: kvn_number(values[k]) for k in _KEPLER + _ANOMALY if k in values}
    if kepler:
        present = max(values[k].number for k in kepler)
        for key in _KEPLER:
            if key not in kepler:
                raise _missing(key, present, "Keplerian elements")
        if not any(k in kepler for k in _ANOMALY):
            raise _missing("TRUE_ANOMALY", present, "Keplerian elements (or MEAN_ANOMALY)")
    return Opm(
        version=version,
        creation_date=values["CREATION_DATE"].value,
        originator=values["ORIGINATOR"].value,
        object_name=values["OBJECT_NAME"].value,
        object_id=values["OBJECT_ID"].value,
        center_name=values["CENTER_NAME"].value,
        ref_frame=values["REF_FRAME"].value,
        time_system=values["TIME_SYSTEM"].value,
        epoch=values["EPOCH"].value,
        r_km=tuple(kvn_number(values[k]) for k in ("X", "Y", "Z")),  # type: ignore[arg-type]
        v_km_s=tuple(kvn_number(values[k]) for k in ("X_DOT", "Y_DOT", "Z_DOT")),  # type: ignore[arg-type]
        ref_frame_epoch=values["REF_FRAME_EPOCH"].value if "REF_FRAME_EPOCH" in values else None,
        keplerian=kepler,
        spacecraft={k: kvn_number(values[k]) for k in _SPACECRAFT if k in values},
        covariance={k: kvn_number(values[k]) for k in _COVARIANCE[1:] if k in values},
        maneuvers=tuple(
            _maneuver(block, end, notes)
            for block, notes in zip(maneuvers, man_comments, strict=True)
        ),
        user_defined={k: v.value for k, v in values.items() if k.startswith("USER_DEFINED_")},
        comments=tuple(comments),
        lines={k: v.number for k, v in values.items()},
    )


def opm_state_gcrf(opm: Opm) -> tuple[str, tuple[float, ...], tuple[float, ...]]:
    """The OPM's epoch (UTC ISO) and state in GCRF (km, km/s); Earth-centred messages only.

    A UTC epoch in GCRF/ICRF comes back exactly as written (no arithmetic on the numbers).
    """
    line = opm.lines.get("CENTER_NAME", 0)
    if opm.center_name.upper() != "EARTH":
        raise InputError(
            where(line, "CENTER_NAME"), opm.center_name, "only Earth-centred OPMs become cases"
        )
    epoch = ccsds_epoch_utc(opm.epoch, opm.time_system, opm.lines["EPOCH"], "EPOCH")
    if opm.ref_frame in ("GCRF", "ICRF"):
        return epoch, opm.r_km, opm.v_km_s
    ts = utc_scales(epoch)
    frame_ts = None
    if opm.ref_frame_epoch is not None:
        frame_epoch = ccsds_epoch_utc(
            opm.ref_frame_epoch, opm.time_system, opm.lines["REF_FRAME_EPOCH"], "REF_FRAME_EPOCH"
        )
        frame_ts = utc_scales(frame_epoch, "REF_FRAME_EPOCH")
    r, v = state_to_gcrf(
        opm.ref_frame, opm.r_km, opm.v_km_s, ts, frame_ts, opm.lines.get("REF_FRAME", 0)
    )
    return epoch, tuple(float(x) for x in r), tuple(float(x) for x in v)
