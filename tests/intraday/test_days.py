"""Intraday files analysed by day: loading, the bar interval in every output, the session-break
setting, and the ``realized``/``bipower`` estimators in the registry."""

from __future__ import annotations

import json
import math

import numpy as np
import pandas as pd
import pytest

from volbench.cli import main
from volbench.data import load_prices
from volbench.errors import VolbenchError
from volbench.estimators import DAILY_KEYS, estimate_all, point_estimate, rolling_vol
from volbench.estimators.realized import DAILY_FILE_REASON, NU_BV, NU_RV
from volbench.intraday import estimates as core_estimates
from volbench.intraday import realized_measures
from volbench.intraday.days import by_days
from volbench.settings import IntradaySettings

A = 252.0


def write_csv(history, path):
    """An intraday history as the CSV a user would load (timestamps to the second)."""
    frame = pd.DataFrame({"Timestamp": pd.DatetimeIndex(history.dates).strftime("%Y-%m-%d %H:%M:%S"),
                          "Open": history.open, "High": history.high, "Low": history.low,
                          "Close": history.close})
    frame.to_csv(path, index=False, float_format="%.10g")
    return path


def _run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


# ------------------------------------------------------------------------------ loading by day
def test_intraday_history_becomes_daily_bars_with_the_bars_behind_them(sim_intraday):
    h = sim_intraday(30, 78, 0.2, seed=1, overnight_share=0.2)
    d = by_days(h)
    assert d.n == 30 and d.intraday is not None and d.intraday.bars is h
    assert d.bar_interval_seconds == 300.0 and h.bar_interval_seconds == 300.0
    # common practice, no source: first open, highest high, lowest low, last close of each session
    hi = h.high.reshape(30, 78)
    lo = h.low.reshape(30, 78)
    np.testing.assert_array_equal(d.close, h.close.reshape(30, 78)[:, -1])
    np.testing.assert_array_equal(d.open, h.open.reshape(30, 78)[:, 0])
    np.testing.assert_array_equal(d.high, hi.max(axis=1))
    np.testing.assert_array_equal(d.low, lo.min(axis=1))
    assert by_days(d) is d  # already by day


def test_daily_history_is_returned_unchanged(simulate_ohlc):
    h = simulate_ohlc(60, 0.2, seed=3, steps=5)
    assert by_days(h) is h and h.intraday is None and h.bar_interval_seconds == 86400.0


def test_five_minute_file_estimates_the_true_vol_not_a_seventy_eighth(tmp_path, capsys, sim_intraday):
    # Before analysing by day, 5-minute returns annualized with 252 gave sigma / sqrt(78): 2.26 % for
    # 20 % (the figure). Now every estimator sees days; simulated Brownian bars with a known
    # vol of 20 % (a fifth of each day's variance overnight) must fall inside each 95 % interval
    # (seeded; the intervals' coverage is checked in tests/estimators and tests/intraday/test_estimates.py).
    h = sim_intraday(250, 78, 0.2, seed=11, steps=4, overnight_share=0.2)
    f = write_csv(h, tmp_path / "harbour_5min.csv")
    code, out, err = _run(capsys, "estimate", f, "--format", "json")
    assert code == 0 and err == ""
    (s,) = json.loads(out)["series"]
    assert s["rows"] == 250 and s["bar_interval_seconds"] == 300.0
    assert s["intraday"]["bars_per_session"] == 78 and s["intraday"]["sessions"] == 250
    assert s["unavailable"] == {}
    for key in ("close_to_close", "realized", "bipower"):
        e = s["estimates"][key]
        assert e["ci_low"] < 0.2 < e["ci_high"], key
    # the range of 312 ticks a day reads low by about 0.7 / sqrt(312) (docs/METHODS.md, discretisation)
    assert s["estimates"]["yang_zhang"]["vol"] == pytest.approx(0.2, rel=0.1)
    assert s["estimates"]["realized"]["ci_high"] - s["estimates"]["realized"]["ci_low"] < 0.02
    code, out, _ = _run(capsys, "estimate", f)
    assert "bars: 5-minute bars, 78 a session, 250 sessions (sessions by calendar date); analysed by day" in out


def test_bundled_five_minute_sample_no_longer_reads_a_few_percent(sample_dir, capsys):
    # The generator's own daily variances (same seed) give the sample's true vol (about 28 %, jumps and
    # bid-ask noise included in the path); close-to-close on the daily bars must cover it (chi-square
    # interval, common practice) instead of the ~3 % that 5-minute returns annualized by 252 gave.
    from volbench import sample_intraday as si

    p = si.IntradayParams()
    v = si.daily_variances(p, np.random.default_rng(si.INTRADAY_SEED))
    true = math.sqrt(A * v[1:].mean())
    code, out, _ = _run(capsys, "estimate", sample_dir / p.file, "--format", "json")
    (s,) = json.loads(out)["series"]
    assert code == 0 and s["bar_interval_seconds"] == 300.0 and s["rows"] == p.sessions
    cc = s["estimates"]["close_to_close"]
    assert cc["ci_low"] < true < cc["ci_high"]
    assert s["estimates"]["realized"]["vol"] > 0.8 * true


def test_daily_file_estimates_are_unchanged_and_say_why_realized_is_missing(sample_dir, capsys):
    f = sample_dir / "ironvale_mining.csv"
    code, out, _ = _run(capsys, "estimate", f, "--window", "60", "--format", "json")
    (s,) = json.loads(out)["series"]
    (h,) = load_prices(f)
    before = estimate_all(h, 60, keys=DAILY_KEYS)
    for key, e in before.estimates.items():  # the same numbers as the core on the file as loaded
        assert s["estimates"][key]["vol"] == e.vol and s["estimates"][key]["ci_low"] == e.ci_low
    assert s["unavailable"] == {"realized": DAILY_FILE_REASON, "bipower": DAILY_FILE_REASON}
    assert s["bar_interval_seconds"] == 86400.0
    code, out, _ = _run(capsys, "estimate", f)
    assert code == 0
    assert "bars:" not in out  # a daily table reads as before


# ------------------------------------------------------------------------------ session break
def test_session_break_setting_is_validated_once():
    assert IntradaySettings().seconds is None
    assert IntradaySettings(session_break="4h").seconds == 14400.0
    with pytest.raises(VolbenchError, match="session break '4' needs a unit, e.g. 4h or 90min"):
        IntradaySettings(session_break="4")
    with pytest.raises(VolbenchError, match="session break must be a duration such as 4h"):
        IntradaySettings(session_break="soon")


def test_session_break_option_on_every_data_command(tmp_path, capsys, sim_intraday):
    f = write_csv(sim_intraday(10, 78, 0.2, seed=5), tmp_path / "ferry_5min.csv")
    code, out, err = _run(capsys, "scaling", f, "--session-break", "fortnight")
    assert code == 2 and "session break must be a duration such as 4h" in err
    code, out, _ = _run(capsys, "estimate", f, "--session-break", "4h", "--format", "json")
    (s,) = json.loads(out)["series"]
    assert code == 0 and s["intraday"]["session_rule"] == "gap longer than 240-minute" and s["rows"] == 10
    code, out, _ = _run(capsys, "realized", f, "--session-break", "4h", "--format", "json")
    (r,) = json.loads(out)["series"]
    assert code == 0 and r["sessions"] == 10 and r["bar_interval_seconds"] == 300.0


# ------------------------------------------------------------------------------ realized estimators
def test_registry_constants_match_the_intraday_core():
    # Barndorff-Nielsen & Shephard (2002; 2004) from memory: nu = 2 for RV, (pi/2)^2 + pi - 3 = 2.609 for BV
    assert NU_RV == core_estimates.NU_RV == 2.0
    assert NU_BV == core_estimates.NU_BV == pytest.approx(2.6090, abs=1e-4)
    assert DAILY_FILE_REASON == core_estimates.DAILY_FILE_REASON


@pytest.mark.parametrize("key, col", [("realized", "rv"), ("bipower", "bv")])
def test_registry_point_estimate_equals_a_plain_loop_and_the_core(sim_intraday, key, col):
    h = sim_intraday(40, 78, 0.25, seed=21, overnight_share=0.15)
    d = by_days(h)
    e = point_estimate(d, key, 20, annualization=A)
    # plain numpy loop over days (common practice, no source): mean of (session measure + overnight^2)
    r = np.diff(np.log(np.column_stack((h.open.reshape(40, 78)[:, 0], h.close.reshape(40, 78)))), axis=1)
    o = np.log(h.open.reshape(40, 78)[1:, 0] / h.close.reshape(40, 78)[:-1, -1])
    total = 0.0
    for t in range(20, 40):
        if col == "rv":
            s = sum(x * x for x in r[t])
        else:
            s = (math.pi / 2) * (78 / 77) * sum(abs(r[t, j]) * abs(r[t, j - 1]) for j in range(1, 78))
        total += s + o[t - 1] ** 2
    assert e.vol == pytest.approx(math.sqrt(A * total / 20), rel=1e-12)
    assert e.n == 20 and e.window == 20
    # the interval is the intraday core's (the same Satterthwaite chi-square, docs/METHODS.md)
    core = core_estimates.realized_point_estimate(realized_measures(h), key, 20, annualization=A)
    assert (e.ci_low, e.ci_high) == pytest.approx((core.ci_low, core.ci_high), rel=1e-9)
    # the rolling series ends at the point estimate (common practice, no source)
    roll = rolling_vol(d, key, 20, annualization=A)
    assert roll.values.iloc[-1] == pytest.approx(e.vol, rel=1e-12) and len(roll.values) == 40 - 20


def test_flagged_bars_are_selected_before_the_days_are_built(sim_intraday):
    h = sim_intraday(8, 78, 0.2, seed=9)
    d = by_days(h)
    assert d.select(False) is d
    with pytest.raises(VolbenchError, match="flagged rows were already excluded"):
        d.select(True).select(False)
    assert d.select(True).n == 8 and d.select(True).intraday is not None


# ------------------------------------------------------------------------------ HAR candidate
def test_har_forward_vol_is_a_comparison_candidate_for_intraday_files(tmp_path, capsys, sim_intraday):
    from volbench.intraday import har_forecast

    rng = np.random.default_rng(8)
    daily_var = 0.2**2 / A * np.exp(np.cumsum(rng.normal(0, 0.1, 120)) * 0.5)
    h = sim_intraday(120, 78, 0.2, seed=12, overnight_share=0.2, daily_var=daily_var)
    f = write_csv(h, tmp_path / "quillon_5min.csv")
    code, out, _ = _run(capsys, "compare", f, "--pricing-vol", "0.2", "--days", "30", "--format", "json")
    assert code == 0
    doc = json.loads(out)
    row = next(r for r in doc["candidates"] if r["key"] == "har")
    # the candidate is the core's HAR-RV term structure at the option's life (arch's HARX fit;
    # Corsi 2009): sqrt(A x mean of the expected whole-day variances over days 1..30)
    (loaded,) = load_prices(f)
    fc = har_forecast(realized_measures(loaded), (30,), annualization=A)
    # like every history vol it is carried to the ACT/365 years by the life's basis factor
    # (docs/METHODS.md, Day counts and the option's life)
    expected = float(fc.term_structure["vol"].iloc[0]) * doc["basis_factor"]
    assert row["vol"] == pytest.approx(expected, rel=1e-10)
    assert row["label"] == "HAR-RV forward vol" and "Corsi 2009" in row["note"]


def test_daily_comparison_has_no_har_row_and_lists_no_har_gap(sample_dir, capsys):
    code, out, _ = _run(capsys, "compare", sample_dir / "ironvale_mining.csv", "--pricing-vol", "0.3", "--days",
                        "30", "--format", "json")
    doc = json.loads(out)
    assert code == 0 and all(r["key"] != "har" for r in doc["candidates"])
    assert "har" not in doc["unavailable"] and "realized" not in doc["unavailable"]


def test_export_records_the_bar_interval_and_sessions(sample_dir, tmp_path, capsys):
    out = tmp_path / "sheet.json"
    code, _, _ = _run(capsys, "export", sample_dir / "intraday" / "gullridge_energy_5min.csv", "--to", out,
                      "--pricing-vol", "0.25", "--days", "30")
    assert code == 0
    doc = json.loads(out.read_text())
    (p,) = doc["provenance"]["series"]
    assert p["bar_interval_seconds"] == 300.0 and p["intraday"]["bars_per_session"] == 78
    items = {r["item"]: r["value"] for r in doc["tables"]["inputs"] if r["group"] == "source"}
    assert items["bar_interval_seconds"] == 300.0 and items["intraday.sessions"] == 126
    assert "har" in {r["key"] for r in doc["tables"]["comparison"]}


def test_check_counts_the_bars_of_an_intraday_file(sample_dir, capsys):
    code, out, _ = _run(capsys, "check", sample_dir / "intraday" / "gullridge_energy_5min.csv", "--format", "json")
    (s,) = json.loads(out)["series"]
    assert code == 0 and s["rows"] == 126 * 78 and s["bar_interval_seconds"] == 300.0
