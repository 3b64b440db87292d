"""The desktop workbench (PySide6 + pyqtgraph). The only package that imports Qt.

Start it with ``volbench gui [FILE...]`` or :func:`volbench.gui.app.run`. Panes show numbers from
the core only (:mod:`volbench.gui.compute`), so the window and the command line always agree.
"""
