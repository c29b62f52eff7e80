"""A TLE for a planned orbit: SGP4 mean elements fitted to the case's own trajectory.

A TLE holds SGP4 mean elements, not osculating ones: converting the case's osculating state
element by element gives a TLE whose SGP4 positions drift from the case by kilometres within
an orbit (the short-period J2 terms alone are several km in low orbit). So the elements are
fitted instead:

1. the case's ephemeris over the fit span (``analysis.case_trajectory``, the case's own
   propagator) every ``step_s``, rotated from GCRF to TEME (``kernel.teme``);
2. least squares on position (``scipy.optimize.least_squares``, Levenberg-Marquardt) over the
   mean elements of SGP4 (``sgp4`` package, ``Satrec.sgp4init``, WGS-72 as the model was fitted
   with; Vallado, Crawford, Hujsak & Kelso 2006, AIAA 2006-6753), started from the osculating
   elements of the first state. The parameters are the non-singular set n, e cos w, e sin w,
   i, RAAN, w + M (near-circular orbits have no well-defined w); BSTAR joins them when the
   case's trajectory has drag (numerical with drag, or SGP4 from an imported TLE), and is
   zero otherwise;
3. the fitted elements written as a TLE (``tle_format.format_tle``, which rounds them to the
   format's columns), read back and propagated again: the residual reported is that of the
   written text, rounding included.

The epoch of the TLE is the start of the case's analysis window, rounded to the format's
1e-8 day. Method: orbit determination by batch least squares on positions is common practice
for making element sets from ephemerides (Vallado, "Fundamentals of Astrodynamics and
Applications", Ch. 10).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy.optimize import least_squares
from sgp4.api import WGS72, Satrec

from ..kernel.errors import InputError
from ..kernel.teme import gcrf_to_teme
from ..kernel.timescales import time_scales, utc_iso
from .tle import tle_teme_states
from .tle_format import TwoLineElements, format_tle, parse_tle

__all__ = ["TLE_FIT_WARN_KM", "TleFit", "fit_tle"]

TLE_FIT_WARN_KM = 1.0
"""Default warning level on the largest position residual of the fit, km. SGP4 element sets
are commonly taken as good to about a kilometre at their epoch in low orbit (common
practice); a fit worse than that adds an error of its own size to every use of the TLE."""

_MU_WGS72_KM3_S2 = 398_600.8  # WGS-72, the constants of SGP4 (sgp4.api.WGS72; AIAA 2006-6753)
_EPOCH0_JD = 2_433_281.5  # sgp4init's epoch origin: 1949 December 31 00:00 UT
_BAD_KM = 1.0e4  # residual given to an element set SGP4 refuses, so the search turns away


@dataclass(frozen=True)
class TleFit:
    """The fitted element set and how well the written TLE reproduces the case.

    ``text``: the TLE (name line when named, then lines 1 and 2); ``tle``: it parsed back;
    ``times_utc``, ``residual_km``: the fit epochs and |r_SGP4 - r_case| there (km, TEME);
    ``initial_rms_km``: the residual RMS of the osculating elements the fit started from.
    """

    text: str
    tle: TwoLineElements
    span_s: float
    step_s: float
    propagator: str
    fitted_bstar: bool
    times_utc: tuple[str, ...]
    residual_km: np.ndarray
    initial_rms_km: float

    @property
    def rms_km(self) -> float:
        return float(np.sqrt(np.mean(self.residual_km**2)))

    @property
    def max_km(self) -> float:
        return float(self.residual_km.max())

    @property
    def max_at_utc(self) -> str:
        return self.times_utc[int(self.residual_km.argmax())]


def _satrec(x: np.ndarray, epoch_jd: tuple[float, float], catalog: int) -> Satrec:
    n_rad_min, ex, ey, i, raan, lam = x[:6]
    bstar = float(x[6]) if len(x) > 6 else 0.0
    e = math.hypot(ex, ey)
    argp = math.atan2(ey, ex)
    sat = Satrec()
    sat.sgp4init(
        WGS72, "i", catalog, (epoch_jd[0] - _EPOCH0_JD) + epoch_jd[1], bstar, 0.0, 0.0,
        e, argp % math.tau, i, (lam - argp) % math.tau, n_rad_min, raan % math.tau,
    )  # fmt: skip
    return sat


def _positions(sat: Satrec, tsince_min: np.ndarray) -> np.ndarray | None:
    jd = np.full(tsince_min.shape, sat.jdsatepoch)
    err, r, _ = sat.sgp4_array(jd, sat.jdsatepochF + tsince_min / 1440.0)
    return None if sat.error or np.any(err) else r


def _initial(r: np.ndarray, v: np.ndarray) -> np.ndarray:
    """Osculating elements of one TEME state (WGS-72 mu) in the fit's parameters."""
    from ..kernel.elements import state_to_elements

    el = state_to_elements(r, v, _MU_WGS72_KM3_S2)
    if not float(el.e) < 1.0:
        raise InputError("orbit", float(el.e), "is not an ellipse: a TLE needs a closed orbit")
    w = math.radians(float(el.argp_deg))
    n = math.sqrt(_MU_WGS72_KM3_S2 / float(el.a_km) ** 3) * 60.0  # rad/min
    lam = w + math.radians(float(el.mean_anomaly_deg))
    e = float(el.e)
    return np.array(
        [n, e * math.cos(w), e * math.sin(w), math.radians(float(el.i_deg)),
         math.radians(float(el.raan_deg)), lam]
    )  # fmt: skip


def fit_tle(
    case: Any,
    *,
    span_s: float = 86_400.0,
    step_s: float = 60.0,
    catalog_number: int = 99_999,
    name: str | None = None,
) -> TleFit:
    """Fit SGP4 mean elements to ``case``'s trajectory over ``span_s`` from its window start.

    ``catalog_number`` (five digits) and ``name`` (line 0; default the spacecraft's name or
    an imported TLE's name line, upper case, at most 24 characters) label the element set. Raises ``InputError`` for a span
    or step that is not positive, a span with fewer than 10 epochs, or an orbit that is not
    an ellipse.
    """
    from ..analysis import case_trajectory

    if not (math.isfinite(span_s) and span_s > 0.0):
        raise InputError("span", span_s, "must be a positive number of seconds")
    if not (math.isfinite(step_s) and step_s > 0.0):
        raise InputError("step", step_s, "must be a positive number of seconds")
    if span_s / step_s < 9.0:
        raise InputError("span", span_s, f"holds fewer than 10 epochs at a {step_s:g} s step")
    if name is None:  # the spacecraft's name, else an imported TLE's line 0
        sc, source = case.spacecraft, case.source
        name = sc.name if sc is not None and sc.name else getattr(source, "name", "") or ""
        name = name.upper()[:24]
    traj = case_trajectory(case, duration_s=span_s)
    span = min(span_s, traj.end_s)
    t = np.arange(0.0, span, step_s)
    t = np.append(t, span) if t[-1] < span else t
    r_g, v_g = traj.gcrf(t)
    ts = traj.times(t)
    r_teme, v_teme = gcrf_to_teme(r_g, v_g, ts)
    assert v_teme is not None

    # The TLE epoch: the window's start rounded to the format's 1e-8 day.
    start_jd = (float(traj.start.utc1), float(traj.start.utc2))
    probe = parse_tle(_text(np.array([0.06, 0.0, 0.0, 0.5, 0.0, 0.0]), start_jd, catalog_number))
    epoch_jd = probe.epoch_jd_utc
    tsince = (float(traj.start.seconds_since(time_scales(epoch_jd))) + t) / 60.0

    fm = case.force_model
    fit_bstar = (fm.propagator == "numerical" and fm.drag) or fm.propagator == "sgp4"
    x0 = _initial(r_teme[0], v_teme[0])
    if fit_bstar:
        x0 = np.append(x0, 0.0)

    def residuals(x: np.ndarray) -> np.ndarray:
        if not 0.0 <= math.hypot(x[1], x[2]) < 0.99:
            return np.full(r_teme.size, _BAD_KM)
        r = _positions(_satrec(x, epoch_jd, catalog_number), tsince)
        return np.full(r_teme.size, _BAD_KM) if r is None else (r - r_teme).ravel()

    first = residuals(x0)
    initial_rms = float(np.sqrt(np.mean(first.reshape(-1, 3) ** 2) * 3.0))
    scale = np.array([1e-6, 1e-5, 1e-5, 1e-5, 1e-5, 1e-5, 1e-5][: len(x0)])
    solution = least_squares(residuals, x0, method="lm", x_scale=scale, xtol=1e-12, ftol=1e-12)
    text = _text(solution.x, epoch_jd, catalog_number, name)
    tle = parse_tle(text)
    r_fit, _ = tle_teme_states(tle, tsince)
    dist = np.linalg.norm(r_fit - r_teme, axis=-1)
    return TleFit(
        text=text,
        tle=tle,
        span_s=float(span),
        step_s=float(step_s),
        propagator=traj.propagator,
        fitted_bstar=bool(fit_bstar),
        times_utc=tuple(str(s) for s in utc_iso(ts.utc1, ts.utc2, 3)),
        residual_km=dist,
        initial_rms_km=initial_rms,
    )


def _text(x: np.ndarray, epoch_jd: tuple[float, float], catalog: int, name: str = "") -> str:
    n_rad_min, ex, ey, i, raan, lam = (float(v) for v in x[:6])
    argp = math.atan2(ey, ex)
    return format_tle(
        catalog_number=catalog,
        epoch_jd_utc=epoch_jd,
        mean_motion_rev_day=n_rad_min * 1440.0 / math.tau,
        e=math.hypot(ex, ey),
        i_deg=math.degrees(i),
        raan_deg=math.degrees(raan),
        argp_deg=math.degrees(argp),
        mean_anomaly_deg=math.degrees(lam - argp),
        bstar_per_earth_radius=float(x[6]) if len(x) > 6 else 0.0,
        name=name,
    )
