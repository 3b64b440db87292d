"""The choices for reading price files, asked when files are opened (File > Open).

Each control maps to one field of :class:`~volbench.data.options.ImportOptions`; the dialog only
collects them and validates them through that class, so the window and the command line read
files the same way (docs/METHODS.md, Import).
"""

from __future__ import annotations

from PySide6.QtWidgets import (
    QCheckBox,
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QFormLayout,
    QLabel,
    QLineEdit,
    QSpinBox,
    QVBoxLayout,
    QWidget,
)

from volbench import validate
from volbench.data.options import ImportOptions
from volbench.errors import VolbenchError
from volbench.gui.state import Choices
from volbench.gui.wheel import guard_wheel

INFER = "infer from the file"
DELIMITER_ITEMS = ((INFER, None), ("comma ,", ","), ("semicolon ;", ";"), ("tab", "\t"), ("pipe |", "|"))
DECIMAL_ITEMS = ((INFER, None), ("point .", "."), ("comma ,", ","))
THOUSANDS_ITEMS = ((INFER, None), ("comma ,", ","), ("point .", "."), ("none", "none"))


def _combo(name: str, items, value) -> QComboBox:
    box = QComboBox()
    box.setObjectName(name)
    for text, data in items:
        box.addItem(text, data)
    box.setCurrentIndex(max(0, next((i for i, (_, d) in enumerate(items) if d == value), 0)))
    return box


class ImportDialog(QDialog):
    """Delimiter, decimal mark, thousands separator, date format, adjusted close, split repair and
    the calendar-gap threshold: every import option the command line has (``--gap-days`` included;
    leaving out flagged rows is the Data tab's checkbox).

    :meth:`values` gives the chosen fields as :class:`Choices` keywords; :meth:`accept` refuses
    (with the reason shown in the dialog) a combination :class:`ImportOptions` rejects.
    """

    def __init__(self, choices: Choices, files: int = 0, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("import_dialog")
        self.setWindowTitle("volbench: how to read the files")
        lay = QVBoxLayout(self)
        if files:
            lay.addWidget(QLabel(f"Reading {files} file{'s' if files != 1 else ''}. Leave a choice on "
                                 "'infer' unless the file needs it; volbench refuses to guess a number."))
        form = QFormLayout()
        self.delimiter = _combo("delimiter_combo", DELIMITER_ITEMS, choices.delimiter)
        self.decimal = _combo("decimal_combo", DECIMAL_ITEMS, choices.decimal)
        self.thousands = _combo("thousands_combo", THOUSANDS_ITEMS, choices.thousands)
        self.date_format = QLineEdit(choices.date_format or "")
        self.date_format.setObjectName("import_date_format_edit")
        self.date_format.setPlaceholderText("ISO (YYYY-MM-DD); e.g. %d/%m/%Y, or excel")
        self.use_adjusted = QCheckBox("Use the adjusted close when the file has one")
        self.use_adjusted.setObjectName("use_adjusted_check")
        self.use_adjusted.setChecked(choices.use_adjusted)
        self.adjust_splits = QCheckBox("Adjust detected splits (earlier prices divided by the ratio)")
        self.adjust_splits.setObjectName("adjust_splits_dialog_check")
        self.adjust_splits.setChecked(choices.adjust_splits)
        form.addRow("Delimiter", self.delimiter)
        form.addRow("Decimal mark", self.decimal)
        form.addRow("Thousands separator", self.thousands)
        form.addRow("Date format", self.date_format)
        self.gap_days = QSpinBox()
        self.gap_days.setObjectName("gap_days_spin")
        self.gap_days.setRange(1, 3650)
        self.gap_days.setSuffix(" days")
        self.gap_days.setValue(choices.gap_days)
        self.gap_days.setToolTip("Report calendar gaps longer than this many days (as --gap-days)")
        form.addRow("", self.use_adjusted)
        form.addRow("", self.adjust_splits)
        form.addRow("Report gaps over", self.gap_days)
        self.session_break = QLineEdit(choices.session_break or "")
        self.session_break.setObjectName("session_break_edit")
        self.session_break.setPlaceholderText("calendar date; e.g. 4h or 90min")
        self.session_break.setToolTip("Intraday files: a gap between bars longer than this starts a new session "
                                      "(as --session-break); empty: one session per calendar date")
        form.addRow("Session break", self.session_break)
        lay.addLayout(form)
        self.problem = QLabel("")
        self.problem.setObjectName("import_problem_label")
        self.problem.setWordWrap(True)
        self.problem.setProperty("role", "caption")
        lay.addWidget(self.problem)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel,
                                   parent=self)
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        lay.addWidget(buttons)
        guard_wheel(self)  # the wheel edits a list or number only once it has focus

    def values(self) -> dict:
        """The chosen import fields, as :class:`Choices` keywords."""
        return {
            "delimiter": self.delimiter.currentData(),
            "decimal": self.decimal.currentData(),
            "thousands": self.thousands.currentData(),
            "date_format": self.date_format.text().strip() or None,
            "use_adjusted": self.use_adjusted.isChecked(),
            "adjust_splits": self.adjust_splits.isChecked(),
            "gap_days": self.gap_days.value(),
            "session_break": self.session_break.text().strip() or None,
        }

    def options(self) -> ImportOptions:
        """The choices as the validated settings object; raises :class:`VolbenchError` if invalid
        (the session break included, checked by :func:`volbench.validate.session_break`)."""
        values = self.values()
        validate.session_break(values.pop("session_break"))
        return ImportOptions().with_changes(**values)

    def accept(self) -> None:
        try:
            self.options()
        except VolbenchError as exc:
            self.problem.setText(str(exc))
            return
        super().accept()
