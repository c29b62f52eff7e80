"""The orbit of a case as kernel quantities, and re-expressed in another form.

The case holds the orbit as the analyst wrote it; the kernel takes osculating classical
elements or a GCRF state. These functions are the one bridge between the two.
"""

from __future__ import annotations

import math

import numpy as np

from ..kernel.anomalies import mean_to_true_anomaly
from ..kernel.constants import Body
from ..kernel.elements import Elements, elements_to_state, state_to_elements
from .errors import CaseError
from .fields import normalise_angle_deg
from .orbit import ApsidesOrbit, CartesianOrbit, ClassicalOrbit

__all__ = ["check_orbit_paths", "orbit_elements", "orbit_state", "orbit_in_form"]

OrbitModel = ClassicalOrbit | ApsidesOrbit | CartesianOrbit


def _true_anomaly_deg(orbit: ClassicalOrbit | ApsidesOrbit, e: float) -> float:
    if orbit.nu_deg is not None:
        return orbit.nu_deg
    nu_rad = mean_to_true_anomaly(math.radians(orbit.mean_anomaly_deg), e)
    return normalise_angle_deg(math.degrees(float(nu_rad)))


def orbit_elements(orbit: OrbitModel, body: Body) -> Elements:
    """Osculating classical elements at the epoch (floats; a_km < 0 for a hyperbolic orbit)."""
    if isinstance(orbit, CartesianOrbit):
        found = state_to_elements(
            np.asarray(orbit.r_km, dtype=float),
            np.asarray(orbit.v_km_s, dtype=float),
            body.mu_km3_s2,
        )
        return Elements(*(float(getattr(found, f)) for f in _ELEMENT_FIELDS))
    if isinstance(orbit, ApsidesOrbit):
        rp = body.radius_km + orbit.periapsis_alt_km
        ra = body.radius_km + orbit.apoapsis_alt_km
        a_km, e = 0.5 * (rp + ra), (ra - rp) / (ra + rp)
    else:
        a_km = orbit.a_km if orbit.a_km is not None else body.radius_km + orbit.altitude_km
        e = orbit.e
    return Elements(
        a_km=float(a_km),
        e=float(e),
        i_deg=orbit.i_deg,
        raan_deg=orbit.raan_deg,
        argp_deg=orbit.argp_deg,
        nu_deg=_true_anomaly_deg(orbit, e),
    )


_ELEMENT_FIELDS = ("a_km", "e", "i_deg", "raan_deg", "argp_deg", "nu_deg")


def orbit_state(orbit: OrbitModel, body: Body) -> tuple[np.ndarray, np.ndarray]:
    """GCRF position (km) and velocity (km/s) at the epoch, each shape (3,)."""
    if isinstance(orbit, CartesianOrbit):
        return np.array(orbit.r_km, dtype=float), np.array(orbit.v_km_s, dtype=float)
    r_km, v_km_s = elements_to_state(orbit_elements(orbit, body), body.mu_km3_s2)
    return np.asarray(r_km, dtype=float), np.asarray(v_km_s, dtype=float)


def _anomaly(orbit: OrbitModel, elements: Elements) -> dict[str, float]:
    if isinstance(orbit, (ClassicalOrbit, ApsidesOrbit)) and orbit.mean_anomaly_deg is not None:
        return {"mean_anomaly_deg": orbit.mean_anomaly_deg}
    return {"nu_deg": float(elements.nu_deg)}


def orbit_in_form(orbit: OrbitModel, form: str, body: Body) -> dict:
    """The same orbit as the data of another form: "classical", "apsides" or "cartesian".

    From apsides to classical the altitude form is kept (altitude_km is the mean of the two
    apsis altitudes, with no round trip through the body radius); from a Cartesian state the
    classical form carries a_km. The kind of anomaly (true or mean) is kept where there is one.
    Raises CaseError for an unknown form, or the apsides form of an orbit with e >= 1.
    """
    if form == orbit.form:
        return orbit.model_dump(mode="json")
    angles = ("i_deg", "raan_deg", "argp_deg")
    if form == "cartesian":
        r_km, v_km_s = orbit_state(orbit, body)
        return {
            "form": "cartesian",
            "frame": "GCRF",
            "r_km": r_km.tolist(),
            "v_km_s": v_km_s.tolist(),
        }
    elements = orbit_elements(orbit, body)
    if form == "classical":
        if isinstance(orbit, ApsidesOrbit):
            size = {"altitude_km": 0.5 * (orbit.periapsis_alt_km + orbit.apoapsis_alt_km)}
        else:
            size = {"a_km": float(elements.a_km)}
        shape = {"e": float(elements.e), **{k: float(getattr(elements, k)) for k in angles}}
        return {"form": "classical", **size, **shape, **_anomaly(orbit, elements)}
    if form == "apsides":
        a_km, e = float(elements.a_km), float(elements.e)
        if e >= 1.0:
            raise CaseError(
                "orbit.form",
                form,
                f"the apsides form is for elliptic orbits (e < 1); here e = {e!r}",
            )
        return {
            "form": "apsides",
            "periapsis_alt_km": a_km * (1.0 - e) - body.radius_km,
            "apoapsis_alt_km": a_km * (1.0 + e) - body.radius_km,
            **{k: float(getattr(elements, k)) for k in angles},
            **_anomaly(orbit, elements),
        }
    raise CaseError("orbit.form", form, "must be one of classical, apsides, cartesian")


_FORM_MODELS = {"classical": ClassicalOrbit, "apsides": ApsidesOrbit, "cartesian": CartesianOrbit}
_FORM_WORDS = {
    "classical": "classical elements",
    "apsides": "apsis altitudes",
    "cartesian": "a Cartesian state",
}


def check_orbit_paths(orbit: OrbitModel, changes: dict) -> None:
    """Refuse a change of ``orbit.X`` where X is a field of another orbit form than the case's
    (a study sweeping ``orbit.altitude_km`` over a case given in apsis altitudes): one message
    naming the field, its form and the case's form, instead of "unknown field"."""
    from .changes import parse_path

    own = type(orbit).model_fields
    if "orbit.form" in changes:
        return  # the change sets the form itself: the new form's fields are expected
    for path, value in changes.items():
        tokens = parse_path(path)
        if len(tokens) != 2 or tokens[0] != "orbit" or tokens[1] in own:
            continue
        name = tokens[1]
        forms = [f for f, model in _FORM_MODELS.items() if name in model.model_fields]
        if not forms:
            continue  # unknown in every form: the model's own message says so
        fields = ", ".join(k for k in own if k != "form")
        raise CaseError(
            path,
            value,
            f"{name} is a field of the {forms[0]} orbit form, but this case gives its orbit as "
            f"{_FORM_WORDS[orbit.form]} (orbit.form = '{orbit.form}'): change one of {fields}, "
            f"or convert the case first with case.with_orbit_form('{forms[0]}')",
        )
