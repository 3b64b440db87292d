"""Layout at 1366x768 and 1360x900: every primary control and Recompute visible without
scrolling, plots of a reasonable height, the cone table's rows all visible."""

from __future__ import annotations

import pytest
from PySide6.QtCore import QPoint, QRect
from PySide6.QtWidgets import QApplication, QPushButton, QScrollArea, QWidget

from volbench.gui.widgets import FrameTable, Plot

PRIMARY = ("series_combo", "window_spin", "link_windows_check", "as_of_edit", "pricing_vol_spin", "days_spin")


def visible_in(widget: QWidget, area: QScrollArea) -> bool:
    """Whether ``widget`` lies wholly inside the visible part of ``area`` (no scrolling needed)."""
    top_left = widget.mapTo(area.viewport(), QPoint(0, 0))
    return area.viewport().rect().contains(QRect(top_left, widget.size()))


@pytest.mark.parametrize("size", [(1366, 768), (1360, 900)])
def test_primary_controls_and_recompute_need_no_scrolling(make_window, kestrel, qtbot, size):
    w = make_window()
    w.resize(*size)
    w.show()
    qtbot.waitExposed(w)
    w.fit_docks()
    w.open_files([kestrel])
    QApplication.processEvents()
    area = w.findChild(QScrollArea, "controls_scroll")
    for name in PRIMARY:
        assert visible_in(w.findChild(QWidget, name), area), name
    for section in w.panes["controls"].sections.values():
        assert visible_in(section.header, area), section.key
    recompute = w.findChild(QPushButton, "recompute_button")
    assert recompute.isVisible() and not area.isAncestorOf(recompute)
    assert w.findChild(Plot, "rolling_plot").height() >= 250


def test_the_cone_table_shows_every_window_at_1366x768(make_window, kestrel, qtbot):
    w = make_window()
    w.resize(1366, 768)
    w.show()
    qtbot.waitExposed(w)
    w.fit_docks()
    w.open_files([kestrel])
    w.tabs.setCurrentWidget(w.panes["cone"])
    QApplication.processEvents()
    table = w.findChild(FrameTable, "cone_table")
    last = table.table_model.rowCount() - 1
    assert last >= 5
    assert table.rowViewportPosition(last) + table.rowHeight(last) <= table.viewport().height()
    assert w.findChild(Plot, "cone_plot").height() >= 150


def test_legends_fit_inside_their_plots_at_1366x768(make_window, kestrel, qtbot):
    from volbench.gui.legends import OutsideLegend, overlaps_data

    w = make_window(garch_model="all")
    w.resize(1366, 768)
    w.show()
    qtbot.waitExposed(w)
    w.fit_docks()
    w.open_files([kestrel])
    for key in ("rolling", "scaling", "cone", "model", "prices"):
        w.tabs.setCurrentWidget(w.panes[key])
        QApplication.processEvents()
        for plot in w.panes[key].findChildren(Plot):
            legend = plot.getPlotItem().legend
            if not isinstance(legend, OutsideLegend):
                continue
            bottom = plot.mapFromScene(legend.sceneBoundingRect().bottomLeft()).y()
            assert bottom <= plot.viewport().height() + 1, (key, plot.objectName())  # not cut off
            child = plot  # no container clips the plot's legend labels (the legend pads 8 pixels below them)
            while child is not w.panes[key]:
                assert child.geometry().bottom() < child.parentWidget().height() + 8, (key, plot.objectName())
                child = child.parentWidget()
            assert not overlaps_data(plot, legend)
