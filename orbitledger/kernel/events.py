"""Intervals where a smooth function of time is positive, refined by vectorised root finding.

Used by station passes (elevation minus mask) and eclipses (depth inside the shadow cone).
The function is sampled on a coarse grid for several channels at once (stations, or the
penumbra and umbra boundaries); each sign change brackets a root, and all brackets are refined
together by Chandrupatla's method (T. R. Chandrupatla, "A new hybrid quadratic/bisection
algorithm for finding the zero of a nonlinear function without using derivatives", Advances
in Engineering Software 28 (1997) 145-149; ``scipy.optimize.elementwise.find_root``), which
keeps the bracket and converges superlinearly: a handful of vectorised evaluations reach
``xatol``.

An interval shorter than the grid step may fall between two samples. Such an interval shows
as a local maximum of the samples below zero; for a function that is parabolic near its peak,
the peak exceeds the best sample by at most a quarter of the larger neighbouring difference
(see ``_peak_candidates``), so every sampled local maximum within that margin of zero is
refined by bounded minimisation (``scipy.optimize.elementwise.find_minimum``) and, where the
true maximum is positive, yields the missed interval.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from scipy.optimize import elementwise

__all__ = ["Intervals", "positive_intervals", "refine_crossings", "refine_maxima"]

ChannelFunction = Callable[[np.ndarray, np.ndarray], np.ndarray]


@dataclass(frozen=True, eq=False)
class Intervals:
    """Intervals [start_s, end_s] where f > 0, one row per interval, sorted by channel then time.

    channel: index of the channel (station, boundary); start_clipped / end_clipped: the interval
    was already open at the first sample / still open at the last one (the edge is the grid's
    end, not a root); from_peak: found by the peak check (shorter than the sampling showed).
    """

    channel: np.ndarray
    start_s: np.ndarray
    end_s: np.ndarray
    start_clipped: np.ndarray
    end_clipped: np.ndarray
    from_peak: np.ndarray


def _roots(f: ChannelFunction, lo: np.ndarray, hi: np.ndarray, ch: np.ndarray, xatol: float):
    if lo.size == 0:
        return lo.copy()
    res = elementwise.find_root(f, (lo, hi), args=(ch,), tolerances={"xatol": xatol, "xrtol": 0.0})
    return np.asarray(res.x, dtype=float)


def refine_crossings(
    f: ChannelFunction,
    lo: np.ndarray,
    hi: np.ndarray,
    ch: np.ndarray,
    rising: np.ndarray,
    xatol: float,
) -> np.ndarray:
    """Times where f(t, ch) crosses zero inside the brackets [lo, hi]: upwards where ``rising``,
    downwards elsewhere (f is negated on those, so every bracket runs from negative to
    positive). Bracketing root finding (``scipy.optimize.elementwise.find_root``), to xatol s."""
    roots = _roots(f, lo, hi, ch, xatol)
    falling = ~rising
    if np.any(falling):

        def flipped(t: np.ndarray, c: np.ndarray) -> np.ndarray:
            return -f(t, c)

        roots[falling] = _roots(flipped, lo[falling], hi[falling], ch[falling], xatol)
    return roots


def refine_maxima(
    f: ChannelFunction,
    left: np.ndarray,
    mid: np.ndarray,
    right: np.ndarray,
    ch: np.ndarray,
    xatol: float,
) -> tuple[np.ndarray, np.ndarray]:
    """Times and values of the maxima of f within brackets left < mid < right, where
    f(mid) >= f(left), f(right) (bounded minimisation of -f, vectorised)."""
    if mid.size == 0:
        return mid.copy(), mid.copy()

    def negative(t: np.ndarray, c: np.ndarray) -> np.ndarray:
        return -f(t, c)

    res = elementwise.find_minimum(
        negative, (left, mid, right), args=(ch,), tolerances={"xatol": xatol, "xrtol": 0.0}
    )
    return np.asarray(res.x, dtype=float), -np.asarray(res.f_x, dtype=float)


def _peak_candidates(values: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(channel, sample) of sampled local maxima at or below zero that the true peak may lift
    above zero. For f = M - c (t - t0)^2 and the best sample k nearest t0 (|t_k - t0| <= h/2),
    M - f_k = c d^2 <= c h^2 / 4 while the larger neighbouring difference is >= c h^2, so a
    margin of one full neighbouring difference is safe by a factor of four."""
    inner = values[:, 1:-1]
    left = inner - values[:, :-2]
    right = inner - values[:, 2:]
    is_peak = (left >= 0.0) & (right >= 0.0) & (inner <= 0.0)
    margin = np.maximum(left, right)
    ch, k = np.nonzero(is_peak & (inner + margin > 0.0))
    return ch, k + 1


def positive_intervals(
    f: ChannelFunction, t_s: np.ndarray, values: np.ndarray, xatol: float
) -> Intervals:
    """Intervals where f(t, channel) > 0, from samples ``values`` (channels, len(t_s)).

    Given a vectorised f (times and channel indices broadcast), an increasing grid t_s, the
    samples of f on it, and the root tolerance xatol (s). Returns ``Intervals``.
    """
    above = values > 0.0
    flips_ch, flips_k = np.nonzero(above[:, 1:] != above[:, :-1])
    rising = ~above[flips_ch, flips_k]
    roots = refine_crossings(f, t_s[flips_k], t_s[flips_k + 1], flips_ch, rising, xatol)
    falling = ~rising
    starts_ch = [flips_ch[rising]]
    starts = [roots[rising]]
    ends_ch = [flips_ch[falling]]
    ends = [roots[falling]]
    # Open at the first or last sample: the grid's edge stands in for the missing root.
    open_first = np.flatnonzero(above[:, 0])
    open_last = np.flatnonzero(above[:, -1])
    starts_ch.insert(0, open_first)
    starts.insert(0, np.full(open_first.size, t_s[0]))
    ends_ch.append(open_last)
    ends.append(np.full(open_last.size, t_s[-1]))
    s_ch, s_t = np.concatenate(starts_ch), np.concatenate(starts)
    e_ch, e_t = np.concatenate(ends_ch), np.concatenate(ends)
    s_order = np.lexsort((s_t, s_ch))
    e_order = np.lexsort((e_t, e_ch))
    s_ch, s_t, e_ch, e_t = s_ch[s_order], s_t[s_order], e_ch[e_order], e_t[e_order]
    start_clipped = (s_t == t_s[0]) & above[s_ch, 0]
    end_clipped = (e_t == t_s[-1]) & above[e_ch, -1]
    from_peak = np.zeros(s_t.size, dtype=bool)

    # Peaks between samples: intervals the grid did not see.
    p_ch, p_k = _peak_candidates(values)
    if p_k.size:
        t_max, f_max = refine_maxima(f, t_s[p_k - 1], t_s[p_k], t_s[p_k + 1], p_ch, xatol)
        hit = f_max > 0.0
        if np.any(hit):
            ch_h, k_h, tm = p_ch[hit], p_k[hit], t_max[hit]
            up = _roots(f, t_s[k_h - 1], tm, ch_h, xatol)

            def flipped2(t: np.ndarray, c: np.ndarray) -> np.ndarray:
                return -f(t, c)

            down = _roots(flipped2, tm, t_s[k_h + 1], ch_h, xatol)
            s_ch = np.concatenate([s_ch, ch_h])
            s_t, e_t = np.concatenate([s_t, up]), np.concatenate([e_t, down])
            false = np.zeros(ch_h.size, dtype=bool)
            start_clipped = np.concatenate([start_clipped, false])
            end_clipped = np.concatenate([end_clipped, false])
            from_peak = np.concatenate([from_peak, ~false])
            order = np.lexsort((s_t, s_ch))
            s_ch, s_t, e_t = s_ch[order], s_t[order], e_t[order]
            start_clipped, end_clipped, from_peak = (
                start_clipped[order],
                end_clipped[order],
                from_peak[order],
            )
    return Intervals(s_ch, s_t, e_t, start_clipped, end_clipped, from_peak)
