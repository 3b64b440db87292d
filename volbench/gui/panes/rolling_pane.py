"""Rolling volatility of each selected estimator, the pricing vol as a level, and the estimates table."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pyqtgraph as pg
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QLabel, QSplitter, QVBoxLayout, QWidget

from volbench.estimators import REGISTRY
from volbench.format import pct
from volbench.gui import palette
from volbench.gui.controller import Results
from volbench.gui.panes.base import Pane
from volbench.gui.panes.price_overlay import EventLines
from volbench.gui.panes.price_pane import epoch_seconds
from volbench.gui.state import WorkbenchState
from volbench.gui.widgets import Card, FrameTable, Plot
from volbench.names import estimator_name

ESTIMATE_COLUMNS = ["estimator", "vol", "95% interval", "n", "interval method / why not"]


class RollingPane(Pane):
    """Lines per estimator (legend entries toggle them), crosshair readout, estimates table."""

    key, title = "rolling", "Rolling volatility"

    def __init__(self, state: WorkbenchState, results: Results, parent: QWidget | None = None) -> None:
        super().__init__(state, results, parent)
        self.plot = Plot("rolling_plot", left="Annualized volatility (%)", bottom="Date", date_axis=True)
        self.legend = self.plot.legend(colCount=4)
        self.lines: dict[str, pg.PlotDataItem] = {}
        self.keys: dict[pg.PlotDataItem, str] = {}
        self.muted: set[str] = set()  # estimators switched off by clicking their legend entry
        for key in REGISTRY:
            colour = palette.estimator_colour(key)
            # one-pixel (cosmetic) pens draw several times faster than wider ones on long series
            self.lines[key] = self.plot.plot([], [], pen=pg.mkPen(colour, width=1), skipFiniteCheck=True)
            self.lines[key].opts["name"] = estimator_name(key, state.ewma_lambda)
            # the legend shows a thick sample of the same colour; clicking it toggles the line
            sample = pg.PlotDataItem(pen=pg.mkPen(colour, width=3))
            self.keys[sample] = key
        self._legend_keys: tuple[str, ...] = ()
        self._sync_legend(tuple(REGISTRY))
        self.legend.sigSampleClicked.connect(self._on_legend_click)
        self.pricing_line = pg.InfiniteLine(
            angle=0, movable=False, pen=pg.mkPen(palette.PRICING_VOL, width=1.6, style=Qt.PenStyle.DashLine),
            label="pricing vol {value:.1f}%", labelOpts={"position": 0.03, "color": palette.PRICING_VOL,
                                                          "anchors": [(0, 1), (0, 1)]})
        self.plot.addItem(self.pricing_line, ignoreBounds=True)
        self.vline = pg.InfiniteLine(angle=90, movable=False, pen=pg.mkPen("#8A8F86", width=1))
        self.hline = pg.InfiniteLine(angle=0, movable=False, pen=pg.mkPen("#8A8F86", width=1))
        for ln in (self.vline, self.hline):
            ln.hide()
            self.plot.addItem(ln, ignoreBounds=True)
        self.readout = QLabel(" ")
        self.readout.setObjectName("rolling_readout")
        self.readout.setProperty("role", "caption")
        self.readout.setTextFormat(Qt.TextFormat.RichText)
        self._proxy = pg.SignalProxy(self.plot.scene().sigMouseMoved, rateLimit=30, slot=self._on_mouse)

        top = QWidget()
        tl = QVBoxLayout(top)
        tl.setContentsMargins(0, 0, 0, 0)
        tl.addWidget(self.readout)
        tl.addWidget(self.plot, 1)
        self.table = FrameTable("estimates_table")
        self.table_heading = QLabel("Estimates")
        self.table_heading.setObjectName("estimates_heading")
        self.table_heading.setProperty("role", "heading")
        bottom = QWidget()
        bl = QVBoxLayout(bottom)
        bl.setContentsMargins(0, 0, 0, 0)
        bl.addWidget(self.table_heading)
        bl.addWidget(self.table)
        split = QSplitter(Qt.Orientation.Vertical)
        split.addWidget(top)
        split.addWidget(bottom)
        split.setSizes([480, 170])
        split.setStretchFactor(0, 3)
        split.setStretchFactor(1, 1)
        self.card = Card(split, "rolling_card")
        lay = QVBoxLayout(self)
        lay.addWidget(self.card)
        self._title = ""
        self._span = None  # first and last date of the history: the x range, whatever the window
        self._x: dict[str, np.ndarray] = {}
        self._y: dict[str, np.ndarray] = {}
        results.updated.connect(self._on_results)
        self.event_lines = EventLines(self.plot, results)  # event days of the events file
        state.changed.connect(self._on_state)
        self.render()

    # ------------------------------------------------------------------ updates
    def _on_results(self, kinds) -> None:
        if kinds & {"rolling", "estimates"}:
            self.render()

    def _on_state(self, names) -> None:
        if "linked" in names:
            self._render_table()
        if "ewma_lambda" in names:
            for sample, label in self.legend.items:
                label.setText(estimator_name(self.keys[sample.item], self.state.ewma_lambda))
        if "estimators" in names:
            self._apply_visibility()
            self._render_table()
        if "pricing_vol" in names:
            self._render_pricing()
        if names & {"estimators", "pricing_vol"} and self._y:
            self._fit()

    def render(self) -> None:
        rolling = self.results.get("rolling")
        if rolling is None:
            self.card.show_message(self.results.problem("rolling") or "Load a price file to begin.")
            return
        if not rolling.series:
            reasons = "; ".join(f"{REGISTRY[k].label}: {why}" for k, why in rolling.unavailable.items())
            self.card.show_message(f"No estimator fits a {rolling.window}-bar window here ({reasons}). "
                                   "Choose a shorter window or a later as-of date.")
            return
        self._x.clear()
        self._y.clear()
        for key, line in self.lines.items():
            rv = rolling.series.get(key)
            if rv is None:
                line.setData([], [])
                continue
            x = epoch_seconds(rv.values.index.to_numpy())
            y = rv.values.to_numpy() * 100.0
            self._x[key], self._y[key] = x, y
            line.setData(x, y)
        self._sync_legend(tuple(k for k in REGISTRY if k in rolling.series))
        self._apply_visibility()
        self._render_pricing()
        self._span = rolling.span
        self._fit()
        title = f"Rolling {rolling.window}-bar volatility, annualized with {rolling.annualization:g} bars/yr"
        if title != self._title:
            self.plot.getPlotItem().setTitle(title, color=palette.FOREGROUND, size="10pt")
            self._title = title
        self._render_table()
        self.card.show_content()

    def _sync_legend(self, keys: tuple[str, ...]) -> None:
        """Legend entries for the estimators that have a line on this file (an unavailable one,
        such as the realized measures of a daily file, has none; the table says why)."""
        if keys == self._legend_keys:
            return
        self.legend.clear()
        samples = {k: s for s, k in self.keys.items()}
        for key in keys:
            self.legend.addItem(samples[key], estimator_name(key, self.state.ewma_lambda))
        self._legend_keys = keys

    def _fit(self) -> None:
        chosen = [k for k in self.state.estimators if k in self._y and k not in self.muted]
        x_range = None if self._span is None else tuple(epoch_seconds(np.asarray(self._span)))
        self.plot.fit_view([self._y[k] for k in chosen] + [[100.0 * self.state.pricing_vol]], headroom=0.25,
                           x_range=x_range)

    def _on_legend_click(self, sample) -> None:
        key = self.keys.get(sample)
        if key is None:
            return
        if sample.isVisible():
            self.muted.discard(key)
        else:
            self.muted.add(key)
        self._apply_visibility()

    def toggle_from_legend(self, key: str) -> None:
        """What a click on ``key``'s legend entry does (tests and keyboard users)."""
        sample = next(s for s, k in self.keys.items() if k == key)
        sample.setVisible(not sample.isVisible())
        self._on_legend_click(sample)

    def _apply_visibility(self) -> None:
        chosen = set(self.state.estimators) - self.muted
        for key, line in self.lines.items():
            line.setVisible(key in chosen and key in self._x)

    def _render_pricing(self) -> None:
        self.pricing_line.setValue(100.0 * self.state.pricing_vol)

    def _render_table(self) -> None:
        report = self.results.get("estimates")
        if report is None:
            self.table.set_frame(pd.DataFrame(columns=ESTIMATE_COLUMNS))
            self.table_heading.setText(self.results.problem("estimates") or "Estimates")
            return
        chosen = [k for k in REGISTRY if k in self.state.estimators]
        rows, raw, swatch = [], [], {}
        for key in chosen:
            spec = REGISTRY[key]
            swatch[len(rows)] = palette.estimator_colour(key)
            if key in report.estimates:
                e = report.estimates[key]
                approx = "" if spec.ci_exact else " ~"
                method = e.ci_method + (f"; {e.note}" if e.note else "")
                rows.append([estimator_name(key, self.state.ewma_lambda), pct(e.vol), f"{pct(e.ci_low)} to {pct(e.ci_high)}{approx}", e.n, method])
                raw.append({"estimator": key, "vol": e.vol, "ci_low": e.ci_low, "ci_high": e.ci_high,
                            "n": e.n, "note": method})
            else:
                reason = report.unavailable.get(key, "")
                rows.append([estimator_name(key, self.state.ewma_lambda), "n/a", "", "", reason])
                raw.append({"estimator": key, "vol": None, "ci_low": None, "ci_high": None, "n": None,
                            "note": reason})
        h = report.history
        self.table_heading.setText(
            f"Estimates for {h.name} as of {report.as_of}: last {report.window} bars, "
            f"{report.annualization:g} bars/yr, flagged rows {'left out' if h.exclude_flagged else 'kept'}; "
            + ("the comparison uses the same window" if self.state.linked
               else "the comparison uses the option's life (unlinked)"))
        self.table.set_frame(pd.DataFrame(rows, columns=ESTIMATE_COLUMNS),
                             pd.DataFrame(raw, columns=["estimator", "vol", "ci_low", "ci_high", "n", "note"]),
                             swatch=swatch, right=("vol", "n"))

    # ------------------------------------------------------------------ crosshair
    def _on_mouse(self, event) -> None:
        pos = event[0]
        vb = self.plot.getPlotItem().vb
        if not self.plot.sceneBoundingRect().contains(pos) or not self._x:
            return
        p = vb.mapSceneToView(pos)
        self.vline.setValue(p.x())
        self.hline.setValue(p.y())
        self.vline.show()
        self.hline.show()
        self.readout.setText(self.readout_text(p.x()))

    def readout_text(self, x: float) -> str:
        """Date under the cursor and each visible estimator's value there (HTML)."""
        parts = []
        date = None
        for key in REGISTRY:
            if key not in self._x or not self.lines[key].isVisible():
                continue
            xs = self._x[key]
            i = int(np.clip(np.searchsorted(xs, x), 0, len(xs) - 1))
            if i > 0 and abs(xs[i - 1] - x) < abs(xs[i] - x):
                i -= 1
            date = date or pd.Timestamp(xs[i], unit="s").strftime("%Y-%m-%d")
            parts.append(f"<span style='color:{palette.estimator_colour(key)}'>&#9632;</span> "
                         f"{estimator_name(key, self.state.ewma_lambda)} {self._y[key][i]:.1f}%")
        if date is None:
            return " "
        return f"<b>{date}</b> &nbsp; " + " &nbsp; ".join(parts)
