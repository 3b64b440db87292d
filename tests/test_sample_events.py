"""The invented events of the sample market: files equal the generator, moves are where they are said to be."""

from __future__ import annotations

import json

import pandas as pd

from volbench import sample_events, samples
from volbench.data import load_prices
from volbench.events import event_study, map_events, read_events


def _meta(sample_dir):
    meta = json.loads((sample_dir / "PARAMETERS.json").read_text())
    (ev,) = meta["events"]
    return meta, ev


def test_committed_events_file_and_parameters_equal_the_generator(tmp_path, sample_dir):
    dates = pd.bdate_range(samples.START, periods=samples.YEARS * samples.BARS_PER_YEAR)
    got = sample_events.write_events(tmp_path, dates)
    _, ev = _meta(sample_dir)
    assert json.loads(json.dumps(got)) == [ev]
    name = ev["events_file"]
    assert (tmp_path / name).read_bytes() == (sample_dir / name).read_bytes(), (
        f"{name} differs from the generator; run 'python -m volbench.samples --out sample_prices'")


def test_events_fall_on_the_bars_whose_moves_were_planted(sample_dir):
    _, ev = _meta(sample_dir)
    (h,) = load_prices(sample_dir / ev["file"])
    cal = read_events(sample_dir / ev["events_file"])
    m = map_events(h, cal)
    # the generator opens each bar at the previous close, which import notes (stale_open); nothing else
    assert cal.findings == () and [f.kind for f in h.findings] == ["stale_open"]
    assert sorted(f"{e.date} {e.timing}" for e in m.observed) == sorted(ev["moves"])
    assert m.count == ev["past_events"] and len(m.future) == ev["future_events"] == 4


def test_sample_event_move_is_recovered_within_its_interval(sample_dir):
    # truth from PARAMETERS.json (the generator's event standard deviation, 6 %)
    _, ev = _meta(sample_dir)
    (h,) = load_prices(sample_dir / ev["file"])
    rep = event_study(h, read_events(sample_dir / ev["events_file"]), days=63)
    move = rep.event_move
    assert move.ci_low < ev["event_variance"] < move.ci_high
    assert rep.events_in_life == 1 and rep.event_aware_vol > rep.ex_event["close_to_close"].vol
