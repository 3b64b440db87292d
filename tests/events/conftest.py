"""Factories for the event tests: a seeded close-only series with planted event moves."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from volbench.data.history import PriceHistory


@pytest.fixture
def event_series():
    """event_series(n, vol, event_sd, every, seed, first=40, ohlc=False, steps=390) -> (history, bars, moves).

    Ordinary days: i.i.d. normal log returns of annual vol ``vol`` (A = 252). Every ``every`` bars
    from ``first`` a normal move of standard deviation ``event_sd`` is added to that bar's return
    (before its open when ``ohlc``: the open gaps, the session's shape is unchanged).
    """

    def _make(n=1500, vol=0.2, event_sd=0.05, every=63, seed=1, first=40, ohlc=False, steps=390, name="sim"):
        rng = np.random.default_rng(seed)
        sd = vol / np.sqrt(252.0)
        bars = np.arange(first, n, every)
        moves = rng.standard_normal(bars.size) * event_sd
        gap = np.zeros(n)
        gap[bars] = moves
        dates = pd.bdate_range("2012-01-02", periods=n).to_numpy()
        if not ohlc:
            r = np.concatenate(([0.0], rng.standard_normal(n - 1) * sd)) + gap
            close = 40.0 * np.exp(np.cumsum(r))
            return PriceHistory(name, None, dates, close), bars, moves
        night = rng.standard_normal(n) * sd * 0.3
        inc = rng.standard_normal((n, steps)) * sd * np.sqrt(1 - 0.09) / np.sqrt(steps)
        path = np.cumsum(inc, axis=1)
        night[0] = 0.0
        log_open = np.log(40.0) + np.cumsum(night + gap + np.concatenate(([0.0], path[:-1, -1])))
        h = PriceHistory(name, None, dates, np.exp(log_open + path[:, -1]), open=np.exp(log_open),
                         high=np.exp(log_open + np.maximum(path.max(axis=1), 0)),
                         low=np.exp(log_open + np.minimum(path.min(axis=1), 0)))
        return h, bars, moves

    return _make
