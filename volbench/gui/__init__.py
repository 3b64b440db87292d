"""The desktop workbench (PySide6 + pyqtgraph). The only package that imports Qt.

Start it with ``volbench gui [FILE...]`` or :func:`volbench.gui.app.run`. Every number comes from
one job table (:mod:`volbench.gui.jobs`) that calls the core the way the command line does
(:mod:`volbench.analysis`), so the window and the command line always agree; panes only render.
"""


def qt_problem() -> str | None:
    """Why the Qt binding cannot be imported here, or ``None`` when it can.

    PySide6 and pyqtgraph are third-party wheels whose import fails when a system library is
    missing; the command line asks this before it opens the window, so the user gets one line
    instead of a traceback. (Modules of volbench itself are imported plainly, never guarded.)
    """
    try:
        import pyqtgraph  # noqa: F401
        import PySide6.QtWidgets  # noqa: F401
    except ImportError as exc:
        return str(exc)
    return None
