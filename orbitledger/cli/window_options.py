"""``--start``, ``--days`` and ``--min-elevation-deg``: one run over another window or mask.

The options change a copy of the case, never the file: ``--start`` sets ``window.start_utc``,
``--days`` sets ``window.duration_s`` (days of 86 400 s), ``--min-elevation-deg`` sets every
station's ``elevation_mask_deg`` (terrain masks still raise it where they are higher). The
changed case is validated as a file would be; a refused value names the option.
"""

from __future__ import annotations

import argparse
import math
from typing import Any

__all__ = ["add_window_options", "case_with_options"]


def _days(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"not a number of days: {text!r}") from None
    if not (math.isfinite(value) and 0.0 < value <= 3660.0):
        raise argparse.ArgumentTypeError(f"must be more than 0 and at most 3660 days: {text!r}")
    return value


def _degrees(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"not a number of degrees: {text!r}") from None
    if not (math.isfinite(value) and -5.0 <= value <= 90.0):
        raise argparse.ArgumentTypeError(f"must be in [-5, 90] deg: {text!r}")
    return value


def add_window_options(verb: argparse.ArgumentParser, *, min_elevation: bool) -> None:
    verb.add_argument(
        "--start",
        metavar="UTC",
        help="start of the window, ISO 8601 UTC (default: the case's window.start_utc or epoch)",
    )
    verb.add_argument(
        "--days", type=_days, help="length of the window in days (default: window.duration_s)"
    )
    if min_elevation:
        verb.add_argument(
            "--min-elevation-deg",
            type=_degrees,
            metavar="DEG",
            help="elevation mask of every station for this run, deg (terrain masks still apply)",
        )


def case_with_options(case: Any, args: argparse.Namespace) -> Any:
    """The case with the window and mask options applied (the case itself when none is given)."""
    from ..case import CaseError
    from ..kernel.errors import InputError

    changes: list[tuple[str, str, Any]] = []
    if getattr(args, "start", None) is not None:
        changes.append(("--start", "window.start_utc", args.start))
    if getattr(args, "days", None) is not None:
        changes.append(("--days", "window.duration_s", args.days * 86_400.0))
        if case.window.step_s > args.days * 86_400.0:
            changes.append(("--days", "window.step_s", args.days * 86_400.0))
    elevation = getattr(args, "min_elevation_deg", None)
    if elevation is not None:
        changes += [
            ("--min-elevation-deg", f"stations[{k}].elevation_mask_deg", elevation)
            for k in range(len(case.stations))
        ]
    for option, path, value in changes:
        try:
            case = case.with_changes({path: value})
        except CaseError as err:
            raise InputError(option, value, f"{path}: {err.reason}") from None
    return case
