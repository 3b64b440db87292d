"""File menu entries for an instrument's events: open an events CSV, or stop using one.

The file becomes the ``events_file`` choice (the :class:`~volbench.settings.EventsSettings` group the
command line builds from ``--events``): the ``events`` job then computes the ex-event numbers, the
comparison gains the "ex-event + m events" candidate and the price chart marks the event days.
"""

from __future__ import annotations

from PySide6.QtWidgets import QFileDialog, QMenu

from volbench.errors import VolbenchError
from volbench.gui.dialogs import show_error

EVENTS_FILTER = "Events CSV (date,label,timing) (*.csv *.txt);;All files (*)"


def add_events_actions(window, menu: QMenu) -> None:
    """Add "Open events file…" and "Stop using events" to ``menu`` of ``window`` (a MainWindow)."""
    window._action(menu, "Open &events file…", lambda: ask_events(window), None, "open_events_action")
    window._action(menu, "Stop using events", lambda: set_events(window, None), None, "clear_events_action")


def ask_events(window) -> None:
    path, _ = QFileDialog.getOpenFileName(window, "Open events file", window._last_folder(), EVENTS_FILTER)
    if path:
        set_events(window, path)


def set_events(window, path: str | None) -> bool:
    """Use the events in ``path`` (``None``: none); a bad file is shown in a dialog. Returns success."""
    try:
        window.state.set("events_file", path)
    except VolbenchError as exc:
        show_error(window, "Events file", exc)
        return False
    ev = window.state.choices.group("events")
    if ev is None:
        window.show_status("Events: none.")
    else:
        c = ev.calendar
        window.show_status(f"Events: {len(c)} from {ev.file}" + (f"; {len(c.findings)} finding(s) in the file"
                                                                 if c.findings else ""))
    return True
