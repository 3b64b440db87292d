"""Factories for survey tests: price files written into a temporary folder."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest


@pytest.fixture
def write_prices(tmp_path):
    """write_prices(name, n, seed, sigma=0.25, symbols=None) -> path of a seeded OHLC CSV.

    With ``symbols`` (a list), a long file holding one series per symbol, ``n`` rows each.
    """

    def _write(name, n, seed, *, sigma=0.25, symbols=None, folder=None):
        rng = np.random.default_rng(seed)
        frames = []
        for sym in symbols or [None]:
            r = rng.standard_normal(n) * sigma / np.sqrt(252)
            close = 50 * np.exp(np.cumsum(r))
            open_ = np.concatenate(([50.0], close[:-1]))
            spread = np.abs(rng.standard_normal(n)) * sigma / np.sqrt(252) / 2
            high = np.maximum(open_, close) * np.exp(spread)
            low = np.minimum(open_, close) * np.exp(-spread)
            df = pd.DataFrame({"date": pd.date_range("2015-01-02", periods=n, freq="B").strftime("%Y-%m-%d"),
                               "open": open_, "high": high, "low": low, "close": close})
            if sym is not None:
                df.insert(1, "symbol", sym)
            frames.append(df)
        path = (folder or tmp_path) / name
        pd.concat(frames).to_csv(path, index=False, float_format="%.6f")
        return path

    return _write
