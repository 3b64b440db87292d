"""Estimators on simulated Brownian motion with known sigma: recovery, drift, gaps, efficiency.

Theory relied on: under geometric Brownian motion each estimator is (nearly) unbiased for sigma^2
and a vol estimate from n bars has standard error about sigma * sqrt(1 / (2 n eff)), eff the
estimator's efficiency relative to close-to-close (delta method on a chi-square-like variance
estimate; common practice, no source). Paths are seeded, so every check is deterministic.

Discrete monitoring: the fixture samples the intraday path at 390 steps a bar, so the observed high
and low miss the true extremes by about beta sigma sqrt(dt) each, beta = 0.5826 (Broadie,
Glasserman & Kou 1997, Mathematical Finance 7(4), recalled from memory). Range estimators are
therefore biased low by a few percent; the tolerance below allows 2 beta / sqrt(steps) (~5.9 %)
on the low side for them.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from volbench.estimators import DAILY_KEYS, REGISTRY, point_estimate, rolling_vol
from volbench.estimators.close_based import ewma_effective_n

SIGMA = 0.20
STEPS = 390
BETA = 0.5826  # Broadie, Glasserman & Kou (1997), from memory
RANGE_BASED = ("parkinson", "garman_klass", "rogers_satchell", "yang_zhang")
# Efficiencies relative to close-to-close quoted in docs/METHODS.md, "Estimators" (Parkinson 1980, Garman & Klass 1980,
# Yang & Zhang 2000; recalled from memory); Rogers-Satchell about 6 (Rogers & Satchell 1991, from memory).
EFF = {"close_to_close": 1.0, "parkinson": 4.91, "garman_klass": 7.4, "rogers_satchell": 6.0,
       "yang_zhang": 7.0, "ewma": 1.0}


def _tolerance(key: str, n_eff: float) -> tuple[float, float]:
    """(low, high) relative tolerance: 4 standard errors plus the discrete-monitoring bias."""
    se = math.sqrt(1.0 / (2.0 * n_eff))
    bias = 2.0 * BETA / math.sqrt(STEPS) if key in RANGE_BASED else 0.0
    return 4 * se + bias, 4 * se


@pytest.mark.parametrize("key", DAILY_KEYS)
def test_recovers_known_sigma_on_seeded_brownian_path(simulate_ohlc, key):
    h = simulate_ohlc(2520, SIGMA, seed=11)
    est = point_estimate(h, key)
    if key == "ewma":
        n_eff = ewma_effective_n()  # RiskMetrics weights: (1 + lambda) / (1 - lambda) returns
    else:
        n_eff = est.n * EFF[key]
    lo, hi = _tolerance(key, n_eff)
    assert SIGMA * (1 - lo) < est.vol < SIGMA * (1 + hi), (key, est.vol)


@pytest.mark.parametrize("key", DAILY_KEYS)
def test_recovery_with_other_annualization(simulate_ohlc, key):
    # A 365-bar year: the simulated per-bar variance is sigma^2 / 365, so annualizing with 365
    # recovers sigma (docs/METHODS.md, "Notation and conventions").
    h = simulate_ohlc(1500, 0.5, seed=12, annualization=365)
    est = point_estimate(h, key, annualization=365)
    n_eff = ewma_effective_n() if key == "ewma" else est.n * EFF[key]
    lo, hi = _tolerance(key, n_eff)
    assert 0.5 * (1 - lo) < est.vol < 0.5 * (1 + hi), (key, est.vol)


def test_ewma_average_variance_is_unbiased(simulate_ohlc):
    # RiskMetrics (1996) recursion is a weighted average of squared returns with weights summing to 1,
    # so under i.i.d. returns E[v_t] = sigma^2 / A; the time average over T bars has a standard error
    # of about sqrt(2 / T) relative (it averages the same r^2 as the sample variance).
    h = simulate_ohlc(6000, SIGMA, seed=13, steps=10)
    var = (rolling_vol(h, "ewma", 20).values.to_numpy() ** 2).mean()
    assert var == pytest.approx(SIGMA**2, rel=4 * math.sqrt(2 / 6000))


def test_rogers_satchell_and_yang_zhang_ignore_drift_parkinson_and_gk_do_not(simulate_ohlc):
    # Rogers & Satchell (1991) and Yang & Zhang (2000): drift-independent; Parkinson (1980) and
    # Garman & Klass (1980) assume zero drift and rise with it. Same seed, drift of 1.6 sigma a bar.
    flat = simulate_ohlc(2520, SIGMA, seed=21)
    trend = simulate_ohlc(2520, SIGMA, seed=21, mu_annual=5.0)
    ratio = {k: point_estimate(trend, k).vol / point_estimate(flat, k).vol for k in DAILY_KEYS}
    assert ratio["rogers_satchell"] == pytest.approx(1.0, abs=0.05)
    assert ratio["yang_zhang"] == pytest.approx(1.0, abs=0.05)
    assert ratio["close_to_close"] == pytest.approx(1.0, abs=1e-9)  # mean removed: exactly unchanged
    assert ratio["parkinson"] > 1.25
    assert ratio["garman_klass"] > 1.10


def test_overnight_gaps_bias_parkinson_gk_rs_low_but_not_yang_zhang(simulate_ohlc):
    # Half of each bar's variance arrives overnight. Range estimators see only the trading session,
    # so they estimate about sigma sqrt(0.5) = 0.141 (Parkinson 1980; Garman & Klass 1980; Rogers &
    # Satchell 1991 all assume no gap); Yang & Zhang (2000) add the overnight variance and recover sigma,
    # as does close-to-close.
    h = simulate_ohlc(2520, SIGMA, seed=22, overnight_share=0.5)
    for key in ("parkinson", "garman_klass", "rogers_satchell"):
        vol = point_estimate(h, key).vol
        assert vol < 0.8 * SIGMA, key
        assert vol == pytest.approx(SIGMA * math.sqrt(0.5), rel=0.1), key
    for key in ("close_to_close", "yang_zhang"):
        est = point_estimate(h, key)
        lo, hi = _tolerance(key, est.n * (1.0 if key == "close_to_close" else 3.0))
        assert SIGMA * (1 - lo) < est.vol < SIGMA * (1 + hi), key


def test_efficiency_of_range_estimators_over_many_short_windows(simulate_ohlc):
    # Efficiency = Var(close-to-close variance estimate) / Var(estimator's variance estimate) over
    # 2,000 independent 5-bar windows. Papers report about 5.2 (Parkinson 1980), 7.4 (Garman & Klass
    # 1980), 6 (Rogers & Satchell 1991) relative to the zero-mean close-to-close estimator (recalled
    # from memory); we check a loose lower bound of 3 and the Parkinson < Garman-Klass ordering.
    w = 5
    h = simulate_ohlc(2000 * w + 1, SIGMA, seed=23)
    var = {}
    for key in ("close_to_close", *RANGE_BASED):
        opts = {"zero_mean": True} if key == "close_to_close" else {}
        series = rolling_vol(h, key, w, **opts).values.to_numpy() ** 2
        var[key] = np.var(series[::w])  # non-overlapping windows
    eff = {k: var["close_to_close"] / var[k] for k in RANGE_BASED}
    for key in RANGE_BASED:
        assert eff[key] > 3.0, eff
    assert eff["garman_klass"] > eff["parkinson"], eff


def test_registry_efficiencies_match_the_published_values():
    # Shown in help; per-bar values from docs/METHODS.md, "Confidence intervals and their coverage":
    # Parkinson 4.91 exact (Parkinson 1980 moments), Garman-Klass about 7.4 (Garman & Klass 1980, from
    # memory), Rogers-Satchell about 6.0 (Rogers & Satchell 1991, from memory).
    assert REGISTRY["close_to_close"].efficiency == 1.0
    assert REGISTRY["parkinson"].efficiency == pytest.approx(4.91)
    assert REGISTRY["garman_klass"].efficiency == pytest.approx(7.4, abs=0.1)
    assert REGISTRY["rogers_satchell"].efficiency == pytest.approx(6.0, abs=0.1)
