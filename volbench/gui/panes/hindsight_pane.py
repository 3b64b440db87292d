"""Hindsight: how each candidate vol would have forecast the vol that followed, over the history.

Renders the ``hindsight`` job (:func:`volbench.hindsight.hindsight`, what ``volbench hindsight``
computes; as-of dates every days/5 bars): the realized close-to-close vol of each N-bar period
against the forecasts of the candidates ticked in the picker (by default the best three by QLIKE),
and the ranking table. GARCH is many fits, so it is not part of the automatic run: "Include GARCH"
runs the on-demand ``hindsight_garch`` job (``volbench hindsight --with-garch --refit-every K``)
in the background with progress and Cancel, and its result replaces the automatic one while it
belongs to the same inputs.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pyqtgraph as pg
from PySide6.QtCore import Qt, QTimer
from PySide6.QtWidgets import (
    QCheckBox,
    QHBoxLayout,
    QLabel,
    QListWidget,
    QListWidgetItem,
    QSpinBox,
    QVBoxLayout,
    QWidget,
)

from volbench.format import p_value, pct
from volbench.gui import palette
from volbench.gui.controller import Results
from volbench.gui.panes.base import Pane
from volbench.gui.panes.price_pane import epoch_seconds
from volbench.gui.state import WorkbenchState
from volbench.gui.widgets import Plot, plot_reading_table
from volbench.hindsight import DEFAULT_REFIT_EVERY

SHOWN = 3
"""Best candidates drawn against the realized vol unless the picker says otherwise."""
RANK_COLUMNS = ["#", "candidate", "bias (pts)", "RMSE (pts)", "QLIKE", "in 95% interval", "price error",
                "of premium", "DM p vs best"]


def _colour(i: int):
    return palette.FALLBACK_COLOURS[i % len(palette.FALLBACK_COLOURS)]


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
        self.garch_box = QCheckBox("Include GARCH (refit every K bars)")
        self.garch_box.setObjectName("hindsight_garch_box")
        self.garch_box.setToolTip("Adds the GARCH(1,1) forward vol as a candidate: one fit every K bars (rounded up "
                                  "to a multiple of the as-of step), parameters kept between refits while the "
                                  "variance updates with each return. Runs in the background; Cancel stops it.")
        self.refit_spin = QSpinBox()
        self.refit_spin.setObjectName("hindsight_refit_spin")
        self.refit_spin.setRange(1, 2520)
        self.refit_spin.setValue(DEFAULT_REFIT_EVERY)
        self.refit_spin.setPrefix("K = ")
        self.refit_spin.setSuffix(" bars")
        self.garch_status = QLabel("")
        self.garch_status.setObjectName("hindsight_garch_status")
        self.garch_status.setWordWrap(True)
        self.garch_box.toggled.connect(self._garch_asked)
        self.refit_spin.editingFinished.connect(lambda: self._garch_asked(self.garch_box.isChecked()))
        self.picker = QListWidget()
        self.picker.setObjectName("hindsight_picker")
        self.picker.setToolTip("Tick the candidates whose forecasts are drawn over the realized vol")
        self.picker.itemChanged.connect(self._picked_changed)
        self.picked: list[str] | None = None  # None: the default (best three by QLIKE, and GARCH when asked)
        self._garch_base = None  # the automatic result the GARCH run belongs to
        self._garch_k = DEFAULT_REFIT_EVERY  # K of the GARCH run shown
        self._hooked = None
        self.garch_box.setText("Include GARCH\n(refit every K bars)")
        side_w = QWidget()
        side_w.setObjectName("hindsight_side")
        side = QVBoxLayout(side_w)
        side.setContentsMargins(0, 0, 0, 0)
        side.addWidget(self.garch_box)
        side.addWidget(self.refit_spin)
        side.addWidget(self.garch_status)
        key_label = QLabel("Drawn over the realized vol of the next N bars (dark line), each ticked "
                           "candidate in its line's colour (QLIKE rank):")
        key_label.setWordWrap(True)
        side.addWidget(key_label)
        side.addWidget(self.picker, 1)
        side_w.setMaximumWidth(240)
        lay = QHBoxLayout(self)
        lay.addWidget(self.card, 1)
        lay.addWidget(side_w)
        results.updated.connect(self._on_results)
        self.render()

    # ------------------------------------------------------------------ GARCH on demand
    def _window(self):
        from volbench.gui.window import (
            MainWindow,  # the window imports the panes: imported when used
        )

        win = self.window()
        return win if isinstance(win, MainWindow) else None

    def shown(self):
        """The result on screen: the GARCH run when it belongs to the automatic result shown, else that."""
        base = self.results.get("hindsight")
        g = self.results.get("hindsight_garch")
        if self.garch_box.isChecked() and g is not None and base is not None and self._garch_base is base:
            return g
        return base

    def _garch_asked(self, on: bool) -> None:
        base = self.results.get("hindsight")
        if not on:
            self.garch_status.setText("")
            self.render()
            return
        win = self._window()
        if base is None or win is None:
            self.garch_status.setText("GARCH runs once the hindsight scoring is shown in the workbench window.")
            return
        if self._hooked is not win:
            win.controller.finished.connect(self._on_finished)
            win.controller.failed.connect(self._on_failed)
            win.dispatcher.busy.connect(self._on_busy)
            self._hooked = win
        from volbench.gui.jobs import HindsightGarchRequest

        self._garch_base = base
        k = self._garch_k = self.refit_spin.value()
        self.results.wait_for("hindsight_garch", f"Refitting GARCH every {k} bars…")
        self.garch_status.setText(f"Refitting GARCH(1,1) every {k} bars through the history "
                                  "(progress and Cancel in the status bar)…")
        win.controller.run("hindsight_garch", HindsightGarchRequest(win.controller.current_view(), base.days,
                                                                    base.step, k))

    def _on_finished(self, kind: str, value) -> None:
        if kind == "hindsight_garch":
            self.results.put("hindsight_garch", value)
            self.garch_status.setText("")
            self.results.announce({"hindsight_garch"})

    def _on_failed(self, kind: str, exc) -> None:
        if kind == "hindsight_garch":
            from volbench.gui.dialogs import error_text

            self.results.fail("hindsight_garch", error_text(exc))
            self.garch_status.setText(f"GARCH not added: {error_text(exc)}")
            self._uncheck()
            self.results.announce({"hindsight_garch"})

    def _on_busy(self, busy: bool) -> None:
        if not busy:  # the dispatcher goes idle just before it delivers a result: look on the next turn
            QTimer.singleShot(0, self._check_stopped)

    def _check_stopped(self) -> None:
        if self.results.is_pending("hindsight_garch"):  # stopped with Cancel: nothing arrived
            self.results.fail("hindsight_garch", "stopped")
            self.garch_status.setText("GARCH refits stopped; tick the box to run them again.")
            self._uncheck()
            self.results.announce({"hindsight_garch"})

    def _uncheck(self) -> None:
        self.garch_box.blockSignals(True)
        self.garch_box.setChecked(False)
        self.garch_box.blockSignals(False)

    # ------------------------------------------------------------------ picker
    def _picked_changed(self, item: QListWidgetItem) -> None:
        self.picked = [self.picker.item(i).data(Qt.ItemDataRole.UserRole) for i in range(self.picker.count())
                       if self.picker.item(i).checkState() == Qt.CheckState.Checked]
        self._recolour()
        self._draw(self.shown())

    def pick(self, keys) -> None:
        """Draw the forecasts of ``keys`` (candidate keys) over the realized vol."""
        self.picked = list(keys)
        self._fill_picker(self.shown())
        self._draw(self.shown())

    def _drawn_keys(self, r) -> list[str]:
        keys = list(r.scores["key"])
        if self.picked is not None:
            return [k for k in keys if k in self.picked]
        top = keys[:SHOWN]
        return top + (["garch"] if "garch" in keys and "garch" not in top else [])

    def _fill_picker(self, r) -> None:
        drawn = self._drawn_keys(r)
        self.picker.blockSignals(True)
        self.picker.clear()
        for rec in r.scores.to_dict(orient="records"):
            item = QListWidgetItem(f"{int(rec['rank'])}. {rec['label']}")
            item.setData(Qt.ItemDataRole.UserRole, rec["key"])
            item.setFlags(item.flags() | Qt.ItemFlag.ItemIsUserCheckable)
            item.setCheckState(Qt.CheckState.Checked if rec["key"] in drawn else Qt.CheckState.Unchecked)
            item.setToolTip(f"{rec['label']}: QLIKE {rec['qlike']:.4f}, rank {int(rec['rank'])}")
            self.picker.addItem(item)
        self.picker.blockSignals(False)
        self._recolour()

    def _recolour(self) -> None:
        """Each ticked item in its line's colour (the picker reads as a legend too), the others plain."""
        self.picker.blockSignals(True)
        drawn = 0
        for i in range(self.picker.count()):
            item = self.picker.item(i)
            if item.checkState() == Qt.CheckState.Checked:
                item.setForeground(pg.mkColor(_colour(drawn)))
                drawn += 1
            else:
                item.setForeground(self.picker.palette().text())
        self.picker.blockSignals(False)

    def _draw(self, r) -> None:
        for item in self.lines:
            self.plot.removeItem(item)
            self.legend.removeItem(item)
        self.lines = []
        if r is None:
            return
        x = epoch_seconds(r.dates.to_numpy())
        ranks = dict(zip(r.scores["key"], r.scores["rank"]))
        labels = dict(zip(r.scores["key"], r.scores["label"]))
        keys = self._drawn_keys(r)
        for i, key in enumerate(keys):
            colour = _colour(i)
            item = self.plot.plot(x, 100 * r.forecasts[key].to_numpy(), pen=pg.mkPen(colour, width=1.2),
                                  name=f"{labels[key]} (QLIKE rank {int(ranks[key])})")
            self.lines.append(item)
        if len(x):  # the whole span of as-of dates, set now (a tab not shown yet does not auto-range)
            self.plot.fit_view([100 * np.asarray(r.realized, dtype=float),
                                *(100 * r.forecasts[k].to_numpy() for k in keys)],
                               headroom=0.1, x_range=(float(x[0]), float(x[-1])))

    def _on_results(self, kinds) -> None:
        if "hindsight" in kinds or "hindsight_garch" in kinds:
            self.render()
        if ("hindsight" in kinds and self.garch_box.isChecked() and self.results.get("hindsight") is not None
                and self.results.get("hindsight") is not self._garch_base):
            self._garch_asked(True)  # the inputs changed: GARCH follows them, in the background

    def render(self) -> None:
        r = self.shown()
        if r is None:
            self.card.show_message(self.results.problem("hindsight") or "Load a price file to begin.")
            self.picker.clear()
            return
        self.realized.setData(epoch_seconds(r.dates.to_numpy()), 100 * np.asarray(r.realized, dtype=float))
        self._fill_picker(r)
        self._draw(r)
        sc = r.scores
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
            f"periods). {self._garch_text(r)} Past forecast accuracy is evidence, not a guarantee; estimates "
            "are statistical and not advice.")
        self.card.show_content()

    def _garch_text(self, r) -> str:
        if "garch" not in set(r.scores["key"]):
            return ("GARCH is left out (tick Include GARCH, or volbench hindsight --with-garch, to add it; "
                    "its many fits run in the background).")
        k = self._garch_k
        every = max(1, -(-k // r.step)) * r.step
        notes = " ".join(n[0].upper() + n[1:] + "." for n in r.notes if "GARCH" in n)
        return (f"GARCH(1,1) included: refit every K = {k} bars asked, rounded up to one fit every {every} bars "
                f"(a multiple of the {r.step}-bar step). {notes} As-of dates start once a fit has enough returns.")
