"""``--events FILE`` on the commands that estimate: ex-event numbers, the event move, events in the
option's life, the event-aware candidate and the ex-event GARCH, with bad rows as findings."""

from __future__ import annotations

import json
import math

import numpy as np
import pandas as pd
import pytest

from volbench import analysis
from volbench.cli import main
from volbench.data.load import load_prices
from volbench.events import event_study, read_events
from volbench.settings import EventsSettings, OptionSettings, Settings


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture
def ironvale(sample_dir):
    return sample_dir / "ironvale_mining.csv", sample_dir / "events" / "ironvale_mining_events.csv"


@pytest.fixture
def planted(tmp_path):
    """A close-only series, 20 % ordinary vol, a 6 % event move every 63 bars, one event after the end."""
    rng = np.random.default_rng(11)
    n = 1500
    dates = pd.bdate_range("2012-01-02", periods=n)
    bars = np.arange(40, n, 63)
    r = np.concatenate(([0.0], rng.standard_normal(n - 1) * 0.2 / math.sqrt(252)))
    r[bars] += rng.standard_normal(bars.size) * 0.06
    prices = tmp_path / "planted.csv"
    pd.DataFrame({"Date": dates.strftime("%Y-%m-%d"), "Close": 40 * np.exp(np.cumsum(r))}).to_csv(prices, index=False)
    ev = tmp_path / "events.csv"
    future = pd.bdate_range(dates[-1], periods=11)[10]  # the 10th weekday after the last bar
    rows = [f"{dates[b].strftime('%Y-%m-%d')},report,before_open" for b in bars]
    rows += [f"{future.strftime('%Y-%m-%d')},report,before_open", "2015-02-30,bad,before_open",
             "2014-01-06,x,lunchtime"]
    ev.write_text("date,label,timing\n" + "\n".join(rows) + "\n")
    return prices, ev, bars.size


def test_compare_json_carries_the_events_block_and_the_event_aware_candidate(capsys, planted):
    # Expected value from the formula of docs/METHODS.md, "Events and hindsight" (common practice,
    # Patell & Wolfson 1979, from memory), computed here independently of volbench's event code.
    prices, ev, n_events = planted
    code, out, err = run(capsys, "compare", prices, "--events", ev, "--pricing-vol", "0.2", "--days", "21",
                         "--format", "json")
    assert code == 0, err
    d = json.loads(out)
    e = d["events"]
    assert e["count"] == n_events and e["events_in_life"] == 1
    assert set(e["ex_event"]["close_to_close"]) >= {"vol", "ci_low", "ci_high", "n"}
    assert set(e["event_move"]) >= {"variance", "ci_low", "ci_high", "expected_abs_move", "n_events"}
    assert e["event_move"]["n_events"] == n_events
    assert e["event_move"]["ci_low"] <= 0.0036 <= e["event_move"]["ci_high"]  # planted 0.06² per event
    assert e["ex_event"]["close_to_close"]["ci_low"] <= 0.2 <= e["ex_event"]["close_to_close"]["ci_high"]
    # independent computation: ex-event close-to-close over the last 21 ordinary returns
    h = load_prices(prices)[0]
    logc = np.log(h.close)
    r = np.diff(logc)
    evbars = set(np.searchsorted(h.dates.astype("datetime64[D]"),
                                 read_events(ev).dates[:-1]).tolist())
    ordinary = np.array([x for i, x in enumerate(r, start=1) if i not in evbars])
    s2_ex = np.var(ordinary[-21:], ddof=1) * 252
    s2_all = np.var(ordinary, ddof=1)
    s2_e = max(np.mean(np.array([r[b - 1] for b in sorted(evbars)]) ** 2) - s2_all, 0.0)
    want = math.sqrt((s2_ex * 20 / 252 + 1 * (s2_ex / 252 + s2_e)) / (21 / 252))
    # the life's total variance per ACT/365 year, like every history vol (docs/METHODS.md, Day counts)
    want *= d["basis_factor"]
    row = next(c for c in d["candidates"] if c["key"] == "events")
    assert row["label"] == "ex-event + 1 event" and row["source"] == "events"
    assert row["vol"] == pytest.approx(want, rel=1e-10)
    assert row["key"] in d["bands_by_candidate"] and row["key"] in d["straddle_by_candidate"]


def test_bad_event_rows_are_findings_with_their_line(capsys, planted):
    prices, ev, n_events = planted
    code, out, _ = run(capsys, "estimate", prices, "--events", ev, "--format", "json")
    assert code == 0
    f = json.loads(out)["series"][0]["events"]["findings"]
    lines = {x["line"]: x["kind"] for x in f}
    assert lines[n_events + 3] == "bad_date" and lines[n_events + 4] == "bad_timing"
    code, out, _ = run(capsys, "check", prices, "--events", ev)
    assert code == 0 and f"line {n_events + 3}: '2015-02-30' is not a date" in out


def test_estimate_table_shows_ex_event_beside_blended(capsys, ironvale):
    prices, ev = ironvale
    code, out, _ = run(capsys, "estimate", prices, "--events", ev, "--window", "250")
    assert code == 0
    assert "ex-event vol" in out and "blended vol" in out and "event move: variance" in out
    code, out, _ = run(capsys, "estimate", prices, "--window", "250", "--format", "csv")
    assert ":ex_event" not in out


def test_few_events_warn(capsys, tmp_path, ironvale):
    prices, _ = ironvale
    ev = tmp_path / "two.csv"
    ev.write_text("2022-07-25,q,before_open\n2023-04-24,q,before_open\n")
    code, out, _ = run(capsys, "compare", prices, "--events", ev, "--pricing-vol", "0.3", "--days", "30")
    assert code == 0 and "warning: the event move rests on 2 events, fewer than 4" in out


def test_garch_with_events_refits_on_ex_event_returns(capsys, ironvale):
    prices, ev = ironvale
    code, out, err = run(capsys, "garch", prices, "--events", ev, "--model", "garch", "--horizons", "21,63",
                         "--format", "json")
    assert code == 0, err
    t = json.loads(out)["series"][0]["events"]["models"][0]
    h = load_prices(prices)[0]
    ref = event_study(h, read_events(ev), days=63, garch="garch")  # the single-life path of the core
    row = t["term"][1]
    assert row["days"] == 63 and row["events_in_life"] == ref.events_in_life
    assert row["ex_event_vol"] == pytest.approx(ref.garch.ex_event_vol, rel=1e-6)  # same fit, arch optimizer
    assert row["event_aware_vol"] == pytest.approx(ref.garch.event_aware_vol, rel=1e-6)
    assert row["event_aware_vol"] > row["ex_event_vol"]


def test_commands_that_do_not_read_events_refuse_them(capsys, ironvale):
    prices, ev = ironvale
    code, _, err = run(capsys, "cone", prices, "--events", ev)
    assert code == 2 and "this command does not use events yet" in err
    code, _, err = run(capsys, "estimate", prices, "--events", "/no/such/events.csv")
    assert code == 2 and "events file not found" in err


def test_analysis_events_for_uses_the_comparison_window(ironvale):
    prices, ev = ironvale
    h = load_prices(prices)[0]
    s = Settings(events=EventsSettings(str(ev)), option=OptionSettings(0.3, 30, window=40))
    rep = analysis.events_for(h, s)
    assert rep.window == 40 and rep.days == 30
    c = analysis.comparison_for(h, s)
    row = c.table.set_index("key").loc["events"]
    assert row["vol"] == rep.event_aware_vol
