"""Shared fixtures: the sample folder, a history factory, and a seeded OHLC simulator.

Factories (not module-level objects) so tests never share mutable state.
"""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from volbench.data.history import PriceHistory

ROOT = Path(__file__).resolve().parents[1]


@pytest.fixture
def sample_dir() -> Path:
    return ROOT / "sample_prices"


@pytest.fixture
def make_history():
    """Build a PriceHistory from arrays: make_history(close, open=None, high=None, low=None, start=...)."""

    def _make(close, open=None, high=None, low=None, *, name="test", start="2020-01-01", freq="B"):
        n = len(close)
        dates = pd.date_range(start, periods=n, freq=freq).to_numpy()
        return PriceHistory(name=name, source=None, dates=dates, close=np.asarray(close, float),
                            open=None if open is None else np.asarray(open, float),
                            high=None if high is None else np.asarray(high, float),
                            low=None if low is None else np.asarray(low, float))

    return _make


@pytest.fixture
def simulate_ohlc(make_history):
    """Seeded Brownian OHLC bars from a fine intraday path.

    simulate_ohlc(n_bars, sigma_annual, seed, steps=390, mu_annual=0.0, overnight_share=0.0,
    annualization=252, start_price=100.0) -> PriceHistory. Per-bar log-price variance is
    sigma^2 / annualization; ``overnight_share`` of it arrives between the previous close and the open.
    """

    def _sim(n_bars, sigma_annual, seed, *, steps=390, mu_annual=0.0, overnight_share=0.0,
             annualization=252.0, start_price=100.0, name="sim"):
        rng = np.random.default_rng(seed)
        v = sigma_annual**2 / annualization
        mu = mu_annual / annualization
        night = rng.standard_normal(n_bars) * np.sqrt(v * overnight_share) + mu * overnight_share
        inc = rng.standard_normal((n_bars, steps)) * np.sqrt(v * (1 - overnight_share) / steps)
        inc += mu * (1 - overnight_share) / steps
        path = np.cumsum(inc, axis=1)
        log_open = np.log(start_price) + np.cumsum(night + np.concatenate(([0.0], path[:-1, -1])))
        o = np.exp(log_open)
        h = np.exp(log_open + np.maximum(path.max(axis=1), 0))
        low = np.exp(log_open + np.minimum(path.min(axis=1), 0))
        c = np.exp(log_open + path[:, -1])
        return make_history(c, o, h, low, name=name)

    return _sim
