"""What every pane is: a widget over the state and the results, registered in one line.

A pane reads :class:`~volbench.gui.state.WorkbenchState` (the user's choices) and
:class:`~volbench.gui.controller.Results` (what the job table computed), renders when they announce
a change, and never computes numbers itself: a number a pane needs is a job
(:data:`volbench.gui.jobs.JOBS`). It asks the window for work with :attr:`Pane.requested` (an action
name: ``"open"``, ``"recompute"``, or an on-demand job such as ``"garch_all"``) and writes status
lines with :attr:`Pane.notice`. Adding a pane is its file plus one line in
:data:`volbench.gui.panes.PANES`.
"""

from __future__ import annotations

from typing import ClassVar, Literal

from PySide6.QtCore import Signal
from PySide6.QtWidgets import QWidget

from volbench.gui.controller import Results
from volbench.gui.state import WorkbenchState

Place = Literal["tab", "left", "bottom"]


class Pane(QWidget):
    """Base of every pane.

    Class attributes
    ----------------
    key
        Stable name (``window.panes[key]``; screenshots and tests find it by this).
    title
        Tab or dock title.
    place
        ``"tab"`` (a tab of the main area), ``"left"`` or ``"bottom"`` (a dock on that side).

    Signals
    -------
    requested(str)
        An action for the window: ``"open"`` (the file dialog), ``"recompute"``, or the name of an
        on-demand job (``"garch_all"``, ``"export"``).
    notice(str)
        A line for the status bar.
    """

    key: ClassVar[str] = ""
    title: ClassVar[str] = ""
    place: ClassVar[Place] = "tab"

    requested = Signal(str)
    notice = Signal(str)

    def __init__(self, state: WorkbenchState, results: Results, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName(f"{self.key}_pane")
        self.state, self.results = state, results

    def unbind(self) -> None:
        """Disconnect from the state (the window is closing); panes with bindings override it."""
