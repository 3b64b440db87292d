"""Seeded return generators for the scaling tests (factories: no shared state)."""

from __future__ import annotations

import numpy as np
import pytest


def levels(returns: np.ndarray, start: float = 0.0) -> np.ndarray:
    """Log-price level series y (length n + 1) from n one-bar log returns."""
    return np.concatenate(([start], start + np.cumsum(returns)))


@pytest.fixture
def garch_returns():
    """garch_returns(n, seed, alpha=0.1, beta=0.85, omega=0.05) -> GARCH(1,1) returns simulated with arch.

    Zero-mean, normal innovations, 500 burn-in bars; per-bar variance omega / (1 - alpha - beta).
    """
    from arch.univariate import GARCH, Normal, ZeroMean

    def _sim(n, seed, *, alpha=0.1, beta=0.85, omega=0.05):
        model = ZeroMean(volatility=GARCH(), distribution=Normal(seed=np.random.default_rng(seed)))
        return model.simulate([omega, alpha, beta], n, burn=500)["data"].to_numpy()

    return _sim


@pytest.fixture
def ar1_returns():
    """ar1_returns(n, rho, seed) -> r_t = rho r_{t-1} + e_t, e_t ~ N(0, 1), started at its stationary law."""
    from scipy.signal import lfilter

    def _sim(n, rho, seed):
        rng = np.random.default_rng(seed)
        e = rng.standard_normal(n)
        e[0] /= np.sqrt(1.0 - rho * rho)
        return lfilter([1.0], [1.0, -rho], e)

    return _sim


@pytest.fixture
def history_from_returns(make_history):
    """history_from_returns(returns, name="sim", start_price=100.0) -> PriceHistory of exp(level)."""

    def _make(returns, *, name="sim", start_price=100.0):
        return make_history(start_price * np.exp(levels(np.asarray(returns, float))), name=name)

    return _make
