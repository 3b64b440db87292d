"""Inputs change only by deliberate action: the wheel over an unfocused control scrolls the panel,
a recompute triggered by an input shows a visible cue, and a stale error leaves the status bar."""

from __future__ import annotations

from PySide6.QtCore import QPoint, QPointF, Qt
from PySide6.QtGui import QWheelEvent
from PySide6.QtWidgets import (
    QAbstractSpinBox,
    QApplication,
    QComboBox,
    QLabel,
    QScrollArea,
    QSpinBox,
    QWidget,
)

from volbench.gui.wheel import is_guarded


def wheel(widget, notches: int = -3) -> None:
    """Send a mouse-wheel event (``notches`` of 120 units; negative scrolls down) to ``widget``."""
    centre = QPointF(widget.width() / 2, widget.height() / 2)
    glob = QPointF(widget.mapToGlobal(centre.toPoint()))
    ev = QWheelEvent(centre, glob, QPoint(0, 0), QPoint(0, 120 * notches), Qt.MouseButton.NoButton,
                     Qt.KeyboardModifier.NoModifier, Qt.ScrollPhase.NoScrollPhase, False)
    QApplication.sendEvent(widget, ev)


def test_every_spin_box_and_combo_box_of_the_window_is_guarded(make_window):
    w = make_window()
    controls = w.findChildren(QAbstractSpinBox) + w.findChildren(QComboBox)
    assert len(controls) >= 10
    assert all(is_guarded(c) for c in controls), [c.objectName() for c in controls if not is_guarded(c)]


def test_a_wheel_over_an_unfocused_control_changes_nothing(make_window, kestrel, qtbot):
    w = make_window(window=20, days=63)
    w.resize(1366, 500)  # short enough that the settings column scrolls
    w.show()
    qtbot.waitExposed(w)
    w.open_files([kestrel])
    before = w.state.choices
    days = w.findChild(QSpinBox, "days_spin")
    assert not days.hasFocus()
    for name in ("days_spin", "window_spin", "pricing_vol_spin", "garch_model_combo", "series_combo"):
        control = w.findChild(QWidget, name)
        wheel(control, -3)
        wheel(control, +2)
    assert w.state.choices == before and days.value() == 63
    assert not w.findChild(QLabel, "changed_cue").isVisible()


def test_the_wheel_scrolls_the_settings_panel_instead(make_window, qtbot):
    w = make_window()
    w.resize(1366, 420)
    w.show()
    qtbot.waitExposed(w)
    pane = w.panes["controls"]
    scroll = pane.findChild(QScrollArea)
    bar = scroll.verticalScrollBar()
    for s in pane.sections.values():
        s.set_open(True)
    QApplication.processEvents()
    assert bar.maximum() > 0
    bar.setValue(0)
    wheel(w.findChild(QSpinBox, "window_spin"), -3)
    assert bar.value() > 0  # the panel moved, the value did not
    assert w.state.window == 20


def test_a_focused_control_still_takes_the_wheel(make_window, qtbot):
    w = make_window(window=20)
    w.show()
    qtbot.waitExposed(w)
    spin = w.findChild(QSpinBox, "window_spin")
    spin.setFocus(Qt.FocusReason.MouseFocusReason)
    QApplication.processEvents()
    if not spin.hasFocus():  # offscreen platforms may refuse focus to an inactive window
        w.activateWindow()
        spin.setFocus()
        QApplication.processEvents()
    assert spin.hasFocus()
    wheel(spin, +1)
    assert w.state.window != 20


def test_a_recompute_after_an_input_shows_the_changed_cue(make_window, kestrel):
    w = make_window(window=20)
    w.open_files([kestrel])
    w.findChild(QSpinBox, "window_spin").setValue(30)
    cue = w.findChild(QLabel, "changed_cue")
    assert not cue.isHidden()
    assert cue.text().startswith("Changed: Window → recomputed") and "estimates" in cue.text()
    assert "comparison" in cue.text()  # linked: one window for table and comparison


def test_a_stale_error_leaves_the_status_bar_after_a_good_change(make_window, kestrel):
    w = make_window(window=20)
    w.open_files([kestrel])
    w.show_status("cone: something went wrong earlier")
    w.findChild(QSpinBox, "days_spin").setValue(40)
    assert "went wrong" not in w.status_label.text()


def test_the_import_dialog_controls_are_guarded_too(make_window):
    from volbench.gui.import_dialog import ImportDialog

    w = make_window()
    dialog = ImportDialog(w.state.choices, 1, w)
    controls = dialog.findChildren(QAbstractSpinBox) + dialog.findChildren(QComboBox)
    assert controls and all(is_guarded(c) for c in controls)
