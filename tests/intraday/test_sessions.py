"""Bar spacing and sessions from timestamps, daily bars, and joining date and time columns."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest

from volbench.errors import VolbenchError
from volbench.estimators import point_estimate
from volbench.intraday.sessions import (
    DAY_SECONDS,
    daily_bars,
    format_interval,
    infer_layout,
    parse_session_break,
)


def test_five_minute_bars_are_read_from_the_timestamps(sim_intraday):
    h = sim_intraday(5, 78, 0.2, 1)
    lay = infer_layout(h.dates)
    assert lay.intraday and lay.bar_interval_seconds == 300.0
    assert lay.bars_per_session == 78 and lay.n_sessions == 5
    assert lay.describe() == "5-minute bars, 78 a session, 5 sessions"
    assert lay.as_dict()["session_rule"] == "calendar date"
    assert (lay.session_dates == pd.bdate_range("2024-01-02", periods=5).to_numpy()).all()


def test_interval_is_the_median_within_sessions_despite_gaps_and_a_half_day(sim_intraday):
    # common practice, no source: the median spacing ignores overnight gaps, a missing bar and a short day
    h = sim_intraday(6, 78, 0.2, 2, bar_seconds=60)
    keep = np.ones(h.n, bool)
    keep[100] = False                 # one missing bar on day 2
    keep[5 * 78 + 30:] = False        # last day closes early (30 bars)
    lay = infer_layout(h.take(keep).dates)
    assert lay.bar_interval_seconds == 60.0
    assert lay.bars_per_session == 78
    assert list(lay.bars_in_session) == [78, 77, 78, 78, 78, 30]


def test_daily_file_is_not_intraday(make_history):
    h = make_history(100 * np.exp(np.linspace(0, 0.1, 30)))
    lay = infer_layout(h.dates)
    assert not lay.intraday and lay.bar_interval_seconds == DAY_SECONDS and lay.bars_per_session == 1
    assert daily_bars(h, lay) is h
    assert lay.describe() == "daily bars, 30 sessions"


def test_session_break_groups_sessions_that_cross_midnight():
    # an evening session 18:00-01:55 (hourly bars) on three nights
    starts = pd.to_datetime(["2024-03-04 18:00", "2024-03-05 18:00", "2024-03-06 18:00"])
    stamps = np.concatenate([(s + pd.to_timedelta(np.arange(8), "h")).to_numpy() for s in starts])
    by_date = infer_layout(stamps)
    assert by_date.n_sessions == 4  # calendar dates cut each night in two
    lay = infer_layout(stamps, "4h")
    assert lay.n_sessions == 3 and lay.bar_interval_seconds == 3600.0 and lay.bars_per_session == 8
    # the session is dated by its last bar (its close)
    assert [str(d)[:10] for d in lay.session_dates] == ["2024-03-05", "2024-03-06", "2024-03-07"]
    assert "gap longer than 240-minute" in lay.as_dict()["session_rule"]


def test_session_break_shorter_than_a_midday_pause_is_refused(sim_intraday):
    h = sim_intraday(3, 78, 0.2, 3)
    keep = np.ones(h.n, bool)
    keep[30:50] = False  # a 100-minute pause on the first day
    with pytest.raises(VolbenchError, match="splits 2024-01-02 into two sessions.*longer session break"):
        infer_layout(h.take(keep).dates, "90min")


@pytest.mark.parametrize("text, msg", [("90", "needs a unit"), ("soon", "duration such as 4h"),
                                       ("-1h", "positive duration")])
def test_bad_session_break(text, msg):
    with pytest.raises(VolbenchError, match=msg):
        parse_session_break(text)


def test_parse_session_break_and_format_interval():
    assert parse_session_break("4h") == 14400.0 and parse_session_break("90min") == 5400.0
    assert parse_session_break(None) is None
    assert format_interval(300) == "5-minute" and format_interval(90) == "90-second"
    assert format_interval(DAY_SECONDS) == "1-day"


def test_daily_bars_equal_a_pandas_groupby(sim_intraday):
    # reference library pandas: first open, max high, min low, last close per calendar date
    h = sim_intraday(8, 78, 0.3, 4)
    d = daily_bars(h)
    frame = pd.DataFrame({"open": h.open, "high": h.high, "low": h.low, "close": h.close}, index=h.index)
    g = frame.groupby(frame.index.normalize()).agg({"open": "first", "high": "max", "low": "min", "close": "last"})
    np.testing.assert_array_equal(d.dates, g.index.to_numpy())
    for col in ("open", "high", "low", "close"):
        np.testing.assert_array_equal(getattr(d, col), g[col].to_numpy())
    assert list(d.lines) == list(h.lines[77::78])  # the line of each session's last bar
    assert d.provenance()["flagged_rows"] == h.provenance()["flagged_rows"]


def test_close_only_intraday_gives_close_only_days(sim_intraday):
    h = sim_intraday(4, 78, 0.3, 5, with_open=False)
    d = daily_bars(h)
    assert d.columns == {"close"} and d.n == 4


def test_daily_bars_recover_the_vol_that_raw_intraday_bars_understate(sim_intraday):
    # 252 days of 5-minute bars at 20 %: read per bar with 252 bars a year the vol looks sqrt(78)
    # times too small (the 2.26 % of the issue); the daily bars give it back within the exact
    # chi-square interval of close-to-close (Hull, from memory; chi-square interval common practice).
    h = sim_intraday(252, 78, 0.2, 6, overnight_share=0.2)
    raw = point_estimate(h, "close_to_close")
    assert raw.vol == pytest.approx(0.2 / math.sqrt(78), rel=0.05)
    est = point_estimate(daily_bars(h), "close_to_close")
    assert est.ci_low < 0.2 < est.ci_high

