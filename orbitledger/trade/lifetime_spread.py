"""The spread of the orbital lifetime over a Monte Carlo run: 5th, 50th and 95th percentiles.

``disperse`` (``orbitledger.trade.dispersion``) stores them in the result's ``attrs`` as
``lifetime_percentiles`` when the lifetime group was computed (so they are saved with the table
and its ``.attrs.json``); the ``disperse`` verb prints them; in a study notebook,
``note_lifetime_percentiles(frame)`` names them as results of the record.

Percentiles are the empirical quantiles of Hyndman & Fan ("Sample quantiles in statistical
packages", The American Statistician 50, 361-365, 1996), definition 1 (the inverse of the
empirical distribution: always one of the sampled lifetimes), so that samples that do not
re-enter within the span searched (an infinite lifetime) are ordered last without arithmetic on
infinity. Refused samples (the ``error`` column) are left out and counted.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

__all__ = [
    "LIFETIME_PERCENTILES",
    "lifetime_percentiles",
    "lifetime_spread_lines",
    "note_lifetime_percentiles",
]

LIFETIME_PERCENTILES = (5, 50, 95)
_COLUMN = "lifetime_years"


def lifetime_percentiles(frame: Any) -> dict[str, Any] | None:
    """{"p5", "p50", "p95" (years, None for no re-entry within the span), "samples" (used),
    "refused", "not_reentered", "method"} of ``frame``'s lifetime column, or None without one."""
    if _COLUMN not in getattr(frame, "columns", ()):
        return None
    values = np.asarray(frame[_COLUMN], dtype=float)
    refused = np.isnan(values)
    if "error" in frame.columns:
        refused |= np.asarray(frame["error"] != "", dtype=bool)
    used = values[~refused]
    out: dict[str, Any] = {
        "samples": int(used.size),
        "refused": int(refused.sum()),
        "not_reentered": int(np.isinf(used).sum()),
        "method": "empirical quantiles, Hyndman & Fan (1996) definition 1",
    }
    for p in LIFETIME_PERCENTILES:
        if used.size == 0:
            out[f"p{p}"] = None
            continue
        q = float(np.percentile(used, p, method="inverted_cdf"))
        out[f"p{p}"] = q if math.isfinite(q) else None
    return out


def lifetime_spread_lines(stats: dict[str, Any], searched_years: float | None = None) -> list[str]:
    """The percentiles as lines for a terminal."""

    def shown(value: float | None) -> str:
        if value is not None:
            return f"{value:.2f} y"
        return "no re-entry" + (f" within {searched_years:g} y" if searched_years else "")

    parts = ", ".join(f"p{p} {shown(stats[f'p{p}'])}" for p in LIFETIME_PERCENTILES)
    lines = [f"lifetime over {stats['samples']} samples: {parts}"]
    if stats["not_reentered"]:
        lines.append(f"  {stats['not_reentered']} samples do not re-enter within the span searched")
    if stats["refused"]:
        lines.append(f"  {stats['refused']} samples refused (left out)")
    return lines


def note_lifetime_percentiles(frame: Any) -> dict[str, Any] | None:
    """Name the lifetime percentiles of ``frame`` as results of the study's record
    (``lifetime_p5_years`` ...; a percentile without re-entry is left out). Returns them."""
    from ..study import note_result

    stats = frame.attrs.get("lifetime_percentiles") or lifetime_percentiles(frame)
    if stats is None:
        return None
    for p in LIFETIME_PERCENTILES:
        value = stats[f"p{p}"]
        if value is not None:
            note_result(
                f"lifetime_p{p}_years",
                value,
                "yr",
                f"{p}th percentile of the orbital lifetime over {stats['samples']} Monte Carlo "
                "samples (preliminary analysis with the stated models)",
            )
    return stats
