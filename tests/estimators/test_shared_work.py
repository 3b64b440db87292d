"""Work shared between estimators: cached log prices, every rolling series in one call, and point
estimates that read only the rows their window needs."""

from __future__ import annotations

import numpy as np
import pytest

from volbench.errors import EstimatorUnavailable, VolbenchError
from volbench.estimators import (
    DAILY_KEYS,
    REGISTRY,
    estimate_all,
    point_estimate,
    rolling_all,
    rolling_vol,
)
from volbench.estimators.registry import FORMS
from volbench.estimators.sums import Terms, form_variance, forms_variances


def test_logs_are_computed_once_per_history_and_read_only(simulate_ohlc):
    # numpy.log as reference library; the cache must hold exactly what np.log gives.
    h = simulate_ohlc(200, 0.3, seed=71, steps=10)
    logs = h.logs
    assert h.logs is logs  # kept on the history
    for col in ("open", "high", "low", "close"):
        np.testing.assert_array_equal(getattr(logs, col), np.log(getattr(h, col)))
        with pytest.raises(ValueError, match="read-only"):
            getattr(logs, col)[0] = 0.0
    np.testing.assert_array_equal(logs.returns, np.diff(np.log(h.close)))
    t = Terms(logs)
    u, d, c = t.session
    np.testing.assert_array_equal(u, np.log(h.high) - np.log(h.open))
    np.testing.assert_array_equal(t.rogers_satchell, u * (u - c) + d * (d - c))
    np.testing.assert_array_equal(t.overnight, np.log(h.open[1:]) - np.log(h.close[:-1]))
    r = h.log_returns()  # callers still get their own writable copy
    r[0] = 99.0
    assert logs.returns[0] != 99.0
    part = h.take(np.arange(h.n) >= 50)  # a derived history has its own logs
    np.testing.assert_array_equal(part.logs.close, np.log(h.close[50:]))


def test_close_only_history_has_close_logs_only(make_history):
    h = make_history([10.0, 11.0, 10.5, 10.5])
    assert h.logs.open is None and h.logs.high is None
    assert h.logs.any_flat_return  # 10.5 -> 10.5


@pytest.mark.parametrize("window", [2, 7, 60])
def test_window_sum_forms_together_equal_each_form_alone(simulate_ohlc, window):
    # Same operations in the same order, sums from one stacked cumulative sum: identical to the
    # last bit (common practice, no source); each form is its estimator's variance function.
    h = simulate_ohlc(400, 0.3, seed=70, steps=10, overnight_share=0.3, mu_annual=0.2)
    forms = {fn.__name__: form for fn, form in FORMS.items()}
    together = forms_variances(h, window, forms)
    for fn, form in FORMS.items():
        alone = form_variance(h, window, form)
        np.testing.assert_array_equal(together[fn.__name__], alone)
        np.testing.assert_array_equal(fn(h, window), alone)
        first = window - 1 + form.offset
        assert np.isnan(alone[:first]).all() and np.isfinite(alone[first:]).all()


@pytest.mark.parametrize("window", [2, 20])
def test_rolling_all_equals_rolling_vol_for_every_estimator(simulate_ohlc, window):
    # Same function, one call: each series must equal the single-estimator call exactly
    # (common practice, no source).
    h = simulate_ohlc(300, 0.25, seed=72, steps=20, overnight_share=0.2)
    report = rolling_all(h, window, annualization=260.0)
    assert tuple(report.series) == DAILY_KEYS and set(report.unavailable) == {"realized", "bipower"}
    assert report.window == window and report.annualization == 260.0
    for key in DAILY_KEYS:
        alone = rolling_vol(h, key, window, annualization=260.0)
        got = report.series[key]
        assert (got.key, got.window, got.annualization, got.invalid_dates) == (
            alone.key, alone.window, alone.annualization, alone.invalid_dates)
        pd_equal = got.values.equals(alone.values) and got.values.index.equals(alone.values.index)
        assert pd_equal, key


def test_rolling_all_lists_unavailable_estimators_with_reasons(make_history):
    h = make_history(100 * np.exp(np.cumsum(np.random.default_rng(73).standard_normal(60) * 0.01)))
    report = rolling_all(h, 10, keys=("close_to_close", "parkinson", "ewma"), lam=0.9)
    assert set(report.series) == {"close_to_close", "ewma"}
    assert report.unavailable == {"parkinson": "needs high/low columns"}
    np.testing.assert_array_equal(report.series["ewma"].values, rolling_vol(h, "ewma", 10, lam=0.9).values)
    with pytest.raises(VolbenchError, match="unknown estimator 'gk'"):
        rolling_all(h, 10, keys=("gk",))
    with pytest.raises(VolbenchError, match="not 'all'"):
        rolling_all(h, "all")


def test_rolling_all_keeps_the_gaps_of_uninformative_and_inconsistent_bars(simulate_ohlc, make_history):
    h = simulate_ohlc(120, 0.3, seed=74, steps=10)
    o, hi, lo, c = (a.copy() for a in (h.open, h.high, h.low, h.close))
    hi[30:60] = lo[30:60] = o[30:60] = c[30:60] = c[29]  # a flat stretch: no range, no moves
    hi[90] = lo[90] * 0.99  # high below low on one bar
    flat = make_history(c, o, hi, lo)
    report = rolling_all(flat, 10)
    for key in DAILY_KEYS:
        try:
            alone = rolling_vol(flat, key, 10)
        except EstimatorUnavailable as exc:
            assert report.unavailable[key] == exc.reason
            continue
        assert report.series[key].invalid_dates == alone.invalid_dates, key
        assert bool(alone.invalid_dates) == (key != "ewma"), key  # EWMA remembers the earlier moves
        assert report.series[key].values.equals(alone.values), key


@pytest.mark.parametrize("key", [k for k in DAILY_KEYS if k != "ewma"])
def test_point_estimate_reads_only_the_rows_of_its_window(simulate_ohlc, key):
    # O(window): the long history's logs are never taken; the estimate equals the one on the last
    # window + extra rows alone and the last value of the rolling series (to rounding: the
    # cumulative sums start at another row), common practice, no source.
    h = simulate_ohlc(3000, 0.3, seed=75, steps=10, overnight_share=0.2)
    w = 20
    est = point_estimate(h, key, w, as_of="2020-09-30")
    assert "logs" not in h.__dict__
    end = h.end_index("2020-09-30")
    tail = h.take(slice(end - REGISTRY[key].bars_needed(w), end))
    alone = point_estimate(tail, key, w)
    assert est.vol == pytest.approx(alone.vol, rel=1e-13)
    assert (est.ci_low, est.ci_high) == pytest.approx((alone.ci_low, alone.ci_high), rel=1e-12)
    assert (est.as_of, est.n, est.window) == (alone.as_of, alone.n, alone.window) == ("2020-09-30", w, w)
    rolled = rolling_vol(h, key, w).values
    assert est.vol == pytest.approx(float(rolled.loc["2020-09-30"]), rel=1e-10)


def test_ewma_point_estimate_uses_the_whole_history(simulate_ohlc):
    # The RiskMetrics recursion runs from the first window's seed to the as-of date (docs/METHODS.md,
    # "Estimators"), so the estimate differs from one computed on the last rows only.
    h = simulate_ohlc(500, 0.3, seed=76, steps=10)
    est = point_estimate(h, "ewma", 20)
    assert est.n == h.n - 1
    assert est.vol == pytest.approx(float(rolling_vol(h, "ewma", 20).values.iloc[-1]), rel=1e-12)
    tail = h.take(slice(h.n - 100, h.n))
    assert abs(point_estimate(tail, "ewma", 20).vol - est.vol) > 1e-6


def test_point_estimate_on_a_short_history_reports_its_true_length(simulate_ohlc):
    h = simulate_ohlc(30, 0.3, seed=77, steps=10)
    with pytest.raises(EstimatorUnavailable, match="window 40 needs 41 rows, history has 30"):
        point_estimate(h, "yang_zhang", 40)
    with pytest.raises(EstimatorUnavailable, match="window 25 needs 26 rows, history has 21"):
        point_estimate(h, "close_to_close", 25, as_of=h.index[20].strftime("%Y-%m-%d"))


def test_end_index_matches_up_to(simulate_ohlc):
    h = simulate_ohlc(50, 0.3, seed=78, steps=5)
    for d in (None, h.index[0], h.index[17], h.index[-1]):
        as_of = None if d is None else d.strftime("%Y-%m-%d")
        assert h.end_index(as_of) == h.up_to(as_of).n
    with pytest.raises(VolbenchError, match="is before the first row"):
        h.end_index("1999-01-01")


def test_estimate_all_equals_single_point_estimates(simulate_ohlc):
    h = simulate_ohlc(400, 0.3, seed=79, steps=10, overnight_share=0.1)
    report = estimate_all(h, 21, as_of=h.index[300].strftime("%Y-%m-%d"))
    for key, est in report.estimates.items():
        assert est == point_estimate(h, key, 21, as_of=report.as_of)


def test_rolling_windows_equal_rolling_vol_for_each_window(simulate_ohlc):
    # One call for a cone's windows (terms and their cumulative sums shared): each series equals the
    # single call to the last bit (common practice, no source); windows that do not fit say why.
    from volbench.estimators import rolling_windows

    h = simulate_ohlc(260, 0.3, seed=80, steps=10, overnight_share=0.2)
    for key in DAILY_KEYS:
        series, reasons = rolling_windows(h, key, (5, 20, 60, 300), annualization=250.0)
        assert set(series) == {5, 20, 60} and "300 needs" in reasons[300]
        for w, rv in series.items():
            alone = rolling_vol(h, key, w, annualization=250.0)
            assert rv.values.equals(alone.values) and rv.values.index.equals(alone.values.index), (key, w)
            assert (rv.window, rv.invalid_dates) == (w, alone.invalid_dates)


def test_a_run_of_rows_views_the_history_without_copying(simulate_ohlc):
    # take(slice) shares the parent's read-only arrays and equals the boolean-mask copy.
    h = simulate_ohlc(120, 0.3, seed=81, steps=5)
    part = h.take(slice(30, 90))
    mask = np.zeros(h.n, dtype=bool)
    mask[30:90] = True
    copy = h.take(mask)
    for col in ("dates", "open", "high", "low", "close", "lines"):
        np.testing.assert_array_equal(getattr(part, col), getattr(copy, col))
        assert np.shares_memory(getattr(part, col), getattr(h, col))
        assert not getattr(part, col).flags.writeable
    assert (part.n, part.first_date, part.last_date, part.findings) == (60, copy.first_date, copy.last_date, h.findings)
    assert part.provenance() == copy.provenance()
