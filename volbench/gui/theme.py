"""The workbench look: the stylesheet shipped in ``volbench/gui/resources`` and the plot colours."""

from __future__ import annotations

from importlib import resources

from PySide6.QtWidgets import QApplication

STYLESHEET = "workbench.qss"


def stylesheet() -> str:
    """Text of the bundled stylesheet (loaded with importlib.resources)."""
    return resources.files("volbench.gui").joinpath("resources", STYLESHEET).read_text(encoding="utf-8")


def apply(app: QApplication) -> None:
    """Apply the light theme to ``app`` (Fusion style as a neutral, platform-independent base)."""
    app.setStyle("Fusion")
    app.setStyleSheet(stylesheet())
