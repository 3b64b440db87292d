"""The book at a glance: every series of a folder surveyed at once, in a sortable, filterable table.

The survey is the ``survey`` job of :mod:`volbench.gui.jobs` (``volbench survey`` with the window's
settings: window, annualization, cone estimator, option life, pricing vol, GARCH model), run in
the background by the window's controller, so the status bar shows its progress and Cancel stops
it. Double-clicking a row shows that series in the other panes (its file is opened first when it
is not loaded yet).
"""

from __future__ import annotations

import math

from PySide6.QtCore import Qt
from PySide6.QtWidgets import (
    QAbstractItemView,
    QCheckBox,
    QComboBox,
    QFileDialog,
    QHBoxLayout,
    QLabel,
    QPushButton,
    QSpinBox,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from volbench.errors import VolbenchError
from volbench.format import pct
from volbench.gui.controller import Results
from volbench.gui.jobs import SurveyRequest
from volbench.gui.panes.base import Pane
from volbench.gui.state import WorkbenchState
from volbench.survey import SurveyResult
from volbench.survey.report import VERDICT_ORDER, survey_csv, survey_json

COLUMNS = ["series", "rows", "as of", "vol", "95% interval", "vol over life", "cone pctl", "pricing vol pctl",
           "verdicts", "forward vol", "findings e/w/i", "not available / error"]
FORWARD = COLUMNS.index("forward vol")
MARKS = {"consistent": "+", "doubtful": "?", "rejected": "x"}
FILTERS = {
    "every series": lambda r: True,
    "surveyed": lambda r: r.ok,
    "failed": lambda r: not r.ok,
    "a verdict rejected": lambda r: "rejected" in r.verdicts.values(),
    "no verdict rejected": lambda r: r.ok and "rejected" not in r.verdicts.values(),
    "every verdict consistent": lambda r: bool(r.verdicts) and set(r.verdicts.values()) == {"consistent"},
}
"""Verdict filters of the table, by the label shown."""
CAPTION = ("vol and interval: the cone estimator over the estimation window ending at the as-of date, with "
           "its 95% interval; vol over life: the same estimator over the option's life, and cone pctl where it "
           "(and the pricing vol) sits in the series' own cone at the option's life; verdicts: variance proportional "
           "to horizon, normal, independent increments, negligible drift (+ consistent, ? doubtful, x rejected, "
           "- not available). Estimates are statistical and carry model risk; they are not advice.")


class _Item(QTableWidgetItem):
    """A cell that sorts by its number (missing values last), not by its text."""

    def __init__(self, text: str, key=None) -> None:
        super().__init__(text)
        self.key = key
        self.setFlags(Qt.ItemFlag.ItemIsSelectable | Qt.ItemFlag.ItemIsEnabled)
        if isinstance(key, (int, float)):
            self.setTextAlignment(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)

    def __lt__(self, other) -> bool:
        a, b = self.key, getattr(other, "key", None)
        if isinstance(a, (int, float)) and isinstance(b, (int, float)):
            return a < b
        if isinstance(a, (int, float)) != isinstance(b, (int, float)):
            return isinstance(a, (int, float))  # numbers before blanks
        return self.text().lower() < other.text().lower()


def _num(x) -> float | None:
    return None if x is None or not math.isfinite(x) else float(x)


def _p(x) -> str:
    return "n/a" if x is None else f"{x:.0f}"


class SurveyPane(Pane):
    """Survey a folder (or the loaded files) and list every series; filter, sort, open one."""

    key, title = "survey", "Survey"

    def __init__(self, state: WorkbenchState, results: Results, parent: QWidget | None = None) -> None:
        super().__init__(state, results, parent)
        self._hooked = None  # the window whose controller runs the survey (connected once)
        self._pending_select: str | None = None

        self.folder_button = QPushButton("Survey a folder…")
        self.folder_button.setObjectName("survey_folder_button")
        self.folder_button.setToolTip("Every price file in a folder, one row per series, in the background")
        self.folder_button.clicked.connect(self.ask_folder)
        self.loaded_button = QPushButton("Survey the loaded files")
        self.loaded_button.setObjectName("survey_loaded_button")
        self.loaded_button.clicked.connect(lambda: self.survey(self.state.files))
        self.garch_box = QCheckBox("with GARCH forward vol")
        self.garch_box.setObjectName("survey_garch_box")
        self.garch_box.setToolTip("Fit the chosen GARCH model to every series (slower: a fit per series)")
        self.status = QLabel("Choose a folder to survey every series in it with the current settings.")
        self.status.setObjectName("survey_status")
        self.status.setWordWrap(True)
        self.save_button = QPushButton("Save table…")
        self.save_button.setObjectName("survey_save_button")
        self.save_button.setToolTip("Write every series of the survey (not only the rows shown) as CSV or JSON, "
                                    "as 'volbench survey --format csv|json' does")
        self.save_button.clicked.connect(self.ask_save)
        self.save_button.setEnabled(False)
        top = QHBoxLayout()
        for w in (self.folder_button, self.loaded_button, self.garch_box, self.save_button):
            top.addWidget(w)
        top.addWidget(self.status, 1)

        self.filter_combo = QComboBox()
        self.filter_combo.setObjectName("survey_filter_combo")
        self.filter_combo.addItems(list(FILTERS))
        self.low_spin, self.high_spin = QSpinBox(), QSpinBox()
        for spin, name, value in ((self.low_spin, "survey_low_spin", 0), (self.high_spin, "survey_high_spin", 100)):
            spin.setObjectName(name)
            spin.setRange(0, 100)
            spin.setValue(value)
            spin.valueChanged.connect(self.apply_filter)
        self.filter_combo.currentIndexChanged.connect(self.apply_filter)
        self.shown_label = QLabel()
        self.shown_label.setObjectName("survey_shown")
        filters = QHBoxLayout()
        filters.addWidget(QLabel("Show"))
        filters.addWidget(self.filter_combo)
        filters.addWidget(QLabel("cone percentile from"))
        filters.addWidget(self.low_spin)
        filters.addWidget(QLabel("to"))
        filters.addWidget(self.high_spin)
        filters.addWidget(self.shown_label, 1)

        self.table = QTableWidget(0, len(COLUMNS))
        self.table.setObjectName("survey_table")
        self.table.setHorizontalHeaderLabels(COLUMNS)
        self.table.setSortingEnabled(True)
        self.table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.table.setAlternatingRowColors(True)
        self.table.verticalHeader().setVisible(False)
        self.table.horizontalHeader().setStretchLastSection(True)
        self.table.sortByColumn(0, Qt.SortOrder.AscendingOrder)
        self.table.cellDoubleClicked.connect(self._on_double_click)
        self.caption = QLabel(CAPTION)
        self.caption.setObjectName("survey_caption")
        self.caption.setProperty("role", "caption")
        self.caption.setWordWrap(True)

        lay = QVBoxLayout(self)
        lay.addLayout(top)
        lay.addLayout(filters)
        lay.addWidget(self.table, 1)
        lay.addWidget(self.caption)
        results.updated.connect(self._on_results)
        state.changed.connect(self._on_state)
        self.render()

    # ------------------------------------------------------------------ running
    def ask_folder(self) -> None:
        folder = QFileDialog.getExistingDirectory(self, "Survey every price file in a folder")
        if folder:
            self.survey([folder])

    def _window(self):
        from volbench.gui.window import (
            MainWindow,  # the window imports the panes: imported when used
        )

        win = self.window()
        return win if isinstance(win, MainWindow) else None

    def survey(self, paths) -> None:
        """Survey ``paths`` (files, folders, patterns) in the background with the window's settings."""
        paths = tuple(str(p) for p in paths)
        win = self._window()
        if not paths:
            self.status.setText("Nothing to survey: choose a folder, or load price files first.")
            return
        if win is None:
            self.status.setText("The survey runs inside the workbench window.")
            return
        if self._hooked is not win:
            win.controller.finished.connect(self._on_finished)
            win.controller.failed.connect(self._on_failed)
            win.dispatcher.busy.connect(self._on_busy)
            win.files_loaded.connect(self._after_load)
            self._hooked = win
        workers = 1 if win.dispatcher.synchronous else None
        self.results.wait_for("survey", f"Surveying {len(paths)} path(s)…")
        self.status.setText(f"Surveying {', '.join(paths[:3])}{' …' if len(paths) > 3 else ''} "
                            "(progress and Cancel in the status bar)")
        win.controller.run("survey", SurveyRequest(paths, workers, self.garch_box.isChecked()))

    def _on_finished(self, kind: str, value) -> None:
        if kind == "survey":
            self.results.put("survey", value)
            self.results.announce({"survey"})

    def _on_failed(self, kind: str, exc) -> None:
        if kind == "survey":
            from volbench.gui.dialogs import error_text

            self.results.fail("survey", error_text(exc))
            self.results.announce({"survey"})

    def _on_busy(self, busy: bool) -> None:
        if not busy and self.results.is_pending("survey"):  # stopped with Cancel: nothing arrives
            self.results.fail("survey", "Survey stopped before every file was read; press a button to run it again.")
            self.results.announce({"survey"})

    # ------------------------------------------------------------------ rendering
    def _on_results(self, kinds) -> None:
        if "survey" in kinds:
            self.render()

    def _on_state(self, names) -> None:
        if "histories" in names and self._pending_select is not None:
            self._after_load()

    def ask_save(self) -> None:
        path, _filter = QFileDialog.getSaveFileName(self, "Save the survey", "survey.csv",
                                                   "CSV (*.csv);;JSON (*.json)")
        if path:  # the dialog asked before replacing a file
            self.save(path, overwrite=True)

    def save(self, path, *, overwrite: bool = False):
        """Write the survey to ``path`` (``.json``: JSON, else CSV), atomically; returns the path."""
        from pathlib import Path

        from volbench.export.atomic import atomic_write

        result = self.results.get("survey")
        if not isinstance(result, SurveyResult):
            self.notice.emit("Nothing to save yet: run a survey first.")
            return None
        text = survey_json(result) if Path(path).suffix.lower() == ".json" else survey_csv(result)
        try:
            written = atomic_write(path, text, overwrite=overwrite)
        except VolbenchError as exc:
            self.notice.emit(str(exc))
            return None
        self.notice.emit(f"Saved the survey of {len(result.records)} series to {written}.")
        return written

    def render(self) -> None:
        result = self.results.get("survey")
        self.save_button.setEnabled(isinstance(result, SurveyResult))
        if not isinstance(result, SurveyResult):
            self.table.setRowCount(0)
            problem = self.results.problem("survey")
            if problem:
                self.status.setText(problem)
            self.shown_label.setText("")
            return
        s = result.settings
        engine = "in one process" if result.engine == "serial" else f"on {result.workers} {result.engine} worker(s)"
        self.status.setText(
            f"{len(result.records)} series ({result.failed} failed) in {result.elapsed_s:.1f} s {engine}; "
            f"window {s.estimate_window} bars, option life {s.days} bars, cone of {s.cone_estimator}, "
            f"annualized with {s.annualization:g} bars/year")
        estimator = s.cone_estimator
        self.table.setSortingEnabled(False)
        self.table.setRowCount(len(result.records))
        for i, r in enumerate(result.records):
            e = r.estimates.get(estimator)
            marks = "".join(MARKS.get(r.verdicts.get(p, ""), "-") for p in VERDICT_ORDER)
            missing = r.error or "; ".join(f"{k}: {v}" for k, v in r.unavailable.items())
            cells = [
                _Item(r.name, r.name.lower()),
                _Item("" if r.rows is None else f"{r.rows:,}", r.rows),
                _Item(r.as_of or "", r.as_of),
                _Item(pct(e.vol) if e else "n/a", _num(e.vol) if e else None),
                _Item(f"{pct(e.ci_low)} - {pct(e.ci_high)}" if e else "n/a", _num(e.ci_low) if e else None),
                _Item(pct(r.current_vol), _num(r.current_vol)),
                _Item(_p(r.cone_percentile), _num(r.cone_percentile)),
                _Item(_p(r.pricing_vol_percentile) if r.pricing_vol is not None else "",
                      _num(r.pricing_vol_percentile)),
                _Item(marks if r.ok else "", sum(v == "rejected" for v in r.verdicts.values()) if r.ok else None),
                _Item(pct(r.forward_vol) if s.with_garch else "", _num(r.forward_vol)),
                _Item("/".join(str(r.findings.get(k, 0)) for k in ("error", "warning", "info")) if r.findings else "",
                      r.findings.get("error", 0) * 1e6 + r.findings.get("warning", 0) if r.findings else None),
                _Item(missing, missing),
            ]
            cells[0].setData(Qt.ItemDataRole.UserRole, i)
            if r.forward_vol_source:
                cells[FORWARD].setToolTip(r.forward_vol_source)
            cells[-1].setToolTip(missing)
            for col, item in enumerate(cells):
                self.table.setItem(i, col, item)
        self.table.setHorizontalHeaderLabels([
            f"vol ({s.estimate_window} bars)" if c == "vol" else f"vol over life ({s.days} bars)"
            if c == "vol over life" else c for c in COLUMNS])
        self.table.setColumnHidden(FORWARD, not s.with_garch)
        self.table.setSortingEnabled(True)
        self.table.resizeColumnsToContents()
        self.apply_filter()

    def record_at(self, row: int):
        """The survey record shown in table row ``row`` (whatever the sort order)."""
        result = self.results.get("survey")
        item = self.table.item(row, 0)
        return None if item is None or result is None else result.records[item.data(Qt.ItemDataRole.UserRole)]

    def apply_filter(self, *_args) -> None:
        """Hide the rows the verdict filter and the cone-percentile range leave out."""
        keep = FILTERS[self.filter_combo.currentText()]
        low, high = self.low_spin.value(), self.high_spin.value()
        full_range = low == 0 and high == 100
        shown = 0
        for row in range(self.table.rowCount()):
            r = self.record_at(row)
            ok = r is not None and keep(r) and (full_range or (
                r.cone_percentile is not None and low <= r.cone_percentile <= high))
            self.table.setRowHidden(row, not ok)
            shown += ok
        self.shown_label.setText(f"{shown} of {self.table.rowCount()} series shown")

    # ------------------------------------------------------------------ opening a series
    def _on_double_click(self, row: int, _col: int) -> None:
        r = self.record_at(row)
        if r is None:
            return
        if self.state.loaded(r.name) is not None:
            self.state.set("selected", r.name)
            self.notice.emit(f"Showing {r.name} in the other panes.")
            return
        win = self._window()
        if r.source is None or win is None:
            self.notice.emit(f"{r.name} has no file to open.")
            return
        self._pending_select = r.name
        self.notice.emit(f"Opening {r.source}…")
        win.open_files([r.source])

    def _after_load(self, *_args) -> None:
        name, self._pending_select = self._pending_select, None
        if name is not None and self.state.loaded(name) is not None:
            self.state.set("selected", name)
