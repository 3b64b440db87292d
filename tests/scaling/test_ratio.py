"""Variance-ratio statistics (against arch) and the Chow-Denning joint test."""

from __future__ import annotations

import numpy as np
import pytest
from arch.unitroot import VarianceRatio
from scipy import stats

from volbench.scaling.ratio import chow_denning, variance_ratio_table, variance_ratio_table_arch

from .conftest import levels

HS = (1, 2, 5, 10, 20, 40, 60)


@pytest.mark.parametrize("kind", ["brownian", "garch", "ar1"])
def test_vr_z_and_robust_z_equal_arch_to_1e_10(kind, garch_returns, ar1_returns):
    # Reference library: arch.unitroot.VarianceRatio(y, q, trend="c", debiased=True, robust=False/True).
    if kind == "brownian":
        r = np.random.default_rng(1).standard_normal(1500) * 0.01 + 0.0003
    elif kind == "garch":
        r = garch_returns(1500, 2) * 0.01
    else:
        r = ar1_returns(1500, -0.15, 3) * 0.01
    y = levels(r, start=np.log(50.0))
    ours = variance_ratio_table(y, HS)
    for row in ours.itertuples(index=False):
        if row.h == 1:
            assert row.variance_ratio == 1.0 and np.isnan(row.z) and np.isnan(row.z_robust)
            continue
        plain = VarianceRatio(y, lags=row.h, trend="c", debiased=True, robust=False)
        robust = VarianceRatio(y, lags=row.h, trend="c", debiased=True, robust=True)
        assert abs(row.variance_ratio - plain.vr) < 1e-10
        assert abs(row.z - plain.stat) < 1e-10
        assert abs(row.z_robust - robust.stat) < 1e-10
        assert abs(row.p_value - plain.pvalue) < 1e-10
        assert abs(row.p_value_robust - robust.pvalue) < 1e-10
    # and the arch-backed reference table agrees with the fast one column by column
    ref = variance_ratio_table_arch(y, HS)
    np.testing.assert_allclose(ours.to_numpy(float), ref.to_numpy(float), rtol=0, atol=1e-10, equal_nan=True)


def test_brownian_motion_has_variance_ratios_near_one():
    # Theory (Lo & MacKinlay 1988): VR(q) = 1 under a random walk; sqrt(n)(VR - 1) has variance
    # 2(2q - 1)(q - 1)/(3q), so 4 such standard deviations bound a seeded draw.
    n = 5000
    t = variance_ratio_table(levels(np.random.default_rng(10).standard_normal(n)), HS)
    for row in t.itertuples(index=False):
        sd = np.sqrt(2 * (2 * row.h - 1) * (row.h - 1) / (3 * row.h) / n)
        assert abs(row.variance_ratio - 1) <= max(4 * sd, 1e-12)


def test_robust_test_rejects_at_nominal_size_for_brownian_motion():
    # Theory (Lo & MacKinlay 1988, Table 1): for n = 1000 and q << n the z* test has close to
    # nominal size under a Gaussian random walk. 400 seeded simulations: rejection rate at 5%
    # within about 3 binomial standard deviations (0.011) of 0.05 at each q.
    rng = np.random.default_rng(2024)
    hs = (2, 5, 10, 20)
    rejections = np.zeros(len(hs))
    for _ in range(400):
        t = variance_ratio_table(levels(rng.standard_normal(1000)), hs)
        rejections += t["p_value_robust"].to_numpy() < 0.05
    rate = rejections / 400
    assert np.all((rate >= 0.015) & (rate <= 0.09)), rate


def test_ar1_variance_ratio_two_is_one_plus_rho(ar1_returns):
    # Lo & MacKinlay (1988): VR(2) = 1 + rho_1 (first-order autocorrelation); for AR(1) rho_1 = rho.
    # n = 40000 gives a sampling sd of VR(2) of about sqrt((1 - rho^2) / n) < 0.005.
    for rho in (-0.3, 0.2):
        t = variance_ratio_table(levels(ar1_returns(40000, rho, 5)), (1, 2))
        assert t["variance_ratio"].iloc[1] == pytest.approx(1 + rho, abs=0.02)


@pytest.mark.slow
def test_robust_z_is_well_sized_under_garch_where_plain_z_over_rejects(garch_returns):
    # Theory (Lo & MacKinlay 1988, section 2.2): conditional heteroskedasticity inflates the
    # variance of the autocorrelations (delta_k > 1), so the homoskedastic z over-rejects a
    # random walk with GARCH(1,1) increments while z* keeps its size. arch simulates the GARCH
    # (alpha 0.2, beta 0.75: fourth moment finite since 3a^2 + 2ab + b^2 < 1); 300 series of 1000.
    hs = (2, 5, 10)
    plain = np.zeros(len(hs))
    robust = np.zeros(len(hs))
    sims = 300
    for i in range(sims):
        t = variance_ratio_table(levels(garch_returns(1000, 100 + i, alpha=0.2, beta=0.75)), hs)
        plain += t["p_value"].to_numpy() < 0.05
        robust += t["p_value_robust"].to_numpy() < 0.05
    plain, robust = plain / sims, robust / sims
    assert plain[0] > 0.12, plain  # at q = 2 the plain test rejects far more than 5 %
    assert np.all(plain > robust), (plain, robust)
    assert np.all((robust >= 0.015) & (robust <= 0.09)), robust


def test_chow_denning_p_value_is_the_studentized_maximum_modulus_formula():
    # Chow & Denning (1993): p = 1 - (2 Phi(max|z|) - 1)^m, written out with scipy's normal cdf.
    z = [0.4, -2.3, 1.1]
    stat, p = chow_denning(z)
    assert stat == 2.3
    assert p == pytest.approx(1 - (2 * stats.norm.cdf(2.3) - 1) ** 3, rel=1e-12)
    # single horizon: the ordinary two-sided normal p-value
    assert chow_denning([1.7])[1] == pytest.approx(2 * stats.norm.sf(1.7), rel=1e-12)
    # far tail keeps precision instead of rounding to 0
    assert 0 < chow_denning([9.0, 1.0])[1] < 1e-17


def test_chow_denning_p_value_matches_the_maximum_of_independent_normals():
    # Theory: with infinite degrees of freedom the SMM(m) law is that of max of m independent
    # |N(0,1)|; direct simulation of that maximum gives the tail probability at a few points.
    rng = np.random.default_rng(9)
    m = 4
    maxima = np.abs(rng.standard_normal((200000, m))).max(axis=1)
    for c in (1.5, 2.5, 3.0):
        _, p = chow_denning([c] + [0.0] * (m - 1))
        direct = (maxima > c).mean()
        assert p == pytest.approx(direct, abs=4 * np.sqrt(direct * (1 - direct) / 200000) + 1e-4)


def test_chow_denning_is_at_most_nominal_for_brownian_motion():
    # Chow & Denning (1993): the SMM bound makes the joint test conservative for correlated z*'s.
    rng = np.random.default_rng(31)
    hs = (1, 2, 5, 10, 20)
    rejected = 0
    for _ in range(400):
        t = variance_ratio_table(levels(rng.standard_normal(1000)), hs)
        rejected += chow_denning(t["z_robust"].to_numpy()[1:])[1] < 0.05
    assert rejected / 400 <= 0.07
