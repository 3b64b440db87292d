"""Horizon-variance estimators and the log-log fit."""

from __future__ import annotations

import numpy as np
import pytest
import statsmodels.api as sm

from volbench.scaling.ratio import robust_deltas, variance_ratio_table
from volbench.scaling.variance import (
    loglog_fit,
    nonoverlapping_returns,
    nonoverlapping_variance,
    overlapping_variance,
)

from .conftest import levels


def _loop_overlapping_variance(y, h):
    """Plain loop over bars: the Lo-MacKinlay (1988) eq. (12) sum, written out term by term."""
    n = len(y) - 1
    mu = (y[-1] - y[0]) / n
    total = 0.0
    for t in range(h, n + 1):
        total += (y[t] - y[t - h] - h * mu) ** 2
    return total / ((n - h + 1) * (1 - h / n))


def test_overlapping_variance_matches_a_plain_loop():
    # Reference: the defining sum written as a loop (vectorised code checked against a loop).
    y = levels(np.random.default_rng(3).standard_normal(257) * 0.02)
    for h in (1, 2, 7, 30):
        assert overlapping_variance(y, h) == pytest.approx(_loop_overlapping_variance(y, h), rel=1e-12)


def test_one_bar_overlapping_variance_is_the_sample_variance():
    # Reference: numpy's sample variance (ddof=1); Lo & MacKinlay's correction reduces to it at h = 1.
    r = np.random.default_rng(4).standard_normal(100)
    assert overlapping_variance(levels(r), 1) == pytest.approx(np.var(r, ddof=1), rel=1e-12)


def test_nonoverlapping_blocks_end_at_the_last_bar_and_match_a_loop():
    # Reference: plain loop summing consecutive blocks of h returns backwards from the last one.
    r = np.random.default_rng(5).standard_normal(23)
    y = levels(r)
    h = 5
    expected = [r[len(r) - (k + 1) * h: len(r) - k * h].sum() for k in range(len(r) // h)][::-1]
    np.testing.assert_allclose(nonoverlapping_returns(y, h), expected, rtol=1e-12)
    var, count = nonoverlapping_variance(y, h)
    assert count == 4
    assert var == pytest.approx(np.var(expected, ddof=1), rel=1e-12)


def test_increment_variance_over_u_s_equals_s_minus_u_for_standard_brownian_motion():
    # Property of Brownian motion (common knowledge, no source): Var(B_s - B_u) = s - u.
    # Standard BM sampled every dt = 0.01 on 400 seeded paths; the horizon-variance estimators,
    # averaged over paths, must give h * dt within 4 Monte Carlo standard errors.
    rng = np.random.default_rng(20240601)
    dt, n, paths = 0.01, 1500, 400
    inc = rng.standard_normal((paths, n)) * np.sqrt(dt)
    for h in (1, 5, 20, 60):
        est = np.array([overlapping_variance(levels(inc[i]), h) for i in range(paths)])
        non = np.array([nonoverlapping_variance(levels(inc[i]), h)[0] for i in range(paths)])
        for values in (est, non):
            se = values.std(ddof=1) / np.sqrt(paths)
            assert abs(values.mean() - h * dt) < 4 * se, (h, values.mean(), se)


def test_debiasing_removes_the_small_sample_bias_at_long_horizons():
    # Theory (Lo & MacKinlay 1988, eq. 12): dividing by n h instead of m_h biases the overlapping
    # variance down by about (1 - h/n)(1 - (h - 1)/n); the corrected estimator is unbiased under
    # i.i.d. normal increments. Short paths (n = 120) with h = 40 make the bias ~ 1/2.
    rng = np.random.default_rng(77)
    n, h, paths = 120, 40, 3000
    inc = rng.standard_normal((paths, n))
    est = np.array([overlapping_variance(levels(inc[i]), h) for i in range(paths)])
    naive = est * (n - h + 1) * (1 - h / n) / n
    se = est.std(ddof=1) / np.sqrt(paths)
    assert abs(est.mean() - h) < 4 * se
    assert naive.mean() < h - 10 * se


def test_fit_slope_equals_statsmodels_wls():
    # Reference library: statsmodels WLS of ln Var_h on ln h with weights n / h.
    rng = np.random.default_rng(8)
    y = levels(rng.standard_normal(2000) * 0.01)
    hs = [1, 2, 5, 10, 20, 40]
    var = [overlapping_variance(y, h) for h in hs]
    fit = loglog_fit(hs, var, 2000, robust_deltas(y, 39))
    res = sm.WLS(np.log(var), sm.add_constant(np.log(hs)), weights=2000 / np.asarray(hs, float)).fit()
    assert fit.slope == pytest.approx(res.params[1], rel=1e-10)
    assert fit.intercept == pytest.approx(res.params[0], rel=1e-10)
    assert fit.hurst == pytest.approx(fit.slope / 2)


def test_fit_interval_has_its_nominal_coverage_for_brownian_motion():
    # Theory: under Brownian motion the slope is 1 (Var_h = h sigma^2); the interval uses the
    # Lo & MacKinlay (1988) asymptotic covariance of the autocorrelations, so across independent
    # simulations a 95% interval should cover 1 about 95% of the time (binomial band, 400 sims).
    rng = np.random.default_rng(11)
    hs = (1, 2, 5, 10, 20)
    covered = 0
    for _ in range(400):
        y = levels(rng.standard_normal(1000))
        t = variance_ratio_table(y, hs)
        fit = loglog_fit(hs, t["variance"].to_numpy(), 1000, robust_deltas(y, 19), level=0.95)
        covered += fit.ci[0] <= 1.0 <= fit.ci[1]
    assert 0.92 <= covered / 400 <= 0.98


def test_fit_on_a_long_brownian_path_gives_slope_near_one():
    # Theory: slope 1 and Hurst 0.5 for Brownian motion; 4 standard errors of tolerance.
    y = levels(np.random.default_rng(12).standard_normal(20000) * 0.01)
    hs = (1, 2, 5, 10, 20, 40, 60)
    fit = loglog_fit(hs, [overlapping_variance(y, h) for h in hs], 20000, robust_deltas(y, 59))
    assert abs(fit.slope - 1.0) < 4 * fit.se
    assert fit.se < 0.05
