"""The frame shown while the workbench loads: painted before the core's libraries are imported.

Importing the core (pandas, scipy, arch, statsmodels) and building every pane takes a second or
two; the frame appears first, at the window's size and title, with one line saying what is being
loaded, and is replaced by the workbench window when it is ready. It imports Qt only.
"""

from __future__ import annotations

import time

from PySide6.QtCore import QEvent, QObject, Qt
from PySide6.QtWidgets import QApplication, QLabel, QMainWindow

TITLE = "volbench: volatility workbench"
SIZE = (1360, 900)


class StartFrame(QMainWindow):
    """An empty main window with the workbench's title and size and a 'loading' line."""

    def __init__(self) -> None:
        super().__init__()
        self.setObjectName("start_frame")
        self.setWindowTitle(TITLE)
        screen = self.screen()  # no larger than the screen's available area (a 1366x768 laptop)
        area = None if screen is None else screen.availableGeometry()
        self.resize(*(SIZE if area is None else (min(SIZE[0], area.width()), min(SIZE[1], area.height()))))
        label = QLabel("Loading the workbench (estimators, models, checks)...")
        label.setObjectName("start_frame_label")
        label.setAlignment(Qt.AlignmentFlag.AlignCenter)
        self.setCentralWidget(label)
        self.painted_at: float | None = None

    def event(self, e: QEvent) -> bool:
        if e.type() == QEvent.Type.Paint and self.painted_at is None:
            self.painted_at = time.perf_counter()
        return super().event(e)

    def show_now(self, app: QApplication, timeout_s: float = 2.0) -> None:
        """Show the frame and process events until it has been painted once (or ``timeout_s``)."""
        self.show()
        self.repaint()
        deadline = time.perf_counter() + timeout_s
        while self.painted_at is None and time.perf_counter() < deadline:
            app.processEvents()

    def hand_over(self, window: QObject) -> None:
        """Give the frame's place to ``window`` (already shown) and close."""
        self.close()
        self.deleteLater()
