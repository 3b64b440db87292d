"""Volatility cone: percentile bands per window, today's values, the pricing vol at the option's life."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pyqtgraph as pg
from PySide6.QtCore import Qt
from PySide6.QtGui import QColor
from PySide6.QtWidgets import (
    QCheckBox,
    QComboBox,
    QHBoxLayout,
    QLabel,
    QVBoxLayout,
    QWidget,
)

from volbench.estimators import REGISTRY
from volbench.format import pct
from volbench.gui import palette
from volbench.gui.binding import Binding
from volbench.gui.controller import Results
from volbench.gui.panes.base import Pane
from volbench.gui.state import WorkbenchState
from volbench.gui.widgets import Plot, plot_reading_table
from volbench.names import estimator_help, estimator_name
from volbench.pricing.cone import supported_estimators

CONE_COLUMNS = ["window (bars)", "min", "10th", "25th", "median", "75th", "90th", "max", "today",
                "today's percentile", "windows", "independent"]


def _brush(hex_colour: str, alpha: int):
    c = QColor(hex_colour)
    c.setAlpha(alpha)
    return pg.mkBrush(c)


class ConePane(Pane):
    key, title = "cone", "Volatility cone"

    def __init__(self, state: WorkbenchState, results: Results, parent: QWidget | None = None) -> None:
        super().__init__(state, results, parent)
        top = QHBoxLayout()
        top.addWidget(QLabel("Cone estimator"))
        self.estimator = QComboBox()
        self.estimator.setObjectName("cone_estimator_combo")
        for key in REGISTRY:
            self.estimator.addItem(estimator_name(key), key)
        top.addWidget(self.estimator)
        self.hodges_tompkins = QCheckBox("Hodges-Tompkins correction")
        self.hodges_tompkins.setObjectName("hodges_tompkins_check")
        self.hodges_tompkins.setToolTip("Widen each column's spread for overlapping windows (Hodges and "
                                        "Tompkins, 2002): long windows share most of their bars, so their "
                                        "spread understates the true one")
        top.addWidget(self.hodges_tompkins)
        top.addStretch(1)
        self.binding = Binding(state, "cone_estimator", self.estimator, self.estimator.currentIndexChanged,
                               self.estimator.currentData,
                               lambda v: self.estimator.setCurrentIndex(max(self.estimator.findData(v), 0)))
        self.ht_binding = Binding(state, "hodges_tompkins", self.hodges_tompkins, self.hodges_tompkins.toggled,
                                  self.hodges_tompkins.isChecked, lambda v: self.hodges_tompkins.setChecked(bool(v)))
        state.changed.connect(self._on_state)

        self.plot = Plot("cone_plot", left="Annualized volatility (%)",
                         bottom="Window / option life (bars, log scale)")
        self.legend = self.plot.legend(colCount=6)
        self.curves = {k: self.plot.plot([], [], pen=pg.mkPen(None)) for k in
                       ("min", "p10", "p25", "p75", "p90", "max")}
        self.fills = []
        self.median = self.plot.plot([], [], pen=pg.mkPen("#333333", width=2.0), name="median")
        self.median.setZValue(5)
        self.current = self.plot.plot([], [], pen=pg.mkPen("#D55E00", width=1.4), symbol="o", symbolSize=7,
                                      symbolBrush="#D55E00", symbolPen="#D55E00", name="today")
        self.pricing = pg.ScatterPlotItem(symbol="star", size=18, pen=pg.mkPen(palette.PRICING_VOL),
                                          brush=pg.mkBrush(palette.PRICING_VOL))
        self.plot.addItem(self.pricing)
        self.legend.addItem(self.pricing, "pricing vol at option life")
        self.life = pg.InfiniteLine(angle=90, pen=pg.mkPen(palette.PRICING_VOL, style=Qt.PenStyle.DotLine))
        self.plot.addItem(self.life, ignoreBounds=True)
        self.card, self.reading, self.table = plot_reading_table("cone", self.plot, (460, 200))
        lay = QVBoxLayout(self)
        lay.addLayout(top)  # outside the card: the estimator can be changed even when the cone fails
        lay.addWidget(self.card)
        self._key = None
        results.updated.connect(self._on_results)
        self.render()
        self.offer_supported()

    def unbind(self) -> None:
        self.binding.unbind()
        self.ht_binding.unbind()

    def _on_state(self, names) -> None:
        if names & {"histories", "selected"}:
            self.offer_supported()

    def offer_supported(self) -> None:
        """Enable only the estimators the selected series has the columns for (the others stay
        listed, greyed, with a tooltip saying which columns they need)."""
        h = self.state.loaded()
        ok = set(REGISTRY) if h is None else set(supported_estimators(h))
        model = self.estimator.model()
        for i in range(self.estimator.count()):
            key = self.estimator.itemData(i)
            spec = REGISTRY[key]
            item = model.item(i)
            item.setEnabled(key in ok)
            item.setToolTip(estimator_help(key) if key in ok else
                            f"{spec.label} needs {'/'.join(sorted(spec.needs))} columns; this series lacks them")

    def _on_results(self, kinds) -> None:
        if "cone" in kinds:
            self.render()
        elif "placement" in kinds and self.results.get("cone") is not None:
            self._render_pricing(self.results.get("cone"))

    def _set_fills(self, colour: str) -> None:
        for f in self.fills:
            self.plot.removeItem(f)
        self.fills = []
        for (a, b), alpha, label in ((("min", "max"), 30, "min to max"), (("p10", "p90"), 55, "10th to 90th"),
                                     (("p25", "p75"), 95, "25th to 75th")):
            f = pg.FillBetweenItem(self.curves[a], self.curves[b], brush=_brush(colour, alpha))
            f.setZValue(-10)
            self.plot.addItem(f)
            self.fills.append(f)
        self.legend.clear()
        for f, label in zip(self.fills, ("min to max", "10th to 90th percentile", "25th to 75th percentile")):
            self.legend.addItem(pg.PlotDataItem(pen=pg.mkPen(None), fillLevel=0, brush=f.brush()), label)
        self.legend.addItem(self.median, "median")
        self.legend.addItem(self.current, "today")
        self.legend.addItem(self.pricing, "pricing vol at option life")

    def render(self) -> None:
        cone = self.results.get("cone")
        if cone is None:
            self.card.show_message(self.results.problem("cone") or "Load a price file to begin.")
            return
        if cone.estimator != self._key:
            self._set_fills(palette.estimator_colour(cone.estimator))
            self._key = cone.estimator
        t = cone.table
        w = np.log10(t.index.to_numpy(dtype=float))  # log x-axis: short windows get room
        self.plot.getPlotItem().getAxis("bottom").setTicks(
            [[(math.log10(v), str(int(v))) for v in t.index], []])
        def col(k: str) -> str:  # the Hodges-Tompkins adjusted column when the switch is on
            return f"{k}_adj" if cone.hodges_tompkins and f"{k}_adj" in t else k

        for k, curve in self.curves.items():
            curve.setData(w, t[col(k)].to_numpy(dtype=float) * 100.0)
        self.median.setData(w, t[col("p50")].to_numpy(dtype=float) * 100.0)
        self.current.setData(w, t["current"].to_numpy(dtype=float) * 100.0)
        self.plot.getPlotItem().setTitle(
            f"{cone.label} volatility cone, {cone.name}, {cone.start} to {cone.end}"
            + (" (Hodges-Tompkins adjusted)" if cone.hodges_tompkins else ""),
            color=palette.FOREGROUND, size="10pt")
        rows = []
        for win, rec in t.iterrows():
            rows.append([int(win)] + [pct(rec[col(k)] if k != "current" else rec[k], 1)
                                      for k in ("min", "p10", "p25", "p50", "p75", "p90", "max", "current")]
                        + [f"{rec['current_percentile']:.0f}", int(rec["n_windows"]), int(rec["n_independent"])])
        self.table.set_frame(pd.DataFrame(rows, columns=CONE_COLUMNS), t.reset_index(), right=CONE_COLUMNS)
        self.table.fit_rows()  # every window's row stays visible (the plot gives way)
        self._render_pricing(cone)
        self.plot.enableAutoRange()
        self.card.show_content()

    def _render_pricing(self, cone) -> None:
        position = self.results.get("placement")
        if position is None:
            self.reading.setText(self.results.problem("placement") or "")
            return
        pv, days = position.pricing_vol, position.days
        self.pricing.setData([math.log10(days)], [100.0 * pv])
        self.life.setValue(math.log10(days))
        if position.placement is None:
            text = f"Pricing vol {pct(pv, 1)} cannot be placed in the cone: {position.problem}"
        else:
            text = (f"Pricing vol <b>{pct(pv, 1)}</b> for an option of {days} bars sits at percentile "
                    f"<b>{position.placement.percentile:.0f}</b> (0 to 100) of the {position.placement.note}.")
        if cone.dropped:
            text += " Windows left out: " + "; ".join(f"{k} bars ({v})" for k, v in cone.dropped.items()) + "."
        if cone.notes:
            text += " " + " ".join(cone.notes)
        self.reading.setText(text)
        ws = np.asarray(cone.windows, dtype=float)
        if len(ws):
            self.plot.getPlotItem().vb.enableAutoRange()
