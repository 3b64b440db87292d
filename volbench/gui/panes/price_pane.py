"""Price history of the selected series, with rows flagged by warnings marked."""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg
from PySide6.QtWidgets import QCheckBox, QHBoxLayout, QLabel, QVBoxLayout, QWidget

from volbench.gui import palette
from volbench.gui.controller import Results
from volbench.gui.panes.base import Pane
from volbench.gui.panes.price_overlay import PriceOverlay
from volbench.gui.state import WorkbenchState
from volbench.gui.widgets import Card, Plot

JUMP_MARK = "#D55E00"
"""Colour of the jump-day marks (the intraday pane's)."""


def epoch_seconds(dates: np.ndarray) -> np.ndarray:
    """datetime64 -> seconds since 1970 (what pyqtgraph's date axis reads)."""
    return np.asarray(dates, dtype="datetime64[ns]").astype("int64") / 1e9


class PricePane(Pane):
    key, title = "prices", "Prices"

    def __init__(self, state: WorkbenchState, results: Results, parent: QWidget | None = None) -> None:
        super().__init__(state, results, parent)
        self.setObjectName("price_pane")
        lay = QVBoxLayout(self)
        self.plot = Plot("price_plot", left="Close price", bottom="Date", date_axis=True)
        self.legend = self.plot.legend()
        self.line = self.plot.plot([], [], pen=pg.mkPen(palette.PRICE_LINE, width=1.4), name="Close")
        # a data item (not a bare scatter) so the log scale transforms the marks with the line
        self.flagged = pg.PlotDataItem([], [], pen=None, symbol="x", symbolSize=11,
                                       symbolPen=pg.mkPen(palette.FLAGGED, width=2),
                                       symbolBrush=pg.mkBrush(palette.FLAGGED))
        self.plot.addItem(self.flagged)
        self.legend.addItem(self.flagged, "Flagged row")
        # jump days of an intraday file's continuity check (scaling result), on the daily close
        self.jumps = pg.PlotDataItem([], [], pen=None, symbol="t", symbolSize=11,
                                     symbolPen=pg.mkPen(JUMP_MARK), symbolBrush=pg.mkBrush(JUMP_MARK))
        self.plot.addItem(self.jumps)
        self.log_scale = QCheckBox("Log price scale")
        self.log_scale.setObjectName("price_log_check")
        self.log_scale.setToolTip("Plot prices on a logarithmic axis: equal percentage moves look equal")
        self.log_scale.toggled.connect(self._on_log)
        self.as_of_line = pg.InfiniteLine(angle=90, pen=pg.mkPen(palette.REFERENCE, width=1,
                                                                 style=pg.QtCore.Qt.PenStyle.DashLine),
                                          label="as of", labelOpts={"position": 0.95,
                                                                    "color": palette.REFERENCE})
        self.plot.addItem(self.as_of_line)
        self.overlay = PriceOverlay(self.plot, self.legend, self.line, results)
        self.caption = QLabel()
        self.caption.setObjectName("price_caption")
        self.caption.setProperty("role", "caption")
        self.caption.setWordWrap(True)
        inner = QWidget()
        il = QVBoxLayout(inner)
        il.setContentsMargins(0, 0, 0, 0)
        bar = QHBoxLayout()
        bar.addWidget(self.log_scale)
        bar.addStretch(1)
        il.addLayout(bar)
        il.addWidget(self.plot, 1)
        il.addWidget(self.caption)
        self.card = Card(inner, "price_card")
        lay.addWidget(self.card)
        state.changed.connect(self._on_state)
        results.updated.connect(self._on_results)
        self.render()

    def _on_results(self, kinds) -> None:
        if "scaling" in kinds:
            self._mark_jumps()

    def _mark_jumps(self) -> None:
        """Mark the jump days the intraday continuity check listed (none for a file of daily bars)."""
        h, r = self.state.loaded(), self.results.get("scaling")
        self.legend.removeItem(self.jumps)
        part = getattr(r, "intraday", None)
        if h is None or part is None or part.continuity is None or r.name != h.name:
            self.jumps.setData([], [])
            return
        days = part.continuity.jump_days["date"].to_numpy(dtype="datetime64[ns]")
        dates = np.asarray(h.dates, dtype="datetime64[ns]")
        at = np.searchsorted(dates, days)
        ok = (at < h.n) & (dates[np.minimum(at, h.n - 1)] == days)
        self.jumps.setData(epoch_seconds(days[ok]), h.close[at[ok]])
        self.legend.addItem(self.jumps, f"Jump day (continuity check, {part.continuity.alpha:.0%} level)")

    def _on_log(self, on: bool) -> None:
        self.plot.getPlotItem().setLogMode(x=False, y=on)
        self.plot.getPlotItem().setLabel("left", "Close price (log scale)" if on else "Close price")
        self.plot.enableAutoRange()

    def _on_state(self, names) -> None:
        if names & {"histories", "selected", "exclude_flagged", "as_of"}:
            self.render()

    def render(self) -> None:
        h = self.state.loaded()
        if h is None:
            self.card.show_message("Load a price file to see its history.")
            return
        x = epoch_seconds(h.dates)
        flagged = h.flagged_lines
        mask = np.isin(h.lines, np.fromiter(flagged, dtype=np.int64, count=len(flagged)))
        excluded = self.state.exclude_flagged
        if excluded:  # left-out rows are not drawn, so a bad tick cannot stretch the price axis
            self.line.setData(x[~mask], h.close[~mask])
            self.flagged.setData([], [])
        else:
            self.line.setData(x, h.close)
            self.flagged.setData(x[mask], h.close[mask], data=[int(v) for v in h.lines[mask]])
        self.legend.removeItem(self.flagged)
        self.legend.addItem(self.flagged, "Flagged row (left out)" if excluded else "Flagged row (kept)")
        if self.state.as_of:
            self.as_of_line.setValue(epoch_seconds(np.array([np.datetime64(self.state.as_of)]))[0])
            self.as_of_line.show()
        else:
            self.as_of_line.hide()
        self.plot.getPlotItem().setTitle(f"{h.name}: {h.price_basis}, {h.n} rows, {h.first_date} to "
                                         f"{h.last_date}", color=palette.FOREGROUND, size="10pt")
        self._mark_jumps()
        self.plot.enableAutoRange()
        errors = sum(f.severity == "error" for f in h.findings)
        self.caption.setText(
            (f"{int(mask.sum())} row(s) flagged by warnings are left out of every result and not drawn; "
             if excluded else f"{int(mask.sum())} row(s) flagged by warnings are marked (kept in every result); ")
            + f"{errors} unusable row(s) "
            "are not in the file's usable rows and cannot be drawn. See the Data tab for details.")
        self.card.show_content()
