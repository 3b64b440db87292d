"""A settings group that folds: a header button and a body with a form layout.

The settings column is two levels: the controls a trader changes all the time stay open, the
rest sit in groups that open with one click. :class:`Section` is one such group; its header
states how many controls it holds while folded, so nothing is hidden without a trace.
"""

from __future__ import annotations

from PySide6.QtCore import Qt, Signal
from PySide6.QtWidgets import QFormLayout, QSizePolicy, QToolButton, QVBoxLayout, QWidget


class Section(QWidget):
    """A titled group of controls that opens and folds (``objectName``: ``section_<key>``).

    Add rows with :meth:`add_row` (a label and a control) or :meth:`add_widget` (a full-width
    widget); :meth:`set_open` opens or folds it.
    """

    toggled = Signal(bool)

    def __init__(self, key: str, title: str, *, open_: bool = False, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.key, self.title = key, title
        self.setObjectName(f"section_{key}")
        self.header = QToolButton()
        self.header.setObjectName(f"section_{key}_header")
        self.header.setProperty("role", "section")
        self.header.setCheckable(True)
        self.header.setToolButtonStyle(Qt.ToolButtonStyle.ToolButtonTextBesideIcon)
        self.header.setSizePolicy(QSizePolicy.Policy.Expanding, QSizePolicy.Policy.Fixed)
        self.header.setAutoRaise(True)
        self.header.toggled.connect(self._on_toggled)
        self.body = QWidget()
        self.body.setObjectName(f"section_{key}_body")
        self.form = QFormLayout(self.body)
        self.form.setContentsMargins(14, 2, 2, 6)
        self.form.setFieldGrowthPolicy(QFormLayout.FieldGrowthPolicy.AllNonFixedFieldsGrow)
        lay = QVBoxLayout(self)
        lay.setContentsMargins(0, 0, 0, 0)
        lay.setSpacing(0)
        lay.addWidget(self.header)
        lay.addWidget(self.body)
        self._count = 0
        self.header.setChecked(open_)
        self._on_toggled(open_)

    def add_row(self, label: str, widget: QWidget) -> QWidget:
        self.form.addRow(label, widget)
        self._count += 1
        self._title()
        return widget

    def add_widget(self, widget: QWidget) -> QWidget:
        self.form.addRow(widget)
        self._count += 1
        self._title()
        return widget

    def is_open(self) -> bool:
        return self.header.isChecked()

    def set_open(self, on: bool) -> None:
        self.header.setChecked(on)

    def _on_toggled(self, on: bool) -> None:
        self.body.setVisible(on)
        self.header.setArrowType(Qt.ArrowType.DownArrow if on else Qt.ArrowType.RightArrow)
        self._title()
        self.toggled.emit(on)

    def _title(self) -> None:
        folded = "" if self.header.isChecked() or not self._count else f"  ({self._count})"
        self.header.setText(self.title + folded)
