"""The settings column, in two levels: the controls a trader changes all the time (series,
window, as-of date, pricing vol, days to expiry, Recompute) stay open at the top; the rest sit in
folding sections (option terms, estimators, GARCH model). Each widget is bound to one state field
(see :mod:`volbench.gui.binding`).

Adding a control is one row in a section: ``self.section("option").add_row("Expiry", widget)``
and a binding; a new section is one entry of :data:`SECTIONS`. Every spin box, date edit and
combo box is wheel-guarded by the window (:mod:`volbench.gui.wheel`)."""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtWidgets import (
    QCheckBox,
    QComboBox,
    QDoubleSpinBox,
    QFormLayout,
    QGroupBox,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QPushButton,
    QScrollArea,
    QSpinBox,
    QVBoxLayout,
    QWidget,
)

from volbench import validate
from volbench.errors import VolbenchError
from volbench.estimators import REGISTRY
from volbench.gui import palette
from volbench.gui.binding import Binding
from volbench.gui.collapsible import Section
from volbench.gui.controller import Results
from volbench.gui.panes.base import Pane
from volbench.gui.state import WorkbenchState
from volbench.models.family import DIST_REGISTRY, MODEL_REGISTRY
from volbench.names import estimator_help, estimator_name
from volbench.types import EWMA_LAMBDA

LATEST = "latest"
"""What the As of control shows for the last row (``None`` in the settings)."""




def garch_model_items() -> list[tuple[str, str]]:
    """The model choices: all registered models (ranked by BIC), then each one (from the registry)."""
    return [("all", "All (compare by BIC)")] + [(s.key, s.label) for s in MODEL_REGISTRY.values()]


def garch_dist_items() -> list[tuple[str, str]]:
    return [(d.key, f"{d.label[0].upper()}{d.label[1:]}") for d in DIST_REGISTRY.values()]


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


SECTIONS: tuple[tuple[str, str, bool], ...] = (
    ("option", "Option terms", False),
    ("estimators", "Estimators", False),
    ("garch", "GARCH model", False),
)
"""Folding sections below the always-open controls: key, title, open at start."""


class ControlsPane(Pane):
    """Every control of the workbench: the primary ones always open, the rest in folding sections."""

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
        outer.setSpacing(4)
        self.bindings: list[Binding] = []

        # --- level one: always open
        g1 = QGroupBox("Series and option")
        g1.setObjectName("primary_group")
        f1 = QFormLayout(g1)
        f1.setFieldGrowthPolicy(QFormLayout.FieldGrowthPolicy.AllNonFixedFieldsGrow)
        self.primary = f1
        self.series = QComboBox()
        self.series.setObjectName("series_combo")
        self.series.setMinimumContentsLength(12)
        self.series.setSizeAdjustPolicy(QComboBox.SizeAdjustPolicy.AdjustToMinimumContentsLengthWithIcon)
        f1.addRow("Series", self.series)
        self.window = _spin("window_spin", 2, 5000, " bars")
        self.window.setToolTip("Bars in each estimation window, ending at the as-of date: the estimates "
                               "table, the rolling plot and (while linked) the comparison use it")
        f1.addRow("Window", self.window)
        self.linked = QCheckBox("Comparison uses this window")
        self.linked.setObjectName("link_windows_check")
        self.linked.setToolTip("Linked (ticked): the estimates table, the rolling plot, the comparison and "
                               "exports all use the Window. Unlinked: the comparison's estimators use the "
                               "option's life (days to expiry) instead; every table says which.")
        f1.addRow("", self.linked)
        self.as_of = QLineEdit()
        self.as_of.setObjectName("as_of_edit")
        self.as_of.setPlaceholderText(LATEST)
        self.as_of.setToolTip("Last date used by every estimate, YYYY-MM-DD; 'latest' (or empty) for the "
                              "last row. Press Enter to apply.")
        self.as_of_latest = QPushButton("Latest")
        self.as_of_latest.setObjectName("as_of_latest_button")
        self.as_of_latest.setToolTip("Use the last row of the series")
        self.as_of_latest.clicked.connect(lambda: self._apply_as_of(LATEST))
        row = QHBoxLayout()
        row.setContentsMargins(0, 0, 0, 0)
        row.addWidget(self.as_of, 1)
        row.addWidget(self.as_of_latest)
        holder = QWidget()
        holder.setLayout(row)
        f1.addRow("As of", holder)
        self.as_of_problem = QLabel()
        self.as_of_problem.setObjectName("as_of_problem")
        self.as_of_problem.setProperty("role", "problem")
        self.as_of_problem.setWordWrap(True)
        self.as_of_problem.setVisible(False)
        f1.addRow(self.as_of_problem)
        # the same limit as every command (volbench.validate.PRICING_VOL_MAX, 500 % excluded)
        self.pricing_vol = _dspin("pricing_vol_spin", 0.1, 100 * validate.PRICING_VOL_MAX - 0.01, 2, " %", 0.25)
        self.pricing_vol.setToolTip("The proposed annualized volatility, in percent")
        f1.addRow("Pricing vol", self.pricing_vol)
        self.days = _spin("days_spin", 1, 5000, " days")
        self.days.setToolTip("Option life in days on the basis chosen in the Option life tab (trading days by "
                             "default: one bar each of daily data); an expiry date set there replaces it")
        f1.addRow("Days to expiry", self.days)
        outer.addWidget(g1)

        # --- level two: folding sections
        self.sections: dict[str, Section] = {}
        for key, title, open_ in SECTIONS:
            self.sections[key] = Section(key, title, open_=open_)
            outer.addWidget(self.sections[key])

        s = self.section("option")
        self.strike = s.add_row("Strike", _dspin("strike_spin", 0.0, 1e9, 4, "", 0.5))
        self.strike.setSpecialValueText("at the money")
        self.strike.setToolTip("Strike price; the lowest value means at the money (strike = last close)")
        self.rate = s.add_row("Rate", _dspin("rate_spin", -20.0, 50.0, 3, " %", 0.25))
        self.rate.setToolTip("Risk-free rate, continuously compounded, in percent a year")
        self.dividend = s.add_row("Dividend yield", _dspin("dividend_spin", -20.0, 50.0, 3, " %", 0.25))
        self.dividend.setToolTip("Dividend yield, continuously compounded, in percent a year")
        self.kind = s.add_row("Type", _combo("kind_combo", (("call", "Call"), ("put", "Put"))))

        s = self.section("estimators")
        self.estimator_boxes: dict[str, QCheckBox] = {}
        for key in REGISTRY:
            row = QHBoxLayout()
            row.setContentsMargins(0, 0, 0, 0)
            swatch = QLabel()
            swatch.setFixedSize(14, 14)
            swatch.setStyleSheet(f"background: {palette.estimator_colour(key)}; border-radius: 2px;")
            box = QCheckBox(estimator_name(key, state.ewma_lambda))
            box.setObjectName(f"estimator_{key}")
            box.setToolTip(estimator_help(key, state.ewma_lambda))
            row.addWidget(swatch)
            row.addWidget(box, 1)
            line = QWidget()
            line.setLayout(row)
            s.add_widget(line)
            self.estimator_boxes[key] = box
        self.ewma_lambda = s.add_row("EWMA decay", _dspin("ewma_lambda_spin", 0.5, 0.999, 3, "", 0.01))
        self.ewma_lambda.setToolTip(f"Weight of yesterday's variance in the EWMA; {EWMA_LAMBDA:g} is the "
                                    "standard daily decay (half-life about 11 bars). Higher: longer memory.")
        self.annualization = s.add_row("Annualization", _dspin("annualization_spin", 1, 100000, 0, " bars/yr", 1))
        self.annualization.setToolTip("Bars per year used to annualize: 252 for exchange trading days, "
                                      "365 for markets open every day")

        s = self.section("garch")
        self.garch_model = s.add_row("Model", _combo("garch_model_combo", garch_model_items()))
        self.garch_dist = s.add_row("Distribution", _combo("garch_dist_combo", garch_dist_items()))
        self.garch_model.setToolTip("GARCH-type model fitted to the selected series; 'All' fits every "
                                    "registered model and prefers the lowest BIC")
        self.garch_dist.setToolTip("Distribution of the standardized shocks (innovations)")

        recompute = QPushButton("Recompute all")
        recompute.setObjectName("recompute_button")
        recompute.setToolTip("Run every computation again for the current settings (F5)")
        recompute.clicked.connect(lambda: self.requested.emit("recompute"))
        self.recompute = recompute
        outer.addStretch(1)
        scroll.setWidget(body)
        pinned = QHBoxLayout()  # outside the scroll area: always visible, whatever the screen height
        pinned.setContentsMargins(6, 2, 6, 4)
        pinned.addWidget(self.recompute)
        lay.addLayout(pinned)
        self.setMinimumWidth(250)
        self._bind_all()
        self.as_of.editingFinished.connect(lambda: self._apply_as_of(self.as_of.text()))
        state.changed.connect(self._on_state)
        self._fill_series()
        self._write_as_of(state.as_of)

    def section(self, key: str) -> Section:
        """The folding section ``key`` (see :data:`SECTIONS`), to add a row to."""
        return self.sections[key]

    # ------------------------------------------------------------------ bindings
    def _bind(self, name, widget, signal, read, write) -> None:
        b = Binding(self.state, name, widget, signal, read, write)
        b.rejected.connect(self.notice)
        self.bindings.append(b)

    def _bind_all(self) -> None:
        self._bind("window", self.window, self.window.valueChanged, self.window.value, self.window.setValue)
        self._bind("annualization", self.annualization, self.annualization.valueChanged,
                   self.annualization.value, self.annualization.setValue)
        self._bind("linked", self.linked, self.linked.toggled, self.linked.isChecked,
                   lambda v: self.linked.setChecked(bool(v)))
        self._bind("ewma_lambda", self.ewma_lambda, self.ewma_lambda.valueChanged, self.ewma_lambda.value,
                   self.ewma_lambda.setValue)
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
    def _apply_as_of(self, text: str) -> None:
        """Apply a typed as-of date, or show why it cannot be used (beside the control and in the
        status bar; the text stays as typed so it can be corrected)."""
        value = (text or "").strip()
        value = None if value.lower() in ("", LATEST, validate.LAST) else value
        problem = None
        try:
            h = self.state.loaded()
            value = validate.as_of_for(h, value) if h is not None else (
                None if validate.as_of(value) is None else value)
            self.state.set("as_of", value)
        except VolbenchError as exc:
            problem = str(exc)
        self._show_as_of_problem(problem)
        if problem is None:
            self._write_as_of(self.state.as_of)
        else:
            self.notice.emit(f"As of: {problem}")

    def _show_as_of_problem(self, problem: str | None) -> None:
        self.as_of_problem.setText(problem or "")
        self.as_of_problem.setVisible(problem is not None)
        self.as_of.setProperty("invalid", problem is not None)
        self.as_of.style().unpolish(self.as_of)
        self.as_of.style().polish(self.as_of)

    def _write_as_of(self, value) -> None:
        self.as_of.setText(LATEST if value is None else str(value)[:10])

    def _update_date_range(self) -> None:
        h = self.state.loaded()
        span = "" if h is None or not h.n else f" This series runs from {h.first_date} to {h.last_date}."
        self.as_of.setToolTip("Last date used by every estimate, YYYY-MM-DD; 'latest' (or empty) for the "
                              f"last row. Press Enter to apply.{span}")
        self._write_as_of(self.state.as_of)
        self._show_as_of_problem(None)

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
        if "ewma_lambda" in names:
            for key, box in self.estimator_boxes.items():
                box.setText(estimator_name(key, self.state.ewma_lambda))
                box.setToolTip(estimator_help(key, self.state.ewma_lambda))
        if "as_of" in names:
            self._write_as_of(self.state.as_of)
            self._show_as_of_problem(None)
