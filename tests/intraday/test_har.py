"""HAR-RV forecast: coefficients, the iterated path, flooring, and the term structure."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm
from arch.univariate import HARX

from volbench.errors import VolbenchError
from volbench.intraday.har import MIN_HAR_DAYS, SCALE, har_forecast
from volbench.intraday.measures import RealizedMeasures, realized_measures
from volbench.intraday.sessions import infer_layout


def _measures(y):
    """Measures whose whole-day variance is exactly ``y`` (zero overnight returns)."""
    n = len(y) + 1
    dates = pd.bdate_range("2024-01-02", periods=n)
    rv = np.concatenate(([y[0]], y))
    daily = pd.DataFrame({"n_returns": 78, "rv": rv, "bv": rv, "tq": rv**2, "kernel": rv, "bandwidth": 1,
                          "overnight": np.r_[np.nan, np.zeros(n - 1)]}, index=pd.DatetimeIndex(dates, name="date"))
    return RealizedMeasures("y", infer_layout(dates.to_numpy()), 1, 300.0, daily)


def _clustered(sim_intraday, days=250, seed=61):
    """Intraday data whose daily variance follows a persistent log-AR(1) (something to forecast)."""
    rng = np.random.default_rng(seed)
    x = np.zeros(days)
    for t in range(1, days):  # a short AR(1) recursion over days to build the input, not bars
        x[t] = 0.95 * x[t - 1] + 0.25 * rng.standard_normal()
    return realized_measures(sim_intraday(days, 78, 0.2, seed, daily_var=0.04 / 252 * np.exp(x)))


def test_coefficients_equal_ordinary_least_squares(sim_intraday):
    # reference library statsmodels: OLS of y_t on 1, y_{t-1}, mean(y_{t-5..t-1}), mean(y_{t-22..t-1})
    # (Corsi 2009)
    m = _clustered(sim_intraday)
    f = har_forecast(m)
    y = m.whole_day("rv").to_numpy()
    s = pd.Series(y)
    x = pd.DataFrame({"d": s.shift(1), "w": s.rolling(5).mean().shift(1), "m": s.rolling(22).mean().shift(1)})
    ols = sm.OLS(s.iloc[22:], sm.add_constant(x.iloc[22:])).fit()
    got = [f.params["const"], f.params["daily"], f.params["weekly"], f.params["monthly"]]
    np.testing.assert_allclose(got, ols.params.to_numpy(), rtol=1e-8)
    assert f.nobs == len(y) - 22 and f.r_squared == pytest.approx(ols.rsquared, rel=1e-8)
    assert 0 < f.persistence < 1.2


def test_path_equals_arch_forecast_and_term_structure_averages_it(sim_intraday):
    # reference library arch: HARX(...).fit().forecast(method="analytic") iterates the same recursion
    m = _clustered(sim_intraday, seed=62)
    f = har_forecast(m, [1, 5, 21, 63])
    assert f.floored_days == 0 and f.notes == ()
    y = pd.Series(m.whole_day("rv").to_numpy() * SCALE)
    res = HARX(y, lags=[1, 5, 22], rescale=False).fit(disp="off")
    want = res.forecast(horizon=63, reindex=False, method="analytic").mean.to_numpy()[-1] / SCALE
    np.testing.assert_allclose(f.variance_path, want, rtol=1e-10)
    # vol(T) = sqrt(A mean of days 1..T) (docs/METHODS.md, "GARCH and the vol over an option's life")
    for h, v in zip(f.term_structure["horizon"], f.term_structure["vol"]):
        assert v == pytest.approx(math.sqrt(252 * want[:h].mean()), rel=1e-10)
    d = f.as_dict()
    assert set(d["params"]) == {"const", "daily", "weekly", "monthly"}
    assert [t["horizon"] for t in d["term_structure"]] == [1, 5, 21, 63]


def test_negative_forecasts_are_floored_and_reported():
    # a regular swing whose troughs nearly touch zero: the fitted linear HAR overshoots below zero
    t = np.arange(150)
    rng = np.random.default_rng(63)
    y = (np.abs(5 + 6 * np.sin(2 * np.pi * t / 17)) + 0.01 + 0.02 * rng.standard_normal(150) ** 2) * 1e-4
    f = har_forecast(_measures(y))
    assert f.floored_days > 0 and (f.variance_path > 0).all()
    assert f.floor == pytest.approx(y.min(), rel=1e-12)
    assert "zero or negative and were replaced by the smallest positive daily variance" in f.notes[0]
    # up to the first floored day the path is arch's own forecast (reference library arch)
    res = HARX(pd.Series(y * SCALE), lags=[1, 5, 22], rescale=False).fit(disp="off")
    raw = res.forecast(horizon=252, reindex=False, method="analytic").mean.to_numpy()[-1] / SCALE
    first = int(np.argmax(raw <= 0))
    assert raw[first] <= 0 and f.variance_path[first] == f.floor
    np.testing.assert_allclose(f.variance_path[:first], raw[:first], rtol=1e-10)


def test_too_little_or_constant_data_is_refused():
    with pytest.raises(VolbenchError, match=f"needs at least {MIN_HAR_DAYS} days of realized variance, has 40"):
        har_forecast(_measures(np.full(40, 1e-4) + np.arange(40) * 1e-6))
    with pytest.raises(VolbenchError, match="daily realized variance is constant"):
        har_forecast(_measures(np.full(80, 1e-4)))
    with pytest.raises(VolbenchError, match="horizons must be between 1 and 2520 bars"):
        har_forecast(_measures(np.linspace(1e-4, 2e-4, 80)), [0])
