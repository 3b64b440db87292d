"""Hindsight: how each candidate vol would have forecast the vol that followed, over the history.

Renders the ``hindsight`` job (:func:`volbench.hindsight.hindsight`, what ``volbench hindsight``
computes; as-of dates every days/5 bars, GARCH left out here to keep the window responsive: the
command's ``--with-garch`` adds it): the realized close-to-close vol of each N-bar period against
the forecasts of the best candidates by QLIKE, and the ranking table.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pyqtgraph as pg
from PySide6.QtWidgets import QVBoxLayout, QWidget

from volbench.format import p_value, pct
from volbench.gui import palette
from volbench.gui.controller import Results
from volbench.gui.panes.base import Pane
from volbench.gui.panes.price_pane import epoch_seconds
from volbench.gui.state import WorkbenchState
from volbench.gui.widgets import Plot, plot_reading_table

SHOWN = 3
"""Best candidates drawn against the realized vol."""
RANK_COLUMNS = ["#", "candidate", "bias (pts)", "RMSE (pts)", "QLIKE", "in 95% interval", "price error",
                "of premium", "DM p vs best"]


class HindsightPane(Pane):
    key, title = "hindsight", "Hindsight"

    def __init__(self, state: WorkbenchState, results: Results, parent: QWidget | None = None) -> None:
        super().__init__(state, results, parent)
        self.plot = Plot("hindsight_plot", left="Annualized volatility (%)", bottom="As-of date", date_axis=True)
        self.legend = self.plot.legend(colCount=2)  # long candidate names: two a row fit a narrow pane
        self.realized = self.plot.plot([], [], pen=pg.mkPen(palette.PRICE_LINE, width=1.2),
                                       name="realized over the next N bars")
        self.lines: list = []
        self.card, self.reading, self.table = plot_reading_table("hindsight", self.plot, (400, 240))
        lay = QVBoxLayout(self)
        lay.addWidget(self.card)
        results.updated.connect(self._on_results)
        self.render()

    def _on_results(self, kinds) -> None:
        if "hindsight" in kinds:
            self.render()

    def render(self) -> None:
        r = self.results.get("hindsight")
        if r is None:
            self.card.show_message(self.results.problem("hindsight") or "Load a price file to begin.")
            return
        x = epoch_seconds(r.dates.to_numpy())
        self.realized.setData(x, 100 * np.asarray(r.realized, dtype=float))
        for item in self.lines:
            self.plot.removeItem(item)
            self.legend.removeItem(item)
        self.lines = []
        sc = r.scores
        for i, rec in enumerate(sc.head(SHOWN).to_dict(orient="records")):
            colour = palette.FALLBACK_COLOURS[i % len(palette.FALLBACK_COLOURS)]
            item = self.plot.plot(x, 100 * r.forecasts[rec["key"]].to_numpy(), pen=pg.mkPen(colour, width=1.2),
                                  name=f"{rec['label']} (QLIKE rank {int(rec['rank'])})")
            self.lines.append(item)
        if len(x):  # the whole span of as-of dates, set now (a tab not shown yet does not auto-range)
            self.plot.fit_view([100 * np.asarray(r.realized, dtype=float),
                                *(100 * r.forecasts[rec["key"]].to_numpy() for rec in sc.head(SHOWN).to_dict("records"))],
                               headroom=0.1, x_range=(float(x[0]), float(x[-1])))
        rows = []
        for rec in sc.to_dict(orient="records"):
            best = rec["key"] == r.best
            rows.append([int(rec["rank"]), rec["label"], f"{rec['bias']:+.2f}", f"{rec['rmse']:.2f}",
                         f"{rec['qlike']:.4f}", pct(rec["coverage"], 0), f"{rec['price_error']:.4g}",
                         pct(rec["price_error_share"], 1), "best" if best else p_value(rec["dm_p_value"])])
        self.table.set_frame(pd.DataFrame(rows, columns=RANK_COLUMNS), sc, right=RANK_COLUMNS[2:])
        first, last = r.dates[0].date(), r.dates[-1].date()
        self.reading.setText(
            f"{r.name}: {r.periods} as-of dates every {r.step} bars from {first} to {last}, each candidate's "
            f"forecast of the next {r.days} bars against the close-to-close vol they realized. Ranked by QLIKE "
            "(lower is better); DM p: Diebold-Mariano test against the best (HAC variance for overlapping "
            "periods). GARCH is left out here (volbench hindsight --with-garch adds it). Past forecast accuracy "
            "is evidence, not a guarantee; estimates are statistical and not advice.")
        self.card.show_content()
