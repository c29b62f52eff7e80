"""Cases made from imported orbits: a TLE (via SGP4) or a CCSDS OPM state vector.

The case's orbit is always the osculating Cartesian GCRF state at the case epoch; the case's
``source`` section keeps the imported text verbatim with its SHA-256 fingerprint, so a record
shows exactly what was read (docs/case-file.md, ``source``).
"""

from __future__ import annotations

import re
import warnings
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..case import SCHEMA_ID, Case, case_from_data
from ..kernel.errors import InputError
from .tle import TwoLineElements, parse_tle, tle_gcrf_states, warn_if_far

__all__ = ["ImportedCase", "opm_case", "orbit_case_data", "record_id_for", "tle_case"]

_PROPAGATORS = ("sgp4", "two-body", "j2-mean", "numerical")


@dataclass(frozen=True)
class ImportedCase:
    """A case made from an imported file, with the warnings the import raised (as text)."""

    case: Case
    kind: str
    warnings: tuple[str, ...] = field(default_factory=tuple)


def record_id_for(prefix: str, name: str) -> str:
    """A valid ``meta.record_id`` (letters, digits, ``.``, ``_``, ``-``; at most 64)."""
    tail = re.sub(r"[^A-Za-z0-9._-]+", "-", name).strip("-._") or "IMPORT"
    return f"{prefix}-{tail}"[:64]


def orbit_case_data(
    *,
    title: str,
    record_id: str,
    epoch_utc: str,
    r_km: Sequence[float],
    v_km_s: Sequence[float],
    source: dict[str, Any],
    propagator: str = "two-body",
    description: str = "",
    extra: dict[str, Any] | None = None,
) -> dict[str, Any]:
    """Case data (JSON) with a Cartesian GCRF orbit and a ``source`` section."""
    data: dict[str, Any] = {
        "schema": SCHEMA_ID,
        "meta": {"title": title[:200], "record_id": record_id, "description": description},
        "epoch_utc": epoch_utc,
        "orbit": {
            "form": "cartesian",
            "frame": "GCRF",
            "r_km": [float(x) for x in r_km],
            "v_km_s": [float(x) for x in v_km_s],
        },
        "force_model": {"propagator": propagator},
        "source": source,
    }
    data.update(extra or {})
    return data


def _check_propagator(propagator: str) -> None:
    if propagator not in _PROPAGATORS:
        raise InputError("propagator", propagator, f"must be one of {', '.join(_PROPAGATORS)}")


def tle_case(
    text: str | TwoLineElements,
    *,
    epoch_utc: str | None = None,
    propagator: str = "sgp4",
    title: str | None = None,
    record_id: str | None = None,
) -> ImportedCase:
    """A case from a two-line element set: the SGP4 state at ``epoch_utc``, rotated to GCRF.

    ``epoch_utc`` defaults to the TLE epoch; more than 3 days from it, a ``TleEpochWarning``
    says how far and why (SGP4's accuracy degrades). ``propagator``: ``"sgp4"`` (default: the
    case keeps SGP4 for its window analyses) or a kernel propagator that starts from the
    osculating state. The source section records the lines, their epoch and fingerprint, and
    that SGP4 mean elements are not osculating elements.
    """
    _check_propagator(propagator)
    tle = text if isinstance(text, TwoLineElements) else parse_tle(text)
    epoch = tle.epoch_utc if epoch_utc is None else epoch_utc
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        age = warn_if_far(tle, epoch, "the requested epoch")
        r, v = tle_gcrf_states(tle, epoch)
    for w in caught:
        warnings.warn(w.message, w.category, stacklevel=2)
    label = tle.name or f"catalog {tle.catalog_number}"
    note = (
        "SGP4 mean elements (TEME, WGS-72) are not osculating elements: the orbit is the "
        f"osculating GCRF state that SGP4 gives at the case epoch, {age:+.6f} days from the "
        "TLE epoch"
    )
    source = {
        "kind": "tle",
        "name": tle.name,
        "lines": [tle.line1, tle.line2],
        "epoch_utc": tle.epoch_utc,
        "note": note,
    }
    data = orbit_case_data(
        title=title or f"{label} from its TLE of {tle.epoch_utc}",
        record_id=record_id or record_id_for("TLE", tle.catalog_number),
        epoch_utc=epoch,
        r_km=np.asarray(r),
        v_km_s=np.asarray(v),
        source=source,
        propagator=propagator,
        description=f"Imported from a two-line element set ({label}, element set "
        f"{tle.element_set_number}).",
    )
    return ImportedCase(case_from_data(data), "tle", tuple(str(w.message) for w in caught))


def _opm_burns(opm: Any, epoch_utc: str) -> tuple[list[dict[str, Any]], list[str]]:
    """Impulsive RTN maneuvers as burns; the others named in warnings (no case form)."""
    from ..case.utc import utc_seconds_between
    from .ccsds import ccsds_epoch_utc

    burns, notes = [], []
    for k, man in enumerate(opm.maneuvers):
        label = f"OPM maneuver {k + 1} (line {man.line})"
        named = [c[5:].strip() for c in man.comments if c.startswith("Burn:")]  # ours
        if man.duration_s != 0.0 or man.ref_frame not in ("RTN", "RSW"):
            notes.append(
                f"{label} not imported: the case's burn plan holds impulsive burns in RTN, and "
                f"this one lasts {man.duration_s:g} s in {man.ref_frame}"
            )
            continue
        when = ccsds_epoch_utc(man.epoch_ignition, opm.time_system, man.line, "MAN_EPOCH_IGNITION")
        if utc_seconds_between(epoch_utc, when) < 0.0:
            notes.append(f"{label} not imported: it lies before the state's epoch")
            continue
        name = named[0] if named and named[0] else label
        burns.append({"name": name, "at": {"epoch_utc": when}, "dv_rtn_km_s": list(man.dv_km_s)})
    return burns, notes


def opm_case(
    text: str,
    *,
    file: str = "",
    propagator: str = "two-body",
    title: str | None = None,
    record_id: str | None = None,
) -> ImportedCase:
    """A case from a CCSDS OPM (KVN): its state vector in GCRF at its epoch (UTC).

    Spacecraft parameters become the spacecraft section when MASS, DRAG_AREA and DRAG_COEFF
    are all given; impulsive maneuvers in RTN become epoch burns; anything else that has no
    case form is named in the warnings (and the source note). The OPM text is kept verbatim.
    """
    from .opm import opm_state_gcrf, parse_opm

    _check_propagator(propagator)
    if propagator == "sgp4":
        raise InputError("propagator", propagator, "SGP4 propagates TLEs, not OPM state vectors")
    opm = parse_opm(text)
    epoch, r, v = opm_state_gcrf(opm)
    burns, notes = _opm_burns(opm, epoch)
    if opm.ref_frame.startswith("ITRF"):
        notes.append(
            f"REF_FRAME {opm.ref_frame}: rotated to GCRF with UT1 - UTC and polar motion taken "
            "as zero (the OPM states none); set earth_orientation and import again if known"
        )
    extra: dict[str, Any] = {}
    sc = opm.spacecraft
    if all(k in sc for k in ("MASS", "DRAG_AREA", "DRAG_COEFF")):
        extra["spacecraft"] = {
            "name": opm.object_name,
            "mass_kg": sc["MASS"],
            "drag_area_m2": sc["DRAG_AREA"],
            "drag_coefficient": sc["DRAG_COEFF"],
        }
    if burns:
        extra["burns"] = burns
    note = (
        f"CCSDS OPM {opm.version} from {opm.originator} ({opm.creation_date}): state in "
        f"{opm.ref_frame}, {opm.time_system}" + "".join(f"; {n}" for n in notes)
    )
    data = orbit_case_data(
        title=title or f"{opm.object_name} ({opm.object_id}) from an OPM of {opm.originator}",
        record_id=record_id or record_id_for("OPM", opm.object_id),
        epoch_utc=epoch,
        r_km=r,
        v_km_s=v,
        source={"kind": "opm", "text": text, "file": file, "note": note[:2000]},
        propagator=propagator,
        description=f"Imported from a CCSDS OPM ({opm.object_name}, {opm.object_id}).",
        extra=extra,
    )
    for n in notes:
        warnings.warn(n, UserWarning, stacklevel=2)
    return ImportedCase(case_from_data(data), "opm", tuple(notes))
