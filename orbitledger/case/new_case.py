"""A new study's starter case: the starter (``starter.STARTER_DATA``) with its own title, record
id, altitude and, for a sun-synchronous orbit, the inclination and RAAN of a chosen LTDN.

``orbitledger new PATH --title T --record-id ID --altitude-km H --sso-ltdn HH:MM`` calls
``new_case``. A refused value raises ``InputError`` whose field is the option's name.
"""

from __future__ import annotations

import copy
import math
import re
from typing import Any

from ..kernel.errors import InputError
from .errors import CaseError
from .model import Case, case_from_data
from .starter import STARTER_DATA

__all__ = ["new_case", "parse_clock_h"]

_CLOCK = re.compile(r"^(\d{1,2}):(\d{2})$")
_OPTIONS = {
    "meta.title": "--title",
    "meta.record_id": "--record-id",
    "orbit.altitude_km": "--altitude-km",
    "orbit.i_deg": "--altitude-km",
}


def parse_clock_h(text: str, option: str = "--sso-ltdn") -> float:
    """'HH:MM' (00:00 to 23:59) -> hours; InputError naming ``option`` otherwise."""
    found = _CLOCK.match(text.strip())
    if not found or int(found[1]) > 23 or int(found[2]) > 59:
        raise InputError(option, text, "must be a local time HH:MM from 00:00 to 23:59")
    return int(found[1]) + int(found[2]) / 60.0


def new_case(
    *,
    title: str | None = None,
    record_id: str | None = None,
    altitude_km: float | None = None,
    sso_ltdn: str | None = None,
) -> Case:
    """The starter case with the given fields set (each None keeps the starter's value).

    ``altitude_km``: the orbit's altitude (a minus the equatorial radius, km); the burn plan's
    raise-to-operational target moves with it, 5 km above. ``sso_ltdn``: 'HH:MM', local mean
    solar time of the descending node at the case epoch; sets the sun-synchronous inclination
    for the altitude and eccentricity (J2 nodal rate equal to the Sun's mean rate,
    ``kernel.j2.sun_synchronous_inclination_deg``) and the RAAN that puts the descending node
    at that time (``kernel.node_time``). Both use the osculating a and e of the case as mean
    elements, a difference of about 0.01 deg in inclination (common practice for a starter).
    """
    from ..kernel.j2 import sun_synchronous_inclination_deg
    from ..kernel.node_time import raan_for_node_local_time_deg

    data: dict[str, Any] = copy.deepcopy(STARTER_DATA)
    ltdn_h = parse_clock_h(sso_ltdn) if sso_ltdn is not None else None
    if altitude_km is not None:
        if not math.isfinite(altitude_km) or altitude_km <= 0.0:
            raise InputError("--altitude-km", altitude_km, "must be a positive number of km")
        data["orbit"]["altitude_km"] = float(altitude_km)
        for burn in data.get("burns", []):
            if burn.get("transfer", {}).get("altitude_km") is not None:
                target = float(altitude_km) + 5.0
                burn["transfer"]["altitude_km"] = target
                burn["name"] = f"raise to operational {target:g} km"
    if title is not None:
        data["meta"]["title"] = title
    if record_id is not None:
        data["meta"]["record_id"] = record_id
    orbit = data["orbit"]
    if altitude_km is not None or ltdn_h is not None:
        sso = "sun-synchronous" if ltdn_h is not None else "near-circular"
        text = f"{orbit['altitude_km']:g} km {sso}"
        if ltdn_h is not None:
            text += f", LTDN {sso_ltdn.strip()}"
        if title is None:
            data["meta"]["title"] = f"New study: {text}"
        data["meta"]["description"] = f"Starter case for a new study: {text}."
    try:
        case = case_from_data(data)
        if ltdn_h is not None:
            body = case.body_constants()
            a_km = orbit["altitude_km"] + body.radius_km
            try:
                i_deg = sun_synchronous_inclination_deg(a_km, orbit["e"], body)
            except InputError as err:
                raise InputError("--altitude-km", orbit["altitude_km"], err.reason) from None
            orbit["i_deg"] = round(float(i_deg), 6)
            dut1 = case.earth_orientation.dut1_s
            raan = raan_for_node_local_time_deg(ltdn_h, case.epoch_utc, dut1_s=dut1)
            orbit["raan_deg"] = round(raan, 6) % 360.0
            case = case_from_data(data)
    except CaseError as err:
        option = _OPTIONS.get(err.field)
        if option is None:
            raise
        raise InputError(option, err.value, err.reason) from None
    return case
