"""What the pricing vol promises about the price: the history's h-bar moves against the normal
density at the pricing vol, and promised against observed shares per candidate.

Renders the ``promise`` job (:func:`volbench.pricing.promise_summary.promise_summary`): every
number is the comparison's price-promise check, the same as ``volbench compare --format json``
(``bands_by_candidate``, ``straddle_by_candidate``) and the export's ``price_bands`` sheet. The
band fan itself is drawn over the price chart (the Prices tab).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pyqtgraph as pg
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QVBoxLayout, QWidget

from volbench.format import pct
from volbench.gui import palette
from volbench.gui.controller import Results
from volbench.gui.panes.base import Pane
from volbench.gui.state import WorkbenchState
from volbench.gui.widgets import Plot, plot_reading_table


class PromisePane(Pane):
    key, title = "promise", "Price promise"

    def __init__(self, state: WorkbenchState, results: Results, parent: QWidget | None = None) -> None:
        super().__init__(state, results, parent)
        self.plot = Plot("promise_histogram", left="Density", bottom="Log price move over the option's life")
        self.legend = self.plot.legend(offset=(-10, 10))
        self.bars = pg.BarGraphItem(x=[], height=[], width=0.01, brush=pg.mkBrush(0, 114, 178, 90),
                                    pen=pg.mkPen(palette.BAND))
        self.plot.addItem(self.bars)
        self.legend.addItem(self.bars, "history's non-overlapping moves")
        self.normal = self.plot.plot([], [], pen=pg.mkPen(palette.PRICING_VOL, width=2),
                                     name="normal density at the pricing vol")
        self.edges = []
        self.card, self.reading, self.table = plot_reading_table("promise", self.plot, (420, 220))
        lay = QVBoxLayout(self)
        lay.addWidget(self.card)
        results.updated.connect(self._on_results)
        self.render()

    def _on_results(self, kinds) -> None:
        if "promise" in kinds:
            self.render()

    def render(self) -> None:
        s = self.results.get("promise")
        if s is None:
            self.card.show_message(self.results.problem("promise") or "Load a price file and set a pricing vol.")
            return
        h = s.histogram
        width = float(h.edges[1] - h.edges[0])
        self.bars.setOpts(x=(h.edges[:-1] + h.edges[1:]) / 2, height=h.density, width=width * 0.95)
        self.normal.setData(h.x, h.normal_density)
        for line in self.edges:
            self.plot.removeItem(line)
        self.edges = []
        for r in s.bands.itertuples(index=False):
            edge = float(np.log(r.high_price / s.spot))
            for x in (-edge, edge):
                line = pg.InfiniteLine(x, angle=90, pen=pg.mkPen(palette.REFERENCE, style=Qt.PenStyle.DashLine))
                self.plot.addItem(line, ignoreBounds=True)
                self.edges.append(line)
        self.plot.getPlotItem().setTitle(f"{s.name}: {h.windows} non-overlapping {s.days}-bar moves to {s.as_of}; "
                                         f"normal density at {pct(h.vol)}", color=palette.FOREGROUND, size="10pt")
        sig = [c.split("_", 1)[1] for c in s.table.columns if c.startswith("promised_")]
        heads = ["candidate", "vol", *[f"outside ±{k}σ: promised / seen" for k in sig],
                 "straddle pays: promised / seen", "G rank"]
        rows = []
        for r in s.table.to_dict(orient="records"):
            cells = [r["label"], pct(r["vol"])]
            for k in sig:
                mark = "" if r[f"in_ci_{k}"] else " *"
                cells.append(f"{pct(r[f'promised_{k}'])} / {pct(r[f'observed_{k}'])}{mark}")
            cells += [f"{pct(r['straddle_promised'])} / {pct(r['straddle_observed'])}", int(r["rank"])]
            rows.append(cells)
        self.table.set_frame(pd.DataFrame(rows, columns=heads), s.table, right=heads[1:])
        notes = "".join(f" Note: {w}." for w in s.warnings)
        self.reading.setText(f"{s.verdict} * the promise lies outside the 95% interval of the observed share. "
                             f"Bands have zero drift in the log price.{notes} Estimates are statistical and "
                             "carry model risk; they are not advice.")
        self.card.show_content()
