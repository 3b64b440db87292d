"""Start the workbench: the Qt application, the theme, the error fallback and the main window."""

from __future__ import annotations

import sys
from collections.abc import Sequence

from PySide6.QtWidgets import QApplication

from volbench import __version__
from volbench.gui import theme
from volbench.gui.dialogs import install_excepthook
from volbench.gui.startup import StartFrame


def application(argv: Sequence[str] | None = None) -> QApplication:
    """The running QApplication, created and themed if needed."""
    from volbench.gui.settings import (  # loads the core: after the first paint
        APPLICATION,
        ORGANIZATION,
    )

    app = QApplication.instance()
    if app is None:
        app = QApplication(list(argv) if argv is not None else [sys.argv[0]])
    app.setOrganizationName(ORGANIZATION)
    app.setApplicationName(APPLICATION)
    app.setApplicationVersion(__version__)
    theme.apply(app)
    return app


def run(files: Sequence[str] = (), *, samples_when_empty: bool = False) -> int:
    """Open the window with ``files`` loaded (the bundled samples when none are given and
    ``samples_when_empty``) and run the event loop; returns the exit code."""
    app = QApplication.instance() or QApplication([sys.argv[0]])
    theme.apply(app)
    frame = StartFrame()  # painted before the core's libraries load (pandas, scipy, arch, ...)
    frame.show_now(app)
    app = application()
    from volbench.gui.window import MainWindow

    window = MainWindow()
    install_excepthook(lambda: window)
    window.show()
    frame.hand_over(window)
    if not files and samples_when_empty:
        from volbench.samples import sample_files

        files = sample_files()
    if files:
        window.open_files(list(files))
    return int(app.exec())
