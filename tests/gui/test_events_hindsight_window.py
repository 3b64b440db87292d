"""Events and hindsight in the window: the same numbers as the command line (agreement checks, no
external source), event days marked on the price chart, and a bad events file in a dialog."""

from __future__ import annotations

import json

import numpy as np
import pytest

from volbench.cli import main
from volbench.gui.events_menu import set_events
from volbench.gui.widgets import FrameTable
from volbench.hindsight import hindsight


@pytest.fixture
def ironvale(sample_dir):
    return sample_dir / "ironvale_mining.csv", sample_dir / "events" / "ironvale_mining_events.csv"


def test_events_in_the_window_equal_compare_events(make_window, ironvale, capsys):
    prices, ev = ironvale
    w = make_window(pricing_vol=0.25, days=63, garch_model="garch")
    w.open_files([prices])
    assert set_events(w, str(ev))
    report = w.results.get("events")
    assert report is not None
    # one window per screen: the window's comparison (and so its events) reads the 20-bar Window
    assert main(["compare", str(prices), "--events", str(ev), "--pricing-vol", "0.25", "--days", "63",
                 "--window", "20", "--format", "json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert json.loads(json.dumps(report.as_dict()["ex_event"])) == d["events"]["ex_event"]
    assert report.event_move.as_dict() == d["events"]["event_move"]
    assert report.events_in_life == d["events"]["events_in_life"]
    shown = w.findChild(FrameTable, "comparison_table").raw_frame().set_index("key")
    cli = {c["key"]: c for c in d["candidates"]}
    assert shown.loc["events", "vol"] == cli["events"]["vol"]
    assert shown.loc["events", "label"] == "ex-event + 1 event"
    # markers: one per observed event, at the price chart's closes
    markers = w.panes["prices"].overlay.events
    assert len(markers.data) == report.count
    assert len(w.panes["rolling"].event_lines.lines) == len(report.event_map.observed)
    # switching the file off removes the candidate and the markers
    assert set_events(w, None)
    assert "events" not in set(w.results.get("comparison").table["key"])
    assert len(markers.data) == 0 and not w.panes["rolling"].event_lines.lines
    assert "Open an events file" in w.findChild(type(w.panes["events"].card), "events_card").message


def test_a_bad_events_file_is_a_dialog_not_an_exception(make_window, ironvale, tmp_path, message_boxes):
    prices, _ = ironvale
    w = make_window()
    w.open_files([prices])
    bad = tmp_path / "e.csv"
    bad.write_text("date\nnot a date\n")
    assert not set_events(w, str(bad))
    assert message_boxes and "no usable event row" in str(message_boxes[-1])
    assert w.state.choices.group("events") is None


def test_hindsight_pane_shows_the_cores_ranking(make_window, ironvale):
    prices, _ = ironvale
    w = make_window(days=21)
    w.open_files([prices])
    r = w.results.get("hindsight")
    assert r is not None
    ref = hindsight(w.state.view(), 21, step=4)  # the same call volbench hindsight --days 21 --step 4 makes
    assert r.best == ref.best
    np.testing.assert_array_equal(r.scores["qlike"].to_numpy(), ref.scores["qlike"].to_numpy())
    shown = w.findChild(FrameTable, "hindsight_table").raw_frame()
    assert list(shown["key"]) == list(ref.scores["key"])
    assert len(w.panes["hindsight"].lines) == 3
