"""Remembered between runs with QSettings: window geometry and layout, recent files, choices.

Stored as an INI file in the user's configuration folder (tests redirect it with
``QSettings.setPath``). The stored choices carry a schema number; an unknown schema or an
unreadable value is ignored (defaults are used) rather than breaking start-up.
"""

from __future__ import annotations

import json

from PySide6.QtCore import QByteArray, QSettings
from PySide6.QtWidgets import QMainWindow

from volbench.errors import VolbenchError
from volbench.gui.state import Choices

ORGANIZATION = "volbench"
APPLICATION = "workbench"
SETTINGS_SCHEMA = 1
MAX_RECENT = 10


def open_settings() -> QSettings:
    return QSettings(QSettings.Format.IniFormat, QSettings.Scope.UserScope, ORGANIZATION, APPLICATION)


class Settings:
    """Typed access to the workbench's QSettings."""

    def __init__(self, qsettings: QSettings | None = None) -> None:
        self.q = qsettings or open_settings()

    # ------------------------------------------------------------------ recent files
    def recent_files(self) -> list[str]:
        value = self.q.value("recent_files", [])
        if isinstance(value, str):
            value = [value]
        return [str(v) for v in (value or [])]

    def add_recent(self, paths) -> list[str]:
        recent = [str(p) for p in paths] + self.recent_files()
        unique = list(dict.fromkeys(recent))[:MAX_RECENT]
        self.q.setValue("recent_files", unique)
        return unique

    def clear_recent(self) -> None:
        self.q.setValue("recent_files", [])

    # ------------------------------------------------------------------ choices
    def save_choices(self, choices: Choices) -> None:
        self.q.setValue("schema", SETTINGS_SCHEMA)
        self.q.setValue("choices", json.dumps(choices.as_dict()))

    def load_choices(self) -> Choices | None:
        if int(self.q.value("schema", 0) or 0) != SETTINGS_SCHEMA:
            return None
        text = self.q.value("choices", "")
        if not text:
            return None
        try:
            data = json.loads(text)
            if not isinstance(data, dict):
                return None
            data.pop("as_of", None)  # an as-of date belongs to a session, not to every run
            data.pop("events_file", None)  # so do one instrument's events
            data.pop("quotes_file", None)  # and its quotes
            data.pop("holidays_file", None)  # a file is chosen per run (a moved one would lose every choice)
            return Choices.from_dict(data)
        except (json.JSONDecodeError, VolbenchError, TypeError):
            return None

    # ------------------------------------------------------------------ window
    def save_window(self, window: QMainWindow) -> None:
        self.q.setValue("window/geometry", window.saveGeometry())
        self.q.setValue("window/state", window.saveState(SETTINGS_SCHEMA))

    def restore_window(self, window: QMainWindow) -> bool:
        geometry = self.q.value("window/geometry")
        state = self.q.value("window/state")
        ok = False
        if isinstance(geometry, QByteArray) and not geometry.isEmpty():
            ok = window.restoreGeometry(geometry)
        if isinstance(state, QByteArray) and not state.isEmpty():
            ok = window.restoreState(state, SETTINGS_SCHEMA) and ok
        return ok

    def sync(self) -> None:
        self.q.sync()
