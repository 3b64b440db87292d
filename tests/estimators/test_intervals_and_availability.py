"""Confidence intervals, unavailable estimators, and the estimate_all report."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import stats

from volbench.errors import EstimatorUnavailable, VolbenchError
from volbench.estimators import (
    DAILY_KEYS,
    availability,
    estimate_all,
    get_spec,
    intervals,
    point_estimate,
    rolling_vol,
)
from volbench.estimators.range_based import yang_zhang_k, yang_zhang_parts

A = 252.0


def test_close_to_close_interval_matches_scipy_chi_square(simulate_ohlc):
    # (n-1) s^2 / sigma^2 ~ chi-square(n-1) under i.i.d. normal returns (Hull; docs/METHODS.md, "Confidence intervals and their coverage"), quantiles
    # from scipy.stats.chi2 as reference library: [s sqrt((n-1)/q_hi), s sqrt((n-1)/q_lo)].
    h = simulate_ohlc(80, 0.3, seed=41, steps=5)
    n = 30
    r = np.diff(np.log(h.close))[-n:]
    s = np.std(r, ddof=1) * math.sqrt(A)
    for conf in (0.90, 0.95, 0.99):
        est = point_estimate(h, "close_to_close", n, confidence=conf)
        q_lo = stats.chi2.ppf((1 - conf) / 2, n - 1)
        q_hi = stats.chi2.ppf(1 - (1 - conf) / 2, n - 1)
        assert est.vol == pytest.approx(s, rel=1e-12)
        assert est.ci_low == pytest.approx(s * math.sqrt((n - 1) / q_hi), rel=1e-12)
        assert est.ci_high == pytest.approx(s * math.sqrt((n - 1) / q_lo), rel=1e-12)
        assert est.n == n and est.confidence == conf
        assert est.ci_method.startswith("chi-square (exact")


def test_zero_mean_close_to_close_interval_uses_n_degrees_of_freedom(simulate_ohlc):
    # With the mean fixed at zero, n s^2 / sigma^2 ~ chi-square(n) (common practice, no source).
    h = simulate_ohlc(50, 0.3, seed=42, steps=5)
    n = 25
    r = np.diff(np.log(h.close))[-n:]
    s = math.sqrt(np.mean(r**2) * A)
    est = point_estimate(h, "close_to_close", n, zero_mean=True)
    assert est.vol == pytest.approx(s, rel=1e-12)
    assert est.ci_low == pytest.approx(s * math.sqrt(n / stats.chi2.ppf(0.975, n)), rel=1e-12)


@pytest.mark.parametrize("key", ["parkinson", "garman_klass", "rogers_satchell", "yang_zhang"])
def test_range_estimator_interval_uses_effective_sample_size(simulate_ohlc, key):
    # docs/METHODS.md, "Confidence intervals and their coverage": approximate interval with effective
    # degrees of freedom in the chi-square formula (scipy.stats.chi2 quantiles as reference); n x the
    # per-bar efficiency for Parkinson, Garman-Klass and Rogers-Satchell, the n- and gap-dependent
    # derivation for Yang-Zhang; labelled approximate.
    h = simulate_ohlc(60, 0.3, seed=43, steps=50, overnight_share=0.2)
    est = point_estimate(h, key, 20)
    if key == "yang_zhang":
        v_o, v_c, v_rs = (p[-1] for p in yang_zhang_parts(h, 20))
        k = yang_zhang_k(20)
        dof = intervals.yang_zhang_dof(20, v_o / (v_o + k * v_c + (1 - k) * v_rs))
    else:
        dof = 20 * intervals.BAR_EFFICIENCY[key]
    assert est.dof == pytest.approx(dof, rel=1e-12)
    assert est.ci_low == pytest.approx(est.vol * math.sqrt(dof / stats.chi2.ppf(0.975, dof)), rel=1e-12)
    assert est.ci_high == pytest.approx(est.vol * math.sqrt(dof / stats.chi2.ppf(0.025, dof)), rel=1e-12)
    assert est.ci_method.startswith("approximate")
    assert est.ci_low < est.vol < est.ci_high


def test_ewma_interval_is_approximate_with_effective_n(simulate_ohlc):
    # Effective sample size (1 + lambda) / (1 - lambda) (common practice, no source).
    h = simulate_ohlc(60, 0.3, seed=44, steps=5)
    est = point_estimate(h, "ewma", 20)
    dof = 1.94 / 0.06
    assert est.ci_low == pytest.approx(est.vol * math.sqrt(dof / stats.chi2.ppf(0.975, dof)), rel=1e-12)
    assert est.ci_method.startswith("approximate")
    assert est.n == h.n - 1  # EWMA uses every return up to the as-of date


def test_close_to_close_interval_coverage_under_simulation(make_history):
    # Coverage of a 95 % chi-square interval under i.i.d. normal returns is 95 % (Hull; chi-square
    # theory). 1,000 independent 20-return windows: binomial sd sqrt(.95 x .05 / 1000) = 0.0069,
    # so the observed coverage must lie within 0.95 +- 0.03.
    rng = np.random.default_rng(45)
    sigma = 0.25
    hits = 0
    for _ in range(1000):
        r = rng.normal(0.0, sigma / math.sqrt(A), 20)
        h = make_history(100 * np.exp(np.concatenate(([0.0], np.cumsum(r)))))
        est = point_estimate(h, "close_to_close")
        hits += est.ci_low <= sigma <= est.ci_high
    assert abs(hits / 1000 - 0.95) < 0.03


def test_bad_confidence_rejected(simulate_ohlc):
    h = simulate_ohlc(30, 0.2, seed=46, steps=5)
    with pytest.raises(VolbenchError, match="confidence must be between 0 and 1, got 1.5"):
        point_estimate(h, "close_to_close", confidence=1.5)


# --------------------------------------------------------------------------- unavailable
def test_close_only_history_makes_range_estimators_unavailable(make_history):
    h = make_history(100 * np.exp(np.linspace(0, 0.1, 40)))
    rep = estimate_all(h, 20)
    assert set(rep.estimates) == {"close_to_close", "ewma"}
    assert rep.unavailable == {
        "parkinson": "needs high/low columns",
        "garman_klass": "needs high/low/open columns",
        "rogers_satchell": "needs high/low/open columns",
        "yang_zhang": "needs high/low/open columns",
        "realized": "needs intraday bars; the file has one bar a day",
        "bipower": "needs intraday bars; the file has one bar a day",
    }
    with pytest.raises(EstimatorUnavailable, match="parkinson: needs high/low columns") as info:
        point_estimate(h, "parkinson", 20)
    assert info.value.key == "parkinson" and info.value.reason == "needs high/low columns"
    with pytest.raises(EstimatorUnavailable, match="yang_zhang: needs high/low/open columns"):
        rolling_vol(h, "yang_zhang", 20)


def test_too_few_rows_for_the_window(simulate_ohlc):
    h = simulate_ohlc(12, 0.2, seed=47, steps=5)
    rep = estimate_all(h, 20)
    assert rep.estimates == {}
    assert rep.unavailable["close_to_close"] == "window 20 needs 21 rows, history has 12"
    assert rep.unavailable["yang_zhang"] == "window 20 needs 21 rows, history has 12"
    assert rep.unavailable["ewma"] == "window 20 needs 21 rows, history has 12"
    assert rep.unavailable["parkinson"] == "window 20 needs 20 rows, history has 12"
    with pytest.raises(EstimatorUnavailable, match="close_to_close: window 20 needs 21 rows, history has 12"):
        point_estimate(h, "close_to_close", 20)
    assert availability(h, "parkinson", 12) is None
    assert availability(h, "close_to_close", 12) == "window 12 needs 13 rows, history has 12"


def test_window_too_small_for_the_estimator_says_so(simulate_ohlc):
    # A sample variance (divisor n - 1) needs at least 2 returns; the reason must name the window,
    # not claim the file is too short.
    h = simulate_ohlc(50, 0.2, seed=48, steps=5)
    for key in ("close_to_close", "yang_zhang", "ewma"):
        with pytest.raises(EstimatorUnavailable, match=f"{key}: window 1 is too small; needs a window of at least 2 bars"):
            point_estimate(h, key, 1)
    assert point_estimate(h, "parkinson", 1).n == 1  # a single bar's range is a valid estimate


def test_single_row_file(simulate_ohlc):
    h = simulate_ohlc(1, 0.2, seed=49, steps=5)
    rep = estimate_all(h)
    assert rep.unavailable["close_to_close"] == "needs at least 3 rows, history has 1"
    assert rep.unavailable["yang_zhang"] == "needs at least 3 rows, history has 1"
    assert set(rep.estimates) == {"parkinson", "garman_klass", "rogers_satchell"}


def test_estimate_all_report(simulate_ohlc):
    h = simulate_ohlc(100, 0.2, seed=50, steps=5)
    as_of = h.index[79].strftime("%Y-%m-%d")
    rep = estimate_all(h, 20, as_of=as_of, annualization=365)
    d = rep.as_dict()
    assert d["as_of"] == as_of and d["last_date"] == as_of and d["rows"] == 80
    assert d["window"] == 20 and d["annualization"] == 365.0 and d["flagged_rows"] == "kept"
    assert set(d["estimates"]) == set(DAILY_KEYS)
    assert d["unavailable"] == dict.fromkeys(("realized", "bipower"), "needs intraday bars; the file has one bar a day")
    for k, e in d["estimates"].items():
        assert set(e) == {"vol", "ci_low", "ci_high", "n"}
        assert e["vol"] == pytest.approx(point_estimate(h, k, 20, as_of=as_of, annualization=365).vol)
    assert estimate_all(h, "all").as_dict()["window"] == "all"
    only = estimate_all(h, 20, keys=("parkinson",))
    assert set(only.estimates) == {"parkinson"}
    with pytest.raises(VolbenchError, match="unknown estimator 'vol'; choose one of:"):
        estimate_all(h, 20, keys=("vol",))


def test_as_of_outside_the_history(simulate_ohlc):
    h = simulate_ohlc(30, 0.2, seed=51, steps=5)
    with pytest.raises(VolbenchError, match=r"sim: as-of date 2019-01-01 is outside the data, which runs from 2020-01-01"):
        point_estimate(h, "close_to_close", as_of="2019-01-01")
    with pytest.raises(VolbenchError, match="as-of date must look like YYYY-MM-DD, got 'soon'"):
        point_estimate(h, "close_to_close", as_of="soon")
    # an as-of date after the last row is refused, naming the range; "last" means the last row
    with pytest.raises(VolbenchError, match=r"as-of date 2030-01-01 is outside the data, which runs from "
                                            r"2020-01-01 to 2020-02-11; choose a date in that range or 'last'"):
        point_estimate(h, "parkinson", as_of="2030-01-01")
    assert point_estimate(h, "parkinson", as_of="last").as_of == h.last_date
    for text in ("01/06/2020", "17/01/2020", "2020-1-6", "20200106"):  # not ISO YYYY-MM-DD: refused
        with pytest.raises(VolbenchError, match=f"as-of date must look like YYYY-MM-DD, got '{text}'"):
            point_estimate(h, "parkinson", as_of=text)


def test_window_validation_messages(simulate_ohlc):
    h = simulate_ohlc(30, 0.2, seed=52, steps=5)
    with pytest.raises(VolbenchError, match="window must be a whole number of bars or 'all', got 'ten'"):
        point_estimate(h, "parkinson", "ten")
    with pytest.raises(VolbenchError, match="window must be a whole number of bars or 'all', got 2.5"):
        point_estimate(h, "parkinson", 2.5)
    with pytest.raises(VolbenchError, match="annualization must be a number of bars per year, got 'x'"):
        point_estimate(h, "parkinson", annualization="x")
    assert get_spec("parkinson").label == "Parkinson"


# --------------------------------------------------------------------------- no information
def test_zero_range_bars_make_range_estimators_unavailable_not_zero(make_history):
    # Close-only prices padded to OHLC (open = high = low = close): the range carries no information,
    # so Parkinson, Garman-Klass, Rogers-Satchell and Yang-Zhang are unavailable with a reason rather
    # than 0.00 % (docs/METHODS.md, "Estimators"; common practice, no source).
    c = 100 * np.exp(np.cumsum(np.random.default_rng(60).normal(0, 0.01, 80)))
    h = make_history(c, c, c, c)
    rep = estimate_all(h, 20)
    assert set(rep.estimates) == {"close_to_close", "ewma"}
    for key in ("parkinson", "garman_klass", "rogers_satchell", "yang_zhang"):
        assert rep.unavailable[key].startswith("no range on any bar of the window (high = low on every bar")
        with pytest.raises(EstimatorUnavailable, match=f"{key}: no range on any bar"):
            rolling_vol(h, key, 20)


def test_a_zero_range_stretch_is_left_out_of_the_rolling_series(simulate_ohlc, make_history):
    h0 = simulate_ohlc(60, 0.2, seed=61, steps=20)
    hi, lo = h0.high.copy(), h0.low.copy()
    o = h0.open.copy()
    hi[:30] = lo[:30] = o[:30] = h0.close[:30]  # first 30 bars padded from closes
    h = make_history(h0.close, o, hi, lo)
    rv = rolling_vol(h, "parkinson", 10)
    assert len(rv.invalid_dates) == 21 and (rv.values > 0).all()  # windows ending at bars 9..29 left out
    assert point_estimate(h, "parkinson", 10).vol > 0


def test_constant_closes_make_close_estimators_unavailable(make_history):
    h = make_history(np.full(40, 50.0))
    rep = estimate_all(h, 20)
    assert rep.estimates == {}
    assert rep.unavailable["close_to_close"] == ("the closes do not change over the window: there is no "
                                                 "volatility to measure; check the price column")
    assert rep.unavailable["ewma"] == rep.unavailable["close_to_close"]


def test_chi2_quantile_equals_scipy_stats():
    # Reference library: scipy.stats.chi2.ppf, to the last bit (the same special function).
    for p in (0.005, 0.025, 0.5, 0.975, 0.995):
        for dof in (1.0, 2.5, 19.0, 147.3, 10_000.0):
            assert intervals.chi2_quantile(p, dof) == stats.chi2.ppf(p, dof)
    dofs = np.array([3.0, 30.0, 300.0])
    np.testing.assert_array_equal(intervals.chi2_quantile(0.025, dofs), stats.chi2.ppf(0.025, dofs))
