"""GARCH-family models: conditional vol over time, forward-vol term structure, fit table, and a
batch fit of every loaded series."""

from __future__ import annotations

import math

import pandas as pd
import pyqtgraph as pg
from PySide6.QtCore import Qt
from PySide6.QtGui import QColor
from PySide6.QtWidgets import (
    QComboBox,
    QHBoxLayout,
    QLabel,
    QPushButton,
    QSplitter,
    QTabWidget,
    QVBoxLayout,
    QWidget,
)

from volbench.format import pct, sig
from volbench.gui import palette
from volbench.gui.controller import Results
from volbench.gui.panes.base import Pane
from volbench.gui.panes.price_pane import epoch_seconds
from volbench.gui.state import WorkbenchState
from volbench.gui.widgets import Card, FrameTable, Plot
from volbench.models.family import DIST_REGISTRY, MODEL_REGISTRY

DASHES = {"solid": Qt.PenStyle.SolidLine, "dash": Qt.PenStyle.DashLine, "dashdot": Qt.PenStyle.DashDotLine}
FIT_COLUMNS = ["model", "distribution", "converged", "persistence", "long-run vol", "half-life (bars)", "AIC",
               "BIC", "forward vol", "notes"]
BATCH_COLUMNS = ["series", "preferred model", "forward vol", "reading"]
PARAM_COLUMNS = ["model", "parameter", "estimate", "std. error", "t-stat"]


def model_name(key: str | None) -> str:
    """The full name of a model key ("egarch" -> "EGARCH(1,1)"); unknown keys unchanged."""
    spec = MODEL_REGISTRY.get(key) if key else None
    return spec.label if spec is not None else (key or "")


def dist_name(key: str) -> str:
    spec = DIST_REGISTRY.get(key)
    return spec.label[0].upper() + spec.label[1:] if spec is not None else key


def t_stat(estimate: float, se: float) -> float | None:
    return estimate / se if se and math.isfinite(se) and se > 0 and math.isfinite(estimate) else None


def _pen(model: str, width: float = 1.5, alpha: int = 255):
    spec = MODEL_REGISTRY.get(model)
    colour = QColor(palette.model_colour(model))
    colour.setAlpha(alpha)
    pen = pg.mkPen(colour, width=width, style=DASHES[spec.dash if spec is not None else "solid"])
    pen.setCosmetic(True)
    return pen


class ModelPane(Pane):
    """Conditional vol, forward-vol term structure, fit table and the batch fit of every series
    (asked for with ``requested("garch_all")``); forward vols come from the ``forward`` job."""

    key, title = "model", "GARCH models"

    def __init__(self, state: WorkbenchState, results: Results, parent: QWidget | None = None) -> None:
        super().__init__(state, results, parent)
        self.cond_plot = Plot("garch_conditional_plot", title="Conditional volatility",
                              left="Annualized volatility (%)", bottom="Date", date_axis=True)
        self.cond_legend = self.cond_plot.legend(colCount=4)
        self.term_plot = Plot("garch_term_plot", title="Forward volatility over an option's life",
                              left="Annualized volatility (%)", bottom="Option life (bars)")
        # no legend of its own: the models keep the conditional-vol plot's colours and dashes (its
        # legend names them), and the title names the star
        self.paths = QComboBox()
        self.paths.setObjectName("garch_paths_combo")
        self.paths.setToolTip("Which conditional-vol paths to draw (a click on a legend entry also hides or "
                              "shows its path)")
        self.paths.currentIndexChanged.connect(lambda _i: self.render())
        self.params_table = FrameTable("garch_params_table")
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
        choose = QHBoxLayout()
        choose.addWidget(QLabel("Paths shown"))
        choose.addWidget(self.paths)
        choose.addStretch(1)
        ul.addLayout(choose)
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
        # the tables share one tabbed area under the plots, so the plots keep their room (and their
        # legends) on a 768-pixel screen
        tables = QTabWidget()
        tables.setObjectName("garch_tables")
        tables.addTab(self.fit_table, "Fits")
        tables.addTab(self.params_table, "Parameters, standard errors, t-stats")
        tables.addTab(batch, "Every loaded series")
        self.tables = tables
        split = QSplitter(Qt.Orientation.Vertical)
        split.addWidget(self.card)
        split.addWidget(tables)
        split.setSizes([560, 170])
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
        self.cond_plot.clear()
        self.cond_legend.clear()
        self.term_plot.clear()
        self._fill_paths(comp)
        shown = self.paths.currentData()
        cond = []
        for fit in comp.fits:
            name = fit.candidate_label + (" (preferred)" if fit.model == comp.preferred else "")
            cv = fit.conditional_vol
            if len(cv) and shown in (None, "all", fit.model):
                cond.append(cv.to_numpy() * 100.0)
                # the preferred path drawn thicker and on top; the others keep their own dash
                preferred = fit.model == comp.preferred
                item = self.cond_plot.plot(epoch_seconds(cv.index.to_numpy()), cond[-1],
                                           pen=_pen(fit.model, 2.2 if preferred else 1.2, 255 if preferred else 150),
                                           name=name,
                                           skipFiniteCheck=True)
                item.setZValue(2 if preferred else 1)
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
        self.term_plot.getPlotItem().setTitle(
            "Forward vol by option life (★ pricing vol)", color=palette.FOREGROUND, size="10pt")
        self.cond_plot.fit_view(cond + [[100.0 * pv]], headroom=0.35)
        self.term_plot.enableAutoRange()

        rows, raw = [], []
        for fit in comp.fits:
            fwd = None if forward is None else forward.of(fit.model)
            source = f"forward vol from {fit.forward_vol_source}" if fit.fallback else ""
            notes = "; ".join(x for x in (source, *fit.warnings, *fit.notes) if x)
            rows.append([fit.candidate_label + (" *" if fit.model == comp.preferred else ""), dist_name(fit.dist),
                         "yes" if fit.converged else "no", sig(fit.persistence, 4), pct(fit.long_run_vol),
                         sig(fit.half_life, 3), sig(fit.aic, 6), sig(fit.bic, 6), pct(fwd), notes])
            raw.append({"model": fit.model, "dist": fit.dist, "converged": fit.converged,
                        "persistence": fit.persistence, "long_run_vol": fit.long_run_vol,
                        "half_life": fit.half_life, "aic": fit.aic, "bic": fit.bic, "forward_vol": fwd,
                        "days": days, "notes": notes})
        self.fit_table.set_frame(pd.DataFrame(rows, columns=FIT_COLUMNS), pd.DataFrame(raw),
                                 right=FIT_COLUMNS[3:9])
        prows, praw = [], []
        for fit in comp.fits:
            for name, value in fit.params.items():
                se = fit.std_errors.get(name, float("nan"))
                t = t_stat(value, se)
                prows.append([fit.candidate_label, name, sig(value, 4), sig(se, 3), "" if t is None else f"{t:.2f}"])
                praw.append({"model": fit.model, "parameter": name, "estimate": value, "std_error": se, "t": t})
        self.params_table.set_frame(pd.DataFrame(prows, columns=PARAM_COLUMNS),
                                    pd.DataFrame(praw, columns=["model", "parameter", "estimate", "std_error", "t"]),
                                    right=PARAM_COLUMNS[2:])
        message = comp.message.rstrip()
        message += "" if message.endswith(".") else "."
        self.message.setText(f"<b>{comp.name}</b>: {message} Forward vol is for an option of "
                             f"{days} bars; * marks the preferred model (lowest BIC among usable fits).")
        self.card.show_content()

    def _fill_paths(self, comp) -> None:
        keys = ["all"] + [f.model for f in comp.fits]
        if [self.paths.itemData(i) for i in range(self.paths.count())] == keys:
            return
        current = self.paths.currentData()
        self.paths.blockSignals(True)
        self.paths.clear()
        self.paths.addItem("All models", "all")
        for f in comp.fits:
            self.paths.addItem(f.candidate_label, f.model)
        self.paths.setCurrentIndex(max(self.paths.findData(current), 0))
        self.paths.blockSignals(False)

    def render_batch(self) -> None:
        batch = self.results.get("garch_all")
        if batch is None:
            problem = self.results.problem("garch_all")
            if problem:
                self.batch_note.setText(problem)
            self.batch_table.set_frame(pd.DataFrame(columns=BATCH_COLUMNS))
            return
        comps, days = batch.comparisons, batch.days
        self.tables.setCurrentIndex(self.tables.indexOf(self.batch_table.parentWidget()))
        rows, raw = [], []
        for c, fwd in zip(comps, batch.forward):
            fallback = c.fits[0].candidate_label if c.fits else "no fit"
            rows.append([c.name, model_name(c.preferred) or f"none usable ({fallback})", pct(fwd), c.message])
            raw.append({"series": c.name, "preferred": c.preferred, "forward_vol": fwd, "days": days,
                        "message": c.message})
        self.batch_table.set_frame(pd.DataFrame(rows, columns=BATCH_COLUMNS), pd.DataFrame(raw),
                                   right=("forward vol",))
        self.batch_note.setText(f"{len(comps)} series fitted; forward vol over {days} bars from each "
                                "series' preferred model.")
