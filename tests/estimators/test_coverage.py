"""Coverage of the 95 % intervals on simulated Brownian bars, and the simulator behind it.

docs/METHODS.md, "Confidence intervals and their coverage": each interval is a chi-square interval
with effective degrees of freedom nu = 2 sigma^4 / Var(V) (Satterthwaite 1946). Its claim (95 %
coverage) is checked here by seeded simulation on non-overlapping windows, with highs and lows drawn
exactly from the Brownian bridge (volbench.estimators.simulate), so no discretisation bias enters.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.special import zeta

from volbench.estimators import intervals
from volbench.estimators.calibrate import coverage, history_of
from volbench.estimators.range_based import yang_zhang_k, yang_zhang_parts
from volbench.estimators.registry import REGISTRY, point_estimate
from volbench.estimators.simulate import brownian_bars

KEYS = ("close_to_close", "parkinson", "garman_klass", "rogers_satchell", "yang_zhang", "ewma")


def test_simulated_extremes_have_parkinsons_exact_range_moments():
    # Parkinson (1980), J. of Business 53(1): for Brownian motion with variance s2 over the bar,
    # E[(H - L)^2] = 4 ln 2 s2 and E[(H - L)^4] = 9 zeta(3) s2^2 (log prices). 400,000 bars: the
    # relative standard errors are about 0.13 % and 0.4 %; we allow 4 of them.
    b = brownian_bars(np.random.default_rng(7), 400_000, substeps=8)
    r = b.high - b.low
    assert np.mean(r**2) / (4 * math.log(2)) == pytest.approx(1.0, abs=0.006)
    assert np.mean(r**4) / (9 * zeta(3)) == pytest.approx(1.0, abs=0.016)
    assert np.all(b.high >= np.maximum(b.open, b.close)) and np.all(b.low <= np.minimum(b.open, b.close))


def test_parkinson_efficiency_is_the_exact_4_91():
    # 2 / (9 zeta(3) / (16 ln^2 2) - 1) = 4.910 from Parkinson's (1980) moments (derivation in
    # docs/METHODS.md, "Confidence intervals and their coverage").
    assert intervals.BAR_EFFICIENCY["parkinson"] == pytest.approx(4.910, abs=5e-4)
    assert REGISTRY["parkinson"].efficiency == pytest.approx(4.91)


@pytest.mark.parametrize(("n", "share"), [(5, 0.0), (20, 0.0), (20, 0.4)])
def test_yang_zhang_dof_matches_the_simulated_variance(n, share):
    # Our derivation (intervals.yang_zhang_dof) against a plain simulation of 20,000 windows:
    # nu = 2 s2^2 / Var(V_YZ). The sample variance of V has a relative standard error of about
    # 2 %; we allow 8 %.
    windows = 20_000
    b = brownian_bars(np.random.default_rng([8, n]), windows * n + 1, substeps=8, overnight_share=share)
    o = (b.open[1:] - b.close[:-1]).reshape(windows, n)
    c = (b.close[1:] - b.open[1:]).reshape(windows, n)
    u = (b.high[1:] - b.open[1:]).reshape(windows, n)
    d = (b.low[1:] - b.open[1:]).reshape(windows, n)
    k = yang_zhang_k(n)
    v = o.var(axis=1, ddof=1) + k * c.var(axis=1, ddof=1) + (1 - k) * (u * (u - c) + d * (d - c)).mean(axis=1)
    assert 2.0 / np.var(v) == pytest.approx(intervals.yang_zhang_dof(n, share), rel=0.08)


def test_yang_zhang_reads_the_overnight_share_from_the_window():
    # With half the variance overnight the effective degrees of freedom fall towards those of the
    # overnight sample variance; the interval widens accordingly (docs/METHODS.md, "Confidence intervals and their coverage").
    b = brownian_bars(np.random.default_rng(9), 61, substeps=8, overnight_share=0.5, variance=1e-4)
    h = history_of(b)
    est = point_estimate(h, "yang_zhang", 60)
    v_o, v_c, v_rs = (p[-1] for p in yang_zhang_parts(h, 60))
    var = v_o + yang_zhang_k(60) * v_c + (1 - yang_zhang_k(60)) * v_rs
    assert est.dof == pytest.approx(intervals.yang_zhang_dof(60, v_o / var), rel=1e-12)
    assert est.dof < intervals.yang_zhang_dof(60, 0.0) / 2


@pytest.mark.slow
@pytest.mark.parametrize("n", [10, 20, 60])
@pytest.mark.parametrize("key", KEYS)
def test_95_percent_interval_covers_93_to_97_percent(key, n):
    # Target of docs/METHODS.md, "Confidence intervals and their coverage": 2,000 non-overlapping
    # windows (binomial sd of the coverage about 0.5 point), exact extremes, seeded.
    cov, _ = coverage(key, n, np.random.default_rng([2026, n, KEYS.index(key)]), windows=2000)
    assert 0.93 <= cov <= 0.97, (key, n, cov)


@pytest.mark.slow
def test_yang_zhang_covers_with_large_overnight_gaps():
    # Half of each bar's variance overnight: the plug-in overnight share keeps coverage in 93-97 %.
    cov, _ = coverage("yang_zhang", 20, np.random.default_rng(2027), windows=2000, overnight_share=0.5)
    assert 0.93 <= cov <= 0.97, cov


@pytest.mark.slow
def test_discretely_traded_ranges_read_low_by_the_stated_amount():
    # Range estimators on bars of 500 trades read low by about c / sqrt(500) (c from the seeded
    # calibration, volbench.estimators.calibration.DISCRETE_BIAS; Parkinson's about 0.7 agrees with
    # Broadie, Glasserman & Kou 1997, from memory). Checked on a fresh seed within 1 point of vol.
    v = 1e-4
    h = history_of(brownian_bars(np.random.default_rng(2028), 40_001, trades=500, variance=v))
    for key in ("parkinson", "garman_klass", "rogers_satchell", "yang_zhang"):
        bias = math.sqrt(REGISTRY[key].variance(h, 40_000)[-1] / v) - 1
        expected = -intervals.cal.DISCRETE_BIAS[key] / math.sqrt(500)
        assert bias == pytest.approx(expected, abs=0.01), key
        assert "reads low on discretely traded prices" in point_estimate(h, key, 20).note
    assert point_estimate(h, "close_to_close", 20).note == ""
