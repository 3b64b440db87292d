"""GARCH-family models: conditional vol over time, forward-vol term structure, fit table, and a
batch fit of every loaded series."""

from __future__ import annotations

import pandas as pd
import pyqtgraph as pg
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QHBoxLayout, QLabel, QPushButton, QSplitter, QVBoxLayout, QWidget

from volbench.format import pct, sig
from volbench.gui import palette
from volbench.gui.controller import Results
from volbench.gui.panes.base import Pane
from volbench.gui.panes.price_pane import epoch_seconds
from volbench.gui.state import WorkbenchState
from volbench.gui.widgets import Card, FrameTable, Plot
from volbench.models.family import MODEL_REGISTRY

DASHES = {"solid": Qt.PenStyle.SolidLine, "dash": Qt.PenStyle.DashLine, "dashdot": Qt.PenStyle.DashDotLine}
FIT_COLUMNS = ["model", "errors", "converged", "persistence", "long-run vol", "half-life (bars)", "AIC",
               "BIC", "forward vol", "notes"]
BATCH_COLUMNS = ["series", "preferred model", "forward vol", "reading"]


def _pen(model: str, width: float = 1.5):
    spec = MODEL_REGISTRY.get(model)
    return pg.mkPen(palette.model_colour(model), width=width,
                    style=DASHES[spec.dash if spec is not None else "solid"])


class ModelPane(Pane):
    """Conditional vol, forward-vol term structure, fit table and the batch fit of every series
    (asked for with ``requested("garch_all")``); forward vols come from the ``forward`` job."""

    key, title = "model", "GARCH models"

    def __init__(self, state: WorkbenchState, results: Results, parent: QWidget | None = None) -> None:
        super().__init__(state, results, parent)
        self.cond_plot = Plot("garch_conditional_plot", title="Conditional volatility",
                              left="Annualized volatility (%)", bottom="Date", date_axis=True)
        self.cond_legend = self.cond_plot.legend(offset=(10, 10))
        self.term_plot = Plot("garch_term_plot", title="Forward volatility over an option's life",
                              left="Annualized volatility (%)", bottom="Option life (bars)")
        self.term_legend = self.term_plot.legend(offset=(-10, -10))
        self.cond_pricing = pg.InfiniteLine(angle=0, pen=pg.mkPen(palette.PRICING_VOL, width=1.4,
                                                                  style=Qt.PenStyle.DashLine))
        self.term_pricing = pg.ScatterPlotItem(symbol="star", size=16, pen=pg.mkPen(palette.PRICING_VOL),
                                               brush=pg.mkBrush(palette.PRICING_VOL))
        self.message = QLabel()
        self.message.setObjectName("garch_message")
        self.message.setProperty("role", "reading")
        self.message.setWordWrap(True)
        self.fit_table = FrameTable("garch_fit_table")
        self.batch_table = FrameTable("garch_batch_table")
        self.batch_button = QPushButton("Fit every loaded series")
        self.batch_button.setObjectName("fit_all_button")
        self.batch_button.setToolTip("Fit the chosen models to every loaded series in the background "
                                     "(progress and Cancel in the status bar)")
        self.batch_button.clicked.connect(lambda: self.requested.emit("garch_all"))
        self.batch_note = QLabel("Press the button to fit every loaded series with the current settings.")
        self.batch_note.setObjectName("garch_batch_note")
        self.batch_note.setProperty("role", "caption")
        self.batch_note.setWordWrap(True)

        plots = QWidget()
        pl = QHBoxLayout(plots)
        pl.setContentsMargins(0, 0, 0, 0)
        pl.addWidget(self.cond_plot, 3)
        pl.addWidget(self.term_plot, 2)
        upper = QWidget()
        ul = QVBoxLayout(upper)
        ul.setContentsMargins(0, 0, 0, 0)
        ul.addWidget(self.message)
        ul.addWidget(plots, 1)
        self.card = Card(upper, "garch_card")
        batch = QWidget()
        bl = QVBoxLayout(batch)
        bl.setContentsMargins(0, 0, 0, 0)
        row = QHBoxLayout()
        row.addWidget(self.batch_button)
        row.addWidget(self.batch_note, 1)
        bl.addLayout(row)
        bl.addWidget(self.batch_table)
        split = QSplitter(Qt.Orientation.Vertical)
        split.addWidget(self.card)
        split.addWidget(self.fit_table)
        split.addWidget(batch)
        split.setSizes([420, 130, 150])
        lay = QVBoxLayout(self)
        lay.addWidget(split)
        results.updated.connect(self._on_results)
        state.changed.connect(self._on_state)
        self.render()
        self.render_batch()

    def _on_results(self, kinds) -> None:
        if kinds & {"garch", "forward"}:
            self.render()
        if "garch_all" in kinds:
            self.render_batch()

    def _on_state(self, names) -> None:
        if "pricing_vol" in names and self.results.get("garch") is not None:
            self.render()

    def render(self) -> None:
        comp = self.results.get("garch")
        if comp is None:
            self.card.show_message(self.results.problem("garch") or "Load a price file to begin.")
            self.fit_table.set_frame(pd.DataFrame(columns=FIT_COLUMNS))
            return
        forward = self.results.get("forward")
        days, pv = (forward.days if forward is not None else self.state.days), self.state.pricing_vol
        for plot, legend in ((self.cond_plot, self.cond_legend), (self.term_plot, self.term_legend)):
            plot.clear()
            legend.clear()
        cond = []
        for fit in comp.fits:
            name = fit.candidate_label + (" (preferred)" if fit.model == comp.preferred else "")
            cv = fit.conditional_vol
            if len(cv):
                cond.append(cv.to_numpy() * 100.0)
                self.cond_plot.plot(epoch_seconds(cv.index.to_numpy()), cond[-1], pen=_pen(fit.model, 1),
                                    name=name, skipFiniteCheck=True)
            ts = fit.term_structure
            if len(ts):
                self.term_plot.plot(ts["horizon"].to_numpy(dtype=float), ts["vol"].to_numpy(dtype=float) * 100.0,
                                    pen=_pen(fit.model, 2.0), symbol="o", symbolSize=5,
                                    symbolBrush=palette.model_colour(fit.model),
                                    symbolPen=palette.model_colour(fit.model), name=name)
        self.cond_pricing.setValue(100.0 * pv)
        self.cond_plot.addItem(self.cond_pricing, ignoreBounds=True)
        self.cond_legend.addItem(pg.PlotDataItem(pen=self.cond_pricing.pen), "pricing vol")
        self.term_pricing.setData([days], [100.0 * pv])
        self.term_plot.addItem(self.term_pricing)
        self.term_legend.addItem(self.term_pricing, f"pricing vol at {days} bars")
        self.cond_plot.fit_view(cond + [[100.0 * pv]], headroom=0.35)
        self.term_plot.enableAutoRange()

        rows, raw = [], []
        for fit in comp.fits:
            fwd = None if forward is None else forward.of(fit.model)
            source = f"forward vol from {fit.forward_vol_source}" if fit.fallback else ""
            notes = "; ".join(x for x in (source, *fit.warnings, *fit.notes) if x)
            rows.append([fit.candidate_label + (" *" if fit.model == comp.preferred else ""), fit.dist,
                         "yes" if fit.converged else "no", sig(fit.persistence, 4), pct(fit.long_run_vol),
                         sig(fit.half_life, 3), sig(fit.aic, 6), sig(fit.bic, 6), pct(fwd), notes])
            raw.append({"model": fit.model, "dist": fit.dist, "converged": fit.converged,
                        "persistence": fit.persistence, "long_run_vol": fit.long_run_vol,
                        "half_life": fit.half_life, "aic": fit.aic, "bic": fit.bic, "forward_vol": fwd,
                        "days": days, "notes": notes})
        self.fit_table.set_frame(pd.DataFrame(rows, columns=FIT_COLUMNS), pd.DataFrame(raw),
                                 right=FIT_COLUMNS[3:9])
        message = comp.message.rstrip()
        message += "" if message.endswith(".") else "."
        self.message.setText(f"<b>{comp.name}</b>: {message} Forward vol is for an option of "
                             f"{days} bars; * marks the preferred model (lowest BIC among usable fits).")
        self.card.show_content()

    def render_batch(self) -> None:
        batch = self.results.get("garch_all")
        if batch is None:
            problem = self.results.problem("garch_all")
            if problem:
                self.batch_note.setText(problem)
            self.batch_table.set_frame(pd.DataFrame(columns=BATCH_COLUMNS))
            return
        comps, days = batch.comparisons, batch.days
        rows, raw = [], []
        for c, fwd in zip(comps, batch.forward):
            fallback = c.fits[0].candidate_label if c.fits else "no fit"
            rows.append([c.name, c.preferred or f"none usable ({fallback})", pct(fwd), c.message])
            raw.append({"series": c.name, "preferred": c.preferred, "forward_vol": fwd, "days": days,
                        "message": c.message})
        self.batch_table.set_frame(pd.DataFrame(rows, columns=BATCH_COLUMNS), pd.DataFrame(raw),
                                   right=("forward vol",))
        self.batch_note.setText(f"{len(comps)} series fitted; forward vol over {days} bars from each "
                                "series' preferred model.")
