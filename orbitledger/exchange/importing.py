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

__all__ = ["ImportedCase", "orbit_case_data", "record_id_for", "tle_case"]

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
