"""Legends outside the data area, in one place for every plot.

A legend drawn over the plot hides the curves it names (a pricing-vol label, the lags of an
autocorrelation, the ends of a cone). :class:`OutsideLegend` is a pyqtgraph legend that sits in
the plot's own layout, in a row below the x-axis, so it never covers data whatever the data
are; :func:`legend_outside` adds one to a plot. Clicking an entry still toggles its curve.
"""

from __future__ import annotations

import pyqtgraph as pg

from volbench.gui import palette

MIN_PLOT_HEIGHT = 215
"""Smallest height of a plot with an outside legend (pixels)."""

LEGEND_ROW = 4
"""Row of the plot item's layout the legend takes (pyqtgraph: 0 title, 1 top axis, 2 view, 3 bottom axis)."""


class OutsideLegend(pg.LegendItem):
    """A legend laid out below the plot's x-axis instead of floating over the view box."""

    owner = None
    """The plot widget it belongs to (set by :func:`legend_outside`)."""

    def updateSize(self) -> None:
        height = width = 0.0
        for row in range(self.layout.rowCount()):
            row_height = col_width = 0.0
            for col in range(self.layout.columnCount()):
                item = self.layout.itemAt(row, col)
                if item:
                    col_width += item.width() + 3
                    row_height = max(row_height, item.height())
            width = max(width, col_width)
            height += row_height
        # tell the plot's layout instead of placing itself at (0, 0)
        self.layout.setContentsMargins(0, 0, 0, 0)
        self.setMinimumHeight(height + 8)  # room for the labels' descenders
        self.setPreferredSize(width, height + 8)
        self.updateGeometry()
        if self.owner is not None:  # the plot asks for room for a legend of several rows
            self.owner.setMinimumHeight(max(MIN_PLOT_HEIGHT, int(MIN_PLOT_HEIGHT - 30 + height + 8)))


def legend_outside(plot: pg.PlotWidget, *, columns: int = 4) -> OutsideLegend:
    """Put an :class:`OutsideLegend` with ``columns`` entries a row below ``plot``'s x-axis."""
    item = plot.getPlotItem()
    legend = OutsideLegend(colCount=columns, labelTextColor=palette.FOREGROUND, frame=False,
                           brush=pg.mkBrush(255, 255, 255, 0), pen=pg.mkPen(None))
    legend.owner = plot
    item.layout.addItem(legend, LEGEND_ROW, 1)
    item.legend = legend  # what PlotItem.addLegend would keep (plot(name=...) adds entries to it)
    # title, axes and a legend row need this much, or the legend's labels overflow the plot's bottom
    plot.setMinimumHeight(max(plot.minimumHeight(), MIN_PLOT_HEIGHT))
    return legend


def overlaps_data(plot: pg.PlotWidget, legend: pg.LegendItem) -> bool:
    """Whether ``legend`` covers any part of ``plot``'s data area (its view box), in scene coordinates."""
    vb = plot.getPlotItem().vb
    return legend.isVisible() and legend.sceneBoundingRect().intersects(vb.sceneBoundingRect())
