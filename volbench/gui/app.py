"""Start the workbench: the Qt application, the theme, the error fallback and the main window."""

from __future__ import annotations

import sys
from collections.abc import Sequence

from PySide6.QtWidgets import QApplication

from volbench import __version__
from volbench.gui import theme
from volbench.gui.dialogs import install_excepthook
from volbench.gui.settings import APPLICATION, ORGANIZATION
from volbench.gui.window import MainWindow


def application(argv: Sequence[str] | None = None) -> QApplication:
    """The running QApplication, created and themed if needed."""
    app = QApplication.instance()
    if app is None:
        app = QApplication(list(argv) if argv is not None else [sys.argv[0]])
    app.setOrganizationName(ORGANIZATION)
    app.setApplicationName(APPLICATION)
    app.setApplicationVersion(__version__)
    theme.apply(app)
    return app


def run(files: Sequence[str] = ()) -> int:
    """Open the window with ``files`` loaded and run the event loop; returns the exit code."""
    app = application()
    window = MainWindow()
    install_excepthook(lambda: window)
    window.show()
    if files:
        window.open_files(list(files))
    return int(app.exec())
