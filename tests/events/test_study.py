"""Ex-event vol, the event move and its interval, events in an option's life, the event-aware vol."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest

from volbench.errors import VolbenchError
from volbench.events import (
    event_aware_vol,
    event_move,
    event_study,
    events_in_life,
    ex_event_history,
    make_calendar,
)
from volbench.models import fit_garch
from volbench.settings import GarchSettings

A = 252.0


def _calendar_for(h, bars, future=()):
    dates = [str(pd.Timestamp(h.dates[b]).date()) for b in bars] + list(future)
    return make_calendar(dates, ["before_open"] * len(dates))


def test_ex_event_vol_and_event_move_are_recovered_within_their_intervals(event_series):
    # truth planted by the simulation: ordinary vol 20 %, event moves N(0, 0.05^2) on 40 days;
    # the blended close-to-close is biased up by the events (Patell & Wolfson 1979, from memory)
    h, bars, _ = event_series(n=2520, vol=0.20, event_sd=0.05, every=63, seed=11)
    rep = event_study(h, _calendar_for(h, bars))
    assert rep.count == bars.size == 40
    ordinary = rep.ordinary
    assert ordinary.ci_low < 0.20 < ordinary.ci_high
    move = rep.event_move
    assert move.n_events == 40 and move.ci_low < 0.05**2 < move.ci_high
    assert move.expected_abs_move == pytest.approx(math.sqrt(2 / math.pi) * math.sqrt(move.variance))
    from volbench.estimators import point_estimate

    blended = point_estimate(h, "close_to_close")
    assert blended.ci_low > 0.20  # the blended interval misses the ordinary vol: why events matter
    assert rep.warnings == ()


def test_range_estimators_leave_event_bars_out(event_series):
    # before-open moves sit in the overnight gap: Yang-Zhang (2000) sees them, so its blended estimate
    # is inflated while the ex-event one recovers the 20 % ordinary vol (less the discrete-monitoring
    # bias of range estimators, about -3.5 % in vol with 390 steps a bar: docs/METHODS.md, "Estimators")
    h, bars, _ = event_series(n=2000, vol=0.20, event_sd=0.06, every=50, seed=12, ohlc=True)
    rep = event_study(h, _calendar_for(h, bars))
    from volbench.estimators import point_estimate

    yz = rep.ex_event["yang_zhang"]
    assert yz.n == h.n - 1 - bars.size and 0.185 < yz.vol < 0.205
    assert point_estimate(h, "yang_zhang").vol > yz.vol + 0.02
    # ranges of the event bars themselves are left out too: Parkinson counts the ordinary bars only
    assert rep.ex_event["parkinson"].n == h.n - bars.size


@pytest.mark.slow
@pytest.mark.parametrize("event_to_ordinary", [3.0, 1.0])
def test_event_move_interval_covers_95_percent(event_to_ordinary):
    # seeded simulation (docs/METHODS.md, "Events and hindsight"): k = 12 normal event-day returns of
    # variance s_d^2 + s_E^2, the ordinary variance estimated from 1,000 days (chi-square(999) / 999);
    # the chi-square(k) interval should cover s_E^2 in 93-97 % of 3,000 replications
    rng = np.random.default_rng(2024)
    m, k, n_ord = 3000, 12, 1000
    sd = 0.2 / math.sqrt(A)
    se = event_to_ordinary * sd
    r_event = rng.standard_normal((m, k)) * math.sqrt(sd**2 + se**2)
    ord_var = sd**2 * rng.chisquare(n_ord - 1, m) / (n_ord - 1)
    hits = 0
    for i in range(m):
        mv = event_move(r_event[i], ord_var[i])
        hits += mv.ci_low <= se**2 <= mv.ci_high
    assert 0.93 <= hits / m <= 0.97


def test_events_in_life_counts_weekday_bars_after_the_as_of_date():
    # as of Friday 15 March 2024, a 5-bar life is Mon 18 .. Fri 22 March (weekdays, no holidays)
    cal = make_calendar(
        ["2024-03-14", "2024-03-15", "2024-03-15", "2024-03-16", "2024-03-22", "2024-03-22"],
        ["before_open", "before_open", "after_close", "before_open", "before_open", "after_close"])
    assert events_in_life(cal, "2024-03-15", 5) == 3  # after close on the 15th, Saturday's news, the 22nd
    assert events_in_life(cal, "2024-03-15", 6) == 4
    assert events_in_life(cal, "2024-03-13", 1) == 1  # the 14th
    assert events_in_life(make_calendar([]), "2024-03-15", 5) == 0
    with pytest.raises(VolbenchError, match="days must be a whole number of bars >= 1, got 0"):
        events_in_life(cal, "2024-03-15", 0)


def test_event_aware_candidate_prices_an_option_spanning_one_event_as_the_formula_says(event_series):
    # independent computation from the raw returns (docs/METHODS.md, "Events and hindsight"): over
    # T = 21 bars, T - 1 ordinary days at the ex-event window variance, and one event day carrying an
    # ordinary day plus the event move (mean event-day r^2 less the whole-history ordinary variance)
    h, bars, _ = event_series(n=1000, vol=0.25, event_sd=0.04, every=63, seed=13)
    last = pd.Timestamp(h.dates[-1])
    in_life = (last + pd.offsets.BDay(7)).strftime("%Y-%m-%d")
    outside = (last + pd.offsets.BDay(40)).strftime("%Y-%m-%d")
    rep = event_study(h, _calendar_for(h, bars, [in_life, outside]), window=60, days=21)
    assert rep.events_in_life == 1

    r = np.diff(np.log(h.close))
    is_event = np.zeros(r.size, bool)
    is_event[bars - 1] = True
    ordinary = r[~is_event]
    s2_window = np.var(ordinary[-60:], ddof=1)
    event_day = np.mean(r[is_event] ** 2) - np.var(ordinary, ddof=1) + s2_window
    total = 20 * s2_window + 1 * event_day
    assert rep.event_aware_vol == pytest.approx(math.sqrt(total / 21 * A), rel=1e-12)
    assert rep.event_aware_vol > rep.ex_event["close_to_close"].vol
    assert event_aware_vol(0.3, 0.0, 0, 21) == pytest.approx(0.3)


def test_event_aware_vol_checks_its_inputs():
    with pytest.raises(VolbenchError, match="between 0 and 21, got 22"):
        event_aware_vol(0.2, 0.001, 22, 21)
    with pytest.raises(VolbenchError, match="days must be a whole number of bars >= 1, got 0"):
        event_aware_vol(0.2, 0.001, 0, 0)


def test_event_move_floors_at_zero_and_checks_inputs():
    mv = event_move([0.001, -0.001], 1e-4)
    assert mv.raw_variance < 0 and mv.variance == 0 and mv.ci_low == 0 and mv.expected_abs_move == 0
    with pytest.raises(VolbenchError, match="at least one event-day return"):
        event_move([], 1e-4)
    with pytest.raises(VolbenchError, match="ordinary variance must be a finite number >= 0"):
        event_move([0.01], -1.0)


def test_few_or_no_events_draw_warnings(event_series):
    h, bars, _ = event_series(n=400, every=100, seed=14)
    rep = event_study(h, _calendar_for(h, bars[:3]))
    assert rep.event_move.n_events == 3
    assert any("rests on 3 events, fewer than 4" in w for w in rep.warnings)
    none = event_study(h, make_calendar(["2030-01-02"]), days=10)
    assert none.event_move is None and none.count == 0 and none.events_in_life == 0
    assert any("no event falls between" in w for w in none.warnings)
    assert none.ex_event["close_to_close"].vol == pytest.approx(
        event_study(h, make_calendar([]),).ex_event["close_to_close"].vol)


def test_garch_on_ex_event_returns_adds_the_events_back(event_series):
    # reference: the same fit made directly with fit_garch on the spliced history (arch underneath)
    h, bars, _ = event_series(n=1200, vol=0.25, event_sd=0.05, every=63, seed=15)
    last = pd.Timestamp(h.dates[-1])
    cal = _calendar_for(h, bars, [(last + pd.offsets.BDay(3)).strftime("%Y-%m-%d")])
    rep = event_study(h, cal, days=21, garch="garch")
    g = rep.garch
    direct = fit_garch(ex_event_history(h, bars), "garch", GarchSettings(horizons=(21,)))
    assert g.nobs == h.n - 1 - bars.size == direct.nobs
    assert g.ex_event_vol == pytest.approx(direct.forward_vol(21), rel=1e-12)
    assert g.event_aware_vol == pytest.approx(event_aware_vol(g.ex_event_vol, rep.event_move.variance, 1, 21))
    assert "follows the return before it" in g.lag_treatment
    with pytest.raises(VolbenchError, match="needs the option's life"):
        event_study(h, cal, garch="garch")


def test_json_shape_per_series(event_series):
    h, bars, _ = event_series(n=500, seed=16)
    d = event_study(h, _calendar_for(h, bars), window=20, days=10).as_dict()
    assert {"count", "ex_event", "event_move", "events_in_life"} <= set(d)
    assert set(d["ex_event"]["close_to_close"]) == {"vol", "ci_low", "ci_high", "n"}
    assert set(d["event_move"]) == {"variance", "ci_low", "ci_high", "expected_abs_move", "n_events"}
    assert d["count"] == bars.size and d["ex_event"]["close_to_close"]["n"] == 20
