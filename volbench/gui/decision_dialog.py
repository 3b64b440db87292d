"""The decision record the window's exports carry: the chosen vol, why, and who prepared it.

Each control maps to one field of :class:`~volbench.settings.DecisionSettings` (as
``--decision-vol``, ``--rationale`` and ``--prepared-by`` on the command line); the dialog only
collects them and validates them through that class, so a value gets the same answer as on the
command line.
"""

from __future__ import annotations

from PySide6.QtWidgets import (
    QDialog,
    QDialogButtonBox,
    QFormLayout,
    QLabel,
    QLineEdit,
    QPlainTextEdit,
    QVBoxLayout,
    QWidget,
)

from volbench.errors import VolbenchError
from volbench.settings import DecisionSettings


class DecisionDialog(QDialog):
    """Chosen vol (a decimal, empty for none), rationale and preparer; :meth:`decision` gives the
    record (``None`` when every field is empty); :meth:`accept` refuses a value the record rejects."""

    def __init__(self, decision: DecisionSettings | None = None, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("decision_dialog")
        self.setWindowTitle("volbench: decision record")
        d = decision or DecisionSettings()
        lay = QVBoxLayout(self)
        intro = QLabel("Exports carry this record: the chosen vol against every candidate and its interval, "
                       "the cone and the scaling verdicts. Leave every field empty for none.")
        intro.setWordWrap(True)
        lay.addWidget(intro)
        form = QFormLayout()
        self.vol = QLineEdit("" if d.vol is None else repr(d.vol))
        self.vol.setObjectName("decision_vol_edit")
        self.vol.setPlaceholderText("e.g. 0.24 for 24%")
        self.vol.setToolTip("The vol chosen for pricing, a decimal below 5 (as --decision-vol)")
        self.prepared_by = QLineEdit(d.prepared_by)
        self.prepared_by.setObjectName("prepared_by_edit")
        self.rationale = QPlainTextEdit(d.rationale)
        self.rationale.setObjectName("rationale_edit")
        self.rationale.setFixedHeight(90)
        form.addRow("Chosen vol", self.vol)
        form.addRow("Prepared by", self.prepared_by)
        form.addRow("Rationale", self.rationale)
        lay.addLayout(form)
        self.problem = QLabel("")
        self.problem.setObjectName("decision_problem_label")
        self.problem.setWordWrap(True)
        lay.addWidget(self.problem)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel,
                                   parent=self)
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        lay.addWidget(buttons)

    def decision(self) -> DecisionSettings | None:
        """The record (validated); ``None`` when every field is empty. Raises :class:`VolbenchError`."""
        vol = self.vol.text().strip()
        why, who = self.rationale.toPlainText().strip(), self.prepared_by.text().strip()
        if not vol and not why and not who:
            return None
        return DecisionSettings(vol=vol or None, rationale=why, prepared_by=who)

    def accept(self) -> None:
        try:
            self.decision()
        except VolbenchError as exc:
            self.problem.setText(str(exc))
            return
        super().accept()
