"""Bind one widget to one state field, both ways.

The widget writes to the state through :meth:`WorkbenchState.set`; a state change writes back to
the widget with its signals blocked, so no loop and no duplicate recomputation. Bad values the
state rejects are shown in the status line and the widget is reset to the state's value.
"""

from __future__ import annotations

from collections.abc import Callable

from PySide6.QtCore import QObject, QSignalBlocker, Signal

from volbench.errors import VolbenchError
from volbench.gui.state import WorkbenchState


class Binding(QObject):
    """``read()`` gets the widget's value; ``write(value)`` shows a state value in the widget."""

    rejected = Signal(str)

    def __init__(self, state: WorkbenchState, name: str, widget: QObject, signal,
                 read: Callable[[], object], write: Callable[[object], None]) -> None:
        super().__init__(widget)
        self.state, self.name, self.widget = state, name, widget
        self._read, self._write = read, write
        self._signal = signal
        signal.connect(self._from_widget)
        state.changed.connect(self._from_state)
        self._bound = True
        self.refresh()

    def value(self):
        return getattr(self.state, self.name)

    def refresh(self) -> None:
        """Show the state's value in the widget (signals blocked)."""
        blocker = QSignalBlocker(self.widget)
        try:
            self._write(self.value())
        finally:
            blocker.unblock()

    def _from_widget(self, *_args) -> None:
        try:
            self.state.set(self.name, self._read())
        except VolbenchError as exc:
            self.rejected.emit(str(exc))
            self.refresh()

    def _from_state(self, names) -> None:
        if self.name in names:
            self.refresh()

    def unbind(self) -> None:
        """Disconnect from the state and the widget (pane closing); safe to call twice."""
        if not self._bound:
            return
        self._bound = False
        for sig, slot in ((self.state.changed, self._from_state), (self._signal, self._from_widget)):
            try:
                sig.disconnect(slot)
            except (RuntimeError, TypeError):
                pass
