"""Brownian-scaling check: variance against horizon (log-log), QQ plot, autocorrelations,
the variance-ratio table and the verdicts in plain words.

Every statistic comes from :func:`volbench.scaling.scaling_check`. The only lines drawn here are
guides: the slope-1 reference through the 1-bar variance, var(1) x h, and the band between
var(1) x h^b for b at the two ends of the check's slope interval.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pyqtgraph as pg
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QHBoxLayout, QLabel, QSplitter, QTabWidget, QVBoxLayout, QWidget

from volbench.format import pct, sig
from volbench.gui import palette
from volbench.gui.controller import Results
from volbench.gui.panes.base import Pane
from volbench.gui.state import WorkbenchState
from volbench.gui.widgets import Card, FrameTable, Plot, log_ticks

PROPERTY_WORDS = {
    "variance_proportional_to_horizon": "Variance grows in proportion to horizon",
    "normal_increments": "Increments are normal",
    "independent_increments": "Increments are independent",
    "negligible_drift": "Drift is negligible",
    "continuous_paths": "Paths are continuous (no jumps)",
}
VR_COLUMNS = ["horizon (bars)", "variance ratio", "z", "robust z", "robust p", "horizon vol",
              "sqrt-time vol", "vol ratio", "periods"]
VERDICT_COLUMNS = ["property", "status", "p-value", "what it means"]
DASH = Qt.PenStyle.DashLine


class ScalingPane(Pane):
    key, title = "scaling", "Scaling check"

    def __init__(self, state: WorkbenchState, results: Results, parent: QWidget | None = None) -> None:
        super().__init__(state, results, parent)
        c = palette.estimator_colour("close_to_close")
        self.var_plot = Plot("scaling_variance_plot", title="Variance against horizon",
                             left="Variance of h-bar log returns", bottom="Horizon h (bars)")
        self.var_plot.setLogMode(x=True, y=True)
        self.var_legend = self.var_plot.legend(offset=(8, 8))
        self.band_lo = self.var_plot.plot([], [], pen=pg.mkPen(None))
        self.band_hi = self.var_plot.plot([], [], pen=pg.mkPen(None))
        self.band = pg.FillBetweenItem(self.band_lo, self.band_hi, brush=pg.mkBrush(0, 114, 178, 40))
        self.var_plot.addItem(self.band)
        self.reference = self.var_plot.plot([], [], pen=pg.mkPen(palette.REFERENCE, width=1.3, style=DASH),
                                            name="slope 1 (Brownian)")
        self.points = self.var_plot.plot([], [], pen=pg.mkPen(c, width=1.2), symbol="o", symbolSize=7,
                                         symbolBrush=c, symbolPen=c, name="measured")
        self.var_legend.addItem(pg.PlotDataItem(pen=pg.mkPen(None), fillLevel=0,
                                                brush=pg.mkBrush(0, 114, 178, 60)), "slope interval")

        self.qq_plot = Plot("scaling_qq_plot", title="1-bar returns against the normal",
                            left="Standardized return quantile", bottom="Normal quantile")
        self.qq_line = self.qq_plot.plot([], [], pen=pg.mkPen(palette.REFERENCE, width=1.2, style=DASH))
        self.qq_points = pg.ScatterPlotItem(size=5, pen=pg.mkPen(None), brush=pg.mkBrush(c))
        self.qq_plot.addItem(self.qq_points)

        self.acf_plot = Plot("scaling_acf_plot", title="Autocorrelation", left="Autocorrelation",
                             bottom="Lag (bars)")
        self.acf_legend = self.acf_plot.legend(offset=(-8, 8))
        self.acf_returns = pg.BarGraphItem(x=[], height=[], width=0.38, brush=c, pen=pg.mkPen(None))
        self.acf_squared = pg.BarGraphItem(x=[], height=[], width=0.38, brush="#E69F00", pen=pg.mkPen(None))
        self.acf_plot.addItem(self.acf_returns)
        self.acf_plot.addItem(self.acf_squared)
        self.acf_legend.addItem(self.acf_returns, "returns")
        self.acf_legend.addItem(self.acf_squared, "squared returns")
        self.acf_hi = pg.InfiniteLine(angle=0, pen=pg.mkPen(palette.REFERENCE, style=DASH))
        self.acf_lo = pg.InfiniteLine(angle=0, pen=pg.mkPen(palette.REFERENCE, style=DASH))
        self.acf_plot.addItem(self.acf_hi)
        self.acf_plot.addItem(self.acf_lo)

        plots = QWidget()
        pl = QHBoxLayout(plots)
        pl.setContentsMargins(0, 0, 0, 0)
        for p in (self.var_plot, self.qq_plot, self.acf_plot):
            pl.addWidget(p)
        self.false_alarm = QLabel()
        self.false_alarm.setObjectName("scaling_false_alarm")
        self.false_alarm.setProperty("role", "caption")
        self.false_alarm.setWordWrap(True)
        self.summary = QLabel()
        self.summary.setObjectName("scaling_summary")
        self.summary.setProperty("role", "reading")
        self.summary.setWordWrap(True)
        self.vr_table = FrameTable("variance_ratio_table")
        self.verdict_table = FrameTable("verdict_table")
        self.verdict_table.setWordWrap(True)
        tables = QTabWidget()
        tables.setObjectName("scaling_tables")
        verdicts = QWidget()
        vl = QVBoxLayout(verdicts)
        vl.setContentsMargins(0, 0, 0, 0)
        vl.addWidget(self.false_alarm)
        vl.addWidget(self.verdict_table, 1)
        tables.addTab(verdicts, "Verdicts in plain words")
        tables.addTab(self.vr_table, "Variance ratios by horizon")
        body = QSplitter(Qt.Orientation.Vertical)
        top = QWidget()
        tl = QVBoxLayout(top)
        tl.setContentsMargins(0, 0, 0, 0)
        tl.addWidget(self.summary)
        tl.addWidget(plots, 1)
        body.addWidget(top)
        body.addWidget(tables)
        body.setSizes([480, 200])  # the plots keep room for their legends on a 768-pixel screen
        self.card = Card(body, "scaling_card")
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
        hz = r.horizons
        h = hz["h"].to_numpy(dtype=float)
        var = hz["variance"].to_numpy(dtype=float)
        one = var[0]
        lo, hi = r.slope_ci
        self.points.setData(h, var)
        self.var_plot.getAxis("bottom").setTicks([[(float(np.log10(x)), f"{int(x)}") for x in h]])
        ys = np.concatenate([var, one * h, one * h ** lo, one * h ** hi])
        ys = ys[np.isfinite(ys) & (ys > 0)]
        if len(ys):
            self.var_plot.getAxis("left").setTicks([log_ticks(float(ys.min()), float(ys.max()))])
        self.reference.setData(h, one * h)
        self.band_lo.setData(h, one * h ** lo)
        self.band_hi.setData(h, one * h ** hi)
        self.var_plot.enableAutoRange()

        qq = r.qq
        self.qq_points.setData(qq["theoretical"].to_numpy(), qq["sample"].to_numpy())
        ends = np.array([qq["theoretical"].min(), qq["theoretical"].max()])
        self.qq_line.setData(ends, ends)
        self.qq_plot.enableAutoRange()

        acf = r.acf
        lags = acf["lag"].to_numpy(dtype=float)
        self.acf_returns.setOpts(x=lags - 0.2, height=acf["acf_returns"].to_numpy(dtype=float))
        self.acf_squared.setOpts(x=lags + 0.2, height=acf["acf_squared"].to_numpy(dtype=float))
        band = float(acf["band"].iloc[0]) if len(acf) else 0.0
        self.acf_hi.setValue(band)
        self.acf_lo.setValue(-band)
        self.acf_plot.enableAutoRange()

        level = round(100 * (1 - r.alpha))
        flag = "flagged rows left out" if r.exclude_flagged else "flagged rows kept"
        text = (f"<b>{r.name}</b>: {r.n_returns} one-bar returns, {flag}. Log-log slope "
                f"<b>{r.slope:.2f}</b> ({level}% interval {lo:.2f} to {hi:.2f}; 1 under Brownian motion), "
                f"Hurst {r.hurst:.2f}, joint variance-ratio test (Chow-Denning) p = {r.chow_denning_p:.3f}. "
                f"The band on the left plot spans the slope interval, anchored at 1 bar; dashed lines on the "
                f"right are the ±{band:.3f} band for no autocorrelation.")
        if r.dropped:
            text += " Horizons left out: " + "; ".join(f"{k} bars ({v})" for k, v in r.dropped.items()) + "."
        if r.notes:
            text += " " + " ".join(r.notes)
        self.summary.setText(text)

        rows = []
        for rec in hz.to_dict(orient="records"):
            rows.append([int(rec["h"]), sig(rec["variance_ratio"], 4), sig(rec["z"], 3), sig(rec["z_robust"], 3),
                         sig(rec["p_value_robust"], 3), pct(rec["annualized_vol"]), pct(rec["sqrt_time_vol"]),
                         sig(rec["vol_ratio"], 4), int(rec["n_nonoverlap"])])
        self.vr_table.set_frame(pd.DataFrame(rows, columns=VR_COLUMNS), hz, right=VR_COLUMNS)

        rows, fg, raw = [], {}, []
        for i, v in enumerate(r.verdicts):
            rows.append([PROPERTY_WORDS.get(v.property, v.property.replace("_", " ")), v.status,
                         "" if not np.isfinite(v.p_value) else ("< 0.001" if v.p_value < 0.001 else f"{v.p_value:.3f}"),
                         v.message])
            fg[(i, 1)] = palette.STATUS_COLOURS.get(v.status, palette.FOREGROUND)
            raw.append(v.as_dict())
        self.verdict_table.set_frame(pd.DataFrame(rows, columns=VERDICT_COLUMNS), pd.DataFrame(raw), fg=fg)
        fa = r.family_false_alarm or {}
        self.false_alarm.setText(
            (fa["sentence"] + " Each status comes from its test at this level; effect sizes are in the "
             "sentences.") if fa else "")
        self.verdict_table.resizeRowsToContents()
        self.card.show_content()
