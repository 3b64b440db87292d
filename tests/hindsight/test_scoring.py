"""Losses and tests of forecast accuracy: QLIKE, the cosine long-run variance, Diebold-Mariano, intervals."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats
from statsmodels.stats.sandwich_covariance import S_hac_simple

from volbench.errors import VolbenchError
from volbench.hindsight import (
    diebold_mariano,
    dm_degrees_of_freedom,
    ewc_degrees_of_freedom,
    ewc_long_run_variance,
    prediction_factors,
    qlike,
)


def test_qlike_is_zero_at_the_truth_positive_elsewhere_and_scale_free():
    # Patton (2011), J. of Econometrics 160: L = x - ln x - 1, x = realized / forecast variance
    real = np.array([0.04, 0.04, 0.09, 0.01])
    fc = np.array([0.04, 0.09, 0.04, 0.02])
    got = qlike(real, fc)
    x = real / fc
    assert np.allclose(got, x - np.log(x) - 1) and got[0] == 0 and np.all(got[1:] > 0)
    assert np.allclose(qlike(7 * real, 7 * fc), got)  # homogeneous of degree 0 (Patton 2011)
    # under-forecasting costs more than over-forecasting by the same factor (common practice)
    assert qlike(0.04, 0.02) > qlike(0.04, 0.08)


def test_cosine_long_run_variance_equals_a_plain_loop():
    # reference: the definition computed term by term (Mueller 2007; Lazarus, Lewis, Stock & Watson 2018)
    rng = np.random.default_rng(1)
    x = rng.standard_normal((50, 2))
    nu = 6
    ref = []
    for col in x.T:
        c = col - col.mean()
        lam = [math.sqrt(2 / 50) * sum(math.cos(math.pi * j * (t + 0.5) / 50) * c[t] for t in range(50))
               for j in range(1, nu + 1)]
        ref.append(sum(v * v for v in lam) / nu)
    assert np.allclose(ewc_long_run_variance(x, nu), ref, rtol=1e-12)
    assert ewc_degrees_of_freedom(2000) == 63  # floor(0.4 x 2000^(2/3)) = floor(63.5)
    with pytest.raises(VolbenchError, match="at least 3 periods, got 2"):
        ewc_long_run_variance(np.ones(2))


def test_cosine_long_run_variance_recovers_an_ar1_spectrum():
    # theory: an AR(1) with coefficient phi and unit innovations has long-run variance 1 / (1 - phi)^2
    # (Hamilton 1994, Time Series Analysis, from memory); statsmodels' Newey-West agrees in scale
    rng = np.random.default_rng(2)
    phi, t = 0.5, 20_000
    e = rng.standard_normal(t)
    from scipy.signal import lfilter

    y = lfilter([1.0], [1.0, -phi], e)
    got = float(ewc_long_run_variance(y)[0])
    assert got == pytest.approx(1 / (1 - phi) ** 2, rel=0.2)
    nw = float(np.squeeze(S_hac_simple(y - y.mean(), nlags=40))) / t  # S_hac_simple returns T x variance
    assert got == pytest.approx(nw, rel=0.25)


def _equal_forecast_losses(m, n=1300, w=60, days=21, seed=7):
    """QLIKE losses of two equally good forecasts over overlapping periods, ``m`` replications.

    Each forecaster reports the rolling w-bar sample variance of its own independent copy of the same
    constant-vol process, so both have the same expected loss against the realized variance of the
    next ``days`` bars; the loss difference is serially correlated over about w + days bars.
    """
    rng = np.random.default_rng(seed)
    sd = 0.01

    def roll(r):
        c1 = np.vstack([np.zeros((1, m)), np.cumsum(r, 0)])
        c2 = np.vstack([np.zeros((1, m)), np.cumsum(r * r, 0)])
        s1, s2 = c1[w:] - c1[:-w], c2[w:] - c2[:-w]
        return (s2 - s1 * s1 / w) / (w - 1)

    r = rng.standard_normal((n, m)) * sd
    f1, f2 = roll(rng.standard_normal((n, m)) * sd), roll(rng.standard_normal((n, m)) * sd)
    c2 = np.vstack([np.zeros((1, m)), np.cumsum(r * r, 0)])
    t = np.arange(w - 1, n - days)
    real = (c2[t + 1 + days] - c2[t + 1]) / days
    return qlike(real, f1[t - w + 1]), qlike(real, f2[t - w + 1])


@pytest.mark.slow
def test_dm_p_values_are_uniform_under_equal_forecasts_and_newey_west_would_over_reject():
    # seeded simulation (Diebold & Mariano 1995; the cosine variance and Student-t(nu) of Lazarus,
    # Lewis, Stock & Watson 2018): 400 pairs of equally good 60-bar forecasts, 21-bar periods every bar
    la, lb = _equal_forecast_losses(400)
    nu = dm_degrees_of_freedom(la.shape[0], 60 + 21)  # loss differences reach W + N bars
    _, p = diebold_mariano(la, lb, nu)
    # uniform-ish: the Kolmogorov distance to the uniform stays under 0.1 (over 10 seeds it ran
    # 0.03-0.09: QLIKE differences are heavy-tailed), the mean near 1/2, the rejection rates near level
    assert stats.kstest(p, "uniform").statistic < 0.1 and 0.44 <= p.mean() <= 0.56
    assert 0.02 <= np.mean(p < 0.05) <= 0.08
    assert 0.05 <= np.mean(p < 0.10) <= 0.15
    # the same statistic with a Newey-West variance of N - 1 = 20 lags (statsmodels' S_hac_simple)
    d = la - lb
    t = d.shape[0]
    nw = np.array([float(np.squeeze(S_hac_simple(d[:, j] - d[:, j].mean(), nlags=20))) / t
                   for j in range(d.shape[1])])
    p_nw = 2 * stats.norm.sf(np.abs(d.mean(0) / np.sqrt(nw / t)))
    assert np.mean(p_nw < 0.05) > np.mean(p < 0.05) + 0.02


def test_dm_detects_a_clearly_worse_forecast():
    # a forecast of twice the true variance against the truth itself (QLIKE, Patton 2011)
    rng = np.random.default_rng(3)
    real = 0.04 * rng.chisquare(21, 800) / 21
    good, bad = qlike(real, np.full(800, 0.04)), qlike(real, np.full(800, 0.08))
    stat, p = diebold_mariano(bad, good)
    assert stat[0] > 0 and p[0] < 1e-6
    stat, p = diebold_mariano(good, good)
    assert stat[0] == 0 and p[0] == 1


@pytest.mark.parametrize("window, days", [(20, 21), (250, 10)])
def test_prediction_interval_covers_the_realized_vol_95_percent(window, days):
    # seeded simulation of the F(N, dof) argument in prediction_factors (common practice, no source):
    # 20,000 draws of a close-to-close estimate over `window` returns and the zero-mean realized vol
    # of the next `days` returns, constant vol
    rng = np.random.default_rng(window + days)
    m = 20_000
    r = rng.standard_normal((m, window + days)) * 0.01
    est = r[:, :window].std(axis=1, ddof=1)
    real = np.sqrt((r[:, window:] ** 2).mean(axis=1))
    lo, hi = prediction_factors(days, np.array([window - 1.0]))
    cover = np.mean((real >= est * lo) & (real <= est * hi))
    assert 0.94 <= cover <= 0.96
    lo_k, hi_k = prediction_factors(days, np.array([math.inf]))  # forecast taken as the true vol
    cover_known = np.mean((real >= 0.01 * lo_k) & (real <= 0.01 * hi_k))
    assert 0.94 <= cover_known <= 0.96
