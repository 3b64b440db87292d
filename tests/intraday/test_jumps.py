"""The continuity check: ratio jump test on intraday data, Lee-Mykland screen on daily data."""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pandas as pd
import pytest
from scipy import stats

from volbench.errors import VolbenchError
from volbench.intraday.jumps import (
    THETA,
    continuity_check,
    lee_mykland_null,
    lee_mykland_screen,
    lee_mykland_statistics,
)
from volbench.intraday.measures import realized_measures
from volbench.scaling.verdicts import Verdict

DAY_SD = 0.2 / math.sqrt(252)


def _jumps(days, rng, low, high):
    """One jump a day at a random bar, |size| uniform in [low, high] daily diffusive sds, random sign."""
    return {(d, int(rng.integers(1, 77))): float(rng.uniform(low, high) * DAY_SD * rng.choice([-1, 1]))
            for d in range(days)}


def test_ratio_statistic_by_hand(sim_intraday):
    # z = ((RV - BV) / RV) / sqrt(theta / M max(1, TQ / BV^2)), theta = (pi/2)^2 + pi - 5
    # (Barndorff-Nielsen & Shephard 2006; Huang & Tauchen 2005)
    m = realized_measures(sim_intraday(30, 78, 0.2, 41))
    c = continuity_check(m)
    d = m.daily.iloc[7]
    rj = (d.rv - d.bv) / d.rv
    z = rj / math.sqrt(THETA / d.n_returns * max(1.0, d.tq / d.bv**2))
    row = c.tests.iloc[7]
    assert row["z"] == pytest.approx(z, rel=1e-12) and row["p_value"] == pytest.approx(stats.norm.sf(z), rel=1e-12)
    assert THETA == pytest.approx(0.6090, abs=1e-4)  # from memory


@pytest.mark.slow
def test_planted_jumps_are_found_at_the_1_percent_level(sim_intraday):
    # documented simulation: 400 days of 78 five-minute returns at 20 % vol, one jump a day of
    # 1 to 2 daily diffusive standard deviations (1.3 % to 2.5 %); at least 90 % of those days listed
    rng = np.random.default_rng(42)
    m = realized_measures(sim_intraday(400, 78, 0.2, 42, jumps=_jumps(400, rng, 1.0, 2.0)))
    c = continuity_check(m, alpha=0.01)
    assert c.tests["jump"].mean() >= 0.90
    assert c.verdict.status == "rejected" and c.family_p_value < 1e-6


@pytest.mark.slow
def test_pure_diffusion_lists_jump_days_at_no_more_than_the_nominal_rate_plus_one_point(sim_intraday):
    # 3,000 jump-free days: the share listed at 1 % (5 %) must not exceed 2 % (6 %); the binomial sd
    # at 1 % over 3,000 days is 0.18 point (Huang & Tauchen 2005 report close to nominal size)
    m = realized_measures(sim_intraday(3000, 78, 0.2, 43))
    c = continuity_check(m, alpha=0.01)
    assert c.tests["jump"].mean() <= 0.02
    assert (c.tests["p_value"] < 0.05).mean() <= 0.06
    assert c.expected_false_alarms == pytest.approx(30.0)
    assert c.family_false_alarm_rate == pytest.approx(1 - 0.99**3000)


@pytest.mark.slow
def test_verdict_false_alarm_rate_on_jump_free_samples(sim_intraday):
    # the verdict's family p (Sidak over the days tested) should reject at about its 5 % level on
    # jump-free data: 200 samples of 60 days, rejection rate at most 10 % (binomial sd 1.5 points)
    m = realized_measures(sim_intraday(200 * 60, 78, 0.2, 44))
    rejected = sum(continuity_check(replace(m, daily=m.daily.iloc[i * 60:(i + 1) * 60])).verdict.status == "rejected"
                   for i in range(200))
    assert rejected / 200 <= 0.10  # measured 7.5 %: the ratio statistic's far tail is a little heavy


def test_verdict_and_jump_share_with_planted_jumps(sim_intraday):
    jumps = {(5, 30): 0.025, (12, 50): -0.03, (20, 10): 0.028}
    m = realized_measures(sim_intraday(40, 78, 0.2, 45, overnight_share=0.1, jumps=jumps))
    c = continuity_check(m)
    listed = set(c.jump_days["date"].dt.strftime("%Y-%m-%d"))
    dates = pd.bdate_range("2024-01-02", periods=40)
    assert {dates[5].strftime("%Y-%m-%d"), dates[12].strftime("%Y-%m-%d"), dates[20].strftime("%Y-%m-%d")} <= listed
    # jump share ~ sum J^2 / total variance (Andersen, Bollerslev & Diebold 2007, from memory)
    total = m.daily["rv"].sum() + np.nansum(m.daily["overnight"] ** 2)
    assert c.jump_share == pytest.approx(sum(j**2 for j in jumps.values()) / total, rel=0.3)
    v = c.verdict
    assert isinstance(v, Verdict) and v.property == "continuous_paths" and v.status == "rejected"
    assert "bipower variation" in v.message and "cannot price every strike" in v.message
    d = c.as_dict()
    assert d["method"] == "ratio_test" and not d["low_power"] and d["verdict"]["status"] == "rejected"
    assert {"date", "z", "p_value"} == set(d["jump_days"][0])


def test_continuous_paths_verdict_on_quiet_data(sim_intraday):
    m = realized_measures(sim_intraday(30, 78, 0.2, 46))
    c = continuity_check(m)
    assert c.family_p_value >= 0.1 and c.jump_share < 0.1  # seeded jump-free data
    assert c.verdict.status == "consistent" and "paths look continuous" in c.verdict.message
    assert c.verdict.p_value == pytest.approx(1 - (1 - c.tests["p_value"].min()) ** 30, rel=1e-9)


def test_few_returns_a_day_are_noted_and_too_few_refused(sim_intraday):
    c = continuity_check(realized_measures(sim_intraday(30, 26, 0.2, 47, bar_seconds=900)))
    assert any("median of 26 returns a day" in n for n in c.notes)
    with pytest.raises(VolbenchError, match="no day has 20 intraday returns or more"):
        continuity_check(realized_measures(sim_intraday(30, 13, 0.2, 48, bar_seconds=1800)))
    with pytest.raises(VolbenchError, match="jump level must be a probability between 0 and 0.5"):
        continuity_check(realized_measures(sim_intraday(5, 78, 0.2, 49)), alpha=1)


# ---------------------------------------------------------------------- daily data: Lee-Mykland screen
def _daily(make_history, r):
    return make_history(100 * np.exp(np.concatenate(([0.0], np.cumsum(r)))))


def test_lee_mykland_statistic_equals_a_plain_loop():
    # s_i^2 = (1/(K-2)) sum_{j=i-K+2}^{i-1} |r_j||r_{j-1}|, the window excluding r_i (Lee & Mykland 2008)
    r = np.random.default_rng(50).standard_normal(60)
    k = 16
    i, lstat = lee_mykland_statistics(r, k)
    assert i[0] == k - 1 and i.size == 60 - (k - 1)
    for pos, val in zip(i, lstat):
        s2 = sum(abs(r[j]) * abs(r[j - 1]) for j in range(pos - k + 2, pos)) / (k - 2)
        assert val == pytest.approx(r[pos] / math.sqrt(s2), rel=1e-12)


@pytest.mark.slow
def test_daily_screen_false_alarm_rate_is_nominal(make_history):
    # the listed-any-jump rate on jump-free normal returns should be about alpha = 1 %: 400 samples
    # of 500 returns, at most 2 % (seeded simulation; the p-values come from an independent seed)
    rng = np.random.default_rng(51)
    null = lee_mykland_null(500 - 15, 16)
    _, lstat = lee_mykland_statistics(rng.standard_normal((400, 500)), 16)
    p = (1 + null.size - np.searchsorted(null, np.abs(lstat).max(axis=1), side="left")) / (null.size + 1)
    assert (p < 0.01).mean() <= 0.02
    # and the screen itself agrees on one of those samples
    c = lee_mykland_screen(_daily(make_history, rng.standard_normal(500) * 0.01))
    assert c.method == "lee_mykland" and c.low_power and c.days_tested == 485


def test_daily_screen_finds_a_big_jump_and_says_it_is_low_power(make_history):
    rng = np.random.default_rng(52)
    r = rng.standard_normal(500) * 0.012
    r[300] += 0.15  # about 12 daily standard deviations
    c = lee_mykland_screen(_daily(make_history, r))
    assert len(c.jump_days) >= 1 and c.jump_days["date"].iloc[0] == pd.Timestamp(_daily(make_history, r).dates[301])
    assert c.verdict.status == "rejected" and c.verdict.property == "continuous_paths"
    assert "low power" in c.verdict.message and "low power" in c.label
    assert c.jump_share == pytest.approx(r[300] ** 2 / np.sum(r**2), rel=1e-12)


def test_daily_screen_is_deterministic_and_refuses_short_files(make_history):
    r = np.random.default_rng(53).standard_normal(100) * 0.01
    a, b = lee_mykland_screen(_daily(make_history, r)), lee_mykland_screen(_daily(make_history, r))
    pd.testing.assert_frame_equal(a.tests, b.tests)
    with pytest.raises(VolbenchError, match="daily jump screen needs at least 26 returns, has 20"):
        lee_mykland_screen(_daily(make_history, r[:20]))
    with pytest.raises(VolbenchError, match="jump-screen window must be a whole number of returns >= 4"):
        lee_mykland_screen(_daily(make_history, r), window=2)
