"""The data pane: loaded series with a quality badge, their findings, and the flagged-rows choice."""

from __future__ import annotations

import pandas as pd
from PySide6.QtCore import Qt
from PySide6.QtWidgets import (
    QCheckBox,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QPushButton,
    QSplitter,
    QVBoxLayout,
    QWidget,
)

from volbench.data.history import PriceHistory
from volbench.gui import palette
from volbench.gui.binding import Binding
from volbench.gui.controller import Results
from volbench.gui.panes.base import Pane
from volbench.gui.state import WorkbenchState
from volbench.gui.widgets import FrameTable

SERIES_COLUMNS = ["series", "file", "rows", "first date", "last date", "columns", "quality"]
FINDING_COLUMNS = ["severity", "kind", "line", "date", "column", "message"]


def quality_badge(h: PriceHistory) -> tuple[str, str]:
    """Short quality summary of a history and its colour (worst severity)."""
    counts = {s: sum(f.severity == s for f in h.findings) for s in ("error", "warning", "info")}
    parts = []
    if counts["error"]:
        parts.append(f"{counts['error']} row{'s' if counts['error'] > 1 else ''} unusable")
    if counts["warning"]:
        parts.append(f"{counts['warning']} warning{'s' if counts['warning'] > 1 else ''}")
    if counts["info"]:
        parts.append(f"{counts['info']} note{'s' if counts['info'] > 1 else ''}")
    worst = next((s for s in ("error", "warning", "info") if counts[s]), None)
    if worst is None:
        return "clean", palette.STATUS_COLOURS["consistent"]
    return ", ".join(parts), palette.SEVERITY_COLOURS[worst]


class DataPane(Pane):
    """Series table (click to select), findings of the selected series, flagged-rows checkbox.

    "Open price files…" asks the window for its dialog (``requested("open")``); a change of how
    files are read makes the window read them again (it watches the state).
    """

    key, title = "data", "Data"

    def __init__(self, state: WorkbenchState, results: Results, parent: QWidget | None = None) -> None:
        super().__init__(state, results, parent)
        lay = QVBoxLayout(self)
        top = QHBoxLayout()
        open_button = QPushButton("Open price files…")
        open_button.setObjectName("open_button")
        open_button.clicked.connect(lambda: self.requested.emit("open"))
        top.addWidget(open_button)
        top.addSpacing(12)
        top.addWidget(QLabel("Date format"))
        self.date_format = QLineEdit()
        self.date_format.setObjectName("date_format_edit")
        self.date_format.setPlaceholderText("ISO (YYYY-MM-DD)")
        self.date_format.setToolTip("strftime format for non-ISO dates, e.g. %d/%m/%Y; files are read again")
        self.date_format.setMaximumWidth(160)
        top.addWidget(self.date_format)
        top.addSpacing(12)
        self.exclude = QCheckBox("Leave out flagged rows")
        self.exclude.setObjectName("exclude_flagged_check")
        self.exclude.setToolTip("Rows flagged by warnings (high below low, duplicate dates, jumps, stale runs) "
                                "are left out of every computation; the choice is recorded with results "
                                "and exports. Rows with errors are always left out.")
        top.addWidget(self.exclude)
        top.addSpacing(12)
        self.adjust_splits = QCheckBox("Adjust splits")
        self.adjust_splits.setObjectName("adjust_splits_check")
        self.adjust_splits.setToolTip("Back-adjust every detected unadjusted split: earlier open/high/low/close "
                                      "divided by the split ratio, volume multiplied by it. Each adjustment is "
                                      "listed below and recorded with exports; files are read again.")
        top.addWidget(self.adjust_splits)
        top.addStretch(1)
        lay.addLayout(top)

        split = QSplitter(Qt.Orientation.Vertical)
        upper = QWidget()
        ul = QVBoxLayout(upper)
        ul.setContentsMargins(0, 0, 0, 0)
        heading = QLabel("Loaded series (click one to analyse it)")
        heading.setProperty("role", "heading")
        ul.addWidget(heading)
        self.series_table = FrameTable("series_table")
        self.series_table.clicked.connect(self._on_series_clicked)
        ul.addWidget(self.series_table)
        lower = QWidget()
        ll = QVBoxLayout(lower)
        ll.setContentsMargins(0, 0, 0, 0)
        self.findings_heading = QLabel("Findings")
        self.findings_heading.setProperty("role", "heading")
        ll.addWidget(self.findings_heading)
        self.findings_table = FrameTable("findings_table")
        ll.addWidget(self.findings_table)
        self.policy = QLabel()
        self.policy.setObjectName("policy_label")
        self.policy.setProperty("role", "caption")
        self.policy.setWordWrap(True)
        ll.addWidget(self.policy)
        split.addWidget(upper)
        split.addWidget(lower)
        split.setSizes([200, 300])
        lay.addWidget(split, 1)

        self.bindings = [
            Binding(state, "exclude_flagged", self.exclude, self.exclude.toggled,
                    self.exclude.isChecked, lambda v: self.exclude.setChecked(bool(v))),
            Binding(state, "date_format", self.date_format, self.date_format.editingFinished,
                    lambda: self.date_format.text().strip() or None,
                    lambda v: self.date_format.setText(v or "")),
            Binding(state, "adjust_splits", self.adjust_splits, self.adjust_splits.toggled,
                    self.adjust_splits.isChecked, lambda v: self.adjust_splits.setChecked(bool(v))),
        ]
        state.changed.connect(self._on_state)
        self.render()

    def unbind(self) -> None:
        for b in self.bindings:
            b.unbind()

    def _on_state(self, names) -> None:
        if names & {"histories", "selected", "exclude_flagged"}:
            self.render()

    def _on_series_clicked(self, index) -> None:
        name = self.series_table.table_model.cell(index.row(), "series")
        self.state.set("selected", name)

    # ------------------------------------------------------------------ render
    def render(self) -> None:
        rows, fg = [], {}
        for i, h in enumerate(self.state.histories):
            badge, colour = quality_badge(h)
            rows.append([h.name, h.source.name if h.source else "", h.n, h.first_date, h.last_date,
                         ", ".join(c for c in ("open", "high", "low", "close", "volume") if c in h.columns),
                         badge])
            fg[(i, 6)] = colour
        frame = pd.DataFrame(rows, columns=SERIES_COLUMNS)
        self.series_table.set_frame(frame, fg=fg, right=("rows",))
        names = [h.name for h in self.state.histories]
        if self.state.selected in names:
            self.series_table.selectRow(names.index(self.state.selected))
        self._render_findings()

    def _render_findings(self) -> None:
        h = self.state.loaded()
        if h is None:
            self.findings_table.set_frame(pd.DataFrame(columns=FINDING_COLUMNS))
            self.findings_heading.setText("Findings")
            self.policy.setText("")
            return
        rows, fg = [], {}
        for i, f in enumerate(h.findings):
            rows.append([f.severity, f.kind.replace("_", " "), "" if f.line is None else f.line,
                         f.date or "", f.column or "", f.message])
            fg[(i, 0)] = palette.SEVERITY_COLOURS.get(f.severity, palette.FOREGROUND)
        raw = pd.DataFrame([f.as_dict() for f in h.findings],
                           columns=["severity", "kind", "line", "date", "column", "message"])
        self.findings_table.set_frame(pd.DataFrame(rows, columns=FINDING_COLUMNS), raw, fg=fg,
                                      right=("line",))
        self.findings_heading.setText(f"Findings for {h.name} ({len(h.findings)})" if h.findings
                                      else f"Findings for {h.name}: none, the file reads cleanly")
        flagged = len(h.flagged_lines)
        errors = sum(f.severity == "error" for f in h.findings)
        if self.state.exclude_flagged:
            what = f"{flagged} flagged row{'s' if flagged != 1 else ''} left out of every result"
        else:
            what = f"{flagged} flagged row{'s' if flagged != 1 else ''} kept (tick the box to leave them out)"
        splits = "".join(f" Split adjusted: {a.label} on {a.date} (line {a.line}), earlier prices divided by "
                         f"{a.ratio:g}." for a in h.adjustments)
        self.policy.setText(f"{what}; {errors} unusable row{'s' if errors != 1 else ''} always left out. "
                            f"The choice is recorded with exports and sessions.{splits}")
