"""Seeded intraday simulator for the realized-measure tests (a factory, so no state is shared).

simulate_intraday(days, bars, sigma, seed, ...) -> PriceHistory of intraday OHLC bars stamped at
each bar's start, sessions 09:30 onwards on business days. Each session is a Brownian path observed
at ``steps`` ticks a bar; bar j runs from tick (j-1)s to tick js (consecutive bars share a tick), so
the first open and the closes give ``bars`` returns of variance sigma^2 (1 - overnight_share) / (A bars).
Options: ``overnight_share`` of each day's variance arrives between sessions; ``half_spread`` adds
bid-ask bounce, +-half_spread in log price at random on every tick (noise variance half_spread^2);
``jumps`` maps (day, bar) to a log jump added at the end of that bar; ``daily_var`` overrides the
per-day variance (array of length ``days``).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from volbench.data.history import PriceHistory


def simulate_intraday(days, bars, sigma, seed, *, steps=1, bar_seconds=300, overnight_share=0.0,
                      half_spread=0.0, jumps=None, daily_var=None, annualization=252.0,
                      start="2024-01-02", start_price=100.0, with_open=True, name="sim"):
    rng = np.random.default_rng(seed)
    v = np.full(days, sigma**2 / annualization) if daily_var is None else np.asarray(daily_var, float)
    n = bars * steps
    inc = rng.standard_normal((days, n)) * np.sqrt(v * (1 - overnight_share) / n)[:, None]
    for (d, b), size in (jumps or {}).items():
        inc[d, (b + 1) * steps - 1] += size
    night = rng.standard_normal(days) * np.sqrt(v * overnight_share)
    night[0] = 0.0
    path = np.concatenate((np.zeros((days, 1)), np.cumsum(inc, axis=1)), axis=1)
    opens = np.log(start_price) + np.cumsum(night + np.concatenate(([0.0], path[:-1, -1])))
    ticks = opens[:, None] + path
    if half_spread:
        ticks = ticks + half_spread * rng.choice([-1.0, 1.0], size=ticks.shape)
    o = ticks[:, 0:n:steps]
    c = ticks[:, steps::steps]
    inner = ticks[:, :-1].reshape(days, bars, steps)
    h = np.maximum(inner.max(axis=2), c)
    lo = np.minimum(inner.min(axis=2), c)
    dates = pd.bdate_range(start, periods=days)
    stamps = (dates.values[:, None] + np.timedelta64(9 * 3600 + 1800, "s")
              + np.arange(bars)[None, :] * np.timedelta64(int(bar_seconds), "s"))
    return PriceHistory(name=name, source=None, dates=stamps.ravel(), close=np.exp(c).ravel(),
                        open=np.exp(o).ravel() if with_open else None,
                        high=np.exp(h).ravel() if with_open else None,
                        low=np.exp(lo).ravel() if with_open else None)


@pytest.fixture
def sim_intraday():
    return simulate_intraday
