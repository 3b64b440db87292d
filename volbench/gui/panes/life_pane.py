"""The option's life and its implied vol: days on a basis or an expiry date, the calendar and
trading days and ACT/365 years they make (the ``life`` job), and the implied vol of an observed
premium (the ``implied`` job), which can be taken as the pricing vol with one click."""

from __future__ import annotations

from pathlib import Path

from PySide6.QtCore import QDate
from PySide6.QtWidgets import (
    QComboBox,
    QDateEdit,
    QDoubleSpinBox,
    QFileDialog,
    QFormLayout,
    QGroupBox,
    QHBoxLayout,
    QLabel,
    QPushButton,
    QSpinBox,
    QVBoxLayout,
    QWidget,
)

from volbench.format import number, pct
from volbench.gui.binding import Binding
from volbench.gui.controller import Results
from volbench.gui.jobs import Absent
from volbench.gui.panes.base import Pane
from volbench.gui.state import WorkbenchState
from volbench.pricing.daycount import DAY_BASES
from volbench.pricing.implied import ImpliedVol

MODES = (("days", "Days on a basis"), ("expiry", "Expiry date"))


def _combo(name: str, items) -> QComboBox:
    box = QComboBox()
    box.setObjectName(name)
    for key, label in items:
        box.addItem(label, key)
    return box


class LifePane(Pane):
    key, title, place = "life", "Option life and implied vol", "tab"

    def __init__(self, state: WorkbenchState, results: Results, parent: QWidget | None = None) -> None:
        super().__init__(state, results, parent)
        self.bindings: list[Binding] = []
        outer = QVBoxLayout(self)
        outer.setContentsMargins(12, 12, 12, 12)

        g1 = QGroupBox("Option life")
        f1 = QFormLayout(g1)
        self.mode = _combo("life_mode_combo", MODES)
        self.mode.setToolTip("Give the life as a number of days on a basis, or as an expiry date")
        f1.addRow("Given as", self.mode)
        self.days = QSpinBox()
        self.days.setObjectName("life_days_spin")
        self.days.setRange(1, 36500)
        self.days.setKeyboardTracking(False)
        self.days.setToolTip("Days to expiry, counted on the basis below")
        f1.addRow("Days", self.days)
        self.basis = _combo("day_basis_combo", [(b, f"{b} days") for b in DAY_BASES])
        self.basis.setToolTip("trading: weekdays (one bar each of daily data); calendar: every day")
        f1.addRow("Basis", self.basis)
        self.expiry = QDateEdit()
        self.expiry.setObjectName("expiry_edit")
        self.expiry.setCalendarPopup(True)
        self.expiry.setDisplayFormat("yyyy-MM-dd")
        self.expiry.setKeyboardTracking(False)
        f1.addRow("Expiry", self.expiry)
        self.holidays = QPushButton("Holidays file…")
        self.holidays.setObjectName("holidays_button")
        self.holidays.setToolTip("Exchange holidays, one YYYY-MM-DD per line, left out of the trading-day count "
                                 "(the command line's --holidays FILE)")
        self.holidays.clicked.connect(self._ask_holidays)
        self.holidays_clear = QPushButton("No holidays")
        self.holidays_clear.setObjectName("holidays_clear_button")
        self.holidays_clear.clicked.connect(lambda: self.open_holidays(None))
        hrow = QHBoxLayout()
        hrow.addWidget(self.holidays)
        hrow.addWidget(self.holidays_clear)
        f1.addRow("Holidays", hrow)
        self.summary = QLabel()
        self.summary.setObjectName("life_summary")
        self.summary.setWordWrap(True)
        outer.addWidget(g1)
        outer.addWidget(self.summary)

        g2 = QGroupBox("Solve for vol from a premium")
        f2 = QFormLayout(g2)
        self.premium = QDoubleSpinBox()
        self.premium.setObjectName("premium_spin")
        self.premium.setRange(0.0, 1e9)
        self.premium.setDecimals(4)
        self.premium.setSingleStep(0.05)
        self.premium.setSpecialValueText("none")
        self.premium.setKeyboardTracking(False)
        self.premium.setToolTip("An observed premium of the option above (its strike, type, rate, yield and life)")
        f2.addRow("Premium", self.premium)
        self.use = QPushButton("Use as pricing vol")
        self.use.setObjectName("use_implied_button")
        self.use.setToolTip("Take this implied vol as the pricing vol of the comparison")
        self.use.clicked.connect(self._use_implied)
        f2.addRow(self.use)
        self.implied = QLabel()
        self.implied.setObjectName("implied_result")
        self.implied.setWordWrap(True)
        outer.addWidget(g2)
        outer.addWidget(self.implied)
        outer.addWidget(QLabel("Statistical estimates with model risk, not advice; your firm's validation policy "
                               "governs their use."))
        outer.addStretch(1)
        for box in (g1, g2, self.summary, self.implied):
            box.setMaximumWidth(760)

        self._bind("days", self.days, self.days.valueChanged, self.days.value, self.days.setValue)
        self._bind("day_basis", self.basis, self.basis.currentIndexChanged, self.basis.currentData,
                   lambda v: self.basis.setCurrentIndex(max(self.basis.findData(v), 0)))
        self._bind("expiry", self.expiry, self.expiry.dateChanged,
                   lambda: self.expiry.date().toString("yyyy-MM-dd"), self._write_expiry)
        self._bind("premium", self.premium, self.premium.valueChanged,
                   lambda: None if self.premium.value() <= 0 else self.premium.value(),
                   lambda v: self.premium.setValue(0.0 if v is None else v))
        self.mode.currentIndexChanged.connect(self._on_mode)
        state.changed.connect(self._on_state)
        results.updated.connect(self._on_results)
        self._show_mode()
        self._show_holidays()
        self.render()

    # ------------------------------------------------------------------ bindings
    def _bind(self, name, widget, signal, read, write) -> None:
        b = Binding(self.state, name, widget, signal, read, write)
        b.rejected.connect(self.notice)
        self.bindings.append(b)

    def unbind(self) -> None:
        for b in self.bindings:
            b.unbind()
        self.bindings.clear()

    def _write_expiry(self, value) -> None:
        if value is not None:
            self.expiry.setDate(QDate.fromString(str(value)[:10], "yyyy-MM-dd"))

    def _show_mode(self) -> None:
        by_date = self.state.expiry is not None
        self.mode.blockSignals(True)
        self.mode.setCurrentIndex(self.mode.findData("expiry" if by_date else "days"))
        self.mode.blockSignals(False)
        self.expiry.setEnabled(by_date)
        self.days.setEnabled(not by_date)
        self.basis.setEnabled(not by_date)

    def _on_mode(self) -> None:
        if self.mode.currentData() == "days":
            self.state.set("expiry", None)
            return
        life = self.results.get("life")  # keep the same option: its expiry as now counted
        expiry = life.expiry if life is not None else self.expiry.date().toString("yyyy-MM-dd")
        try:
            self.state.set("expiry", expiry)
        except Exception as exc:  # noqa: BLE001 - a refused value goes to the status line
            self.notice.emit(str(exc))
            self._show_mode()

    def _on_state(self, names) -> None:
        if "expiry" in names:
            self._show_mode()
        if "holidays_file" in names:
            self._show_holidays()

    def _ask_holidays(self) -> None:
        path, _ = QFileDialog.getOpenFileName(self, "Open exchange holidays", "",
                                              "CSV or text files (*.csv *.txt);;All files (*)")
        if path:
            self.open_holidays(path)

    def open_holidays(self, path: str | None) -> None:
        """Use an exchange-holidays file for the trading-day count (``None``: weekdays only); a
        refused file goes to the status line and changes nothing."""
        try:
            self.state.set("holidays_file", path)
        except Exception as exc:  # noqa: BLE001 - VolbenchError: shown, the state is unchanged
            self.notice.emit(str(exc))
        self._show_holidays()

    def _show_holidays(self) -> None:
        path = self.state.holidays_file
        self.holidays.setText("Holidays file…" if path is None else Path(path).name)
        self.holidays_clear.setEnabled(path is not None)

    def _use_implied(self) -> None:
        iv = self.results.get("implied")
        if isinstance(iv, ImpliedVol) and iv.ok:
            self.state.set("pricing_vol", iv.implied_vol)

    # ------------------------------------------------------------------ rendering
    def _on_results(self, kinds) -> None:
        if kinds & {"life", "implied", "comparison"}:
            self.render()

    def render(self) -> None:
        life = self.results.get("life")
        if life is None:
            self.summary.setText(self.results.problem("life") or "Load a price file to count the option's life.")
        else:
            lines = [(f"{life.as_of} to {life.expiry}: {life.calendar_days} calendar days = {life.years:.4f} "
                      f"years (ACT/365, the price's time); {life.trading_days} trading days (the history's "
                      "horizon).")]
            lines += [f"Note: {n}." for n in life.notes]
            self.summary.setText(" ".join(lines))
            if self.state.expiry is None:  # days mode: show the expiry the days reach (no state change)
                self.expiry.blockSignals(True)
                self._write_expiry(life.expiry)
                self.expiry.blockSignals(False)
        iv = self.results.get("implied")
        self.use.setEnabled(isinstance(iv, ImpliedVol) and iv.ok)
        if isinstance(iv, Absent):
            self.implied.setText(iv.reason)
        elif iv is None:
            self.implied.setText(self.results.problem("implied") or "")
        elif iv.ok:
            self.implied.setText(f"Implied vol {pct(iv.implied_vol, 2)} (Black-Scholes-Merton {iv.kind}, "
                                 f"{iv.years:.4f} years); price check {number(iv.price_check, 4)}, vega "
                                 f"{number(iv.vega / 100, 4)} per vol point.")
        else:
            self.implied.setText(f"No implied vol ({iv.status.replace('_', ' ')}): {iv.message}. Bounds: "
                                 f"{iv.lower_bound:.6g} < {iv.kind} < {iv.upper_bound:.6g}.")
