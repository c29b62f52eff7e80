"""The burn plan and the delta-v budget inputs of a case.

A burn happens ``at`` an instant given one of three ways: ``{"epoch_utc": ...}``, the next
``{"apsis": "periapsis" | "apoapsis"}`` or the next ``{"node": "ascending" | "descending"}``
after the previous burn (after the epoch for the first). It is either an impulse given in the
local RTN frame (``dv_rtn_km_s``: radial, transverse, normal) or a ``transfer`` that the
burn-plan computation sizes: ``{"kind": "circular", "altitude_km": ...}`` (to a circular
orbit at that altitude) or ``{"kind": "inclination", "i_deg": ...}`` (a plane change).
"""

from __future__ import annotations

from typing import Annotated, Any, Literal

from pydantic import Discriminator, Field, Tag, model_validator

from ..kernel.errors import InputError
from .fields import (
    MAX_LIST_ITEMS,
    CaseModel,
    DeltaV,
    Inclination,
    Name,
    PositiveLength,
    UtcText,
    ranged,
    rule,
)

__all__ = [
    "AtEpoch",
    "AtApsis",
    "AtNode",
    "BurnAt",
    "CircularTransfer",
    "InclinationTransfer",
    "Transfer",
    "Burn",
    "Allowance",
    "Disposal",
    "Budget",
]

MISSING = InputError.MISSING  # type: ignore[attr-defined]


class AtEpoch(CaseModel):
    """At a given instant (UTC), not before the case epoch."""

    epoch_utc: UtcText


class AtApsis(CaseModel):
    """At the next periapsis or apoapsis after the previous burn."""

    apsis: Literal["periapsis", "apoapsis"]


class AtNode(CaseModel):
    """At the next ascending or descending node after the previous burn."""

    node: Literal["ascending", "descending"]


_AT_KEYS = ("epoch_utc", "apsis", "node")


def _burn_at_tag(value: Any) -> str | None:
    if isinstance(value, dict):
        present = [key for key in _AT_KEYS if key in value]
        return present[0] if len(present) == 1 else None
    return {AtEpoch: "epoch_utc", AtApsis: "apsis", AtNode: "node"}.get(type(value))


BurnAt = Annotated[
    Annotated[AtEpoch, Tag("epoch_utc")]
    | Annotated[AtApsis, Tag("apsis")]
    | Annotated[AtNode, Tag("node")],
    Discriminator(
        _burn_at_tag,
        custom_error_type="burn_at",
        custom_error_message="must be an object with exactly one of epoch_utc, apsis, node",
    ),
]


class CircularTransfer(CaseModel):
    """To a circular orbit at ``altitude_km`` above the equatorial radius."""

    kind: Literal["circular"]
    altitude_km: PositiveLength


class InclinationTransfer(CaseModel):
    """A plane change to inclination ``i_deg``."""

    kind: Literal["inclination"]
    i_deg: Inclination


Transfer = Annotated[CircularTransfer | InclinationTransfer, Field(discriminator="kind")]


class Burn(CaseModel):
    """One impulsive manoeuvre of the burn plan."""

    name: Name
    at: BurnAt
    dv_rtn_km_s: Annotated[list[DeltaV], Field(min_length=3, max_length=3)] | None = None
    """Impulse in the local radial / transverse / normal frame, km/s."""
    transfer: Transfer | None = None

    @model_validator(mode="after")
    def _impulse_or_transfer(self) -> Burn:
        if self.dv_rtn_km_s is None and self.transfer is None:
            raise rule("dv_rtn_km_s", MISSING, "required: give dv_rtn_km_s or transfer")
        if self.dv_rtn_km_s is not None and self.transfer is not None:
            raise rule("transfer", self.transfer.kind, "give dv_rtn_km_s or transfer, not both")
        return self


class Allowance(CaseModel):
    """A fixed line of the delta-v budget."""

    name: Name
    dv_km_s: ranged(0.0, 100.0, "km/s")
    per_year: bool = False
    """The line recurs every year of the mission."""
    margin: bool = False
    """The budget's margin is added to this line too."""


class Disposal(CaseModel):
    """End-of-life disposal inputs: the lifetime limit and where re-entry is taken to start."""

    lifetime_limit_years: ranged(0.0, 1000.0, "years", low_open=True)
    """Longest allowed orbital lifetime after the end of the mission, years."""
    reentry_altitude_km: ranged(0.0, 1000.0, "km", low_open=True) = 120.0
    """Altitude taken as re-entry, km (120 km is the usual interface, common practice)."""


class Budget(CaseModel):
    """Delta-v budget inputs."""

    mission_years: ranged(0.0, 100.0, "years", low_open=True)
    margin_percent: Annotated[float, Field(ge=0.0, le=200.0)] = 0.0
    """Margin added to every computed line, percent."""
    allowances: list[Allowance] = Field(default_factory=list, max_length=MAX_LIST_ITEMS)
    station_keeping: bool = False
    """Drag make-up per year from the drag model (needs the spacecraft's drag inputs)."""
    disposal: Disposal | None = None
