"""Factories for GARCH tests: paths simulated by the arch library itself (the reference library)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from arch import arch_model
from arch.univariate import Normal, StudentsT

from volbench.data.history import PriceHistory
from volbench.threads import FIT_THREADS


@pytest.fixture(autouse=True)
def _reference_fits_on_fit_threads():
    """Reference ``arch`` fits in these tests run on the BLAS threads volbench's fits use
    (volbench.threads), so an optimizer compared at 1e-8 starts from the same rounding."""
    from threadpoolctl import threadpool_limits

    with threadpool_limits(limits=FIT_THREADS):
        yield

_SPECS = {
    "garch": {"vol": "GARCH", "p": 1, "o": 0, "q": 1},
    "gjr": {"vol": "GARCH", "p": 1, "o": 1, "q": 1},
    "egarch": {"vol": "EGARCH", "p": 1, "o": 1, "q": 1},
}


def history_from_percent_returns(y, *, name="sim", start_price=100.0) -> PriceHistory:
    """Closes whose log returns are y / 100 (y in percent), on business days."""
    y = np.asarray(y, dtype=float)
    close = start_price * np.exp(np.concatenate(([0.0], np.cumsum(y / 100.0))))
    dates = pd.date_range("2001-01-02", periods=close.size, freq="B").to_numpy()
    return PriceHistory(name=name, source=None, dates=dates, close=close)


@pytest.fixture
def arch_path():
    """arch_path(model, params, nobs, seed, dist="normal", mean="constant") -> (history, percent returns).

    ``params`` in arch's order on the percent scale, e.g. GARCH [mu, omega, alpha, beta(, nu)];
    simulated by ``arch_model(None, ...).simulate`` with a seeded numpy Generator.
    """

    def _sim(model, params, nobs, seed, *, dist="normal", mean="constant", name="sim", **kw):
        sim = arch_model(None, mean="Constant" if mean == "constant" else "Zero", dist=dist, **_SPECS[model])
        gen = np.random.default_rng(seed)
        sim.distribution = Normal(seed=gen) if dist == "normal" else StudentsT(seed=gen)
        y = sim.simulate(params, nobs, **kw)["data"].to_numpy()
        return history_from_percent_returns(y, name=name), y

    return _sim


@pytest.fixture
def percent_history():
    """percent_history(y, name=...) -> PriceHistory whose log returns are y / 100."""
    return history_from_percent_returns
