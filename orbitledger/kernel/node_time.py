"""The RAAN that puts an orbit's node at a chosen local time: the inverse of the node times.

``eclipses.node_local_times_h`` gives the local *mean* solar time of the nodes, UT1 +
longitude / (15 deg/h), with the node taken on the GCRF equator and its longitude from the
ITRF (common practice). This module inverts it at one epoch: given the wanted local time of
the ascending or descending node, the GCRF right ascension of the ascending node. The map from
RAAN to the node's local time is a rotation (plus the small tilt between the GCRF and the
equator of date, about 0.3 deg of precession by 2030), so a few Newton steps on
local time(RAAN) converge to rounding.
"""

from __future__ import annotations

import math

import numpy as np

from .errors import InputError
from .frames import gcrf_to_itrf
from .timescales import EpochLike, time_scales

__all__ = ["node_local_time_h", "raan_for_node_local_time_deg"]

_NODES = ("ascending", "descending")


def node_local_time_h(
    raan_deg: float, epoch_utc: EpochLike, *, node: str = "ascending", dut1_s: float = 0.0
) -> float:
    """Local mean solar time, h in [0, 24), of the ascending or descending node of an orbit
    with GCRF right ascension of the ascending node ``raan_deg`` at ``epoch_utc``.

    As ``eclipses.node_local_times_h`` (UT1 + ITRF longitude of the node / 15 deg/h). Polar
    motion moves the node's longitude by under 1e-5 deg and is left out.
    """
    if node not in _NODES:
        raise InputError("node", node, "must be 'ascending' or 'descending'")
    ra = math.radians(raan_deg) + (math.pi if node == "descending" else 0.0)
    ts = time_scales(epoch_utc, dut1_s=dut1_s)
    itrf = gcrf_to_itrf(np.array([math.cos(ra), math.sin(ra), 0.0]), ts)
    lon_deg = math.degrees(math.atan2(float(itrf[1]), float(itrf[0])))
    ut1_h = (((float(ts.ut11) - 0.5) % 1.0 + float(ts.ut12) % 1.0) % 1.0) * 24.0
    return (ut1_h + lon_deg / 15.0) % 24.0


def raan_for_node_local_time_deg(
    local_time_h: float, epoch_utc: EpochLike, *, node: str = "descending", dut1_s: float = 0.0
) -> float:
    """RAAN, deg in [0, 360), whose ``node`` lies at local mean solar time ``local_time_h``.

    Given 0 <= local_time_h < 24 and an epoch (UTC). The inverse of ``node_local_time_h`` to
    better than 1e-9 h. A sun-synchronous orbit keeps that local time as the node turns with
    the mean Sun (Vallado 4th ed., Sec. 11.4.1); any other orbit has it at the epoch only.
    """
    if not (math.isfinite(local_time_h) and 0.0 <= local_time_h < 24.0):
        raise InputError("local_time_h", local_time_h, "must lie in [0, 24) h")
    raan = 0.0
    for _ in range(6):
        miss_h = (local_time_h - node_local_time_h(raan, epoch_utc, node=node, dut1_s=dut1_s) + 12.0) % 24.0 - 12.0  # fmt: skip
        raan = (raan + miss_h * 15.0) % 360.0
        if abs(miss_h) < 1e-10:
            break
    return raan
