"""Small widgets every pane uses: a table that copies itself, a plot that saves itself, and a
card that shows a one-line message when its pane has nothing to show."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pandas as pd
import pyqtgraph as pg
from pyqtgraph.exporters import ImageExporter
from PySide6.QtCore import QAbstractTableModel, QModelIndex, QRect, Qt, QTimer
from PySide6.QtGui import QAction, QColor, QGuiApplication, QKeySequence, QPainter
from PySide6.QtSvg import QSvgGenerator
from PySide6.QtWidgets import (
    QAbstractItemView,
    QFileDialog,
    QHeaderView,
    QLabel,
    QSplitter,
    QStackedWidget,
    QTableView,
    QVBoxLayout,
    QWidget,
)

from volbench.errors import VolbenchError
from volbench.export import table_to_tsv
from volbench.gui import palette


def log_ticks(lo: float, hi: float) -> list[tuple[float, str]]:
    """Tick positions (log10) and labels at 1, 2 and 5 times powers of ten between ``lo`` and ``hi``."""
    out = []
    if not (lo > 0 and hi > 0):
        return out
    for e in range(math.floor(math.log10(lo)), math.ceil(math.log10(hi)) + 1):
        for m in (1, 2, 5):
            v = m * 10.0**e
            if lo <= v <= hi:
                out.append((math.log10(v), f"{v:.6g}"))
    return out


# ---------------------------------------------------------------------- tables
_ROOT = QModelIndex()


class FrameModel(QAbstractTableModel):
    """Read-only table model over a frame of display strings, with optional colours."""

    def __init__(self, parent=None) -> None:
        super().__init__(parent)
        self._display = pd.DataFrame()
        self._fg: dict[tuple[int, int], str] = {}
        self._swatch: dict[int, str] = {}
        self._tips: dict[tuple[int, int], str] = {}
        self._right: set[int] = set()
        self.align_top = False

    def set_frame(self, display: pd.DataFrame, *, fg=None, swatch=None, tips=None, right=()) -> None:
        self.beginResetModel()
        self._display = display.reset_index(drop=True)
        self._fg = dict(fg or {})
        self._swatch = dict(swatch or {})
        self._tips = dict(tips or {})
        cols = list(self._display.columns)
        self._right = {cols.index(c) for c in right if c in cols}
        self.endResetModel()

    def rowCount(self, parent=_ROOT) -> int:
        return 0 if parent.isValid() else len(self._display)

    def columnCount(self, parent=_ROOT) -> int:
        return 0 if parent.isValid() else len(self._display.columns)

    def data(self, index: QModelIndex, role=Qt.ItemDataRole.DisplayRole):
        if not index.isValid():
            return None
        r, c = index.row(), index.column()
        if role == Qt.ItemDataRole.DisplayRole:
            v = self._display.iat[r, c]
            return "" if v is None else str(v)
        if role == Qt.ItemDataRole.ForegroundRole and (r, c) in self._fg:
            return QColor(self._fg[(r, c)])
        if role == Qt.ItemDataRole.DecorationRole and c == 0 and r in self._swatch:
            return QColor(self._swatch[r])
        if role == Qt.ItemDataRole.ToolTipRole:
            return self._tips.get((r, c)) or str(self._display.iat[r, c])
        if role == Qt.ItemDataRole.TextAlignmentRole:
            vertical = Qt.AlignmentFlag.AlignTop if self.align_top else Qt.AlignmentFlag.AlignVCenter
            horizontal = Qt.AlignmentFlag.AlignRight if c in self._right else Qt.AlignmentFlag.AlignLeft
            return int(horizontal | vertical)
        return None

    def headerData(self, section, orientation, role=Qt.ItemDataRole.DisplayRole):
        if role == Qt.ItemDataRole.DisplayRole and orientation == Qt.Orientation.Horizontal:
            return str(self._display.columns[section])
        return None

    def cell(self, row: int, col: str) -> str:
        return str(self._display.at[row, col])

    @property
    def display(self) -> pd.DataFrame:
        return self._display


class FrameTable(QTableView):
    """A read-only table of one frame; Ctrl+C or the context menu copies it as tab-separated text.

    ``set_frame(display, raw=...)``: ``display`` holds the strings shown, ``raw`` the numbers copied
    (defaults to ``display``).
    """

    def __init__(self, object_name: str, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName(object_name)
        self._model = FrameModel(self)
        self.setModel(self._model)
        self._raw = pd.DataFrame()
        self.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.setAlternatingRowColors(True)
        self.verticalHeader().setVisible(False)
        self.verticalHeader().setDefaultSectionSize(22)
        self.horizontalHeader().setHighlightSections(False)
        self.setWordWrap(False)
        self.setContextMenuPolicy(Qt.ContextMenuPolicy.ActionsContextMenu)
        copy = QAction("Copy table as tab-separated text", self)
        copy.setShortcut(QKeySequence.StandardKey.Copy)
        copy.setShortcutContext(Qt.ShortcutContext.WidgetShortcut)
        copy.triggered.connect(self.copy_to_clipboard)
        self.addAction(copy)
        self.horizontalHeader().sectionResized.connect(self._rewrap)

    def setWordWrap(self, on: bool) -> None:
        """Wrap long cells; rows then grow to fit and text starts at the top of each cell."""
        super().setWordWrap(on)
        self._model.align_top = on

    def _rewrap(self, *_args) -> None:
        if self.wordWrap() and self._model.rowCount():
            QTimer.singleShot(0, self.resizeRowsToContents)

    def resizeEvent(self, event) -> None:
        super().resizeEvent(event)
        self._rewrap()

    def showEvent(self, event) -> None:
        super().showEvent(event)
        self._rewrap()

    @property
    def table_model(self) -> FrameModel:
        return self._model

    def set_frame(self, display: pd.DataFrame, raw: pd.DataFrame | None = None, *, stretch_last=True,
                  **style) -> None:
        self._raw = display if raw is None else raw
        self._model.set_frame(display, **style)
        header = self.horizontalHeader()
        n = len(display.columns)
        for i in range(n):
            last = i == n - 1 and stretch_last
            header.setSectionResizeMode(
                i, QHeaderView.ResizeMode.Stretch if last else QHeaderView.ResizeMode.ResizeToContents)
        if self.wordWrap():
            self.resizeRowsToContents()

    def fit_rows(self, most: int = 12) -> int:
        """Ask for enough height to show every row (up to ``most``) without scrolling, so a splitter
        never cuts the last rows off; returns the height asked for."""
        rows = min(self._model.rowCount(), most)
        height = self.horizontalHeader().sizeHint().height() + 2 * self.frameWidth() + 2
        height += sum(self.rowHeight(i) or self.verticalHeader().defaultSectionSize() for i in range(rows))
        if self.horizontalScrollBar().isVisible():
            height += self.horizontalScrollBar().sizeHint().height()
        self.setMinimumHeight(height)
        return height

    def raw_frame(self) -> pd.DataFrame:
        return self._raw

    def to_tsv(self) -> str:
        return table_to_tsv(self._raw)

    def copy_to_clipboard(self) -> str:
        text = self.to_tsv()
        QGuiApplication.clipboard().setText(text)
        return text


# ---------------------------------------------------------------------- plots
def style_plot(pw: pg.PlotWidget, *, left: str, bottom: str) -> None:
    """Light background, readable axes with units, faint grid."""
    pw.setBackground(palette.BACKGROUND)
    item = pw.getPlotItem()
    for name in ("left", "bottom"):
        ax = item.getAxis(name)
        ax.setPen(pg.mkPen(palette.FOREGROUND))
        ax.setTextPen(pg.mkPen(palette.FOREGROUND))
        ax.enableAutoSIPrefix(False)
    item.setLabel("left", left)
    item.setLabel("bottom", bottom)
    item.showGrid(x=True, y=True, alpha=palette.GRID_ALPHA)


class Plot(pg.PlotWidget):
    """A pyqtgraph plot that can save itself as PNG or SVG (context-menu entry and :meth:`save_image`)."""

    def __init__(self, object_name: str, *, title: str = "", left: str = "", bottom: str = "",
                 date_axis: bool = False, parent: QWidget | None = None) -> None:
        axis = None
        if date_axis:
            # major date ticks only: minor ones add hundreds of grid lines to every repaint
            axis = {"bottom": pg.DateAxisItem(orientation="bottom", maxTickLevel=0)}
        super().__init__(parent=parent, axisItems=axis)
        self.setObjectName(object_name)
        style_plot(self, left=left, bottom=bottom)
        if date_axis:
            # horizontal grid lines only: vertical ones across long date ranges cost more to paint
            # than the data (see tests/benchmarks/bench_gui.py) and add little to a time series
            self.getPlotItem().showGrid(x=False, y=True, alpha=palette.GRID_ALPHA)
        if title:
            self.getPlotItem().setTitle(title, color=palette.FOREGROUND, size="10pt")
        self.setMinimumSize(260, 180)
        menu = self.getPlotItem().vb.menu
        menu.addSeparator()
        save = menu.addAction("Save plot as PNG or SVG…")
        save.triggered.connect(self.ask_save)

    def legend(self, *, colCount: int = 4, **_placement) -> pg.LegendItem:
        """A legend below the x-axis, outside the data area (:mod:`volbench.gui.legends`); entries
        toggle their line. Placement arguments of a floating legend (``offset``) are ignored."""
        from volbench.gui.legends import legend_outside

        return legend_outside(self, columns=colCount)

    def fit_view(self, arrays, headroom: float = 0.3, x_range: tuple[float, float] | None = None) -> None:
        """Fit x to ``x_range`` (auto when None) and y to ``arrays``, ``headroom`` of the span on top.

        A fixed ``x_range`` keeps the axis still when only the data change (e.g. a new window), so
        the date axis is not laid out again: the costliest part of a redraw.
        """
        vals = [np.asarray(a, dtype=float) for a in arrays if a is not None and len(a)]
        if x_range is None:
            self.enableAutoRange(axis="x")
        else:
            self.setXRange(*x_range, padding=0.01)
        if not vals:
            self.enableAutoRange(axis="y")
            return
        both = np.concatenate(vals)
        both = both[np.isfinite(both)]
        if not len(both):
            return
        lo, hi = float(both.min()), float(both.max())
        span = (hi - lo) or max(abs(hi), 1.0)
        self.setYRange(lo - 0.04 * span, hi + headroom * span, padding=0)

    def save_image(self, path: str | Path) -> Path:
        """Write the plot to ``path``; the suffix chooses the format (.png or .svg).

        PNG goes through pyqtgraph's image exporter at twice the on-screen width (at least 800
        pixels). SVG is drawn by Qt's own SVG generator from the widget: pyqtgraph's SVG exporter
        cannot parse the paths recent Qt versions write.
        """
        path = Path(path)
        suffix = path.suffix.lower()
        if suffix == ".svg":
            size = self.size()
            gen = QSvgGenerator()
            gen.setFileName(str(path))
            gen.setSize(size)
            gen.setViewBox(QRect(0, 0, size.width(), size.height()))
            gen.setTitle(self.objectName())
            gen.setDescription("volbench plot")
            painter = QPainter(gen)
            try:
                self.render(painter)
            finally:
                painter.end()
        elif suffix == ".png":
            exporter = ImageExporter(self.getPlotItem())
            exporter.parameters()["width"] = max(int(self.width() * 2), 800)
            exporter.export(str(path))
        else:
            raise VolbenchError(f"{path.name}: plots are saved as .png or .svg, got {suffix or 'no suffix'!r}")
        if not path.exists():
            raise VolbenchError(f"{path}: the plot could not be written; check the folder exists and is writable")
        return path

    def ask_save(self) -> Path | None:
        name, flt = QFileDialog.getSaveFileName(
            self, "Save plot", f"{self.objectName()}.png", "PNG image (*.png);;SVG drawing (*.svg)")
        if not name:
            return None
        if not Path(name).suffix:
            name += ".svg" if "svg" in flt.lower() else ".png"
        from volbench.gui.dialogs import guarded

        return guarded(self, "Save plot", lambda: self.save_image(name))


# ---------------------------------------------------------------------- cards
class Card(QStackedWidget):
    """Content or a one-line message ("load a file", why a result is missing, an error)."""

    def __init__(self, content: QWidget, object_name: str, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName(object_name)
        self._content = content
        holder = QWidget()
        lay = QVBoxLayout(holder)
        self._label = QLabel()
        self._label.setObjectName(f"{object_name}_message")
        self._label.setProperty("role", "notice")
        self._label.setWordWrap(True)
        self._label.setAlignment(Qt.AlignmentFlag.AlignCenter)
        lay.addWidget(self._label)
        self.addWidget(content)
        self.addWidget(holder)
        self.setCurrentIndex(1)
        self._label.setText("Load a price file to begin (File > Open, or drop CSV files on the window).")

    def show_content(self) -> None:
        self.setCurrentIndex(0)

    def show_message(self, text: str) -> None:
        self._label.setText(text)
        self.setCurrentIndex(1)

    @property
    def message(self) -> str:
        return self._label.text() if self.currentIndex() == 1 else ""


def plot_reading_table(name: str, plot: QWidget, sizes: tuple[int, int]) -> tuple[Card, QLabel, FrameTable]:
    """The layout of a pane that shows a plot, its plain reading below it and a table under a
    splitter: returns the card holding them (``{name}_card``), the reading (``{name}_reading``)
    and the table (``{name}_table``)."""
    reading = QLabel()
    reading.setObjectName(f"{name}_reading")
    reading.setProperty("role", "reading")
    reading.setWordWrap(True)
    table = FrameTable(f"{name}_table")
    upper = QWidget()
    ul = QVBoxLayout(upper)
    ul.setContentsMargins(0, 0, 0, 0)
    ul.addWidget(plot, 1)
    ul.addWidget(reading)
    split = QSplitter(Qt.Orientation.Vertical)
    split.addWidget(upper)
    split.addWidget(table)
    split.setSizes(list(sizes))
    return Card(split, f"{name}_card"), reading, table
