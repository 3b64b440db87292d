"""Per-day realized measures against plain loops, arch's Parzen kernel, and their known properties."""

from __future__ import annotations

import math

import numpy as np
import pytest
from arch.covariance.kernel import Parzen
from scipy import integrate

from volbench.errors import VolbenchError
from volbench.intraday.grid import sampled_rv, session_prices, session_returns
from volbench.intraday.measures import (
    C_STAR,
    MU1,
    MU43,
    PARZEN_K2,
    kernel_bandwidth,
    parzen,
    realized_kernel,
    realized_measures,
)
from volbench.intraday.sessions import infer_layout


def _ragged(sim_intraday, **kw):
    """Eight sessions of 5-minute bars with a missing bar and an early close."""
    h = sim_intraday(8, 78, 0.25, 11, half_spread=0.0004, **kw)
    keep = np.ones(h.n, bool)
    keep[[100, 101, 300]] = False
    keep[7 * 78 + 40:] = False
    return h.take(keep)


def _loop_returns(h):
    """Plain loop: per session, the first open then every close; returns within the session only."""
    days: dict = {}
    for i in range(h.n):
        day = str(h.dates[i])[:10]
        if day not in days:
            days[day] = [math.log(h.open[i])] if h.open is not None else []
        days[day].append(math.log(h.close[i]))
    return [[p[j] - p[j - 1] for j in range(1, len(p))] for p in days.values()]


def _loop_measures(r, bandwidth):
    """Plain-loop RV, BV, TQ and Parzen kernel of one day (formulas in docs/METHODS.md)."""
    m = len(r)
    rv = sum(x * x for x in r)
    bv = (math.pi / 2) * (m / (m - 1)) * sum(abs(r[j]) * abs(r[j - 1]) for j in range(1, m))
    tq = m * MU43**-3 * (m / (m - 2)) * sum((abs(r[j]) * abs(r[j - 1]) * abs(r[j - 2])) ** (4 / 3)
                                            for j in range(2, m))
    k = rv
    for lag in range(1, bandwidth + 1):
        x = lag / (bandwidth + 1)
        w = 1 - 6 * x**2 + 6 * x**3 if x <= 0.5 else 2 * (1 - x) ** 3
        k += 2 * w * sum(r[j] * r[j - lag] for j in range(lag, m))
    return rv, bv, tq, k


@pytest.mark.parametrize("ragged, with_open", [(True, True), (False, True), (True, False), (False, False)])
def test_measures_equal_plain_loops_to_1e12(sim_intraday, ragged, with_open):
    # reference: straightforward loops over each day's returns (common practice, no source); regular
    # sessions take a reshape path, ragged ones (a missing bar, an early close) a scatter path
    h = _ragged(sim_intraday, with_open=with_open) if ragged else sim_intraday(8, 78, 0.25, 19, with_open=with_open)
    m = realized_measures(h)
    days = _loop_returns(h)
    want = [78, 76, 78, 77, 78, 78, 78, 40] if ragged else [78] * 8
    assert list(m.daily["n_returns"]) == [len(r) for r in days] == [w - (not with_open) for w in want]
    for (_, row), r in zip(m.daily.iterrows(), days):
        rv, bv, tq, k = _loop_measures(r, int(row["bandwidth"]))
        assert row["rv"] == pytest.approx(rv, rel=1e-12, abs=0)
        assert row["bv"] == pytest.approx(bv, rel=1e-12, abs=0)
        assert row["tq"] == pytest.approx(tq, rel=1e-12, abs=0)
        assert row["kernel"] == pytest.approx(k, rel=1e-12, abs=0)


@pytest.mark.parametrize("ragged", [True, False])
def test_kernel_equals_arch_parzen_long_run_times_n(sim_intraday, ragged):
    # reference library arch: Parzen(r, bandwidth=H, center=False, force_int=True).cov.long_run x M
    h = _ragged(sim_intraday) if ragged else sim_intraday(8, 78, 0.25, 20, half_spread=0.0004)
    m = realized_measures(h)
    for (_, row), r in zip(m.daily.iterrows(), _loop_returns(h)):
        bw = int(row["bandwidth"])
        lr = Parzen(np.asarray(r), bandwidth=bw, center=False, force_int=True).cov.long_run
        assert row["kernel"] == pytest.approx(float(lr[0, 0]) * len(r), rel=1e-12, abs=0)


def test_parzen_weights_match_arch_and_the_bandwidth_constant():
    # arch's Parzen weights k(h / (H + 1)), h = 0..H (reference library arch)
    for bw in (1, 4, 9):
        w = Parzen(np.ones(50), bandwidth=bw, force_int=True).kernel_weights
        np.testing.assert_allclose(parzen(np.arange(bw + 1) / (bw + 1)), w, rtol=0, atol=1e-15)
    # int_0^1 k(x)^2 dx for Parzen, recalled as 0.2696 (from memory), checked by quadrature (scipy)
    k2, _ = integrate.quad(lambda x: float(parzen(x)) ** 2, 0, 1, points=[0.5])
    assert k2 == pytest.approx(PARZEN_K2, abs=5e-5)
    assert C_STAR == pytest.approx(3.51, abs=0.01)  # BNHLS (2009), from memory
    assert MU1 == pytest.approx(math.sqrt(2 / math.pi), rel=1e-15)


def test_bandwidth_follows_the_rule_and_stays_in_range():
    # H = ceil(c* xi^(4/5) M^(3/5)), xi^2 = (RV / 2M) / IV (BNHLS 2009, from memory)
    rv_dense, m, rv_sparse = np.array([2.0, 1e-9, 1.0]), np.array([390, 390, 3]), np.array([1.0, 1.0, 1.0])
    h = kernel_bandwidth(rv_dense, m, rv_sparse)
    assert h[0] == math.ceil(C_STAR * (2.0 / 780) ** 0.4 * 390**0.6)
    assert h[1] == 1 and h[2] <= 2


def test_realized_kernel_is_not_negative_on_alternating_returns():
    # the Parzen weight gives a positive semi-definite kernel (BNHLS 2008): a bid-ask see-saw,
    # whose RV is all noise, gets a kernel near zero, not below it
    r = np.tile([0.001, -0.001], 40)[None, :]
    k = realized_kernel(r, np.array([6]))
    assert k[0] >= 0 and k[0] < 0.1 * float((r**2).sum())


def test_first_return_never_spans_the_overnight_gap(sim_intraday):
    h = sim_intraday(3, 78, 0.2, 12)
    jump = np.ones(h.n)
    jump[78:] = 2.0  # every price doubles between the first and second session
    from dataclasses import replace
    doubled = replace(h, open=h.open * jump, high=h.high * jump, low=h.low * jump, close=h.close * jump)
    a, b = realized_measures(h).daily, realized_measures(doubled).daily
    np.testing.assert_allclose(a["rv"], b["rv"], rtol=1e-12)
    assert b["overnight"].iloc[1] == pytest.approx(a["overnight"].iloc[1] + math.log(2), abs=1e-12)
    assert math.isnan(b["overnight"].iloc[0])


def test_close_only_bars_use_closes_and_leave_the_first_move_overnight(sim_intraday):
    h = sim_intraday(3, 78, 0.2, 13, with_open=False)
    m = realized_measures(h)
    assert list(m.daily["n_returns"]) == [77, 77, 77]
    o = np.log(h.close[78]) - np.log(h.close[77])
    assert m.daily["overnight"].iloc[1] == pytest.approx(o, rel=1e-12)


def test_sampling_every_k_bars_keeps_each_session_to_its_close(sim_intraday):
    h = sim_intraday(4, 78, 0.2, 14)
    for k, returns in ((2, 39), (5, 16), (12, 7)):
        m = realized_measures(h, sampling_bars=k)
        assert set(m.daily["n_returns"]) == {returns} and m.interval_seconds == 300.0 * k
        # the sampled returns still add up to each session's open-to-close move (common practice, no source)
        sr = session_returns(h, infer_layout(h.dates), k)
        np.testing.assert_allclose(sr.returns.sum(axis=1), np.log(h.close[77::78]) - np.log(h.open[::78]), rtol=1e-12)


def test_bipower_is_robust_to_a_jump_and_realized_variance_is_not(sim_intraday):
    # RV takes in the whole J^2; BV only (pi/2) J (|r_before| + |r_after|), of order J sigma / sqrt(M),
    # here about 0.12 J^2 (Barndorff-Nielsen & Shephard 2004: BV converges to the diffusive part)
    jump = 0.03
    plain = realized_measures(sim_intraday(40, 78, 0.2, 15)).daily
    jumpy = realized_measures(sim_intraday(40, 78, 0.2, 15, jumps={(20, 40): jump})).daily
    assert jumpy["rv"].iloc[20] - plain["rv"].iloc[20] == pytest.approx(jump**2, rel=0.15)
    assert 0 < jumpy["bv"].iloc[20] - plain["bv"].iloc[20] < 0.25 * jump**2
    np.testing.assert_allclose(jumpy["bv"].drop(jumpy.index[20]), plain["bv"].drop(plain.index[20]), rtol=1e-12)


def test_short_sessions_are_left_out_and_their_moves_kept_overnight(sim_intraday):
    h = sim_intraday(5, 78, 0.2, 16)
    keep = np.ones(h.n, bool)
    keep[2 * 78 + 2:3 * 78] = False  # day 3 keeps 2 bars: 2 returns
    m = realized_measures(h.take(keep))
    assert len(m.daily) == 4 and "1 session(s) with fewer than 3 intraday returns left out" in m.notes[0]
    # day 4's overnight return now runs from day 2's close to day 4's open
    hk = h.take(keep)
    lay = infer_layout(hk.dates)
    want = math.log(hk.open[lay.starts[3]]) - math.log(hk.close[lay.ends[1]])
    assert m.daily["overnight"].iloc[2] == pytest.approx(want, rel=1e-12)


def test_daily_history_is_refused(make_history):
    h = make_history(100 * np.exp(np.linspace(0, 0.1, 30)))
    with pytest.raises(VolbenchError, match="realized measures need intraday bars.*daily data"):
        realized_measures(h)


def test_bad_sampling_is_refused(sim_intraday):
    h = sim_intraday(3, 78, 0.2, 17)
    with pytest.raises(VolbenchError, match="sampling must be a whole number of bars >= 1, got 0"):
        realized_measures(h, sampling_bars=0)


def test_whole_day_adds_the_squared_overnight_return(sim_intraday):
    m = realized_measures(sim_intraday(6, 78, 0.2, 18, overnight_share=0.3))
    d = m.daily
    np.testing.assert_allclose(m.whole_day("bv"), (d["bv"] + d["overnight"] ** 2).iloc[1:], rtol=1e-15)
    with pytest.raises(VolbenchError, match="unknown session measure 'tq'; choose one of: rv, bv, kernel"):
        m.whole_day("tq")
    assert m.as_dict()["days"][1]["n_returns"] == 78


@pytest.mark.parametrize("ragged", [True, False])
def test_sampled_returns_equal_a_plain_loop(sim_intraday, ragged):
    # every k-th grid price from the session's first, and always its last (common practice, no source)
    h = _ragged(sim_intraday) if ragged else sim_intraday(8, 78, 0.25, 21)
    lay = infer_layout(h.dates)
    p, sess = session_prices(h, lay)
    for k in (2, 5, 13):
        rv_loop = []
        for prices in _loop_prices(h):
            kept = [prices[j] for j in range(len(prices)) if j % k == 0 or j == len(prices) - 1]
            rv_loop.append(sum((kept[j] - kept[j - 1]) ** 2 for j in range(1, len(kept))))
        sr = session_returns(h, lay, k)
        np.testing.assert_allclose(np.einsum("ij,ij->i", sr.returns, sr.returns), rv_loop, rtol=1e-12)
        np.testing.assert_allclose(sampled_rv(p, sess, lay.n_sessions, k), rv_loop, rtol=1e-12)


def _loop_prices(h):
    days: dict = {}
    for i in range(h.n):
        day = str(h.dates[i])[:10]
        if day not in days:
            days[day] = [math.log(h.open[i])]
        days[day].append(math.log(h.close[i]))
    return list(days.values())


def test_constant_prices_are_refused(sim_intraday):
    from dataclasses import replace

    h = sim_intraday(5, 78, 0.2, 22)
    flat = np.full(h.n, 10.0)
    with pytest.raises(VolbenchError, match="prices are constant .* no variance to measure"):
        realized_measures(replace(h, open=flat, high=flat, low=flat, close=flat))
