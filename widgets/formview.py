"""Showing a case's orbit in another form: a view, not an edit.

Choosing another orbit form in the editor shows the orbit converted into that form, and changes
nothing: not the case, not its file, not its fingerprint. Choosing the case's own form again
shows the case's own values. Only an edit typed in the other form saves the case in that form
(the other fields as shown, the edited one as typed).

A conversion is exact to the last few bits of a double (a relative 1e-15 or so) but not to the
digit: classical to Cartesian and back gives e = 0.0010000000000000046 and argp =
89.99999999999991. The view shows each value rounded where the conversion's error lies: lengths
and speeds to 12 significant digits of the orbit's size (10 micrometres at 7000 km), the
eccentricity to 1e-12 and angles to 1e-9 deg (3.6 micro-arcseconds), far below what an input
states and far above the float noise, so 533.0818630000003 shows as 533.081863 and a velocity
component of 4.6e-16 km/s as 0 (common practice: show no digit that the computation does not
carry).
"""

from __future__ import annotations

import math
from typing import Any

from orbitledger.case.model import case_from_data

__all__ = ["rounded_orbit", "view_case"]

_ANGLES_DEG = ("i_deg", "raan_deg", "argp_deg", "nu_deg", "mean_anomaly_deg")
_WRAPPED = ("raan_deg", "argp_deg", "nu_deg", "mean_anomaly_deg")  # [0, 360): 360 shows as 0
_SIGNIFICANT = 12


def _decimals_for(scale: float) -> int:
    """Decimals that keep ``_SIGNIFICANT`` significant digits of a quantity of size ``scale``."""
    if not (math.isfinite(scale) and scale > 0.0):
        return _SIGNIFICANT
    return _SIGNIFICANT - int(math.floor(math.log10(scale))) - 1


def _round(x: float, decimals: int) -> float:
    return round(float(x), decimals) + 0.0  # + 0.0: no "-0.0" on screen


def rounded_orbit(orbit: dict[str, Any], size_km: float) -> dict[str, Any]:
    """The converted orbit data ``orbit`` rounded as described in the module docstring;
    ``size_km`` is the orbit's scale (its semi-major axis or radius)."""
    out = dict(orbit)
    length = _decimals_for(size_km)
    for key, value in orbit.items():
        if value is None or key in ("form", "frame"):
            continue
        if key in _ANGLES_DEG:
            shown = _round(value, 9)
            out[key] = 0.0 if key in _WRAPPED and shown == 360.0 else shown
        elif key == "e":
            out[key] = _round(value, 12)
        elif key == "r_km":
            out[key] = [_round(x, length) for x in value]
        elif key == "v_km_s":
            speed = math.sqrt(sum(float(x) ** 2 for x in value))
            out[key] = [_round(x, _decimals_for(speed)) for x in value]
        elif key.endswith("_km"):
            out[key] = _round(value, length)
    return out


def view_case(case: Any, form: str) -> Any:
    """``case`` with its orbit shown in ``form``, rounded (a validated case, never saved by
    itself); ``case`` itself when ``form`` is its own. Raises ``CaseError`` where the form
    does not apply (the apsides form of a hyperbolic orbit)."""
    if form == case.orbit.form:
        return case
    from orbitledger.case.forms import orbit_in_form

    converted = orbit_in_form(case.orbit, form, case.body_constants())
    size = abs(float(case.elements().a_km))
    data = case.to_data()
    data["orbit"] = rounded_orbit(converted, size)
    return case_from_data(data)
