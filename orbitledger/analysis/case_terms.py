"""Kernel errors in the case's words: kernel argument names translated to case fields.

The kernel names its own arguments when it refuses a value (``elements``,
``ballistic_coefficient_kg_m2``, ``initial_mass_kg``); a user wrote case fields
(``orbit.altitude_km``, ``spacecraft.drag_area_m2``). Every analysis that hands a case to the
kernel runs it inside :func:`case_terms` with the table of what each argument came from, so
that the one line a user reads names the field to change. Errors that already name a case
field (a ``CaseError``, a dotted path) pass through unchanged.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator, Mapping
from contextlib import contextmanager
from typing import Any

from ..kernel.errors import InputError

__all__ = [
    "after_burns_field",
    "case_terms",
    "orbit_field",
    "reentry_or_orbit_field",
    "refuse_far_disposal",
]

Translation = str | tuple[str, Any, Callable[[InputError], str]]
"""A case path, or (path, the value the user wrote, reason from the kernel's error)."""


@contextmanager
def case_terms(names: Mapping[str, Translation]) -> Iterator[None]:
    """Re-raise a kernel ``InputError`` whose field is a key of ``names`` under its case path."""
    try:
        yield
    except InputError as err:
        found = names.get(err.field)
        if found is None:
            raise
        if isinstance(found, str):
            raise InputError(found, err.value, err.reason, file=err.file) from None
        path, value, reason = found
        raise InputError(path, value, reason(err), file=err.file) from None


def orbit_field(case: Any) -> tuple[str, Any]:
    """(path, value) of the field that sets the size of the case's orbit, as the user wrote it."""
    orbit = case.orbit
    for name in ("altitude_km", "a_km", "periapsis_alt_km", "r_km"):
        value = getattr(orbit, name, None)
        if value is not None:
            return f"orbit.{name}", value
    return "orbit", InputError.MISSING  # type: ignore[attr-defined]


def after_burns_field(case: Any) -> tuple[str, Any]:
    """(path, value) of what sets the orbit after the burn plan: the last burn, or the orbit."""
    if case.burns:
        k = len(case.burns) - 1
        return f"burns[{k}]", case.burns[k].name
    return orbit_field(case)


def reentry_or_orbit_field(
    case: Any, elements: Any, reentry_km: float, *, after_burns: bool
) -> tuple[str, Any]:
    """What to name when the kernel refuses an orbit whose perigee is below the re-entry
    altitude: ``budget.disposal.reentry_altitude_km`` when the case raised it above the
    perigee (the default is 120 km), else the field that made the orbit."""
    perigee_alt = float(elements.a_km) * (1.0 - float(elements.e))
    perigee_alt -= case.body_constants().radius_km
    disposal = case.budget.disposal if case.budget is not None else None
    if disposal is not None and perigee_alt > DEFAULT_REENTRY_KM:
        return "budget.disposal.reentry_altitude_km", reentry_km
    return after_burns_field(case) if after_burns else orbit_field(case)


DEFAULT_REENTRY_KM = 120.0
MAX_DISPOSAL_APOAPSIS_KM = 100_000.0
"""Drag disposal (perigee lowering) is planned for orbits with apoapsis below 100,000 km
altitude: far above GEO (35,786 km), where drag lowering is not how an orbit is disposed of and
the Moon's pull, left out of the decay model, matters (common practice)."""


def refuse_far_disposal(case: Any, apoapsis_alt_km: float) -> None:
    """Refuse a drag disposal plan for an operational orbit beyond ``MAX_DISPOSAL_APOAPSIS_KM``."""
    if apoapsis_alt_km > MAX_DISPOSAL_APOAPSIS_KM:
        path, value = after_burns_field(case)
        raise InputError(
            path,
            value,
            f"leaves an apoapsis {apoapsis_alt_km:.6g} km high; drag disposal (perigee "
            f"lowering) is planned below {MAX_DISPOSAL_APOAPSIS_KM:,.0f} km: remove "
            "budget.disposal or lower the orbit",
        )
