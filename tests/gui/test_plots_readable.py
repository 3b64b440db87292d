"""Plots keep their data visible: legends outside the data area, a log window axis on the cone, the
Hodges-Tompkins switch, and the cone list offering only what the series supports."""

from __future__ import annotations

import math

import numpy as np
from PySide6.QtWidgets import QApplication, QCheckBox, QComboBox

from volbench.data import load_prices
from volbench.gui.legends import OutsideLegend, overlaps_data
from volbench.gui.widgets import FrameTable, Plot
from volbench.pricing.cone import vol_cone


def test_no_legend_covers_plotted_data_at_the_default_size(make_window, kestrel, qtbot):
    w = make_window(garch_model="all")
    w.show()
    qtbot.waitExposed(w)
    w.open_files([kestrel])
    checked = 0
    for pane in w.panes.values():
        w.tabs.setCurrentWidget(pane) if w.tabs.indexOf(pane) >= 0 else None
        QApplication.processEvents()
        for plot in pane.findChildren(Plot):
            legend = plot.getPlotItem().legend
            if legend is None or not plot.isVisible():
                continue
            assert isinstance(legend, OutsideLegend), plot.objectName()
            assert legend.sceneBoundingRect().height() > 0, plot.objectName()
            assert not overlaps_data(plot, legend), plot.objectName()
            checked += 1
    assert checked >= 5


def test_the_cone_has_a_log_window_axis_with_window_ticks(make_window, kestrel):
    w = make_window()
    w.open_files([kestrel])
    plot = w.findChild(Plot, "cone_plot")
    cone = vol_cone(load_prices(kestrel)[0])
    median = next(c for c in plot.getPlotItem().listDataItems() if c.name() == "median")
    # log10 of the cone's windows, from numpy (common practice, no source)
    np.testing.assert_allclose(median.xData, np.log10(cone.table.index.to_numpy(dtype=float)))
    ticks = plot.getPlotItem().getAxis("bottom")._tickLevels[0]
    assert [label for _, label in ticks] == [str(v) for v in cone.table.index]
    assert math.isclose(ticks[0][0], math.log10(cone.table.index[0]))


def test_the_hodges_tompkins_switch_changes_the_cone(make_window, kestrel):
    w = make_window()
    w.open_files([kestrel])
    before = w.findChild(FrameTable, "cone_table").raw_frame()
    w.findChild(QCheckBox, "hodges_tompkins_check").setChecked(True)
    assert w.state.hodges_tompkins is True
    after = w.findChild(FrameTable, "cone_table").table_model.display
    # agreement check against the core with the same switch (volbench.pricing.cone.vol_cone)
    core = vol_cone(load_prices(kestrel)[0], hodges_tompkins=True).table
    assert list(after["90th"]) == [f"{100 * v:.1f}%" for v in core["p90_adj"]]
    assert "p90_adj" not in before and not np.allclose(core["p90_adj"], core["p90"])


def test_price_chart_log_scale_and_left_out_rows_are_not_drawn(make_window, quillon):
    w = make_window()
    w.open_files([quillon])
    h = w.state.loaded()
    pane = w.panes["prices"]
    assert len(pane.flagged.xData) == len(h.flagged_lines) > 0
    w.state.set("exclude_flagged", True)
    # the line skips the left-out rows, so a bad tick cannot set the price axis
    assert len(pane.line.xData) == h.n - len(h.flagged_lines)
    assert pane.flagged.xData is None or len(pane.flagged.xData) == 0
    kept_max = float(np.max(pane.line.yData))
    assert kept_max < float(np.max(h.close)) or len(h.flagged_lines) == 0
    w.findChild(QCheckBox, "price_log_check").setChecked(True)
    assert pane.plot.getPlotItem().ctrl.logYCheck.isChecked()
    assert "log scale" in pane.plot.getPlotItem().getAxis("left").labelText


def test_garch_pane_shows_parameters_standard_errors_and_full_names(make_window, kestrel, qtbot):
    from volbench.gui.panes.model_pane import model_name

    w = make_window(garch_model="all")
    w.open_files([kestrel])
    params = w.findChild(FrameTable, "garch_params_table").raw_frame()
    comp = w.results.get("garch")
    fit = comp.fits[0]
    rows = params[params["model"] == fit.model].set_index("parameter")
    for name, value in fit.params.items():  # agreement with the core's fit (volbench.models via arch)
        assert rows.loc[name, "estimate"] == value
        assert rows.loc[name, "std_error"] == fit.std_errors[name]
    shown = w.findChild(FrameTable, "garch_fit_table").table_model.display
    assert "distribution" in shown.columns and "errors" not in shown.columns
    assert set(shown["distribution"]) <= {"Normal", "Student-t", "Skewed Student-t", "Generalized error"}
    combo = w.findChild(QComboBox, "garch_paths_combo")
    assert combo.count() == 1 + len(comp.fits)
    combo.setCurrentIndex(1)
    drawn = [c for c in w.findChild(Plot, "garch_conditional_plot").getPlotItem().listDataItems() if c.name()]
    assert len(drawn) == 1
    with qtbot.waitSignal(w.results.updated, timeout=60000):
        w.fit_all_series()
    batch = w.findChild(FrameTable, "garch_batch_table").table_model.display
    assert all(v in {model_name(k) for k in ("garch", "gjr", "egarch")} or v.startswith("none")
               for v in batch["preferred model"])
