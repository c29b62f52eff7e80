"""The orbital elements of many cases at once, from the base case and the varied inputs.

The same conversion as the case model's ``Case.elements()`` (``orbitledger.case.forms``), on
arrays: it lets the orbit, J2 and repeat-track metrics of a million cases run as a few
vectorised kernel calls instead of a million validated cases.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from ..kernel.elements import Elements

__all__ = ["vector_elements", "vectorisable"]


_ORBIT_FIELDS = {
    "classical": ("a_km", "altitude_km", "e", "i_deg", "raan_deg", "argp_deg", "nu_deg",
                  "mean_anomaly_deg"),
    "apsides": ("periapsis_alt_km", "apoapsis_alt_km", "i_deg", "raan_deg", "argp_deg",
                "nu_deg", "mean_anomaly_deg"),
}  # fmt: skip


def _normalised_deg(x: np.ndarray) -> np.ndarray:
    """Angles into [0, 360), values in range kept exactly: the case model's rule, on arrays."""
    wrapped = np.mod(x, 360.0)
    wrapped = np.where(wrapped >= 360.0, 0.0, wrapped)
    return np.where((x >= 0.0) & (x < 360.0), x, wrapped) + 0.0


def vectorisable(base: Any, paths: Sequence[str]) -> bool:
    """Whether :func:`vector_elements` models every varied path that touches the orbit."""
    form = getattr(base.orbit, "form", None)
    for path in paths:
        if path.startswith("body"):
            return False
        if path.startswith("orbit"):
            field = path[len("orbit.") :]
            if form not in _ORBIT_FIELDS or field not in _ORBIT_FIELDS[form]:
                return False
    return True


def vector_elements(base: Any, inputs: Mapping[str, np.ndarray], count: int) -> Any:
    """Kernel ``Elements`` of every case at once: arrays of length ``count`` where an input
    varies, floats where it does not (the kernel broadcasts them).

    The same conversion as the case model's (``Case.elements()``): altitude to a over the
    body's equatorial radius, apsides to a and e, angles normalised to [0, 360), a mean
    anomaly solved for the true anomaly. Only for paths :func:`vectorisable` accepts.
    """
    from ..kernel.anomalies import mean_to_true_anomaly

    base_elements = base.elements()
    radius_km = base.body_constants().radius_km
    orbit = base.orbit.model_dump()

    def given(field: str) -> np.ndarray | None:
        path = f"orbit.{field}"
        return np.asarray(inputs[path], dtype=float) if path in inputs else None

    def value(field: str) -> np.ndarray | float:
        varied = given(field)
        if varied is not None:
            return varied
        if hasattr(base_elements, field):
            return float(getattr(base_elements, field))
        return float(orbit[field])

    if orbit["form"] == "apsides" and (
        given("periapsis_alt_km") is not None or given("apoapsis_alt_km") is not None
    ):
        rp = radius_km + value("periapsis_alt_km")
        ra = radius_km + value("apoapsis_alt_km")
        a_km, e = 0.5 * (rp + ra), (ra - rp) / (ra + rp)
    elif orbit["form"] == "classical":
        a_given, alt_given = given("a_km"), given("altitude_km")
        if a_given is not None:
            a_km = a_given
        elif alt_given is not None:
            a_km = radius_km + alt_given
        else:
            a_km = float(base_elements.a_km)
        e = value("e")
    else:
        a_km, e = float(base_elements.a_km), float(base_elements.e)
    nu_given, m_given = given("nu_deg"), given("mean_anomaly_deg")
    anomaly_moves = m_given is not None or (orbit["nu_deg"] is None and np.ndim(e) > 0)
    if nu_given is not None:
        nu_deg: np.ndarray | float = _normalised_deg(nu_given)
    elif anomaly_moves:
        m_deg = np.asarray(value("mean_anomaly_deg"), dtype=float)
        m_deg = np.where(np.asarray(e) < 1.0, _normalised_deg(m_deg), m_deg)
        nu_deg = _normalised_deg(np.degrees(mean_to_true_anomaly(np.radians(m_deg), e)))
    else:
        nu_deg = float(base_elements.nu_deg)

    def angle(field: str) -> np.ndarray | float:
        varied = given(field)
        return float(getattr(base_elements, field)) if varied is None else _normalised_deg(varied)

    return Elements(
        a_km=a_km,
        e=e,
        i_deg=value("i_deg"),
        raan_deg=angle("raan_deg"),
        argp_deg=angle("argp_deg"),
        nu_deg=nu_deg,
    )
