"""Times for Bokeh datetime axes: UTC as milliseconds since 1970-01-01T00:00:00 UTC.

Bokeh's datetime axis counts milliseconds of a day of 86 400 s. A UTC quasi Julian date
(ERFA's two-part form, where a leap-second day is stretched to 86 401 s) maps onto it
linearly day by day, so an axis tick never lands a second off except inside a leap-second
day, where the error is below one second: invisible on a plot.
"""

from __future__ import annotations

import numpy as np

from ..kernel.timescales import TimeScales, parse_utc, time_scales

__all__ = ["UNIX_EPOCH_JD", "utc_ms", "utc_ms_after"]

UNIX_EPOCH_JD = 2440587.5  # 1970-01-01T00:00:00 UTC as a Julian date (common practice)
_MS_PER_DAY = 86_400_000.0


def utc_ms(times) -> np.ndarray:
    """Milliseconds since 1970 UTC of ``times``: anything ``kernel.parse_utc`` takes
    (ISO strings, datetimes, ``datetime64``, a ``(jd1, jd2)`` UTC pair) or a ``TimeScales``."""
    if isinstance(times, TimeScales):
        jd1, jd2 = times.utc1, times.utc2
    elif isinstance(times, np.ndarray) and np.issubdtype(times.dtype, np.datetime64):
        return times.astype("datetime64[us]").astype(np.int64) / 1000.0
    else:
        jd1, jd2 = parse_utc(times, "times_utc")
    return ((np.asarray(jd1, dtype=float) - UNIX_EPOCH_JD) + np.asarray(jd2)) * _MS_PER_DAY


def utc_ms_after(epoch_utc, dt_s) -> np.ndarray:
    """Milliseconds since 1970 UTC of ``epoch_utc`` plus ``dt_s`` elapsed SI seconds."""
    return utc_ms(time_scales(epoch_utc, offset_s=np.asarray(dt_s, dtype=float)))
