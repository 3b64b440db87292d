"""The window end to end: loading fills the panes, the numbers shown are the core's, controls
drive recomputation, flagged rows can be left out, bad files give a dialog."""

from __future__ import annotations

import numpy as np
from PySide6.QtCore import QMimeData, QPointF, Qt, QUrl
from PySide6.QtGui import QDropEvent
from PySide6.QtWidgets import QCheckBox, QComboBox, QLabel, QSpinBox

from volbench.data import load_prices
from volbench.estimators import DAILY_KEYS, REGISTRY, estimate_all, rolling_vol
from volbench.gui.widgets import Card, FrameTable, Plot
from volbench.names import estimator_name
from volbench.pricing.compare import OptionSpec, compare
from volbench.pricing.daycount import option_life


def table(w, name: str):
    return w.findChild(FrameTable, name).table_model.display


def line(w, plot_name: str, label: str):
    plot = w.findChild(Plot, plot_name)
    for item in plot.getPlotItem().listDataItems():
        if item.opts.get("name") == label:
            return item
    raise AssertionError(f"no line {label!r} in {plot_name}")


def shown_vol(w, label: str) -> str:
    t = table(w, "estimates_table")
    return t.loc[t["estimator"] == label, "vol"].iloc[0]


def test_loading_a_sample_file_fills_every_pane(make_window, quillon):
    w = make_window()
    assert w.open_files([quillon]) == 1
    series = table(w, "series_table")
    assert list(series["series"]) == ["quillon_textiles"]
    assert series.loc[0, "quality"] == "2 rows unusable, 4 warnings, 1 note"
    findings = table(w, "findings_table")
    assert len(findings) == 7 and set(findings["severity"]) == {"error", "warning", "info"}
    assert len(table(w, "estimates_table")) == len(REGISTRY)
    assert len(line(w, "rolling_plot", "Close-to-close").xData) > 1000
    assert len(table(w, "verdict_table")) == 5  # the fifth: low-power jump screen on daily returns
    assert len(table(w, "cone_table")) == 6
    assert len(table(w, "garch_fit_table")) == 1
    comparison = table(w, "comparison_table")
    assert comparison.loc[0, "candidate"] == "Pricing vol" and len(comparison) >= 8
    for card in ("rolling_card", "scaling_card", "cone_card", "garch_card", "comparison_card"):
        assert w.findChild(Card, card).currentIndex() == 0, w.findChild(Card, card).message


def test_estimates_shown_equal_the_core_for_the_same_settings(make_window, kestrel):
    # Agreement check, no external source: the window must show what estimate_all (the CLI's
    # path, `volbench estimate --window 20`) returns for the same history and settings.
    w = make_window(window=20, annualization=252.0)
    w.open_files([kestrel])
    h = load_prices(kestrel)[0]
    report = estimate_all(h, 20, annualization=252.0)
    raw = w.findChild(FrameTable, "estimates_table").raw_frame().set_index("estimator")
    for key, est in report.estimates.items():
        assert raw.loc[key, "vol"] == est.vol
        assert raw.loc[key, "ci_low"] == est.ci_low and raw.loc[key, "ci_high"] == est.ci_high
        assert shown_vol(w, estimator_name(key)) == f"{100 * est.vol:.2f}%"
    # the comparison dock agrees with volbench.pricing.compare for the same option (30 trading days
    # from the last row, as 'volbench compare --days 30': years = calendar days / 365); one window per
    # screen: linked (the default), its estimator candidates use the estimates table's 20 bars
    comp = compare(h, 0.25, 30, option=OptionSpec(), annualization=252.0, life=option_life(h.last_date, days=30),
                   window=20)
    shown = w.findChild(FrameTable, "comparison_table").raw_frame().set_index("key")
    for key, row in comp.table.set_index("key").iterrows():
        if key.startswith(("garch", "scaling")):
            continue
        assert shown.loc[key, "price"] == row["price"]
        assert shown.loc[key, "vol"] == row["vol"]


def test_changing_the_window_spin_updates_estimates_table_and_rolling_plot(make_window, kestrel):
    w = make_window(window=20)
    w.open_files([kestrel])
    h = load_prices(kestrel)[0]
    before_vol = shown_vol(w, "Close-to-close")
    before_len = len(line(w, "rolling_plot", "Close-to-close").xData)
    spin = w.findChild(QSpinBox, "window_spin")
    spin.setValue(60)
    assert w.state.window == 60
    # source: volbench.estimators (same core call as the CLI), agreement check
    expected = estimate_all(h, 60).estimates["close_to_close"].vol
    assert shown_vol(w, "Close-to-close") == f"{100 * expected:.2f}%" != before_vol
    assert table(w, "estimates_table")["n"].iloc[0] == 60
    plotted = line(w, "rolling_plot", "Close-to-close")
    core = rolling_vol(h, "close_to_close", 60).values
    assert len(plotted.xData) == len(core) == before_len - 40
    np.testing.assert_allclose(plotted.yData, core.to_numpy() * 100.0)
    assert table(w, "comparison_table").loc[1, "window (bars)"] == 60  # linked: the comparison follows the Window
    w.findChild(QCheckBox, "link_windows_check").setChecked(False)
    assert table(w, "comparison_table").loc[1, "window (bars)"] == 30  # unlinked: the option's life


def test_changing_the_state_window_updates_the_spin_without_echo(make_window, kestrel, qtbot):
    w = make_window(window=20)
    w.open_files([kestrel])
    with qtbot.waitSignal(w.controller.computed, timeout=5000) as blocker:
        w.state.set("window", 40)
    assert blocker.args[0] == frozenset({"rolling", "estimates", "comparison", "market", "bands", "implied",
                                         "promise"})  # linked window
    assert w.findChild(QSpinBox, "window_spin").value() == 40


def test_unticking_an_estimator_hides_its_line_and_table_row(make_window, kestrel):
    w = make_window()
    w.open_files([kestrel])
    box = w.findChild(QCheckBox, "estimator_parkinson")
    box.setChecked(False)
    assert "parkinson" not in w.state.estimators
    assert not line(w, "rolling_plot", "Parkinson").isVisible()
    assert "Parkinson" not in list(table(w, "estimates_table")["estimator"])


def test_leaving_out_flagged_rows_changes_the_numbers_like_the_core(make_window, quillon):
    w = make_window(window=20, as_of="2019-12-31")
    w.open_files([quillon])
    h = load_prices(quillon)[0]
    # the high-below-low row (line 302) falls inside the last 20 bars of 2019 only when as-of
    # is set just after it: pick the as-of date from the file so the window covers it
    bad = next(f for f in h.findings if f.kind == "high_below_low")
    w.state.set("as_of", bad.date)
    kept = w.findChild(FrameTable, "estimates_table").raw_frame().set_index("estimator")
    w.findChild(QCheckBox, "exclude_flagged_check").setChecked(True)
    assert w.state.exclude_flagged
    left_out = w.findChild(FrameTable, "estimates_table").raw_frame().set_index("estimator")
    # source: volbench.estimators.estimate_all on PriceHistory.select(True), agreement check
    expected = estimate_all(h.select(True), 20, as_of=bad.date).estimates
    for key in ("parkinson", "garman_klass", "close_to_close"):
        assert left_out.loc[key, "vol"] == expected[key].vol
    assert left_out.loc["parkinson", "vol"] != kept.loc["parkinson", "vol"]
    assert "left out" in w.findChild(QLabel, "estimates_heading").text()
    assert "left out of every result" in w.findChild(QLabel, "policy_label").text()


def test_pricing_vol_change_recomputes_comparison_but_not_garch(make_window, kestrel, qtbot, monkeypatch):
    w = make_window()
    w.open_files([kestrel])
    from volbench import analysis

    calls = []
    monkeypatch.setattr(analysis, "garch_for", lambda *a, **k: calls.append(a))
    with qtbot.waitSignal(w.controller.computed, timeout=5000) as blocker:
        w.findChild(QComboBox, "kind_combo").setCurrentIndex(1)
    assert blocker.args[0] == frozenset({"comparison", "market", "bands", "implied", "promise"})
    assert calls == []
    assert w.results.get("comparison").kind == "put"


def test_selecting_another_series_recomputes_everything_for_it(make_window, sample_dir):
    w = make_window()
    w.open_files([sample_dir / "kestrel_orchards.csv", sample_dir / "vell_harbour_index.csv"])
    w.findChild(QComboBox, "series_combo").setCurrentIndex(1)
    assert w.state.selected == "vell_harbour_index"
    t = table(w, "estimates_table").set_index("estimator")
    assert t.loc["Parkinson", "vol"] == "n/a"
    assert t.loc["Parkinson", "interval method / why not"] == "needs high/low columns"
    assert w.results.get("garch").name == "vell_harbour_index"


def test_a_bad_file_gives_the_error_dialog_not_an_exception(make_window, tmp_path, kestrel, message_boxes):
    bad = tmp_path / "broken.csv"
    bad.write_text("when,price\nyesterday,1\n", encoding="utf-8")
    w = make_window()
    assert w.open_files([bad, kestrel]) == 1  # the good file still loads
    assert len(message_boxes) == 1
    title, text = message_boxes[0]
    assert "could not read a file" in title
    assert "broken.csv: line 1: no date column" in text
    assert w.state.selected == "kestrel_orchards"


def test_as_of_before_the_first_row_shows_the_message_in_the_panes(make_window, kestrel):
    w = make_window()
    w.open_files([kestrel])
    w.state.set("as_of", "2001-01-01")
    card = w.findChild(Card, "rolling_card")
    assert card.currentIndex() == 1
    assert "is outside the data, which runs from" in card.message
    assert "is outside the data, which runs from" in w.status_label.text()


def test_dropping_files_on_the_window_loads_them(make_window, kestrel):
    w = make_window()
    mime = QMimeData()
    mime.setUrls([QUrl.fromLocalFile(str(kestrel))])
    event = QDropEvent(QPointF(10, 10), Qt.DropAction.CopyAction, mime, Qt.MouseButton.LeftButton,
                       Qt.KeyboardModifier.NoModifier)
    w.dropEvent(event)
    assert [h.name for h in w.state.histories] == ["kestrel_orchards"]
    assert w.settings.recent_files()[0] == str(kestrel)


def test_crosshair_readout_names_the_date_and_each_visible_value(make_window, kestrel):
    w = make_window()
    w.open_files([kestrel])
    w.findChild(QCheckBox, "estimator_ewma").setChecked(False)
    pane = w.panes["rolling"]
    x = np.datetime64("2021-06-01T00:00:00", "s").astype(np.int64)
    text = pane.readout_text(float(x))
    assert "<b>2021-06-01</b>" in text
    # a daily file: every daily estimator but the hidden EWMA (the realized ones have no series)
    assert text.count("%") == len(DAILY_KEYS) - 1 and "EWMA" not in text


def test_clicking_a_legend_entry_hides_that_line_only(make_window, kestrel):
    w = make_window()
    w.open_files([kestrel])
    pane = w.panes["rolling"]
    pane.toggle_from_legend("yang_zhang")
    assert not line(w, "rolling_plot", "Yang-Zhang").isVisible()
    assert line(w, "rolling_plot", "Close-to-close").isVisible()
    assert "yang_zhang" in w.state.estimators  # a view choice, not a change of the analysis
    pane.toggle_from_legend("yang_zhang")
    assert line(w, "rolling_plot", "Yang-Zhang").isVisible()


def test_a_window_longer_than_the_history_says_why_in_the_rolling_pane(make_window, kestrel):
    w = make_window()
    w.open_files([kestrel])
    w.state.set("window", 3000)
    card = w.findChild(Card, "rolling_card")
    assert card.currentIndex() == 1
    assert "No estimator fits a 3000-bar window" in card.message
    assert "window 3000 needs 3001 rows, history has 1512" in card.message


def test_the_cone_estimator_stays_selectable_when_the_cone_cannot_be_built(make_window, sample_dir):
    w = make_window()
    w.open_files([sample_dir / "vell_harbour_index.csv"])
    combo = w.findChild(QComboBox, "cone_estimator_combo")
    # the list offers only what a close-only series supports; a remembered choice still says why
    assert not combo.model().item(combo.findData("parkinson")).isEnabled()
    assert combo.model().item(combo.findData("ewma")).isEnabled()
    combo.setCurrentIndex(combo.findData("parkinson"))
    card = w.findChild(Card, "cone_card")
    assert card.currentIndex() == 1 and "needs high/low columns" in card.message  # the cause: the file's columns
    assert not combo.isHidden()
    combo.setCurrentIndex(combo.findData("close_to_close"))
    assert card.currentIndex() == 0
