"""The window's epochs computed once: a trajectory that remembers its evaluations, and what
depends on the window alone (time scales, the Sun, the Earth's rotation) shared by the cases
whose window is the same, so that an edit of the orbit reuses them."""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np

from orbitledger.kernel import frames
from orbitledger.kernel.propagation import Trajectory
from orbitledger.kernel.sun import sun_position_gcrf_km

__all__ = ["remembering", "same_window", "sun_positions_km"]


@dataclass(frozen=True, eq=False)
class _RememberingTrajectory(Trajectory):
    """A trajectory that remembers its last evaluations at arrays of offsets: the ground
    track, its time tags and the shadow flags all read the same epochs, so the propagation
    and the time-scale conversion (leap-second look-ups per epoch) run once per edit."""

    def _memo(self, key: str, t: Any, compute: Callable[[], Any]) -> Any:
        # Keyed by the offsets array itself (kept, so its id is not reused): the Sun's coarse
        # nodes in between do not push out the window's epochs.
        memo = self.__dict__.setdefault("_last", {})
        hit = memo.get((key, id(t)))
        if hit is not None and hit[0] is t:
            return hit[1]
        value = compute()
        memo[(key, id(t))] = (t, value)
        while len(memo) > 4:
            del memo[next(iter(memo))]
        return value

    def times(self, offset_s: Any) -> Any:
        return self._memo(
            "times",
            offset_s,
            lambda: same_window(self, "times", offset_s, lambda: Trajectory.times(self, offset_s)),
        )

    def gcrf(self, offset_s: Any) -> tuple[np.ndarray, np.ndarray]:
        return self._memo("gcrf", offset_s, lambda: Trajectory.gcrf(self, offset_s))

    def itrf(self, offset_s: Any, *, velocity: bool = False) -> tuple[np.ndarray, Any]:
        """``Trajectory.itrf`` with the GCRF-to-ITRF rotation of the window's epochs shared by
        the cases whose window is the same (it depends on the epochs alone): the same
        operations as ``frames.gcrf_to_itrf_state``, so the same numbers."""
        if velocity:
            return Trajectory.itrf(self, offset_s, velocity=True)
        r, _v = self.gcrf(offset_s)

        def rotation() -> Any:
            ts = self.times(offset_s)
            xp, yp = self.eop.pole_arcsec(ts)
            return frames._rotation_parts(ts, xp, yp)

        c2i, era, pom = same_window(self, "itrf-rotation", offset_s, rotation)
        r_tirs = frames._rz_apply(era, frames._matvec(c2i, frames._vectors(r, "r_km")))
        return frames._apply_pole(pom, r_tirs), None


def remembering(traj: Any) -> Any:
    return _RememberingTrajectory(
        **{f.name: getattr(traj, f.name) for f in dataclasses.fields(traj)}
    )


# The Sun moves about 1 deg a day along the ecliptic, so its position sampled every 30 min and
# interpolated linearly is off by under a kilometre at 1 au (the chord's sagitta, R theta^2/8,
# theta = 2.2e-4 rad): nothing at the scale of the Earth's shadow (common practice).
_SUN_NODE_S = 1800.0


def sun_positions_km(traj: Any, t: np.ndarray) -> np.ndarray:
    def compute() -> np.ndarray:
        nodes = np.arange(0.0, float(t[-1]) + _SUN_NODE_S, _SUN_NODE_S)
        at_nodes = sun_position_gcrf_km(traj.times(nodes)).reshape(-1, 3)
        return np.stack([np.interp(t, nodes, at_nodes[:, k]) for k in range(3)], axis=-1)

    return same_window(traj, "sun", t, compute)


_windows: dict[tuple, tuple[np.ndarray, Any]] = {}


def same_window(traj: Any, what: str, t: np.ndarray, compute: Callable[[], Any]) -> Any:
    """``compute()``, shared by the cases whose window is the same: same start (TAI), dUT1 and
    sample times. The epochs' time scales and the Sun's positions depend on nothing else, so
    an edit of the orbit reuses them; the last few windows are kept."""
    t = np.asarray(t, dtype=float)
    start = traj.start
    table = id(traj.eop.table) if getattr(traj.eop, "table", None) is not None else None
    key = (what, float(start.tai1), float(start.tai2), traj.eop.dut1_s, table, t.shape,
           hash(t.tobytes()))  # fmt: skip
    hit = _windows.get(key)
    if hit is not None and np.array_equal(hit[0], t):
        return hit[1]
    value = compute()
    _windows[key] = (t.copy(), value)
    while len(_windows) > 8:
        del _windows[next(iter(_windows))]
    return value
