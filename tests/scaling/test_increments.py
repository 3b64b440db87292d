"""Normality, independence and drift of the increments."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats
from statsmodels.stats.diagnostic import acorr_ljungbox

from volbench.scaling.increments import drift, independence, normality_table, qq_pairs
from volbench.scaling.variance import nonoverlapping_returns

from .conftest import levels


def test_ljung_box_equals_statsmodels_acorr_ljungbox(garch_returns):
    # Reference library: statsmodels.stats.diagnostic.acorr_ljungbox on the demeaned returns and
    # on their squares, same lags, to 1e-10.
    r = garch_returns(1200, 7) * 0.01 + 0.0005
    lb, ac = independence(r, [1, 5, 10, 20], 20, 0.05)
    e = r - r.mean()
    for col, series in (("returns", e), ("squared", e * e)):
        ref = acorr_ljungbox(series, lags=[1, 5, 10, 20], return_df=True)
        np.testing.assert_allclose(lb[f"q_{col}"], ref["lb_stat"], rtol=0, atol=1e-10 * ref["lb_stat"].max())
        np.testing.assert_allclose(lb[f"p_{col}"], ref["lb_pvalue"], rtol=0, atol=1e-10)
    assert list(ac["lag"]) == list(range(1, 21))
    # Common practice, no source: the i.i.d. band is 1.96 / sqrt(n) at the 5 % level.
    assert ac["band"].iloc[0] == pytest.approx(1.959964 / np.sqrt(1200), rel=1e-6)


def test_garch_ljung_box_rejects_on_squared_returns_but_not_on_returns(garch_returns):
    # Theory (Engle 1982; Bollerslev 1986): GARCH(1,1) returns are uncorrelated but their squares
    # are autocorrelated. arch simulates 3000 bars with alpha 0.1, beta 0.85.
    r = garch_returns(3000, 11)
    lb, ac = independence(r, [5, 10, 20], 20, 0.05)
    assert (lb["p_squared"] < 0.001).all()
    assert (lb["p_returns"] > 0.01).all()
    assert ac["acf_squared"].iloc[0] > 2 * ac["band"].iloc[0]


def test_normality_table_matches_scipy_on_non_overlapping_returns():
    # Reference library: scipy.stats skew / kurtosis(fisher=True) / jarque_bera on the
    # non-overlapping h-bar returns.
    r = np.random.default_rng(4).laplace(size=900) * 0.01
    y = levels(r)
    t = normality_table(y, (1, 3, 10))
    for row in t.itertuples(index=False):
        x = nonoverlapping_returns(y, row.h)
        assert row.skew == pytest.approx(stats.skew(x), rel=1e-12)
        assert row.excess_kurtosis == pytest.approx(stats.kurtosis(x, fisher=True), rel=1e-12)
        assert row.jarque_bera_p == pytest.approx(stats.jarque_bera(x).pvalue, rel=1e-12)


def test_excess_kurtosis_thins_out_like_one_over_h():
    # Theory (cumulants of a sum of h i.i.d. variables add; common knowledge): excess kurtosis of
    # h-bar returns is kappa / h. Laplace increments have kappa = 3, so 0.3 at h = 10.
    # 300000 seeded draws; tolerances are about 4 standard errors of the sample kurtosis.
    y = levels(np.random.default_rng(21).laplace(size=300000))
    t = normality_table(y, (1, 10)).set_index("h")
    assert t.loc[1, "excess_kurtosis"] == pytest.approx(3.0, abs=0.4)
    assert t.loc[10, "excess_kurtosis"] == pytest.approx(0.3, abs=0.15)
    assert t.loc[1, "jarque_bera_p"] < 1e-10


def test_qq_pairs_keep_extremes_and_follow_the_normal_line():
    # Reference library: scipy.stats.probplot; for normal data the sample quantiles track the
    # theoretical ones (probability-plot correlation near 1, Filliben 1975).
    r = np.random.default_rng(6).standard_normal(5000) * 0.02 + 0.001
    qq = qq_pairs(r, 200)
    theo, samp = stats.probplot((r - r.mean()) / r.std(ddof=1), fit=False)
    assert len(qq) == 200
    assert qq["theoretical"].iloc[0] == theo[0] and qq["theoretical"].iloc[-1] == theo[-1]
    assert qq["sample"].iloc[0] == samp[0] and qq["sample"].iloc[-1] == samp[-1]
    assert np.all(np.diff(qq["theoretical"]) > 0)
    assert np.corrcoef(qq["theoretical"], qq["sample"])[0, 1] > 0.995
    assert len(qq_pairs(r[:50], 200)) == 50


def test_drift_t_statistic_and_inflation_of_a_zero_mean_vol():
    # Theory: t = mean / (sd / sqrt(n)) (reference: scipy.stats.ttest_1samp). Over h bars the
    # second moment about zero is sigma^2 h + mu^2 h^2 (common knowledge), checked directly on
    # the simulated overlapping h-bar returns.
    rng = np.random.default_rng(12)
    mu, sigma, n = 0.002, 0.01, 50000
    r = mu + sigma * rng.standard_normal(n)
    d = drift(r, (1, 25), 252.0)
    assert d["t_stat"] == pytest.approx(stats.ttest_1samp(r, 0.0).statistic, rel=1e-12)
    assert d["mean_annualized"] == pytest.approx(r.mean() * 252, rel=1e-12)
    assert d["vol_annualized"] == pytest.approx(r.std(ddof=1) * np.sqrt(252), rel=1e-12)
    y = levels(r)
    y25 = y[25:] - y[:-25]
    direct = np.sqrt(np.mean(y25**2)) / y25.std() - 1
    h25 = d["by_horizon"][1]
    assert h25["h"] == 25
    assert h25["drift_to_vol"] == pytest.approx(mu * 5 / sigma, rel=0.05)
    assert h25["vol_inflation"] == pytest.approx(direct, rel=0.05)


def test_autocorrelations_by_one_fft_equal_statsmodels_acf(garch_returns):
    # Reference library: statsmodels.tsa.stattools.acf (adjusted=False, demeaned) on each row, to
    # 1e-10; several rows and lengths (odd, even, short) in one call.
    from statsmodels.tsa.stattools import acf

    from volbench.scaling.increments import autocorrelations, lagged_products

    for n in (31, 500, 1201):
        r = garch_returns(n, 8) * 0.01 + 0.0003
        rows = np.stack((r, r * r, np.abs(r)))
        nlags = min(40, n - 1)
        got = autocorrelations(rows, nlags)
        for row, ref in zip(got, rows):
            np.testing.assert_allclose(row, acf(ref, nlags=nlags, fft=False)[1:], rtol=0, atol=1e-10)
        # the raw lagged sums, against plain dot products (numpy as reference library)
        sums = lagged_products(rows[1:2], nlags)[0]
        z2 = rows[1]
        direct = [z2 @ z2] + [z2[k:] @ z2[:-k] for k in range(1, nlags + 1)]
        np.testing.assert_allclose(sums, direct, rtol=1e-12)


def test_qq_pairs_equal_probplot_at_every_kept_rank():
    # Reference library: scipy.stats.probplot(fit=False); the kept ranks carry the same pairs.
    r = np.random.default_rng(9).standard_t(4, size=1234) * 0.01
    theo, samp = stats.probplot((r - r.mean()) / r.std(ddof=1), fit=False)
    qq = qq_pairs(r, 97)
    keep = np.unique(np.round(np.linspace(0, len(r) - 1, 97)).astype(int))
    np.testing.assert_array_equal(qq["theoretical"].to_numpy(), theo[keep])
    np.testing.assert_array_equal(qq["sample"].to_numpy(), samp[keep])


def test_p_values_equal_scipy_stats():
    # Reference library: scipy.stats.ttest_1samp and chi2.sf (the special functions behind them).
    r = np.random.default_rng(10).standard_normal(700) * 0.01 + 0.0008
    d = drift(r, [1, 5], 252)
    ref = stats.ttest_1samp(r, 0.0)
    assert d["p_value"] == pytest.approx(ref.pvalue, rel=1e-12)
    lb, _ = independence(r, [3, 9], 10, 0.05)
    np.testing.assert_allclose(lb["p_returns"], stats.chi2.sf(lb["q_returns"], [3, 9]), rtol=1e-12)
