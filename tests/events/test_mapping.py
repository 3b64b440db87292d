"""Placing events on bars by their timing, and the spliced ex-event history."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from volbench.errors import VolbenchError
from volbench.estimators import point_estimate
from volbench.events import ex_event_history, make_calendar, map_events


def test_timing_decides_which_bar_carries_the_event(make_history):
    # common practice, no source: news before the open moves that day's bar, news after the close
    # moves the next bar; a day the market is shut moves the next bar either way
    h = make_history(np.linspace(50, 60, 15), start="2024-03-04")  # Mon 4 March .. Fri 22 March
    cal = make_calendar(
        ["2024-03-06", "2024-03-06", "2024-03-08", "2024-03-09", "2024-03-13"],
        ["before_open", "after_close", "after_close", "before_open", "during"])
    m = map_events(h, cal)
    days = [str(pd.Timestamp(h.dates[b]).date()) for b in m.bar_of]
    assert days == ["2024-03-06", "2024-03-07", "2024-03-11", "2024-03-11", "2024-03-13"]
    assert m.count == 4 and m.bars.tolist() == [2, 3, 5, 7]
    (shared,) = [f for f in m.findings if f.kind == "events_share_a_bar"]
    assert shared.date == "2024-03-11" and "counts as one event" in shared.message


def test_events_before_and_after_the_history(make_history):
    h = make_history(np.linspace(50, 60, 10), start="2024-03-04")  # to Fri 15 March
    cal = make_calendar(["2024-02-01", "2024-03-04", "2024-03-04", "2024-03-15", "2024-03-15", "2024-04-02"],
                        ["before_open", "before_open", "after_close", "before_open", "after_close", "during"])
    m = map_events(h, cal)
    assert [e.date for e in m.before] == ["2024-02-01", "2024-03-04"]  # the first bar has no return
    assert [(e.date, e.timing) for e in m.observed] == [("2024-03-04", "after_close"), ("2024-03-15", "before_open")]
    assert [(e.date, e.timing) for e in m.future] == [("2024-03-15", "after_close"), ("2024-04-02", "during")]
    assert sum(f.kind == "event_before_history" for f in m.findings) == 2


def test_ex_event_history_keeps_every_other_bars_own_returns_and_shape(event_series):
    # the spliced history must leave each kept bar's r_t, o_t, u_t, d_t, c_t exactly as in the file
    # (plain-loop reference over the kept bars; common practice, no source)
    h, bars, _ = event_series(n=300, every=50, ohlc=True, seed=3)
    ex = ex_event_history(h, bars)
    assert ex.n == h.n - bars.size
    kept = [t for t in range(h.n) if t not in set(bars.tolist())]
    assert np.array_equal(ex.dates, h.dates[kept]) and np.array_equal(ex.lines, h.lines[kept])
    for j in range(1, ex.n):
        t = kept[j]
        assert np.log(ex.close[j] / ex.close[j - 1]) == pytest.approx(np.log(h.close[t] / h.close[t - 1]), abs=1e-12)
        assert np.log(ex.open[j] / ex.close[j - 1]) == pytest.approx(np.log(h.open[t] / h.close[t - 1]), abs=1e-12)
        for a, b in ((ex.high, h.high), (ex.low, h.low), (ex.close, h.close)):
            assert np.log(a[j] / ex.open[j]) == pytest.approx(np.log(b[t] / h.open[t]), abs=1e-12)


def test_ex_event_estimates_equal_numpy_on_the_ordinary_bars(event_series):
    # reference: numpy sample variance of the ordinary returns; Parkinson (1980) mean of ln(H/L)^2 / (4 ln 2)
    h, bars, _ = event_series(n=400, every=60, ohlc=True, seed=4)
    ex = ex_event_history(h, bars)
    r = np.diff(np.log(h.close))
    ordinary = np.delete(r, bars - 1)
    assert point_estimate(ex, "close_to_close").vol == pytest.approx(np.sqrt(np.var(ordinary, ddof=1) * 252), rel=1e-10)
    hl = np.delete(np.log(h.high / h.low), bars)
    assert point_estimate(ex, "parkinson").vol == pytest.approx(np.sqrt(np.mean(hl**2) / (4 * np.log(2)) * 252),
                                                                rel=1e-10)
    assert point_estimate(ex, "close_to_close", 30).vol == pytest.approx(
        np.sqrt(np.var(ordinary[-30:], ddof=1) * 252), rel=1e-10)


def test_ex_event_history_refuses_bars_outside_the_history(make_history):
    h = make_history(np.linspace(50, 60, 10))
    assert ex_event_history(h, np.array([], dtype=int)) is h
    with pytest.raises(VolbenchError, match="event bars must lie between 1 and 9, got 0"):
        ex_event_history(h, np.array([0, 3]))
