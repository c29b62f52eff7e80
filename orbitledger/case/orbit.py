"""The orbit section of a case: one of three forms, chosen by ``"form"``.

- ``classical``: a_km XOR altitude_km (altitude_km = a - the body's equatorial radius), e,
  i_deg, raan_deg, argp_deg, and nu_deg XOR mean_anomaly_deg. Hyperbolic orbits (e > 1) carry
  a_km < 0 (a = -mu / v_inf^2); e = 1 has no finite a and is given as a Cartesian state.
- ``apsides``: periapsis_alt_km and apoapsis_alt_km above the equatorial radius, with the
  same angles; elliptic orbits only.
- ``cartesian``: a GCRF position r_km and velocity v_km_s at the epoch.

Angles other than the inclination are normalised to [0, 360); the inclination lies in
[0, 180] deg. The hyperbolic mean anomaly (M = e sinh H - H) is not an angle and is kept as
written. The singular-orbit conventions (circular, equatorial) are those of
:mod:`orbitledger.kernel.elements`.
"""

from __future__ import annotations

import math
from typing import Annotated, Literal

from pydantic import Field, model_validator

from ..kernel.errors import InputError
from .fields import (
    Angle,
    CaseModel,
    Inclination,
    Length,
    Speed,
    normalise_angle_deg,
    ranged,
    rule,
)

__all__ = ["ClassicalOrbit", "ApsidesOrbit", "CartesianOrbit", "Orbit", "ORBIT_FORMS"]

MISSING = InputError.MISSING  # type: ignore[attr-defined]


def _check_one_anomaly(orbit: ClassicalOrbit | ApsidesOrbit) -> None:
    if orbit.nu_deg is None and orbit.mean_anomaly_deg is None:
        raise rule("nu_deg", MISSING, "required: give nu_deg (true anomaly) or mean_anomaly_deg")
    if orbit.nu_deg is not None and orbit.mean_anomaly_deg is not None:
        raise rule(
            "mean_anomaly_deg", orbit.mean_anomaly_deg, "give nu_deg or mean_anomaly_deg, not both"
        )


class ClassicalOrbit(CaseModel):
    """Classical (Keplerian) osculating elements at the epoch, in the GCRF."""

    form: Literal["classical"]
    a_km: Length | None = None
    """Semi-major axis, km (negative for a hyperbolic orbit). Give this or altitude_km."""
    altitude_km: Length | None = None
    """Semi-major axis minus the body's equatorial radius, km (elliptic orbits)."""
    e: ranged(0.0, 1e3, "")
    """Eccentricity (hyperbolic orbits up to 1000)."""
    i_deg: Inclination
    """Inclination to the GCRF equator, deg in [0, 180]."""
    raan_deg: Angle
    """Right ascension of the ascending node, deg (normalised to [0, 360))."""
    argp_deg: Angle
    """Argument of periapsis, deg (normalised to [0, 360))."""
    nu_deg: Angle | None = None
    """True anomaly at the epoch, deg. Give this or mean_anomaly_deg."""
    mean_anomaly_deg: ranged(-1e9, 1e9, "deg") | None = None
    """Mean anomaly at the epoch, deg (elliptic: normalised to [0, 360))."""

    @model_validator(mode="after")
    def _conic_rules(self) -> ClassicalOrbit:
        if self.a_km is None and self.altitude_km is None:
            raise rule("a_km", MISSING, "required: give a_km (semi-major axis) or altitude_km")
        if self.a_km is not None and self.altitude_km is not None:
            raise rule("altitude_km", self.altitude_km, "give a_km or altitude_km, not both")
        if self.e == 1.0:
            raise rule(
                "e",
                self.e,
                "a parabolic orbit (e = 1) has no finite a; give it as a Cartesian state",
            )
        if self.a_km is not None:
            if self.e < 1.0 and self.a_km <= 0.0:
                raise rule("a_km", self.a_km, "must be > 0 for an elliptic orbit (e < 1)")
            if self.e > 1.0 and self.a_km >= 0.0:
                raise rule(
                    "a_km",
                    self.a_km,
                    "must be < 0 for a hyperbolic orbit (e > 1): a = -mu / v_inf^2",
                )
        elif self.e > 1.0:
            raise rule(
                "altitude_km",
                self.altitude_km,
                "a hyperbolic orbit (e > 1) needs a_km < 0, not an altitude",
            )
        _check_one_anomaly(self)
        if self.e > 1.0 and self.nu_deg is not None:
            limit_deg = math.degrees(math.acos(-1.0 / self.e))
            nu_signed = self.nu_deg - 360.0 if self.nu_deg > 180.0 else self.nu_deg
            if abs(nu_signed) >= limit_deg:
                raise rule(
                    "nu_deg",
                    self.nu_deg,
                    f"beyond the asymptote of this hyperbola: the true anomaly must lie within "
                    f"+-{limit_deg:.6g} deg",
                )
        if self.e < 1.0 and self.mean_anomaly_deg is not None:
            # Frozen model: the normalised value is set once, during validation.
            object.__setattr__(self, "mean_anomaly_deg", normalise_angle_deg(self.mean_anomaly_deg))
        return self


class ApsidesOrbit(CaseModel):
    """An elliptic orbit by its periapsis and apoapsis altitudes, with the classical angles."""

    form: Literal["apsides"]
    periapsis_alt_km: Length
    """Periapsis radius minus the body's equatorial radius, km."""
    apoapsis_alt_km: Length
    """Apoapsis radius minus the body's equatorial radius, km (>= periapsis_alt_km)."""
    i_deg: Inclination
    raan_deg: Angle
    argp_deg: Angle
    nu_deg: Angle | None = None
    mean_anomaly_deg: Angle | None = None

    @model_validator(mode="after")
    def _apsides_rules(self) -> ApsidesOrbit:
        if self.apoapsis_alt_km < self.periapsis_alt_km:
            raise rule(
                "apoapsis_alt_km",
                self.apoapsis_alt_km,
                f"must be >= periapsis_alt_km ({self.periapsis_alt_km!r})",
            )
        _check_one_anomaly(self)
        return self


class CartesianOrbit(CaseModel):
    """A Cartesian state at the epoch: position and velocity in the GCRF."""

    form: Literal["cartesian"]
    frame: Literal["GCRF"] = "GCRF"
    r_km: Annotated[list[Length], Field(min_length=3, max_length=3)]
    """Position [x, y, z], km."""
    v_km_s: Annotated[list[Speed], Field(min_length=3, max_length=3)]
    """Velocity [vx, vy, vz], km/s."""

    @model_validator(mode="after")
    def _state_rules(self) -> CartesianOrbit:
        x, y, z = self.r_km
        vx, vy, vz = self.v_km_s
        r = math.sqrt(x * x + y * y + z * z)
        if r == 0.0:
            raise rule("r_km", self.r_km, "the position must not be the centre of the body")
        h = math.sqrt((y * vz - z * vy) ** 2 + (z * vx - x * vz) ** 2 + (x * vy - y * vx) ** 2)
        v = math.sqrt(vx * vx + vy * vy + vz * vz)
        if h <= 1e-12 * r * v or v == 0.0:
            raise rule(
                "v_km_s",
                self.v_km_s,
                "parallel to r_km (or zero): a straight-line fall has no orbit elements",
            )
        return self


Orbit = Annotated[ClassicalOrbit | ApsidesOrbit | CartesianOrbit, Field(discriminator="form")]
ORBIT_FORMS = ("classical", "apsides", "cartesian")
