"""Seeded Brownian OHLC bars with exactly simulated highs and lows, for calibration and coverage tests.

A bar's log path is simulated at ``substeps`` points; between two neighbouring points the path is a
Brownian bridge, whose maximum and minimum are drawn exactly from their conditional laws. The bar's
high and low are the largest and smallest of those, so they are the extremes of a continuous
Brownian path (no discretisation bias), at the cost of a few substeps a bar instead of thousands.

Notes
-----
Brownian bridge from a to b over a step of variance s2 (reflection principle):
P(max > y | a, b) = exp(-2 (y - a)(y - b) / s2) for y >= max(a, b), so with U uniform on (0, 1)
max = (a + b + sqrt((b - a)^2 - 2 s2 ln U)) / 2, and the minimum likewise with the sign turned
(Glasserman, *Monte Carlo Methods in Financial Engineering*, 2004, section 6.4; Beaglehole, Dybvig
& Zhou 1997, Financial Analysts Journal 53(1); recalled from memory). The maximum and minimum of the
same substep are drawn independently; the bar's high and low come from the same substep only rarely,
and the simulated moments E[(H - L)^2] = 4 ln 2 s2 and E[(H - L)^4] = 9 zeta(3) s2^2 of Parkinson
(1980) are checked in the tests.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class LogBars:
    """Log prices of simulated bars relative to the first open: open, high, low, close (arrays)."""

    open: np.ndarray
    high: np.ndarray
    low: np.ndarray
    close: np.ndarray


def brownian_bars(
    rng: np.random.Generator,
    n_bars: int,
    *,
    variance: float = 1.0,
    overnight_share: float = 0.0,
    substeps: int = 16,
    trades: int | None = None,
) -> LogBars:
    """``n_bars`` consecutive bars of driftless Brownian motion with per-bar variance ``variance``.

    Parameters
    ----------
    rng
        Seeded numpy Generator.
    n_bars
        Number of bars.
    variance
        Per-bar variance of the log price (overnight plus trading session).
    overnight_share
        Share of the variance that arrives between the previous close and the open.
    substeps
        Points of the session path between which the extremes are drawn exactly.
    trades
        When given, the session is sampled at ``trades`` equally spaced trades instead, and the high
        and low are the largest and smallest traded prices (what a real bar records): this is the
        discretely monitored case whose range reads low.
    """
    steps = substeps if trades is None else trades
    chunk = max(1, 4_000_000 // steps)  # bars per block: keeps each block's path matrix small
    night = rng.standard_normal(n_bars) * np.sqrt(variance * overnight_share)
    hi, lo, close_rel = np.empty(n_bars), np.empty(n_bars), np.empty(n_bars)
    for start in range(0, n_bars, chunk):
        stop = min(n_bars, start + chunk)
        hi[start:stop], lo[start:stop], close_rel[start:stop] = _session(
            rng, stop - start, variance * (1.0 - overnight_share), steps, exact=trades is None)
    opens = np.cumsum(night + np.concatenate(([0.0], close_rel[:-1])))
    return LogBars(open=opens, high=opens + hi, low=opens + lo, close=opens + close_rel)


def _session(rng: np.random.Generator, bars: int, v_day: float, steps: int, *, exact: bool):
    """High, low and close of ``bars`` sessions relative to their open."""
    path = np.cumsum(rng.standard_normal((bars, steps)) * np.sqrt(v_day / steps), axis=1)
    if not exact:
        return np.maximum(path.max(axis=1), 0.0), np.minimum(path.min(axis=1), 0.0), path[:, -1]
    left = np.concatenate((np.zeros((bars, 1)), path[:, :-1]), axis=1)
    s2 = v_day / steps
    spread = (path - left) ** 2
    up = 0.5 * (left + path + np.sqrt(spread - 2.0 * s2 * np.log(rng.random((bars, steps)))))
    down = 0.5 * (left + path - np.sqrt(spread - 2.0 * s2 * np.log(rng.random((bars, steps)))))
    return up.max(axis=1), down.min(axis=1), path[:, -1]
