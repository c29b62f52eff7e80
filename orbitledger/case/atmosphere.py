"""The case's flux scenario: the solar-flux and geomagnetic inputs of the density model.

``force_model.flux_scenario`` (optional; without it the scenario is the constant level named by
``force_model.solar_activity``) is one of

- ``{"kind": "constant", "level": "low" | "moderate" | "high"}``: an ECSS-E-ST-10-04C level
  (``orbitledger.kernel.flux.FLUX_LEVELS``), or ``{"kind": "constant", "f107_sfu": ...,
  "f107a_sfu": ..., "ap": ...}`` for stated values;
- ``{"kind": "solar-cycle", "minimum_utc": ..., "period_years": 11, "f107_min_sfu": 65,
  "f107_max_sfu": 250, "ap": 15}``: a repeating cycle with a minimum at ``minimum_utc``
  (default December 2019, the start of solar cycle 25);
- ``{"kind": "table", "file": "flux.csv"}``: the analyst's CSV of dated F10.7, F10.7a and Ap
  (``orbitledger.analysis.flux_scenario`` reads it; a relative path is taken from the current
  folder, as for the Earth-orientation file).
"""

from __future__ import annotations

from typing import Annotated, Literal

from pydantic import Field, model_validator

from .fields import CaseModel, UtcText, ranged, rule

__all__ = ["FluxScenario", "DENSITY_MODELS"]

DENSITY_MODELS = ("nrlmsis", "exponential")
# The bounds of orbitledger.kernel.flux.FLUX_LIMITS (F10.7 50-400 sfu, Ap 0-400).
_Flux = ranged(50.0, 400.0, "sfu")
_Ap = ranged(0.0, 400.0, "")


class FluxScenario(CaseModel):
    """The solar-flux scenario (F10.7, F10.7a, Ap over time) that drives the NRLMSIS model."""

    kind: Literal["constant", "solar-cycle", "table"]
    level: Literal["low", "moderate", "high"] | None = None
    """constant: an ECSS-E-ST-10-04C activity level (or give the three values instead)."""
    f107_sfu: _Flux | None = None
    """constant: daily F10.7 (solar flux units, 1e-22 W m^-2 Hz^-1)."""
    f107a_sfu: _Flux | None = None
    """constant: 81-day mean F10.7, sfu."""
    ap: _Ap | None = None
    """constant and solar-cycle: daily geomagnetic index Ap (solar-cycle default 15)."""
    minimum_utc: UtcText | None = None
    """solar-cycle: the date of a solar minimum (default 2019-12-15, start of cycle 25)."""
    period_years: ranged(5.5, 15.0, "years") | None = None
    """solar-cycle: length of the cycle, years (default 11)."""
    f107_min_sfu: _Flux | None = None
    """solar-cycle: F10.7 at minimum, sfu (default 65, ECSS low)."""
    f107_max_sfu: _Flux | None = None
    """solar-cycle: F10.7 at maximum, sfu (default 250, ECSS high)."""
    file: Annotated[str, Field(min_length=1, max_length=4096)] | None = None
    """table: a CSV file with columns date_utc, f107_sfu, f107a_sfu, ap."""

    @model_validator(mode="after")
    def _fields_of_kind(self) -> FluxScenario:
        allowed = {
            "constant": {"level", "f107_sfu", "f107a_sfu", "ap"},
            "solar-cycle": {"minimum_utc", "period_years", "f107_min_sfu", "f107_max_sfu", "ap"},
            "table": {"file"},
        }[self.kind]
        for name in ("level", "f107_sfu", "f107a_sfu", "ap", "minimum_utc", "period_years",
                     "f107_min_sfu", "f107_max_sfu", "file"):  # fmt: skip
            if getattr(self, name) is not None and name not in allowed:
                raise rule(name, getattr(self, name), f"is not used by a {self.kind!r} scenario")
        if self.kind == "constant":
            values = [self.f107_sfu, self.f107a_sfu, self.ap]
            if self.level is None and None in values:
                raise rule(
                    "level", None, "a constant scenario needs a level or f107_sfu, f107a_sfu and ap"
                )
            if self.level is not None and any(v is not None for v in values):
                raise rule("level", self.level, "give a level or the three values, not both")
        if self.kind == "table" and self.file is None:
            raise rule("file", None, "a table scenario needs the CSV file")
        if self.kind == "solar-cycle":
            lo = 65.0 if self.f107_min_sfu is None else self.f107_min_sfu
            hi = 250.0 if self.f107_max_sfu is None else self.f107_max_sfu
            if not lo < hi:
                raise rule("f107_max_sfu", hi, f"must be above F10.7 at minimum ({lo:g} sfu)")
        return self
