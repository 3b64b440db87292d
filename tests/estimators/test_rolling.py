"""Rolling series: agreement with point estimates, with a plain loop, and numerical stability."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest

from volbench.errors import EstimatorUnavailable, VolbenchError
from volbench.estimators import DAILY_KEYS, REGISTRY, point_estimate, rolling_vol
from volbench.estimators.base import rolling_mean, rolling_var
from volbench.estimators.range_based import yang_zhang_k

A = 252.0


@pytest.mark.parametrize("key", DAILY_KEYS)
def test_rolling_value_equals_point_estimate_at_every_checked_date(simulate_ohlc, key):
    # Same window ending at the same as-of date must give the same number on every surface
    # (common practice, no source).
    h = simulate_ohlc(300, 0.3, seed=31, steps=20, mu_annual=0.1, overnight_share=0.2)
    w = 20
    rv = rolling_vol(h, key, w)
    checked = [rv.values.index[0], rv.values.index[1], rv.values.index[57], rv.values.index[140],
               rv.values.index[-2], rv.values.index[-1]]
    for d in checked:
        est = point_estimate(h, key, w, as_of=d.strftime("%Y-%m-%d"))
        assert est.as_of == d.strftime("%Y-%m-%d")
        assert est.vol == pytest.approx(rv.values.loc[d], rel=1e-10), (key, d)


@pytest.mark.parametrize("key", DAILY_KEYS)
def test_vectorised_rolling_equals_plain_loop_over_windows(simulate_ohlc, plain, key):
    # docs/METHODS.md, "Estimators": formulas written as plain loops over each window (sources in conftest.py).
    h = simulate_ohlc(160, 0.25, seed=32, steps=20, mu_annual=0.3, overnight_share=0.3)
    w = 15
    rv = rolling_vol(h, key, w).values
    first = w + REGISTRY[key].extra_bars - 1
    assert len(rv) == h.n - first
    expected = np.array([math.sqrt(plain.var[key](h, t, w) * A) for t in range(first, h.n)])
    np.testing.assert_allclose(rv.to_numpy(), expected, rtol=1e-10)


def test_rolling_series_starts_where_the_window_first_fits(simulate_ohlc):
    h = simulate_ohlc(40, 0.2, seed=33, steps=10)
    for key in DAILY_KEYS:
        rv = rolling_vol(h, key, 10)
        first = 10 + REGISTRY[key].extra_bars - 1
        assert rv.values.index[0] == h.index[first], key
        assert rv.window == 10 and rv.annualization == 252 and rv.key == key
        assert not rv.values.isna().any()


def _two_pass_reference(h, key, w):
    """Direct two-pass numpy formulas on each window (np.var / np.mean), looping over windows."""
    lo = np.log(h.open)
    u, d, c = np.log(h.high) - lo, np.log(h.low) - lo, np.log(h.close) - lo
    r = np.diff(np.log(h.close))
    rs = u * (u - c) + d * (d - c)
    out = []
    if key == "close_to_close":
        for t in range(w, h.n):
            out.append(np.var(r[t - w:t], ddof=1))
    elif key == "parkinson":
        for t in range(w - 1, h.n):
            out.append(np.mean((u - d)[t - w + 1:t + 1] ** 2) / (4 * np.log(2)))
    elif key == "garman_klass":
        g = 0.5 * (u - d) ** 2 - (2 * np.log(2) - 1) * c**2
        for t in range(w - 1, h.n):
            out.append(np.mean(g[t - w + 1:t + 1]))
    elif key == "rogers_satchell":
        for t in range(w - 1, h.n):
            out.append(np.mean(rs[t - w + 1:t + 1]))
    elif key == "yang_zhang":
        o = np.log(h.open[1:] / h.close[:-1])
        k = yang_zhang_k(w)
        for t in range(w, h.n):
            s = slice(t - w, t)  # o and c[1:] are indexed from bar 1
            out.append(np.var(o[s], ddof=1) + k * np.var(c[1:][s], ddof=1) + (1 - k) * np.mean(rs[1:][s]))
    return np.sqrt(np.array(out) * A)


@pytest.mark.parametrize("key", ["close_to_close", "parkinson", "garman_klass", "rogers_satchell", "yang_zhang"])
def test_fifty_years_large_price_and_strong_drift_no_cancellation(simulate_ohlc, key):
    # 50 years x 252 bars, prices from 1e6 upward with +60 %/year drift (log price climbs by 30):
    # O(n) rolling sums must match a direct two-pass computation on each window
    # (numpy var/mean as the reference library) to rtol 1e-9.
    h = simulate_ohlc(12_600, 0.25, seed=34, steps=8, mu_annual=0.6, overnight_share=0.2, start_price=1e6)
    assert h.close[-1] > 1e15
    w = 20
    got = rolling_vol(h, key, w).values.to_numpy()
    np.testing.assert_allclose(got, _two_pass_reference(h, key, w), rtol=1e-9)


def test_rolling_var_survives_a_volatility_regime_change():
    # A calm decade after a wild one (variance ratio 1e4): the cumulative-sum method must still match
    # numpy's two-pass variance on the calm windows (numpy as reference library). Rounding error of a
    # difference of running sums is about eps x (running sum / window sum) = 2.2e-16 x 2500 x 1 /
    # (20 x 1e-4) ~ 3e-10 per operation (standard floating-point error analysis), hence rtol 1e-7.
    rng = np.random.default_rng(35)
    x = np.concatenate((rng.normal(0.01, 1.0, 2500), rng.normal(-0.002, 0.01, 2500)))
    got = rolling_var(x, 20)
    ref = np.array([np.var(x[t - 19:t + 1], ddof=1) for t in range(19, len(x))])
    np.testing.assert_allclose(got[19:], ref, rtol=1e-7)
    assert np.isnan(got[:19]).all()
    gm = rolling_mean(x, 20)
    np.testing.assert_allclose(gm[19:], [np.mean(x[t - 19:t + 1]) for t in range(19, len(x))],
                               rtol=1e-9, atol=1e-12)


def test_rolling_var_of_constant_window_is_zero_not_negative():
    # Stale prices: identical returns have variance 0; rounding must not produce a negative value
    # (common practice, no source).
    x = np.concatenate((np.linspace(-0.05, 0.05, 50), np.full(30, 0.0123456789)))
    v = rolling_var(x, 20)
    assert (v[19:] >= 0).all()
    assert v[-1] == pytest.approx(0.0, abs=1e-18)


def test_rolling_vol_rejects_bad_requests(simulate_ohlc):
    h = simulate_ohlc(50, 0.2, seed=36, steps=5)
    with pytest.raises(VolbenchError, match="a rolling series needs a window in bars, not 'all'"):
        rolling_vol(h, "parkinson", "all")
    with pytest.raises(VolbenchError, match="window must be >= 1 bars, got 0"):
        rolling_vol(h, "parkinson", 0)
    with pytest.raises(VolbenchError, match=r"unknown estimator 'gk'; choose one of: close_to_close, parkinson"):
        rolling_vol(h, "gk", 20)
    with pytest.raises(VolbenchError, match="annualization must be > 0 bars per year"):
        rolling_vol(h, "parkinson", 20, annualization=-1)
    with pytest.raises(EstimatorUnavailable, match="window 60 needs 61 rows, history has 50"):
        rolling_vol(h, "close_to_close", 60)


def test_inconsistent_bar_is_listed_not_passed_off_as_a_number(make_history):
    # A bar whose close lies above its high (kept by the caller): the Rogers-Satchell term
    # ln(H/C) ln(H/O) + ln(L/C) ln(L/O) = ln(101/102) ln(1.01) + ln(99.9/102) ln(0.999) < 0, so the
    # one-bar window has no valid variance: it is reported, never returned as NaN.
    c = np.array([100.0, 101.0, 102.0, 101.5, 100.5])
    o = np.array([100.0, 100.5, 100.0, 102.0, 101.0])
    hi = np.array([101.0, 101.5, 101.0, 102.2, 101.2])
    lo = np.array([99.5, 100.0, 99.9, 101.0, 100.0])
    h = make_history(c, o, hi, lo)
    rv = rolling_vol(h, "rogers_satchell", 1)
    bad_date = pd.Timestamp(h.dates[2]).strftime("%Y-%m-%d")
    assert rv.invalid_dates == (bad_date,)
    assert len(rv.values) == 4 and not rv.values.isna().any()
    with pytest.raises(EstimatorUnavailable, match="negative variance in this window"):
        point_estimate(h, "rogers_satchell", 1, as_of=bad_date)
