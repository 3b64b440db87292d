"""Intraday bars: the signature plot and the jump days, from the scaling check's intraday part.

Renders what the ``scaling`` job computed for a history analysed by day from intraday bars
(:mod:`volbench.scaling.continuity`): annualized realized vol against the sampling interval, with the
daily close-to-close vol and the suggested interval, and the daily closes with the jump days of the
ratio jump test marked. A file of daily bars shows why there is nothing to draw.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pyqtgraph as pg
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QHBoxLayout, QLabel, QSplitter, QVBoxLayout, QWidget

from volbench.format import pct, sig
from volbench.gui import palette
from volbench.gui.controller import Results
from volbench.gui.panes.base import Pane
from volbench.gui.panes.price_pane import epoch_seconds
from volbench.gui.state import WorkbenchState
from volbench.gui.widgets import Card, FrameTable, Plot

JUMP_COLUMNS = ["date", "z", "p-value", "RV vol", "BV vol"]
JUMP_COLOUR = "#D55E00"
DAILY_MESSAGE = ("This file holds one bar a day: the signature plot and the intraday jump test need intraday bars "
                 "(load a file of 1- to 60-minute bars; it is analysed by day everywhere else).")


class IntradayPane(Pane):
    key, title = "intraday", "Intraday bars"

    def __init__(self, state: WorkbenchState, results: Results, parent: QWidget | None = None) -> None:
        super().__init__(state, results, parent)
        c = palette.estimator_colour("realized")
        self.sig_plot = Plot("signature_plot", title="Signature plot: realized vol by sampling interval",
                             left="Annualized whole-day vol (%)", bottom="Sampling interval (minutes)")
        self.sig_legend = self.sig_plot.legend(offset=(-8, 8))
        self.sig_points = self.sig_plot.plot([], [], pen=pg.mkPen(c, width=1.2), symbol="o", symbolSize=7,
                                             symbolBrush=c, symbolPen=c, name="realized vol")
        self.daily_line = pg.InfiniteLine(angle=0, pen=pg.mkPen(palette.REFERENCE, width=1.2, style=Qt.PenStyle.DashLine))
        self.suggested = pg.InfiniteLine(angle=90, pen=pg.mkPen(JUMP_COLOUR, width=1.2, style=Qt.PenStyle.DotLine))
        self.sig_plot.addItem(self.daily_line)
        self.sig_plot.addItem(self.suggested)
        self.sig_legend.addItem(pg.PlotDataItem(pen=pg.mkPen(palette.REFERENCE, style=Qt.PenStyle.DashLine)),
                                "daily close-to-close")
        self.sig_legend.addItem(pg.PlotDataItem(pen=pg.mkPen(JUMP_COLOUR, style=Qt.PenStyle.DotLine)),
                                "suggested sampling")

        self.jump_plot = Plot("jump_price_plot", title="Daily closes with the jump days",
                              left="Close price", bottom="Date", date_axis=True)
        self.jump_legend = self.jump_plot.legend()
        self.closes = self.jump_plot.plot([], [], pen=pg.mkPen(palette.estimator_colour("close_to_close"), width=1.2),
                                          name="daily close")
        self.marks = pg.ScatterPlotItem(size=11, symbol="t", pen=pg.mkPen(JUMP_COLOUR), brush=pg.mkBrush(JUMP_COLOUR))
        self.jump_plot.addItem(self.marks)
        self.jump_legend.addItem(self.marks, "jump day")

        self.summary = QLabel()
        self.summary.setObjectName("intraday_summary")
        self.summary.setProperty("role", "reading")
        self.summary.setWordWrap(True)
        self.jump_table = FrameTable("jump_table")

        plots = QWidget()
        pl = QHBoxLayout(plots)
        pl.setContentsMargins(0, 0, 0, 0)
        pl.addWidget(self.sig_plot)
        pl.addWidget(self.jump_plot)
        top = QWidget()
        tl = QVBoxLayout(top)
        tl.setContentsMargins(0, 0, 0, 0)
        tl.addWidget(self.summary)
        tl.addWidget(plots, 1)
        body = QSplitter(Qt.Orientation.Vertical)
        body.addWidget(top)
        body.addWidget(self.jump_table)
        body.setSizes([380, 200])
        self.card = Card(body, "intraday_card")
        lay = QVBoxLayout(self)
        lay.addWidget(self.card)
        results.updated.connect(self._on_results)
        self.render()

    def _on_results(self, kinds) -> None:
        if "scaling" in kinds:
            self.render()

    def render(self) -> None:
        r = self.results.get("scaling")
        if r is None:
            self.card.show_message(self.results.problem("scaling") or "Load a price file to begin.")
            return
        part = r.intraday
        if part is None:
            self.card.show_message(DAILY_MESSAGE)
            return
        lines = []
        lay = r.provenance.get("intraday", {})
        if lay:
            lines.append(f"<b>{r.name}</b>: {sig(lay['bar_interval_seconds'] / 60, 3)}-minute bars, "
                         f"{lay['bars_per_session']} a session, {lay['sessions']} sessions; analysed by day.")
        s = part.signature
        if s is not None:
            t = s.table
            intra = t[t["kind"] == "intraday"]
            self.sig_points.setData(intra["interval_seconds"].to_numpy(dtype=float) / 60,
                                    100 * intra["annualized_vol"].to_numpy(dtype=float))
            daily = t[t["kind"] != "intraday"]["annualized_vol"]
            self.daily_line.setValue(100 * float(daily.iloc[0]) if len(daily) else np.nan)
            self.suggested.setValue(s.suggested_interval_seconds / 60)
            self.sig_plot.enableAutoRange()
            lines.append(f"Signature plot: {s.reason}.")
        c = part.continuity
        view = self.state.view()
        if view is not None:
            self.closes.setData(epoch_seconds(view.dates), view.close)
        rows = []
        if c is not None:
            jd = c.jump_days
            if view is not None and len(jd):
                days = jd["date"].to_numpy(dtype="datetime64[ns]")
                at = np.searchsorted(view.dates, days)
                ok = (at < view.n) & (view.dates[np.minimum(at, view.n - 1)] == days)
                self.marks.setData(epoch_seconds(days[ok]), view.close[at[ok]])
            else:
                self.marks.setData([], [])
            ann = r.annualization
            for rec in jd.itertuples(index=False):
                rows.append([rec.date.strftime("%Y-%m-%d"), sig(rec.z, 3),
                             "< 0.001" if rec.p_value < 0.001 else f"{rec.p_value:.3f}",
                             pct(float(np.sqrt(ann * rec.rv))), pct(float(np.sqrt(ann * rec.bv)))])
            lines.append(f"Jump test ({c.label}): {len(jd)} of {c.days_tested} days at the {c.alpha:.0%} level, "
                         f"about {c.expected_false_alarms:.1f} expected by chance; jumps carry {c.jump_share:.1%} "
                         "of total variance. The verdict is in the Scaling check pane.")
        self.jump_plot.enableAutoRange()
        for k, why in part.unavailable.items():
            lines.append(f"{k}: {why}")
        self.summary.setText(" ".join(lines))
        self.jump_table.set_frame(pd.DataFrame(rows, columns=JUMP_COLUMNS), right=JUMP_COLUMNS[1:])
        self.card.show_content()
