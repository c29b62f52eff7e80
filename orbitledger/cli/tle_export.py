"""``orbitledger export CASE --format tle``: a TLE fitted to the planned orbit, and its residual.

The TLE text goes to stdout or ``--out FILE``; the fit's report (span, RMS and largest position
residual) goes to stderr, with a warning when the largest residual exceeds ``--warn-km``.
"""

from __future__ import annotations

import argparse
import sys
import warnings
from collections.abc import Callable
from typing import Any

__all__ = ["add_tle_options", "fit_report", "run_tle_export"]


def add_tle_options(parser: argparse.ArgumentParser) -> None:
    tle = parser.add_argument_group("tle only")
    tle.add_argument("--norad-id", type=int, default=99999, metavar="N",
                     help="catalog number, 0 to 99999 (default 99999)")  # fmt: skip
    tle.add_argument("--name", metavar="NAME",
                     help="line 0, at most 24 characters (default the spacecraft's name)")  # fmt: skip
    tle.add_argument("--fit-days", type=float, default=1.0, metavar="D",
                     help="fit span from the window's start, days (default 1)")  # fmt: skip
    tle.add_argument("--fit-step", type=float, default=60.0, metavar="S",
                     help="fit epochs every S seconds (default 60)")  # fmt: skip
    tle.add_argument("--warn-km", type=float, metavar="KM",
                     help="warn when the largest residual exceeds KM (default 1)")  # fmt: skip


def fit_report(fit: Any) -> list[str]:
    """The fit's summary lines (span, model, RMS, largest residual)."""
    bstar = "fitted" if fit.fitted_bstar else "0 (no drag in the case's model)"
    return [
        f"TLE fit: SGP4 (WGS-72) mean elements by least squares on TEME position, "
        f"{fit.residual_km.size} epochs every {fit.step_s:g} s over {fit.span_s / 86400.0:.3f} "
        f"day from {fit.times_utc[0]}, against the case's {fit.propagator} trajectory; "
        f"BSTAR {bstar}",
        f"TLE fit residual: RMS {_distance(fit.rms_km)}, max {_distance(fit.max_km)} at "
        f"{fit.max_at_utc} (osculating elements as a TLE: RMS {fit.initial_rms_km:.1f} km)",
    ]


def _distance(km: float) -> str:
    """Metres to 0.1 m below 10 km, km to the metre above."""
    return f"{km * 1000.0:.1f} m" if km < 10.0 else f"{km:.3f} km"


def run_tle_export(
    args: argparse.Namespace,
    case: Any,
    write: Callable[[str, argparse.Namespace], None],
    with_file: Callable[[Exception, str], Exception],
) -> int:
    from ..exchange.opm_export import OPM_CAUTION
    from ..exchange.tle_fit import TLE_FIT_WARN_KM, fit_tle
    from ..kernel.errors import InputError

    if args.warn_km is None:
        args.warn_km = TLE_FIT_WARN_KM

    for option, value in (("--fit-days", args.fit_days), ("--fit-step", args.fit_step),
                          ("--warn-km", args.warn_km)):  # fmt: skip
        if not value > 0.0:
            raise InputError(option, value, "must be a positive number")
    if not 0 <= args.norad_id <= 99999:
        raise InputError("--norad-id", args.norad_id, "must be 0 to 99999 (five digits)")
    if args.name is not None and (len(args.name) > 24 or not args.name.isascii()):
        raise InputError("--name", args.name, "must be at most 24 ASCII characters (TLE line 0)")
    try:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            fit = fit_tle(
                case,
                span_s=args.fit_days * 86_400.0,
                step_s=args.fit_step,
                catalog_number=args.norad_id,
                name=args.name,
            )
    except InputError as err:
        raise with_file(err, args.case) from None
    for line in dict.fromkeys(str(w.message) for w in caught):
        print(f"orbitledger export: warning: {line}", file=sys.stderr)
    write(fit.text, args)
    for line in fit_report(fit):
        print(f"orbitledger export: {line}", file=sys.stderr)
    if fit.max_km > args.warn_km:
        print(
            f"orbitledger export: warning: the largest fit residual, {fit.max_km:.3f} km, "
            f"exceeds {args.warn_km:g} km: SGP4 cannot follow this trajectory closely (its "
            f"{fit.propagator} model differs from SGP4's; a numerical case with J2 or more fits "
            "best); the TLE adds that error to every use",
            file=sys.stderr,
        )
    print(f"orbitledger export: caution: {OPM_CAUTION}", file=sys.stderr)
    return 0
