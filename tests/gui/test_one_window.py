"""One window of truth: the estimates table, the comparison and the export use the one Window
(unless the user unlinks the comparison), every table says which, and the comparison shows each
candidate's interval and whether the pricing vol lies inside it."""

from __future__ import annotations

import json

from PySide6.QtWidgets import QCheckBox, QLabel

from volbench.data import load_prices
from volbench.estimators import estimate_all
from volbench.gui.panes.comparison_pane import inside_words
from volbench.gui.widgets import FrameTable


def frame(w, name):
    return w.findChild(FrameTable, name).table_model.display


def test_one_window_drives_the_estimates_table_and_the_comparison(make_window, kestrel):
    w = make_window(window=20, days=63)
    w.open_files([kestrel])
    raw = w.findChild(FrameTable, "estimates_table").raw_frame().set_index("estimator")
    comp = w.findChild(FrameTable, "comparison_table").raw_frame().set_index("key")
    # agreement check, no external source: the same close-to-close number in both tables, the
    # comparison's restated per ACT/365 year by the life's basis factor (docs/METHODS.md, Day counts)
    factor = w.results.get("comparison").basis_factor
    assert comp.loc["close_to_close", "vol"] == raw.loc["close_to_close", "vol"] * factor
    assert comp.loc["close_to_close", "window"] == 20
    assert "the comparison uses the same window" in w.findChild(QLabel, "estimates_heading").text()
    assert "Estimators over the last 20 bars: the Window" in w.findChild(QLabel, "comparison_heading").text()
    w.findChild(QCheckBox, "link_windows_check").setChecked(False)
    comp = w.findChild(FrameTable, "comparison_table").raw_frame().set_index("key")
    assert comp.loc["close_to_close", "window"] == 63
    assert "the option's life (unlinked" in w.findChild(QLabel, "comparison_heading").text()
    assert "the comparison uses the option's life" in w.findChild(QLabel, "estimates_heading").text()


def test_the_export_carries_the_same_window(make_window, kestrel, tmp_path, qtbot):
    w = make_window(window=20, days=63)
    w.open_files([kestrel])
    path = tmp_path / "one.json"
    with qtbot.waitSignal(w.exported, timeout=20000):
        w.export_to(path)
    doc = json.loads(path.read_text(encoding="utf-8"))
    est = {r["estimator"]: r for r in doc["tables"]["estimates"]}
    cmp_rows = {r["key"]: r for r in doc["tables"]["comparison"]}
    assert est["close_to_close"]["window"] == 20 and cmp_rows["close_to_close"]["candidate_window"] == 20
    factor = cmp_rows["close_to_close"]["basis_factor"]  # history's vol per ACT/365 year
    assert cmp_rows["close_to_close"]["vol"] == est["close_to_close"]["vol"] * factor


def test_comparison_rows_show_each_interval_and_whether_the_pricing_vol_is_inside(make_window, kestrel):
    w = make_window(window=20, pricing_vol=0.25)
    w.open_files([kestrel])
    shown = frame(w, "comparison_table").set_index("candidate")
    # source: volbench.estimators.estimate_all (the CLI's call), agreement check
    e = estimate_all(load_prices(kestrel)[0], 20).estimates["close_to_close"]
    row = shown.loc["Close-to-close"]
    f = w.results.get("comparison").basis_factor  # the comparison's vols per ACT/365 year
    lo, hi = e.ci_low * f, e.ci_high * f
    assert row["95% interval"] == f"{100 * lo:.2f}% to {100 * hi:.2f}%"
    assert row["pricing vol inside?"] == inside_words(0.25, lo, hi)
    assert shown.loc["Pricing vol", "pricing vol inside?"] == ""


def test_inside_words():
    # common practice, no source: a value is inside a closed interval when lo <= value <= hi
    assert inside_words(0.2, 0.1, 0.3) == "yes"
    assert inside_words(0.35, 0.1, 0.3) == "no: above"
    assert inside_words(0.05, 0.1, 0.3) == "no: below"
    assert inside_words(0.2, None, 0.3) == ""
