"""A case as a CCSDS OPM (KVN, CCSDS 502.0-B-2 Sec. 3 and 7).

The state vector is the case's osculating GCRF state at its epoch (UTC), every number written
by ``repr`` so that reading the message back gives the same doubles. Keplerian elements (with
the case body's GM) are added for closed orbits, spacecraft parameters when the case has a
spacecraft, and one maneuver block per burn that is an impulse fixed in time and in RTN
(``at.epoch_utc`` with ``dv_rtn_km_s``); burns placed at an apsis or node, or given as a
transfer, have no OPM form and are listed in a comment instead.
"""

from __future__ import annotations

import datetime as _dt
import math
from typing import Any

import numpy as np

from .._version import __version__
from ..kernel.constants import G0_M_S2
from .ccsds import ccsds_time, creation_time, number_text

__all__ = ["OPM_CAUTION", "opm_text"]

OPM_CAUTION = (
    "Preliminary analysis with the stated models; for collision avoidance, re-entry, disposal "
    "or launch decisions defer to authoritative ephemerides, the licensing authority and "
    "licensed practice."
)


def _kv(key: str, value: str, unit: str = "") -> str:
    return f"{key:<18} = {value}" + (f" [{unit}]" if unit else "")


def object_fields(case: Any) -> tuple[str, str]:
    """OBJECT_NAME and OBJECT_ID for a case: the spacecraft name (or title), the record id."""
    name = (case.spacecraft.name if case.spacecraft and case.spacecraft.name else "") or (
        case.meta.title
    )
    return name, case.meta.record_id


def header_comments(case: Any) -> list[str]:
    return [
        f"COMMENT Written by orbitledger {__version__} from case {case.meta.record_id}",
        f"COMMENT Case fingerprint (SHA-256 of its canonical JSON) {case.fingerprint}",
        f"COMMENT {OPM_CAUTION}",
    ]


def _maneuvers(case: Any) -> list[str]:
    out: list[str] = []
    mass = case.spacecraft.mass_kg if case.spacecraft else None
    isp = case.spacecraft.isp_s if case.spacecraft else None
    skipped = []
    for burn in case.burns:
        epoch = getattr(burn.at, "epoch_utc", None)
        if epoch is None or burn.dv_rtn_km_s is None:
            skipped.append(burn.name)
            continue
        dv = [float(x) for x in burn.dv_rtn_km_s]
        delta_m = 0.0
        if mass is not None and isp is not None:  # rocket equation (Tsiolkovsky), impulsive
            dv_mag = math.sqrt(sum(x * x for x in dv))
            delta_m = -mass * (1.0 - math.exp(-dv_mag * 1000.0 / (isp * G0_M_S2)))
            mass += delta_m
        out += [
            "COMMENT Impulsive burn, delta-v in RTN",
            f"COMMENT Burn: {burn.name}",
            _kv("MAN_EPOCH_IGNITION", ccsds_time(epoch)),
            _kv("MAN_DURATION", number_text(0.0), "s"),
            _kv("MAN_DELTA_MASS", number_text(delta_m), "kg"),
            _kv("MAN_REF_FRAME", "RTN"),
            *(_kv(f"MAN_DV_{k + 1}", number_text(dv[k]), "km/s") for k in range(3)),
        ]
    if skipped:
        out.insert(
            0,
            "COMMENT Burns without an OPM form (at an apsis or node, or a transfer): "
            + ", ".join(skipped),
        )
    return out


def opm_text(case: Any, *, originator: str = "orbitledger", now: _dt.datetime | None = None) -> str:
    """The OPM (KVN, version 2.0) of ``case``: header, metadata, state, elements, spacecraft,
    maneuvers. ``now`` sets CREATION_DATE (default: the current UTC time)."""
    r, v = case.state()
    name, object_id = object_fields(case)
    lines = [
        _kv("CCSDS_OPM_VERS", "2.0"),
        *header_comments(case),
        _kv("CREATION_DATE", creation_time(now)),
        _kv("ORIGINATOR", originator),
        "",
        _kv("OBJECT_NAME", name),
        _kv("OBJECT_ID", object_id),
        _kv("CENTER_NAME", case.body.name.upper()),
        _kv("REF_FRAME", "GCRF"),
        _kv("TIME_SYSTEM", "UTC"),
        "",
        "COMMENT State vector: osculating at the epoch",
        _kv("EPOCH", ccsds_time(case.epoch_utc)),
    ]
    for key, x, unit in zip(
        ("X", "Y", "Z", "X_DOT", "Y_DOT", "Z_DOT"),
        np.concatenate([r, v]),
        ("km",) * 3 + ("km/s",) * 3,
        strict=True,
    ):
        lines.append(_kv(key, number_text(x), unit))
    el = case.elements()
    if float(el.e) < 1.0:
        lines += [
            "",
            "COMMENT Keplerian elements: osculating, from the state vector",
            _kv("SEMI_MAJOR_AXIS", number_text(el.a_km), "km"),
            _kv("ECCENTRICITY", number_text(el.e)),
            _kv("INCLINATION", number_text(el.i_deg), "deg"),
            _kv("RA_OF_ASC_NODE", number_text(el.raan_deg), "deg"),
            _kv("ARG_OF_PERICENTER", number_text(el.argp_deg), "deg"),
            _kv("TRUE_ANOMALY", number_text(el.nu_deg), "deg"),
            _kv("GM", number_text(case.body_constants().mu_km3_s2), "km**3/s**2"),
        ]
    sc = case.spacecraft
    if sc is not None:
        lines += [
            "",
            "COMMENT Spacecraft parameters",
            _kv("MASS", number_text(sc.mass_kg), "kg"),
            _kv("DRAG_AREA", number_text(sc.drag_area_m2), "m**2"),
            _kv("DRAG_COEFF", number_text(sc.drag_coefficient)),
        ]
    man = _maneuvers(case)
    if man:
        lines += ["", *man]
    return "\n".join(lines) + "\n"
