"""Each estimator against a hand calculation on a tiny table, and against its published constants.

Reference loops live in tests/estimators/conftest.py (the ``plain`` fixture); they follow the formulas
in docs/METHODS.md, "Estimators" and the papers cited beside each test.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from volbench.estimators import DAILY_KEYS, REGISTRY, point_estimate, rolling_vol
from volbench.estimators.close_based import EWMA_LAMBDA, ewma_effective_n
from volbench.estimators.range_based import yang_zhang_k

A = 252.0


def test_registry_lists_the_six_classical_estimators_in_order():
    # docs/METHODS.md, "Estimators" table (common practice, no source for the order)
    assert DAILY_KEYS == (
        "close_to_close", "parkinson", "garman_klass", "rogers_satchell", "yang_zhang", "ewma",
    )
    for key, spec in REGISTRY.items():
        assert spec.key == key and spec.label and spec.source and spec.assumes
        assert "close" in spec.needs or {"high", "low"} <= spec.needs


def test_close_to_close_by_hand_three_closes(make_history):
    # Common practice (Hull): closes 100, 110, 99 -> r = ln 1.1 = 0.0953102, ln 0.9 = -0.1053605,
    # mean -0.0050252, s^2 = (0.1003354^2 + 0.1003354^2) / 1 = 0.0201344, vol = sqrt(0.0201344 * 252).
    h = make_history([100.0, 110.0, 99.0])
    est = point_estimate(h, "close_to_close")
    assert est.vol == pytest.approx(math.sqrt(0.0201344 * 252), rel=1e-5)
    assert est.n == 2 and est.window is None and est.annualization == 252


def test_zero_mean_close_to_close_by_hand(make_history):
    # Common practice (Hull, zero-mean variant): s^2 = (r1^2 + r2^2) / 2.
    h = make_history([100.0, 110.0, 99.0])
    r1, r2 = math.log(1.1), math.log(0.9)
    est = point_estimate(h, "close_to_close", zero_mean=True)
    assert est.vol == pytest.approx(math.sqrt((r1**2 + r2**2) / 2 * A), rel=1e-12)


@pytest.mark.parametrize("key", DAILY_KEYS)
@pytest.mark.parametrize("window", [2, 3, 4])
def test_point_estimate_equals_plain_loop_on_tiny_table(tiny_ohlc, plain, key, window):
    # Formulas of docs/METHODS.md, "Estimators" written as plain loops (see conftest for the source of each).
    h = tiny_ohlc()
    est = point_estimate(h, key, window)
    expected = math.sqrt(plain.var[key](h, h.n - 1, window) * A)
    assert est.vol == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("key", DAILY_KEYS)
def test_whole_sample_estimate_on_tiny_table(tiny_ohlc, plain, key):
    # Whole sample: every bar (every return for close-based estimators); EWMA seeds with its
    # 20-bar window capped at the available returns (5 here), so it equals the sample variance.
    h = tiny_ohlc()
    n = {"close_to_close": 5, "yang_zhang": 5, "ewma": 5}.get(key, 6)
    est = point_estimate(h, key, "all")
    assert est.vol == pytest.approx(math.sqrt(plain.var[key](h, h.n - 1, n) * A), rel=1e-12)


@pytest.mark.parametrize("key", DAILY_KEYS)
def test_rolling_series_equals_plain_loop_on_tiny_table(tiny_ohlc, plain, key):
    # docs/METHODS.md, "Estimators": formulas written as plain loops (sources per estimator in conftest.py).
    h = tiny_ohlc()
    w = 3
    rv = rolling_vol(h, key, w)
    first = w if REGISTRY[key].extra_bars else w - 1
    assert list(rv.values.index) == list(h.index[first:])
    expected = [math.sqrt(plain.var[key](h, t, w) * A) for t in range(first, h.n)]
    np.testing.assert_allclose(rv.values.to_numpy(), expected, rtol=1e-12)


def test_annualization_scales_vol_by_square_root(tiny_ohlc):
    # vol = sqrt(variance x A) (docs/METHODS.md, "Notation and conventions"; common practice, no source)
    h = tiny_ohlc()
    for key in DAILY_KEYS:
        a252 = point_estimate(h, key, 4).vol
        a365 = point_estimate(h, key, 4, annualization=365).vol
        assert a365 / a252 == pytest.approx(math.sqrt(365 / 252), rel=1e-12)


def test_parkinson_constant_is_one_over_four_ln2(make_history):
    # Parkinson (1980), J. of Business 53(1): E[ln(H/L)^2] = 4 ln 2 sigma^2, so the per-bar variance
    # is ln(H/L)^2 / (4 ln 2) = 0.361 ln(H/L)^2 (0.361 recalled from memory).
    hl = 0.1
    h = make_history([100.0], [100.0], [100.0 * math.exp(hl / 2)], [100.0 * math.exp(-hl / 2)])
    var = point_estimate(h, "parkinson", annualization=1).vol ** 2
    assert var / hl**2 == pytest.approx(0.361, abs=5e-4)


def test_garman_klass_constant_is_two_ln2_minus_one(make_history):
    # Garman & Klass (1980), J. of Business 53(1), practical estimator
    # 0.5 ln(H/L)^2 - (2 ln 2 - 1) ln(C/O)^2 with 2 ln 2 - 1 = 0.386 (recalled from memory).
    # Two bars with the same range and open, different closes: the difference isolates the constant.
    o, hi, lo = 100.0, 110.0, 95.0
    v = []
    for c in (100.0, 105.0):
        h = make_history([c], [o], [hi], [lo])
        v.append(point_estimate(h, "garman_klass", annualization=1).vol ** 2)
    coef = (v[0] - v[1]) / math.log(105.0 / 100.0) ** 2
    assert coef == pytest.approx(0.386, abs=5e-4)
    assert v[0] == pytest.approx(0.5 * math.log(hi / lo) ** 2, rel=1e-12)  # c = 0 leaves the range term


def test_yang_zhang_k_formula():
    # Yang & Zhang (2000), J. of Business 73(3): k = alpha / (1 + alpha + (n + 1) / (n - 1)) with
    # alpha = 0.34 (recalled from memory); the limit for large n is 0.34 / 2.34 = 0.1453.
    assert yang_zhang_k(20) == pytest.approx(0.34 / (1.34 + 21 / 19), rel=1e-15)
    assert yang_zhang_k(20) == pytest.approx(0.13904, abs=1e-5)
    assert yang_zhang_k(10**9) == pytest.approx(0.1453, abs=1e-4)
    assert yang_zhang_k(2) < yang_zhang_k(5) < yang_zhang_k(60)


def test_rogers_satchell_is_zero_for_a_pure_trend_bar(make_history):
    # Rogers & Satchell (1991): each term ln(H/C) ln(H/O) + ln(L/C) ln(L/O) vanishes when the bar
    # opens at its low and closes at its high (pure drift, no diffusion); Parkinson does not.
    h = make_history([105.0, 110.0], [100.0, 105.0], [105.0, 110.0], [100.0, 105.0])
    assert point_estimate(h, "rogers_satchell").vol == 0.0
    assert point_estimate(h, "parkinson").vol > 0.1


def test_rogers_satchell_matches_its_two_algebraic_forms(tiny_ohlc):
    # Rogers & Satchell (1991): u (u - c) + d (d - c) with u = ln(H/O), d = ln(L/O), c = ln(C/O)
    # equals ln(H/C) ln(H/O) + ln(L/C) ln(L/O) (the form in the paper).
    h = tiny_ohlc()
    u = np.log(h.high / h.open)
    d = np.log(h.low / h.open)
    c = np.log(h.close / h.open)
    var = np.mean(u * (u - c) + d * (d - c))
    assert point_estimate(h, "rogers_satchell", annualization=1).vol == pytest.approx(math.sqrt(var), rel=1e-12)


def test_yang_zhang_with_no_gaps_and_no_range_noise_reduces_to_its_parts(make_history):
    # Yang & Zhang (2000): with opens equal to previous closes, V_o = 0 and the estimator is
    # k V_c + (1 - k) V_rs; checked against numpy's var (ddof=1) and mean.
    c = np.array([100.0, 101.0, 99.5, 100.5, 102.0, 101.0])
    o = np.concatenate(([100.0], c[:-1]))
    hi = np.maximum(o, c) * 1.01
    lo = np.minimum(o, c) * 0.99
    h = make_history(c, o, hi, lo)
    n = 5
    oc = np.log(c[1:] / o[1:])
    rs = np.log(hi / c) * np.log(hi / o) + np.log(lo / c) * np.log(lo / o)
    k = yang_zhang_k(n)
    expected = k * np.var(oc, ddof=1) + (1 - k) * np.mean(rs[1:])
    assert point_estimate(h, "yang_zhang", n, annualization=1).vol ** 2 == pytest.approx(expected, rel=1e-12)


def test_ewma_constants():
    # RiskMetrics Technical Document (1996): lambda = 0.94 for daily data (from memory);
    # effective sample size (1 + lambda) / (1 - lambda) = 32.33 (common practice, no source).
    assert EWMA_LAMBDA == 0.94
    assert ewma_effective_n() == pytest.approx(1.94 / 0.06, rel=1e-12)


def test_ewma_custom_lambda_follows_recursion(tiny_ohlc, plain):
    # RiskMetrics (1996) recursion with a user lambda.
    h = tiny_ohlc()
    est = point_estimate(h, "ewma", 2, lam=0.5)
    assert est.vol == pytest.approx(math.sqrt(plain.ewma(h, h.n - 1, 2, lam=0.5) * A), rel=1e-12)


def test_bad_ewma_lambda_is_rejected(tiny_ohlc):
    from volbench.errors import VolbenchError

    with pytest.raises(VolbenchError, match=r"EWMA lambda must be between 0 and 1 \(exclusive\), got 1.5"):
        point_estimate(tiny_ohlc(), "ewma", 2, lam=1.5)
