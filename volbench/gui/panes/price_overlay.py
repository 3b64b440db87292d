"""What the price chart shows beyond the closes: the event days of the events file and the pricing
vol's band fan from the as-of date to expiry.

Both are results of jobs (``events``: :func:`volbench.analysis.events_for`; ``promise``: the band
fan of :func:`volbench.pricing.promise_summary.promise_summary`); this only draws them.
"""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
from PySide6.QtGui import QColor

from volbench.gui import palette
from volbench.gui.controller import Results

EVENT_COLOUR = "#AA3377"
FAN_ALPHAS = (70, 45, 25)
"""Fill of the +-1, 2, 3 sigma bands (innermost darkest)."""


def _seconds(dates) -> np.ndarray:
    return np.asarray(dates, dtype="datetime64[ns]").astype("int64") / 1e9


class PriceOverlay:
    """Event markers and the band fan on ``plot`` (the price chart), redrawn when their jobs report."""

    def __init__(self, plot, legend, line, results: Results) -> None:
        self.plot, self.legend, self.line, self.results = plot, legend, line, results
        self.events = pg.ScatterPlotItem(symbol="t1", size=12, pen=pg.mkPen(EVENT_COLOUR, width=1.5),
                                         brush=pg.mkBrush(EVENT_COLOUR))
        self.events.setZValue(6)
        plot.addItem(self.events)
        self.fan_items: list = []
        self.fan_curves: list = []
        self._legend_events = self._legend_fan = False
        results.updated.connect(self._on_results)

    def _on_results(self, kinds) -> None:
        if "events" in kinds:
            self.draw_events()
        if "promise" in kinds:
            self.draw_fan()

    def draw_events(self) -> None:
        report = self.results.get("events")
        if report is None or self.line.xData is None:
            self.events.setData([], [])
            if self._legend_events:
                self.legend.removeItem(self.events)
                self._legend_events = False
            return
        m = report.event_map
        x_all, y_all = self.line.xData, self.line.yData
        days = np.asarray(x_all, dtype=float)
        x = _seconds(np.asarray([e.date for e in m.observed], dtype="datetime64[D]"))
        # each event at the close of the bar that carries it: the first bar on or after its day, or
        # after it for after_close (as volbench.events.event_positions places it)
        after = np.array([e.timing == "after_close" for e in m.observed], dtype=bool)
        pos = np.where(after, np.searchsorted(days, x, side="right"), np.searchsorted(days, x, side="left"))
        at = np.minimum(pos, len(days) - 1)
        self.events.setData(days[at], np.asarray(y_all)[at],
                            data=[f"{e.date} {e.label}".strip() for e in m.observed])
        if not self._legend_events:
            self.legend.addItem(self.events, "Event day (events file)")
            self._legend_events = True

    def draw_fan(self) -> None:
        for item in self.fan_items + self.fan_curves:
            self.plot.removeItem(item)
        self.fan_items, self.fan_curves = [], []
        s = self.results.get("promise")
        if s is None:
            return
        x = _seconds(s.fan_dates)
        sig = [c.split("_", 1)[1] for c in s.fan.columns if c.startswith("low_")]
        for k, alpha in zip(sig, FAN_ALPHAS):
            lo = self.plot.plot(x, s.fan[f"low_{k}"].to_numpy(), pen=pg.mkPen(palette.BAND, width=0.8))
            hi = self.plot.plot(x, s.fan[f"high_{k}"].to_numpy(), pen=pg.mkPen(palette.BAND, width=0.8))
            c = QColor(palette.BAND)
            c.setAlpha(alpha)
            fill = pg.FillBetweenItem(lo, hi, brush=pg.mkBrush(c))
            self.plot.addItem(fill)
            self.fan_curves += [lo, hi]
            self.fan_items.append(fill)
        if not self._legend_fan and self.fan_items:  # a plain sample: the legend cannot draw a fill item
            sample = pg.PlotDataItem(pen=pg.mkPen(palette.BAND), fillLevel=0, brush=self.fan_items[0].brush())
            self.legend.addItem(sample, "±1, 2, 3 sigma bands at the pricing vol to expiry")
            self._legend_fan = True


class EventLines:
    """Event days as thin vertical lines on a date chart (the rolling-vol chart), from the ``events`` job."""

    def __init__(self, plot, results: Results) -> None:
        self.plot, self.results = plot, results
        self.lines: list = []
        results.updated.connect(self._on_results)

    def _on_results(self, kinds) -> None:
        if "events" in kinds:
            self.draw()

    def draw(self) -> None:
        for line in self.lines:
            self.plot.removeItem(line)
        self.lines = []
        report = self.results.get("events")
        if report is None:
            return
        pen = pg.mkPen(EVENT_COLOUR, width=1, style=pg.QtCore.Qt.PenStyle.DotLine)
        for e, x in zip(report.event_map.observed,
                        _seconds(np.asarray([e.date for e in report.event_map.observed], dtype="datetime64[D]"))):
            line = pg.InfiniteLine(float(x), angle=90, pen=pen)
            line.setToolTip(f"event {e.date} {e.label}".strip())
            self.plot.addItem(line, ignoreBounds=True)
            self.lines.append(line)
