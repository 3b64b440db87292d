"""Building blocks of the price promise: normal shares, binomial intervals, h-bar moves, counts, scores."""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from volbench.errors import VolbenchError
from volbench.pricing.bands import (
    band_fan,
    band_scores,
    binomial_ci,
    check_level,
    check_sigmas,
    count_outside,
    h_bar_moves,
    move_histogram,
    normal_promise,
)


def test_normal_promise_is_the_normal_two_sided_tail():
    # The normal law: P(|Z| > k) = 2 N(-k); the "68-95-99.7 rule" gives 31.73 %, 4.55 %, 0.27 %
    # outside +-1, 2, 3 sigma (common practice, from memory); reference values from scipy.stats.norm.
    k = np.array([1.0, 2.0, 3.0, 0.5])
    assert normal_promise(k) == pytest.approx(2 * stats.norm.sf(k), rel=1e-13)
    assert np.round(normal_promise([1, 2, 3]), 4).tolist() == [0.3173, 0.0455, 0.0027]


@pytest.mark.parametrize("n", [1, 7, 60, 500])
def test_clopper_pearson_matches_scipy_exact_interval(n):
    # Reference library: scipy.stats.binomtest(k, n).proportion_ci(method="exact") is the
    # Clopper-Pearson interval (Clopper & Pearson 1934).
    ks = np.unique(np.array([0, 1, n // 3, n // 2, n - 1, n]).clip(0, n))
    lo, hi = binomial_ci(ks, n, 0.95)
    for k, a, b in zip(ks, lo, hi):
        ref = stats.binomtest(int(k), n).proportion_ci(confidence_level=0.95, method="exact")
        assert (a, b) == pytest.approx((ref.low, ref.high), abs=1e-12)
    lo90, hi90 = binomial_ci(ks, n, 0.90)
    assert np.all(lo90 >= lo) and np.all(hi90 <= hi)


def test_clopper_pearson_coverage_is_at_least_the_level_for_the_band_shares():
    # Claim (Clopper & Pearson 1934): the exact interval covers the true share with probability at
    # least the level, also for small shares where approximate intervals under-cover. Seeded
    # simulation at the three band promises and the straddle's ~42.5 %, 60 windows.
    rng = np.random.default_rng(20240517)
    n = 60
    for p in (0.3173, 0.0455, 0.0027, 0.425):
        k = rng.binomial(n, p, size=40_000)
        lo, hi = binomial_ci(k, n)
        coverage = np.mean((lo <= p) & (p <= hi))
        assert coverage >= 0.95, (p, coverage)


def test_binomial_ci_rejects_bad_counts_and_levels():
    with pytest.raises(VolbenchError, match="whole numbers between 0 and the number of windows"):
        binomial_ci(5, 4)
    with pytest.raises(VolbenchError, match="whole numbers between 0 and the number of windows"):
        binomial_ci(1.5, 4)
    with pytest.raises(VolbenchError, match=r"confidence level must be between 0 and 1 \(e.g. 0.95\), got 95"):
        binomial_ci(1, 4, 95)
    with pytest.raises(VolbenchError, match="confidence level must be between 0 and 1"):
        check_level("high")


def test_h_bar_moves_anchor_at_the_last_close_and_equal_a_plain_loop(make_history):
    # Plain loop as reference (common practice, no source): newest window ends at the last close.
    rng = np.random.default_rng(3)
    close = 40 * np.exp(np.cumsum(rng.normal(0, 0.01, 47)))
    h = make_history(close)
    for days in (1, 5, 10, 46):
        non, over = h_bar_moves(h, days)
        ref, end = [], len(close) - 1
        while end - days >= 0:
            ref.append(np.log(close[end] / close[end - days]))
            end -= days
        assert non.to_numpy() == pytest.approx(ref[::-1], rel=1e-12, abs=1e-15)
        assert len(non) == (len(close) - 1) // days
        assert non.index[-1] == over.index[-1] == np.datetime64(h.dates[-1])
        assert over.to_numpy() == pytest.approx([np.log(close[i + days] / close[i])
                                                  for i in range(len(close) - days)], rel=1e-12, abs=1e-15)


def test_h_bar_moves_need_one_complete_window(make_history):
    h = make_history([10.0, 10.5, 10.2], name="SHORT")
    assert len(h_bar_moves(h, 2)[0]) == 1
    with pytest.raises(VolbenchError, match=r"SHORT: 3 closes hold no complete 3-bar move; need at least 4 closes"):
        h_bar_moves(h, 3)
    with pytest.raises(VolbenchError, match="days must be a whole number of bars >= 1"):
        h_bar_moves(h, 0)


def test_count_outside_equals_a_plain_loop_with_edges_counted_inside():
    # Plain loop reference (common practice, no source); normal shares from scipy.stats.norm.
    rng = np.random.default_rng(11)
    moves = np.round(rng.normal(0, 0.05, 80), 3)
    over = np.round(rng.normal(0, 0.05, 300), 3)
    lo = np.array([[-0.05, -0.1], [moves[0], -np.inf]])   # one edge exactly on a move
    hi = np.array([[0.05, 0.1], [np.inf, -moves[0]]])
    s = np.array([[0.05, 0.05], [0.04, 0.04]])
    got = count_outside(np.sort(moves), np.sort(over), lo, hi, s)
    for idx in np.ndindex(lo.shape):
        below = sum(x < lo[idx] for x in moves)
        above = sum(x > hi[idx] for x in moves)
        assert got["below"][idx] == below and got["above"][idx] == above
        assert got["observed"][idx] == pytest.approx((below + above) / len(moves))
        assert got["overlapping"][idx] == pytest.approx(sum((x < lo[idx]) or (x > hi[idx]) for x in over) / 300)
        assert got["promised"][idx] == pytest.approx(stats.norm.cdf(lo[idx], scale=s[idx])
                                                     + stats.norm.sf(hi[idx], scale=s[idx]), rel=1e-12)
        ci = binomial_ci(below + above, len(moves))
        assert (got["ci_low"][idx], got["ci_high"][idx]) == pytest.approx(ci)
        assert got["promise_in_ci"][idx] == (ci[0] <= got["promised"][idx] <= ci[1])


def test_band_scores_are_the_g_statistic_of_the_zone_counts():
    # Reference library: scipy.stats.power_divergence(lambda_="log-likelihood") is the G statistic
    # (Wilks 1938) of observed against expected counts; zones built here by a plain loop.
    rng = np.random.default_rng(5)
    sigmas = (1.0, 2.0, 3.0)
    m = 150
    for scale in (1.0, 0.7, 1.4):
        x = rng.normal(0, scale, m)
        below = np.array([[np.sum(x < -k) for k in sigmas]])
        above = np.array([[np.sum(x > k) for k in sigmas]])
        obs = np.zeros(7)
        for v in x:  # zone index: edges crossed from the far left; a move on an edge counts inside
            obs[sum(v >= e for e in (-3, -2, -1)) + sum(v > e for e in (1, 2, 3))] += 1
        edges = [-np.inf, -3, -2, -1, 1, 2, 3, np.inf]
        prob = np.diff(stats.norm.cdf(edges))
        ref = stats.power_divergence(obs, m * prob, lambda_="log-likelihood").statistic
        assert band_scores(below, above, m, sigmas)[0] == pytest.approx(ref, rel=1e-10)


def test_band_scores_rank_the_promise_that_fits_first():
    # Counts equal to the promise score lower than counts far from it (G >= 0, zero only at a match).
    m = 10_000
    p = stats.norm.sf([1.0, 2.0, 3.0])
    near = np.round(m * p)[None, :]
    far = np.round(m * 2.0 * p)[None, :]
    g = band_scores(np.vstack([near, far]), np.vstack([near, far]), m, (1, 2, 3))
    assert 0 <= g[0] < 0.1 < g[1]


def test_band_fan_widens_with_the_square_root_of_time():
    # Zero log drift: bands spot x exp(+-k vol sqrt(bar / A)) (docs/METHODS.md, Probability bands
    # and breakevens); checked by hand at bar 0 and at expiry.
    fan = band_fan(42.0, 0.25, 30, 252, (1, 2))
    assert list(fan.columns) == ["low_1", "high_1", "low_2", "high_2"]
    assert fan.loc[0].tolist() == [42.0] * 4
    s = 0.25 * np.sqrt(30 / 252)
    assert fan.loc[30, "high_2"] == pytest.approx(42 * np.exp(2 * s), rel=1e-14)
    assert fan.loc[30, "low_1"] * fan.loc[30, "high_1"] == pytest.approx(42.0**2)
    assert np.all(np.diff(fan["high_1"]) > 0) and np.all(np.diff(fan["low_2"]) < 0)
    with pytest.raises(VolbenchError, match="it looks like a percent"):
        band_fan(42.0, 25, 30)


def test_move_histogram_is_a_density_beside_the_normal_density():
    rng = np.random.default_rng(2)
    x = rng.normal(0, 0.07, 400)
    hist = move_histogram(x, 0.25, 20, 252, bins=25)
    assert np.sum(hist.density * np.diff(hist.edges)) == pytest.approx(1.0)
    # reference library: scipy.stats.norm.pdf with the h-bar standard deviation vol sqrt(h / A)
    assert hist.normal_density == pytest.approx(stats.norm.pdf(hist.x, scale=0.25 * np.sqrt(20 / 252)))
    assert hist.windows == 400 and len(hist.edges) == 26 and hist.as_dict()["days"] == 20
    with pytest.raises(VolbenchError, match="moves must be a non-empty list of finite log moves"):
        move_histogram([0.1, np.nan], 0.25, 20)
    with pytest.raises(VolbenchError, match="bins must be a whole number >= 1, got 0"):
        move_histogram(x, 0.25, 20, bins=0)


def test_check_sigmas_sorts_and_rejects_bad_lists():
    assert check_sigmas([2, 1, 3]) == (1.0, 2.0, 3.0)
    for bad in ([], [1, 1], [0, 1], [1, 11], "x"):
        with pytest.raises(VolbenchError, match="sigmas must be"):
            check_sigmas(bad)
