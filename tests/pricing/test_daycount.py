"""The option's life: ACT/365 years, trading days less holidays, and the holidays file."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from volbench.errors import VolbenchError
from volbench.pricing.daycount import (
    DEFAULT_DAY_BASIS,
    count_trading_days,
    option_life,
    read_holidays,
)

HOLIDAYS = ["2024-12-25", "2024-12-26", "2025-01-01"]


def test_act365_and_trading_days_on_a_known_calendar_with_holidays():
    # Hand count (common practice, no source): Fri 2024-12-20 to Fri 2025-01-17 is 28 calendar days,
    # years = 28 / 365; weekdays after the as-of day up to the expiry: 4 weeks x 5 = 20, less the
    # holidays 25 and 26 December and 1 January = 17 trading days.
    life = option_life("2024-12-20", expiry="2025-01-17", holidays=HOLIDAYS)
    assert life.calendar_days == 28
    assert life.years == 28 / 365
    assert life.trading_days == 17
    assert life.holidays_in_life == ("2024-12-25", "2024-12-26", "2025-01-01")
    assert life.given_as == "expiry" and life.notes == ()
    assert option_life("2024-12-20", expiry="2025-01-17").trading_days == 20


def test_expiry_and_days_on_either_basis_give_the_same_option():
    by_expiry = option_life("2024-12-20", expiry="2025-01-17", holidays=HOLIDAYS)
    by_calendar = option_life("2024-12-20", days=28, basis="calendar", holidays=HOLIDAYS)
    by_trading = option_life("2024-12-20", days=17, basis="trading", holidays=HOLIDAYS)
    for other in (by_calendar, by_trading):
        assert (other.expiry, other.calendar_days, other.trading_days, other.years) == (
            by_expiry.expiry, by_expiry.calendar_days, by_expiry.trading_days, by_expiry.years)
    assert by_trading.given_as == "trading days" and by_calendar.given_as == "calendar days"
    assert DEFAULT_DAY_BASIS == "trading"


def _plain_count(as_of: str, expiry: str, holidays) -> int:
    days = pd.date_range(pd.Timestamp(as_of) + pd.Timedelta(days=1), expiry, freq="D")
    return sum(1 for d in days if d.weekday() < 5 and str(d.date()) not in holidays)


@settings(max_examples=200, deadline=None)
@given(start=st.dates(min_value=pd.Timestamp("2000-01-01").date(), max_value=pd.Timestamp("2030-12-31").date()),
       n=st.integers(min_value=1, max_value=400), basis=st.sampled_from(["trading", "calendar"]))
def test_days_round_trip_through_the_expiry_and_match_a_plain_loop(start, n, basis):
    # Common practice, no source: the trading count is checked against a day-by-day loop.
    as_of = str(start)
    life = option_life(as_of, days=n, basis=basis, holidays=HOLIDAYS)
    again = option_life(as_of, expiry=life.expiry, holidays=HOLIDAYS)
    assert (again.calendar_days, again.trading_days, again.years) == (life.calendar_days, life.trading_days, life.years)
    assert life.trading_days == _plain_count(as_of, life.expiry, HOLIDAYS)
    if basis == "calendar":
        assert life.calendar_days == n
    else:
        assert life.trading_days == n
        assert np.is_busday(np.datetime64(life.expiry), holidays=HOLIDAYS)  # lands on a trading day


def test_weekend_as_of_and_weekend_expiry():
    # Saturday as-of: the first trading day after it is Monday.
    assert option_life("2025-01-04", days=1, basis="trading").expiry == "2025-01-06"
    life = option_life("2025-01-03", expiry="2025-01-04")  # Friday to Saturday
    assert life.trading_days == 0 and life.calendar_days == 1
    assert any("Saturday, not a trading day" in n for n in life.notes)
    assert any("no trading day" in n for n in life.notes)
    with pytest.raises(VolbenchError, match="no trading day between 2025-01-03 and the expiry 2025-01-04"):
        life.pricing_basis_factor(252)
    hol = option_life("2024-12-20", expiry="2024-12-25", holidays=HOLIDAYS)
    assert any("is a holiday" in n for n in hol.notes) and hol.trading_days == 2


def test_pricing_basis_factor():
    # docs/METHODS.md, "Day counts and the option's life": sigma_h^2 x N / A = sigma_p^2 x T.
    life = option_life("2024-12-20", expiry="2025-01-17", holidays=HOLIDAYS)
    f = life.pricing_basis_factor(252)
    assert (0.25 * f) ** 2 * life.years == pytest.approx(0.25**2 * 17 / 252, rel=1e-14)


def test_bad_lives_are_refused():
    with pytest.raises(VolbenchError, match="either as an expiry date or as a number of days, not both"):
        option_life("2025-01-02", expiry="2025-02-01", days=3)
    with pytest.raises(VolbenchError, match="not neither"):
        option_life("2025-01-02")
    with pytest.raises(VolbenchError, match=r"expiry 2025-01-02 must be after the as-of date 2025-01-02"):
        option_life("2025-01-02", expiry="2025-01-02")
    with pytest.raises(VolbenchError, match=r"days must be a whole number >= 1, got 2.5"):
        option_life("2025-01-02", days=2.5)
    with pytest.raises(VolbenchError, match=r"days must be a whole number >= 1, got 0"):
        option_life("2025-01-02", days=0)
    with pytest.raises(VolbenchError, match=r"day basis must be 'trading' or 'calendar', got 'bars'"):
        option_life("2025-01-02", days=5, basis="bars")
    with pytest.raises(VolbenchError, match=r"as-of date must look like YYYY-MM-DD, got 'soon'"):
        option_life("soon", days=5)
    with pytest.raises(VolbenchError, match=r"at most 36,500"):
        option_life("2025-01-02", days=40_000, basis="calendar")


def test_count_trading_days_helper():
    assert count_trading_days("2024-12-20", "2025-01-17", HOLIDAYS) == 17


def test_holidays_file_findings_per_bad_line(tmp_path):
    path = tmp_path / "holidays.csv"
    path.write_text("Date,Name\n# harbour calendar\n2024-12-25,Harbour Day\n\n2024-12-26\nnot-a-date\n"
                    "2024-12-25\n2024-12-28,a Saturday\n2025-01-01\n")
    hol = read_holidays(path)
    assert [str(d) for d in hol.dates] == HOLIDAYS
    kinds = [(f.severity, f.kind, f.line) for f in hol.findings]
    assert kinds == [("error", "bad_date", 6), ("info", "duplicate_date", 7), ("info", "weekend_date", 8)]
    assert "line 6: 'not-a-date' is not a date" in hol.findings[0].message
    assert "already listed on line 3" in hol.findings[1].message
    assert "is a Saturday" in hol.findings[2].message
    life = option_life("2024-12-20", expiry="2025-01-17", holidays=hol)
    assert life.trading_days == 17


def test_holidays_file_errors(tmp_path):
    with pytest.raises(VolbenchError, match="file not found"):
        read_holidays(tmp_path / "none.csv")
    p = tmp_path / "h.csv"
    p.write_text("# only a comment\n")
    with pytest.raises(VolbenchError, match="holds no dates"):
        read_holidays(p)
    p.write_text("holiday\nsoon\nlater\n")
    with pytest.raises(VolbenchError, match=r"line 2: 'soon' is not a date"):
        read_holidays(p)
    p.write_text("soon\n2024-12-25\n")  # not a header name: a bad line, reported
    hol = read_holidays(p)
    assert [(f.kind, f.line) for f in hol.findings] == [("bad_date", 1)] and len(hol) == 1
