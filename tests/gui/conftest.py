"""Fixtures for the window tests: isolated settings, a synchronous window, loaded sample data."""

from __future__ import annotations

import pytest
from PySide6.QtCore import QSettings

from volbench.gui.settings import Settings
from volbench.gui.state import Choices
from volbench.gui.window import MainWindow


@pytest.fixture
def settings(tmp_path) -> Settings:
    """User settings redirected to a temporary folder, so tests never read or write the real ones."""
    folder = tmp_path / "settings"
    folder.mkdir()
    QSettings.setPath(QSettings.Format.IniFormat, QSettings.Scope.UserScope, str(folder))
    return Settings()


@pytest.fixture
def make_window(qtbot, settings):
    """make_window(**choices) -> MainWindow running background work synchronously.

    GARCH defaults to the one-model fit to keep tests quick; pass garch_model="all" to compare.
    """

    def _make(**choices) -> MainWindow:
        choices.setdefault("garch_model", "garch")
        w = MainWindow(synchronous=True, settings=settings, choices=Choices(**choices))
        qtbot.addWidget(w)
        w.resize(1400, 900)
        return w

    return _make


@pytest.fixture
def quillon(sample_dir):
    return sample_dir / "quillon_textiles.csv"


@pytest.fixture
def kestrel(sample_dir):
    return sample_dir / "kestrel_orchards.csv"


@pytest.fixture
def message_boxes(monkeypatch):
    """Record QMessageBox.warning/critical calls instead of opening dialogs."""
    from PySide6.QtWidgets import QMessageBox

    calls: list[tuple[str, str]] = []

    def record(parent, title, text, *args, **kwargs):
        calls.append((title, text))
        return QMessageBox.StandardButton.Ok

    monkeypatch.setattr(QMessageBox, "warning", staticmethod(record))
    monkeypatch.setattr(QMessageBox, "critical", staticmethod(record))
    return calls
