"""Inputs change only by deliberate action: the mouse wheel over a control that has no keyboard
focus scrolls the panel around it instead of changing the value.

Spin boxes, date edits and combo boxes change their value on every wheel notch by default, so
scrolling a settings column with the mouse would silently edit whatever control passes under the
pointer. :func:`guard_wheel` gives every such control under a widget a focus policy that the wheel
does not satisfy (click or Tab to focus it) and an event filter that passes wheel events on to
the parent while the control is unfocused: the scroll area scrolls, the value stays. Once the
user clicks into a control, the wheel edits it as usual.

The window calls :func:`guard_wheel` on itself after every pane is built, so controls that panes
add later are covered without each pane doing anything (a pane that creates controls after
start-up calls it on itself).
"""

from __future__ import annotations

from PySide6.QtCore import QEvent, QObject, QPointF, Qt
from PySide6.QtGui import QWheelEvent
from PySide6.QtWidgets import (
    QAbstractScrollArea,
    QAbstractSpinBox,
    QApplication,
    QComboBox,
    QWidget,
)

GUARDED = (QAbstractSpinBox, QComboBox)
"""Controls whose value the wheel changes (QDateEdit and QDoubleSpinBox are QAbstractSpinBox)."""


class WheelGuard(QObject):
    """Event filter: a wheel event on an unfocused control goes to its parent instead.

    The filter stops the control from handling the event and sends a copy, in its coordinates, to
    the viewport of the nearest scroll area around the control (Qt does not pass a re-sent wheel
    event on to parents by itself), else to the parent.
    """

    def eventFilter(self, obj: QObject, event: QEvent) -> bool:
        if event.type() != QEvent.Type.Wheel or not isinstance(obj, QWidget) or obj.hasFocus():
            return False
        parent = obj.parentWidget()
        while parent is not None and not isinstance(parent, QAbstractScrollArea):
            parent = parent.parentWidget()
        parent = parent.viewport() if parent is not None else obj.parentWidget()
        if parent is not None:
            pos = QPointF(obj.mapTo(parent, event.position().toPoint()))
            copy = QWheelEvent(pos, event.globalPosition(), event.pixelDelta(), event.angleDelta(),
                               event.buttons(), event.modifiers(), event.phase(), event.inverted())
            QApplication.sendEvent(parent, copy)
        return True


_GUARD_PROPERTY = "volbench_wheel_guarded"


def guard_wheel(root: QWidget, guard: WheelGuard | None = None) -> list[QWidget]:
    """Guard every spin box, date edit and combo box under ``root`` (and ``root`` itself); returns
    the controls newly guarded. Calling it again only guards controls added since."""
    guard = guard or _shared_guard(root)
    found = [w for kind in GUARDED for w in root.findChildren(kind)]
    if isinstance(root, GUARDED):
        found.append(root)
    fresh = []
    for w in found:
        if w.property(_GUARD_PROPERTY):
            continue
        w.setFocusPolicy(Qt.FocusPolicy.StrongFocus)  # the wheel no longer gives focus
        w.installEventFilter(guard)
        w.setProperty(_GUARD_PROPERTY, True)
        fresh.append(w)
    return fresh


def is_guarded(widget: QWidget) -> bool:
    return bool(widget.property(_GUARD_PROPERTY))


def _shared_guard(root: QWidget) -> WheelGuard:
    guard = root.findChild(WheelGuard, "wheel_guard")
    if guard is None:
        guard = WheelGuard(root)
        guard.setObjectName("wheel_guard")
    return guard
