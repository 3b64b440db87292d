"""Events and hindsight in the window: the same numbers as the command line (agreement checks, no
external source), event days marked on the price chart, and a bad events file in a dialog."""

from __future__ import annotations

import json

import numpy as np
import pytest
from PySide6.QtCore import Qt

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


def test_include_garch_runs_the_hindsight_garch_job_and_agrees_with_the_command(make_window, ironvale, capsys):
    prices, _ = ironvale
    w = make_window(days=21)
    w.open_files([prices])
    pane = w.panes["hindsight"]
    assert "garch" not in set(w.results.get("hindsight").scores["key"])
    pane.refit_spin.setValue(126)
    pane.garch_box.setChecked(True)  # the on-demand job runs synchronously in tests
    r = pane.shown()
    assert r is w.results.get("hindsight_garch") and "garch" in set(r.scores["key"])
    # agreement check with the command line (same settings: 21-bar periods every 4 bars, refit every 126)
    assert main(["hindsight", str(prices), "--days", "21", "--step", "4", "--with-garch", "--refit-every", "126",
                 "--format", "json"]) == 0
    cli = json.loads(capsys.readouterr().out)["series"][0]
    shown = w.findChild(FrameTable, "hindsight_table").raw_frame()
    assert list(shown["key"]) == [c["key"] for c in cli["candidates"]]
    assert r.best == cli["best"]
    np.testing.assert_allclose(shown["qlike"].to_numpy(), [c["qlike"] for c in cli["candidates"]], rtol=1e-12)
    assert "garch" in pane._drawn_keys(r)  # drawn by default beside the best three
    text = w.findChild(type(pane.reading), "hindsight_reading").text()
    assert "refit every K = 126 bars" in text and "one fit every 128 bars" in text
    pane.garch_box.setChecked(False)
    assert "garch" not in set(w.findChild(FrameTable, "hindsight_table").raw_frame()["key"])


def test_cancel_stops_the_garch_refits(make_window, ironvale, qtbot):
    from volbench.errors import Cancelled
    from volbench.gui.jobs import JOBS, Context, HindsightGarchRequest
    from volbench.gui.state import Choices

    prices, _ = ironvale
    w = make_window(days=21)
    w.open_files([prices])
    ctx = Context(None, Choices().settings(), {}, HindsightGarchRequest(w.state.view(), 21, 4, 63))
    told = []
    with pytest.raises(Cancelled, match="after 2 of"):  # stops between two refits once asked
        JOBS["hindsight_garch"].run(ctx, lambda d, t, s="": told.append(s), lambda: len(told) >= 3)
    assert told[1].startswith("GARCH refit 1 of")
    # in the window: a stopped run leaves the automatic ranking and unticks the box
    pane = w.panes["hindsight"]
    w.dispatcher.synchronous = False  # a real background run, stopped by the window's Cancel
    pane.garch_box.setChecked(True)
    assert w.dispatcher.is_running("hindsight_garch")
    w.cancel_work()
    w.dispatcher.wait()
    qtbot.waitUntil(lambda: not pane.garch_box.isChecked(), timeout=10000)
    assert "stopped" in pane.garch_status.text() and w.results.get("hindsight_garch") is None
    assert pane.shown() is w.results.get("hindsight")


def test_the_picker_chooses_the_drawn_lines(make_window, ironvale):
    prices, _ = ironvale
    w = make_window(days=21)
    w.open_files([prices])
    pane = w.panes["hindsight"]
    r = w.results.get("hindsight")
    keys = list(r.scores["key"])
    assert pane.picker.count() == len(keys)
    checked = [pane.picker.item(i) for i in range(pane.picker.count())
               if pane.picker.item(i).checkState() == Qt.CheckState.Checked]
    assert [i.data(Qt.ItemDataRole.UserRole) for i in checked] == keys[:3]  # default: best three by QLIKE
    last = pane.picker.item(len(keys) - 1)
    last.setCheckState(Qt.CheckState.Checked)  # as a click does
    assert len(pane.lines) == 4
    np.testing.assert_array_equal(pane.lines[-1].getData()[1], 100 * r.forecasts[keys[-1]].to_numpy())
    pane.picker.item(0).setCheckState(Qt.CheckState.Unchecked)
    assert len(pane.lines) == 3 and pane._drawn_keys(r) == [*keys[1:3], keys[-1]]
    pane.pick([keys[5]])
    assert len(pane.lines) == 1 and pane.picker.item(5).checkState() == Qt.CheckState.Checked
