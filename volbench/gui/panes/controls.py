"""The settings column: series, window, annualization, as-of date, estimators, pricing vol, option
terms and model choice. Each widget is bound to one state field (see :mod:`volbench.gui.binding`)."""

from __future__ import annotations

import pandas as pd
from PySide6.QtCore import QDate, Qt
from PySide6.QtWidgets import (
    QCheckBox,
    QComboBox,
    QDateEdit,
    QDoubleSpinBox,
    QFormLayout,
    QGroupBox,
    QHBoxLayout,
    QLabel,
    QPushButton,
    QScrollArea,
    QSpinBox,
    QVBoxLayout,
    QWidget,
)

from volbench import validate
from volbench.estimators import REGISTRY
from volbench.gui import palette
from volbench.gui.binding import Binding
from volbench.gui.controller import Results
from volbench.gui.panes.base import Pane
from volbench.gui.state import WorkbenchState
from volbench.models.family import DIST_REGISTRY, MODEL_REGISTRY

LAST_ROW = "last row"


def garch_model_items() -> list[tuple[str, str]]:
    """The model choices: all registered models (ranked by BIC), then each one (from the registry)."""
    return [("all", "All (compare by BIC)")] + [(s.key, s.short) for s in MODEL_REGISTRY.values()]


def garch_dist_items() -> list[tuple[str, str]]:
    return [(d.key, f"{d.label[0].upper()}{d.label[1:]} errors") for d in DIST_REGISTRY.values()]


def _combo(name: str, items) -> QComboBox:
    box = QComboBox()
    box.setObjectName(name)
    for key, label in items:
        box.addItem(label, key)
    return box


def _spin(name: str, lo: int, hi: int, suffix: str) -> QSpinBox:
    s = QSpinBox()
    s.setObjectName(name)
    s.setRange(lo, hi)
    s.setSuffix(suffix)
    s.setKeyboardTracking(False)
    s.setAccelerated(True)
    return s


def _dspin(name: str, lo: float, hi: float, decimals: int, suffix: str, step: float) -> QDoubleSpinBox:
    s = QDoubleSpinBox()
    s.setObjectName(name)
    s.setRange(lo, hi)
    s.setDecimals(decimals)
    s.setSuffix(suffix)
    s.setSingleStep(step)
    s.setKeyboardTracking(False)
    return s


class ControlsPane(Pane):
    """Every control of the workbench, in groups, in a scrolling column."""

    key, title, place = "controls", "Settings", "left"

    def __init__(self, state: WorkbenchState, results: Results, parent: QWidget | None = None) -> None:
        super().__init__(state, results, parent)
        scroll = QScrollArea()
        scroll.setObjectName("controls_scroll")
        scroll.setWidgetResizable(True)
        scroll.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        lay = QVBoxLayout(self)
        lay.setContentsMargins(0, 0, 0, 0)
        lay.addWidget(scroll)
        body = QWidget()
        body.setObjectName("controls_body")
        outer = QVBoxLayout(body)
        outer.setContentsMargins(6, 6, 6, 6)
        self.bindings: list[Binding] = []

        # --- data and window
        g1 = QGroupBox("History")
        f1 = QFormLayout(g1)
        self.series = QComboBox()
        self.series.setObjectName("series_combo")
        self.series.setMinimumContentsLength(14)
        f1.addRow("Series", self.series)
        self.window = _spin("window_spin", 2, 5000, " bars")
        self.window.setToolTip("Bars in each estimation window, ending at the as-of date")
        f1.addRow("Window", self.window)
        self.annualization = _dspin("annualization_spin", 1, 100000, 0, " bars/yr", 1)
        self.annualization.setToolTip("Bars per year used to annualize: 252 for exchange trading days, "
                                      "365 for markets open every day")
        f1.addRow("Annualization", self.annualization)
        self.as_of = QDateEdit()
        self.as_of.setObjectName("as_of_edit")
        self.as_of.setCalendarPopup(True)
        self.as_of.setDisplayFormat("yyyy-MM-dd")
        self.as_of.setSpecialValueText(LAST_ROW)
        self.as_of.setKeyboardTracking(False)
        self.as_of.setToolTip("Last date used by every estimate; the lowest value means the last row")
        f1.addRow("As of", self.as_of)
        outer.addWidget(g1)

        # --- estimators
        g2 = QGroupBox("Estimators shown")
        v2 = QVBoxLayout(g2)
        v2.setSpacing(2)
        self.estimator_boxes: dict[str, QCheckBox] = {}
        for key, spec in REGISTRY.items():
            row = QHBoxLayout()
            swatch = QLabel()
            swatch.setFixedSize(14, 14)
            swatch.setStyleSheet(f"background: {palette.estimator_colour(key)}; border-radius: 2px;")
            box = QCheckBox(spec.label)
            box.setObjectName(f"estimator_{key}")
            box.setToolTip(f"{spec.assumes}\nSource: {spec.source}")
            row.addWidget(swatch)
            row.addWidget(box, 1)
            v2.addLayout(row)
            self.estimator_boxes[key] = box
        outer.addWidget(g2)

        # --- option
        g3 = QGroupBox("Option to price")
        f3 = QFormLayout(g3)
        # the same limit as every command (volbench.validate.PRICING_VOL_MAX, 500 % excluded)
        self.pricing_vol = _dspin("pricing_vol_spin", 0.1, 100 * validate.PRICING_VOL_MAX - 0.01, 2, " %", 0.25)
        self.pricing_vol.setToolTip("The proposed annualized volatility, in percent")
        f3.addRow("Pricing vol", self.pricing_vol)
        self.days = _spin("days_spin", 1, 5000, " bars")
        self.days.setToolTip("Option life in bars (trading days for daily data)")
        f3.addRow("Days to expiry", self.days)
        self.strike = _dspin("strike_spin", 0.0, 1e9, 4, "", 0.5)
        self.strike.setSpecialValueText("at the money")
        self.strike.setToolTip("Strike price; the lowest value means at the money (strike = last close)")
        f3.addRow("Strike", self.strike)
        self.rate = _dspin("rate_spin", -20.0, 50.0, 3, " %", 0.25)
        self.rate.setToolTip("Risk-free rate, continuously compounded, in percent a year")
        f3.addRow("Rate", self.rate)
        self.dividend = _dspin("dividend_spin", -20.0, 50.0, 3, " %", 0.25)
        self.dividend.setToolTip("Dividend yield, continuously compounded, in percent a year")
        f3.addRow("Dividend yield", self.dividend)
        self.kind = _combo("kind_combo", (("call", "Call"), ("put", "Put")))
        f3.addRow("Type", self.kind)
        outer.addWidget(g3)

        # --- models
        g4 = QGroupBox("GARCH model")
        f4 = QFormLayout(g4)
        self.garch_model = _combo("garch_model_combo", garch_model_items())
        f4.addRow("Model", self.garch_model)
        self.garch_dist = _combo("garch_dist_combo", garch_dist_items())
        f4.addRow("Errors", self.garch_dist)
        outer.addWidget(g4)

        recompute = QPushButton("Recompute all")
        recompute.setObjectName("recompute_button")
        recompute.setToolTip("Run every computation again for the current settings")
        recompute.clicked.connect(lambda: self.requested.emit("recompute"))
        outer.addWidget(recompute)
        outer.addStretch(1)
        scroll.setWidget(body)
        self.setMinimumWidth(250)
        self._bind_all()
        state.changed.connect(self._on_state)
        self._fill_series()

    # ------------------------------------------------------------------ bindings
    def _bind(self, name, widget, signal, read, write) -> None:
        b = Binding(self.state, name, widget, signal, read, write)
        b.rejected.connect(self.notice)
        self.bindings.append(b)

    def _bind_all(self) -> None:
        self._bind("window", self.window, self.window.valueChanged, self.window.value, self.window.setValue)
        self._bind("annualization", self.annualization, self.annualization.valueChanged,
                   self.annualization.value, self.annualization.setValue)
        self._bind("as_of", self.as_of, self.as_of.dateChanged, self._read_as_of, self._write_as_of)
        self._bind("pricing_vol", self.pricing_vol, self.pricing_vol.valueChanged,
                   lambda: self.pricing_vol.value() / 100.0,
                   lambda v: self.pricing_vol.setValue(100.0 * v))
        self._bind("days", self.days, self.days.valueChanged, self.days.value, self.days.setValue)
        self._bind("strike", self.strike, self.strike.valueChanged,
                   lambda: None if self.strike.value() <= self.strike.minimum() else self.strike.value(),
                   lambda v: self.strike.setValue(self.strike.minimum() if v is None else v))
        self._bind("rate", self.rate, self.rate.valueChanged, lambda: self.rate.value() / 100.0,
                   lambda v: self.rate.setValue(100.0 * v))
        self._bind("dividend_yield", self.dividend, self.dividend.valueChanged,
                   lambda: self.dividend.value() / 100.0, lambda v: self.dividend.setValue(100.0 * v))
        for name, box in (("kind", self.kind), ("garch_model", self.garch_model),
                          ("garch_dist", self.garch_dist)):
            self._bind(name, box, box.currentIndexChanged, box.currentData,
                       lambda v, box=box: box.setCurrentIndex(max(box.findData(v), 0)))
        for box in self.estimator_boxes.values():
            self._bind("estimators", box, box.toggled, self._read_estimators, self._write_estimators)
        self._bind("selected", self.series, self.series.currentIndexChanged,
                   lambda: self.series.currentData(), self._write_series)

    def unbind(self) -> None:
        for b in self.bindings:
            b.unbind()
        self.bindings.clear()

    def _read_estimators(self):
        return tuple(k for k, box in self.estimator_boxes.items() if box.isChecked())

    def _write_estimators(self, keys) -> None:
        for k, box in self.estimator_boxes.items():
            box.blockSignals(True)
            box.setChecked(k in keys)
            box.blockSignals(False)

    def _write_series(self, name) -> None:
        i = self.series.findData(name)
        self.series.setCurrentIndex(i)

    # ------------------------------------------------------------------ as-of date
    def _read_as_of(self):
        d = self.as_of.date()
        if d <= self.as_of.minimumDate():
            return None
        return d.toString("yyyy-MM-dd")

    def _write_as_of(self, value) -> None:
        if value is None:
            self.as_of.setDate(self.as_of.minimumDate())
        else:
            self.as_of.setDate(QDate.fromString(str(value)[:10], "yyyy-MM-dd"))

    def _update_date_range(self) -> None:
        h = self.state.loaded()
        self.as_of.blockSignals(True)
        if h is None or not h.n:
            self.as_of.setMinimumDate(QDate(1900, 1, 1))
            self.as_of.setMaximumDate(QDate(2999, 12, 31))
        else:
            first = pd.Timestamp(h.dates[0]).date()
            last = pd.Timestamp(h.dates[-1]).date()
            lo = QDate(first.year, first.month, first.day).addDays(-1)
            self.as_of.setMinimumDate(lo)
            self.as_of.setMaximumDate(QDate(last.year, last.month, last.day))
        self.as_of.blockSignals(False)
        for b in self.bindings:
            if b.name == "as_of":
                b.refresh()

    # ------------------------------------------------------------------ series list
    def _fill_series(self) -> None:
        self.series.blockSignals(True)
        self.series.clear()
        for h in self.state.histories:
            self.series.addItem(h.name, h.name)
        self._write_series(self.state.selected)
        self.series.blockSignals(False)
        self._update_date_range()

    def _on_state(self, names) -> None:
        if "histories" in names:
            self._fill_series()
        elif "selected" in names:
            self._update_date_range()
