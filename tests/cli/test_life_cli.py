"""The option's life on the command line: --expiry, or --days with --day-basis, and --holidays."""

from __future__ import annotations

import datetime as dt
import json
import math

import numpy as np
import pytest

from volbench.cli import main
from volbench.errors import VolbenchError
from volbench.settings import LifeSettings


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def _compare(capsys, path, *life):
    code, out, err = run(capsys, "compare", path, "--pricing-vol", "0.25", *life, "--format", "json")
    assert code == 0, err
    return json.loads(out)


def _plain_trading_days(as_of: dt.date, expiry: dt.date, holidays: set[dt.date]) -> int:
    """A plain calendar loop: weekdays after as_of up to and including expiry, less holidays."""
    n, d = 0, as_of
    while d < expiry:
        d += dt.timedelta(days=1)
        n += d.weekday() < 5 and d not in holidays
    return n


@pytest.fixture
def holidays_file(tmp_path):
    path = tmp_path / "holidays.csv"
    path.write_text("Date,Name\n2024-11-28,Harbour Day\n2024-12-25,Winter\n2024-12-26,Winter 2\n")
    return path


def test_compare_json_carries_expiry_calendar_and_trading_days_beside_years(capsys, sample_dir, holidays_file):
    path = sample_dir / "kestrel_orchards.csv"  # last row 2024-10-17, a Thursday
    d = _compare(capsys, path, "--expiry", "2024-12-31", "--holidays", holidays_file)
    hol = {dt.date(2024, 11, 28), dt.date(2024, 12, 25), dt.date(2024, 12, 26)}
    as_of, expiry = dt.date(2024, 10, 17), dt.date(2024, 12, 31)
    # calendar days by date arithmetic, trading days by a plain loop and by numpy (common practice, no source)
    assert d["expiry"] == "2024-12-31" and d["calendar_days"] == (expiry - as_of).days == 75
    assert d["trading_days"] == _plain_trading_days(as_of, expiry, hol) == 50
    assert d["trading_days"] == np.busday_count("2024-10-18", "2025-01-01", holidays=sorted(str(h) for h in hol))
    assert d["years"] == 75 / 365 and d["option"]["years"] == d["years"]
    assert d["days"] == 50 and d["window"] == 50  # the estimators read the life's trading days
    assert d["life"]["holidays_in_life"] == ["2024-11-28", "2024-12-25", "2024-12-26"]


def test_expiry_and_days_on_either_basis_give_the_same_numbers(capsys, sample_dir, holidays_file):
    path = sample_dir / "ironvale_mining.csv"
    by_expiry = _compare(capsys, path, "--expiry", "2024-12-31", "--holidays", holidays_file, "--with-garch")
    n_cal, n_trade = by_expiry["calendar_days"], by_expiry["trading_days"]
    by_cal = _compare(capsys, path, "--days", n_cal, "--day-basis", "calendar", "--holidays", holidays_file,
                      "--with-garch")
    by_trade = _compare(capsys, path, "--days", n_trade, "--holidays", holidays_file, "--with-garch")
    assert [doc["life"].pop("given_as") for doc in (by_expiry, by_cal, by_trade)] == [
        "expiry", "calendar days", "trading days"]
    for doc in (by_expiry, by_cal, by_trade):  # the record of how it was asked differs by design
        doc.pop("provenance")
    assert by_cal == by_expiry and by_trade == by_expiry


def test_history_vols_are_put_on_the_act365_basis(capsys, sample_dir):
    path = sample_dir / "kestrel_orchards.csv"
    d = _compare(capsys, path, "--expiry", "2024-10-21")  # Thursday to Monday: 4 calendar days, 2 trading days
    assert (d["calendar_days"], d["trading_days"]) == (4, 2)
    factor = math.sqrt((2 / 252) / (4 / 365))  # docs/METHODS.md, "Day counts and the option's life"
    assert d["basis_factor"] == pytest.approx(factor, rel=1e-15)
    code, out, _ = run(capsys, "estimate", path, "--window", "2", "--format", "json")
    assert code == 0
    est = {k: e["vol"] for k, e in json.loads(out)["series"][0]["estimates"].items()}
    rows = {r["key"]: r for r in d["candidates"]}
    assert rows["close_to_close"]["vol"] == pytest.approx(est["close_to_close"] * factor, rel=1e-12)
    # the pricing vol's total variance over the ACT/365 years matches a history vol's over the trading days
    v = rows["close_to_close"]["vol"]
    assert v**2 * d["years"] == pytest.approx(est["close_to_close"] ** 2 * 2 / 252, rel=1e-12)


def test_compare_table_shows_the_life(capsys, sample_dir):
    code, out, _ = run(capsys, "compare", sample_dir / "kestrel_orchards.csv", "--pricing-vol", "0.25",
                       "--days", "30", "--day-basis", "calendar")
    assert code == 0
    assert "call expiring 2024-11-16: 30 calendar days = 0.0822 years (ACT/365), 21 trading days" in out
    assert "note: expiry 2024-11-16 is a Saturday, not a trading day" in out
    assert "history's vols x " in out


@pytest.mark.parametrize("life, message", [
    (["--expiry", "2024-10-17"], "expiry 2024-10-17 must be after the as-of date 2024-10-17"),
    (["--expiry", "2024/12/20"], "expiry date must look like YYYY-MM-DD, got '2024/12/20'"),
    (["--days", "30", "--expiry", "2024-12-20"], ("give the option's life either as an expiry date or as a "
                                                  "number of days, not both")),
    (["--days", "30", "--day-basis", "weekly"], "day basis must be 'trading' or 'calendar', got 'weekly'"),
    (["--expiry", "2024-10-18", "--holidays", "{hol}"], "no trading day between 2024-10-17 and the expiry 2024-10-18"),
    (["--days", "0"], "days must be a whole number of bars >= 1"),
])
def test_bad_lives_exit_2_with_one_line(capsys, sample_dir, tmp_path, life, message):
    hol = tmp_path / "h.csv"
    hol.write_text("2024-10-18\n")
    argv = [a.replace("{hol}", str(hol)) for a in life]
    code, out, err = run(capsys, "compare", sample_dir / "kestrel_orchards.csv", "--pricing-vol", "0.25", *argv)
    assert code == 2 and out == "" and err.count("\n") == 1
    assert message in err


def test_life_settings_validate_once():
    with pytest.raises(VolbenchError, match="not neither"):
        LifeSettings()
    with pytest.raises(VolbenchError, match=r"day basis must be 'trading' or 'calendar', got 'bars'"):
        LifeSettings(days=5, basis="bars")
    s = LifeSettings(days="10", basis="Calendar")
    assert (s.days, s.basis) == (10, "calendar")
    assert s.life("2024-10-17").expiry == "2024-10-27"
    assert s.as_dict()["day_basis"] == "calendar"


# ---------------------------------------------------------------------------- price
def test_price_takes_the_life_by_date_and_keeps_years(capsys):
    # The BSM itself is pinned by Hull's example (S=42, K=40, r=0.10, sigma=0.20, T=0.5: call 4.76, put
    # 0.81; from memory) in tests/pricing/test_bsm.py; here the life by date must give T = 183 / 365
    # (ACT/365, common practice, no source) and the same prices as --years 183/365.
    base = ["price", "--spot", "42", "--strike", "40", "--rate", "0.1", "--vol", "0.2", "--format", "json"]
    code, out, _ = run(capsys, *base, "--expiry", "2024-07-02", "--as-of", "2024-01-01")
    d = json.loads(out)
    assert code == 0 and d["calendar_days"] == 183 and d["years"] == 183 / 365
    assert d["trading_days"] == np.busday_count("2024-01-02", "2024-07-03")  # numpy, weekdays only
    assert 4.76 < d["call"]["price"] < 4.77 and 0.80 < d["put"]["price"] < 0.81  # a day longer than Hull's 0.5
    code, out2, _ = run(capsys, *base, "--years", str(183 / 365))
    assert code == 0 and json.loads(out2)["call"] == d["call"] and json.loads(out2)["expiry"] is None
    code, out3, _ = run(capsys, *base, "--days", "183", "--day-basis", "calendar", "--as-of", "2024-01-01")
    assert json.loads(out3)["call"] == d["call"]


@pytest.mark.parametrize("extra, message", [
    (["--expiry", "2024-07-02"], "--expiry needs --as-of YYYY-MM-DD"),
    ([], "give the option's life one way"),
    (["--years", "0.5", "--days", "20", "--as-of", "2024-01-01"], "give the option's life one way"),
])
def test_price_refuses_an_unclear_life(capsys, extra, message):
    code, out, err = run(capsys, "price", "--spot", "42", "--strike", "40", "--rate", "0.1", "--vol", "0.2", *extra)
    assert code == 2 and out == "" and message in err
