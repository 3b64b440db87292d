"""The market's view: a quotes file opened beside the prices, the implied smile of each expiry, the
implied term structure over the volatility cone and the GARCH forecast term structure, the market
comparison (implied against pricing vol, realized and forecast), and one click to take the
at-the-money implied vol for the option's expiry as the pricing vol."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pyqtgraph as pg
from PySide6.QtWidgets import (
    QFileDialog,
    QHBoxLayout,
    QLabel,
    QPushButton,
    QSplitter,
    QVBoxLayout,
    QWidget,
)

from volbench.format import pct
from volbench.gui import palette
from volbench.gui.controller import Results
from volbench.gui.panes.base import Pane
from volbench.gui.state import WorkbenchState
from volbench.gui.widgets import Plot
from volbench.market.candidate import MarketComparison, MarketView

EXPIRY_COLOURS = ("#0072B2", "#E69F00", "#009E73", "#CC79A7", "#D55E00", "#56B4E9", "#999933", "#882255")


class MarketPane(Pane):
    key, title = "market", "Market quotes"

    def __init__(self, state: WorkbenchState, results: Results, parent: QWidget | None = None) -> None:
        super().__init__(state, results, parent)
        top = QHBoxLayout()
        self.open = QPushButton("Open quotes…")
        self.open.setObjectName("open_quotes_button")
        self.open.setToolTip("An option-quotes CSV (expiry, strike, type, mid or bid/ask) taken at the as-of date")
        self.open.clicked.connect(self._ask_file)
        self.file = QLabel()
        self.file.setObjectName("quotes_file_label")
        self.file.setWordWrap(True)  # a long path or reading never widens the window
        self.use = QPushButton("Use ATM implied as pricing vol")
        self.use.setToolTip("Make the at-the-money implied vol for the option's expiry the pricing vol")
        self.use.setObjectName("use_atm_button")
        self.use.clicked.connect(self._use_atm)
        top.addWidget(self.open)
        top.addWidget(self.file, 1)
        top.addWidget(self.use)

        self.smile = Plot("smile_plot", title="Implied smile per expiry", left="Implied vol (%)",
                          bottom="Forward moneyness ln(K/F)")
        self.smile_legend = self.smile.legend(offset=(-10, 10))
        self.term = Plot("term_plot", title="Implied term structure over the cone and the forecast",
                         left="Annualized vol over trading bars (%)", bottom="Option life (trading days)")
        self.term_legend = self.term.legend(colCount=3)
        split = QSplitter()
        split.addWidget(self.smile)
        split.addWidget(self.term)
        self.reading = QLabel()
        self.reading.setObjectName("market_reading")
        self.reading.setWordWrap(True)
        lay = QVBoxLayout(self)
        lay.addLayout(top)
        lay.addWidget(split, 1)
        lay.addWidget(self.reading)
        results.updated.connect(self._on_results)
        state.changed.connect(self._on_state)
        self.render()

    # ------------------------------------------------------------------ actions
    def _ask_file(self) -> None:
        path, _ = QFileDialog.getOpenFileName(self, "Open option quotes", "", "CSV files (*.csv *.txt);;All files (*)")
        if path:
            self.open_quotes(path)

    def open_quotes(self, path: str | None) -> None:
        """Read a quotes file (``None`` closes it); a refused file goes to the status line."""
        try:
            self.state.set("quotes_file", path)
        except Exception as exc:  # noqa: BLE001 - VolbenchError: shown, the state is unchanged
            self.notice.emit(str(exc))

    def _use_atm(self) -> None:
        m = self.results.get("market")
        if isinstance(m, MarketComparison) and m.atm_implied_vol is not None:
            self.state.set("pricing_vol", m.atm_implied_vol)

    def _on_state(self, names) -> None:
        if "quotes_file" in names:
            self.render()

    def _on_results(self, kinds) -> None:
        if kinds & {"quotes", "market", "cone", "garch"}:
            self.render()

    # ------------------------------------------------------------------ rendering
    def render(self) -> None:
        self.file.setText(Path(self.state.quotes_file).name if self.state.quotes_file
                          else "No quotes file: open one to compare with the market.")
        self.file.setToolTip(self.state.quotes_file or "")
        view = self.results.get("quotes")
        market = self.results.get("market")
        if not isinstance(market, MarketComparison):
            market = None
        self.use.setEnabled(market is not None and market.atm_implied_vol is not None)
        self.smile.clear()
        self.term.clear()
        for legend in (self.smile_legend, self.term_legend):
            legend.clear()
        if not isinstance(view, MarketView):
            self.reading.setText(self.results.problem("quotes") or "")
            return
        self._draw_smiles(view)
        self._draw_term(view)
        lines = [] if market is None else [f"{t[0].upper()}{t[1:]}." for t in market.reading]
        arb = [e.expiry for e in view.surface.expiries if e.calendar_arbitrage]
        if arb:
            lines.append(f"Calendar arbitrage: total implied variance falls at {', '.join(arb)}.")
        lines.append(f"ATM method: {view.surface.method}.")
        lines.append("Statistical estimates with model risk, not advice; your firm's validation policy governs "
                     "their use.")
        self.reading.setText(" ".join(lines))

    def _draw_smiles(self, view: MarketView) -> None:
        for i, e in enumerate(view.surface.expiries):
            colour = EXPIRY_COLOURS[i % len(EXPIRY_COLOURS)]
            smile = e.smile
            if smile is None or not len(smile):
                continue
            self.smile.plot(smile["moneyness"].to_numpy(float), 100 * smile["implied_vol"].to_numpy(float),
                            pen=pg.mkPen(colour, width=1.6), symbol="o", symbolSize=5, symbolBrush=colour,
                            name=e.expiry)

    def _draw_term(self, view: MarketView) -> None:
        cone = self.results.get("cone")
        if cone is not None:
            t = cone.table
            x = np.asarray(t.index, dtype=float)
            for col, style in (("p10", 1), ("p50", 2), ("p90", 1)):
                if col in t.columns:
                    self.term.plot(x, 100 * t[col].to_numpy(float), name=f"cone {col}",
                                   pen=pg.mkPen(palette.REFERENCE, width=style))
        garch = self.results.get("garch")
        fit = None if garch is None else garch.preferred_fit
        if fit is not None and len(fit.term_structure):
            ts = fit.term_structure
            self.term.plot(ts["horizon"].to_numpy(float), 100 * ts["vol"].to_numpy(float),
                           pen=pg.mkPen(palette.model_colour(fit.model), width=1.6), name=f"{fit.label} forecast")
        if view.versus is not None:  # the implied vols on the history's trading-bar basis (÷ basis factor)
            rows = [r for r in view.versus.rows if r.atm_implied_vol is not None and r.basis_factor]
            self.term.plot([r.trading_days for r in rows], [100 * r.atm_implied_vol / r.basis_factor for r in rows],
                           pen=pg.mkPen(palette.PRICING_VOL, width=2), symbol="s", symbolSize=7,
                           symbolBrush=palette.PRICING_VOL, name="ATM implied (trading-bar basis)")
        if view.atm_implied_vol is not None:
            self.file.setText(f"{Path(self.state.quotes_file).name}: ATM implied {pct(view.atm_implied_vol)} for "
                              f"{view.life.expiry} ({view.how})")
