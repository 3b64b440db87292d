"""Draw a vol memo (:class:`volbench.memo.Memo`) as a PDF with Qt's own writer.

The memo's words and tables become one HTML document laid out by :class:`QTextDocument` on A4
pages of a :class:`QPdfWriter`; its plots (the cone with the pricing vol, the GARCH forward-vol
term structure) are pyqtgraph plots rendered to images by pyqtgraph's exporter. It needs no
display: with ``QT_QPA_PLATFORM=offscreen`` (which ``volbench memo`` sets) it runs headless. The
file is written atomically and an existing one is replaced only when ``overwrite`` is given.
"""

from __future__ import annotations

import html
import math
from pathlib import Path

import numpy as np
import pyqtgraph as pg
from pyqtgraph.exporters import ImageExporter
from PySide6.QtCore import QBuffer, QByteArray, QIODevice, QMarginsF, QSizeF, Qt, QUrl
from PySide6.QtGui import QFont, QPageLayout, QPageSize, QPdfWriter, QTextDocument
from PySide6.QtWidgets import QApplication

from volbench.export.atomic import atomic_write
from volbench.gui import palette
from volbench.gui.app import application
from volbench.memo import Memo

PLOT_SIZE = (900, 380)
"""Pixels of each plot image (drawn at about 16 cm wide on the page)."""

CONE_BANDS = ((("min", "max"), 35), (("p10", "p90"), 70), (("p25", "p75"), 120))


def _plot(title: str, left: str, bottom: str) -> pg.PlotWidget:
    pw = pg.PlotWidget()
    pw.resize(*PLOT_SIZE)
    pw.setBackground("w")
    item = pw.getPlotItem()
    item.setTitle(title, color=palette.FOREGROUND, size="11pt")
    for name, text in (("left", left), ("bottom", bottom)):
        ax = item.getAxis(name)
        ax.setPen(pg.mkPen(palette.FOREGROUND))
        ax.setTextPen(pg.mkPen(palette.FOREGROUND))
        item.setLabel(name, text)
    item.showGrid(x=True, y=True, alpha=0.2)
    return pw


def _image(pw: pg.PlotWidget):
    """The plot as an image, after Qt has laid it out (legend row, axes) off screen."""
    pw.setAttribute(Qt.WidgetAttribute.WA_DontShowOnScreen, True)
    pw.show()
    for _ in range(3):
        QApplication.processEvents()
    exporter = ImageExporter(pw.getPlotItem())
    exporter.parameters()["width"] = PLOT_SIZE[0]
    image = exporter.export(toBytes=True)
    pw.close()
    pw.deleteLater()
    return image


def cone_image(cone: dict):
    """The cone on a log window axis, its bands, today's values and the pricing vol (a star)."""
    from volbench.gui.legends import legend_outside

    pw = _plot(f"{cone['label']} volatility cone and the pricing vol", "Annualized volatility (%)",
               "Window / option life (bars, log scale)")
    legend = legend_outside(pw, columns=3)
    x = np.log10(cone["windows"])
    colour = pg.mkColor(palette.estimator_colour("close_to_close"))
    for (lo, hi), alpha in CONE_BANDS:
        a = pw.plot(x, 100 * cone["bands"][lo], pen=pg.mkPen(None))
        b = pw.plot(x, 100 * cone["bands"][hi], pen=pg.mkPen(None))
        c = pg.mkColor(colour)
        c.setAlpha(alpha)
        fill = pg.FillBetweenItem(a, b, brush=pg.mkBrush(c))
        pw.addItem(fill)
        legend.addItem(pg.PlotDataItem(pen=pg.mkPen(None), fillLevel=0, brush=pg.mkBrush(c)),
                       {"min": "min to max", "p10": "10th to 90th", "p25": "25th to 75th"}[lo])
    legend.addItem(pw.plot(x, 100 * cone["bands"]["p50"], pen=pg.mkPen("#333333", width=2)), "median")
    legend.addItem(pw.plot(x, 100 * cone["today"], pen=pg.mkPen("#D55E00", width=1.5), symbol="o", symbolSize=6,
                           symbolBrush="#D55E00"), "today")
    days, pv = cone["pricing"]
    star = pw.plot([math.log10(days)], [100 * pv], pen=None, symbol="star", symbolSize=18,
                   symbolBrush=palette.PRICING_VOL, symbolPen=palette.PRICING_VOL)
    legend.addItem(star, f"pricing vol at {int(days)} bars")
    pw.getPlotItem().getAxis("bottom").setTicks([[(math.log10(w), str(int(w))) for w in cone["windows"]], []])
    return _image(pw)


def term_image(term: dict, pricing: tuple[float, float]):
    """Each model's forward vol against the option's life, and the pricing vol."""
    from volbench.gui.legends import legend_outside
    from volbench.gui.panes.model_pane import DASHES
    from volbench.models.family import MODEL_REGISTRY

    pw = _plot("GARCH forward volatility over an option's life", "Annualized volatility (%)", "Option life (bars)")
    legend = legend_outside(pw, columns=3)
    by_label = {s.label: s for s in MODEL_REGISTRY.values()}
    for label, (h, v) in term.items():
        spec = next((s for name, s in by_label.items() if label.startswith(name)), None)
        colour = spec.colour if spec is not None else palette.REFERENCE
        style = DASHES[spec.dash] if spec is not None else DASHES["solid"]
        legend.addItem(pw.plot(h, 100 * v, pen=pg.mkPen(colour, width=2, style=style), symbol="o", symbolSize=5,
                               symbolBrush=colour, symbolPen=colour), label)
    days, pv = pricing
    legend.addItem(pw.plot([days], [100 * pv], pen=None, symbol="star", symbolSize=16,
                           symbolBrush=palette.PRICING_VOL, symbolPen=palette.PRICING_VOL),
                   f"pricing vol at {int(days)} bars")
    return _image(pw)


def _table_html(t) -> str:
    head = "".join(f"<th>{html.escape(c)}</th>" for c in t.columns)
    body = "".join("<tr>" + "".join(f"<td>{html.escape(v)}</td>" for v in r) + "</tr>" for r in t.rows)
    return f"<table cellspacing='0' cellpadding='3' border='1' width='100%'><tr>{head}</tr>{body}</table>"


def memo_html(memo: Memo) -> str:
    """The memo as the HTML :func:`memo_pdf_bytes` lays out (plots as ``memo:`` image resources)."""
    parts = [f"<h1>{html.escape(memo.title)}</h1>", f"<p class='sub'><b>{html.escape(memo.subtitle)}</b></p>"]
    for s in memo.sections:
        parts.append(f"<h2>{html.escape(s.title)}</h2>")
        parts += [f"<p>{html.escape(p)}</p>" for p in s.paragraphs]
        if s.plot == "cone" and memo.cone is not None:
            parts.append("<p><img src='memo:cone' width='1000'></p>")
        parts += [_table_html(t) for t in s.tables]
        if s.plot == "term" and memo.term:
            parts.append("<p><img src='memo:term' width='1000'></p>")
    return "\n".join(parts)


STYLE = ("body { font-family: 'DejaVu Sans', sans-serif; font-size: 8.5pt; color: #222; } "
         "h1 { font-size: 15pt; color: #1F3B4A; } h2 { font-size: 11pt; color: #1F3B4A; margin-top: 10px; } "
         "th { background: #E8EBE4; font-weight: 600; text-align: left; } td, th { border-color: #C9CCC4; } "
         "p.sub { font-size: 10pt; }")


def memo_pdf_bytes(memo: Memo) -> bytes:
    """The memo as PDF bytes (A4 portrait, 15 mm margins)."""
    application()
    doc = QTextDocument()
    font = QFont("DejaVu Sans")
    for tag in ("liga", "clig"):  # no ligatures: copied text (a SHA-256, "firm") stays plain letters
        font.setFeature(QFont.Tag(tag), 0)
    doc.setDefaultFont(font)
    doc.setDefaultStyleSheet(STYLE)
    if memo.cone is not None:
        doc.addResource(QTextDocument.ResourceType.ImageResource, QUrl("memo:cone"), cone_image(memo.cone))
    if memo.term:
        pricing = memo.cone["pricing"] if memo.cone is not None else (
            float(memo.provenance["settings"]["option"]["days"]),
            float(memo.provenance["settings"]["option"]["pricing_vol"]))
        doc.addResource(QTextDocument.ResourceType.ImageResource, QUrl("memo:term"), term_image(memo.term, pricing))
    doc.setHtml(memo_html(memo))
    data = QByteArray()
    buffer = QBuffer(data)
    buffer.open(QIODevice.OpenModeFlag.WriteOnly)
    writer = QPdfWriter(buffer)
    writer.setTitle(memo.title)
    writer.setCreator("volbench")
    writer.setResolution(150)
    writer.setPageLayout(QPageLayout(QPageSize(QPageSize.PageSizeId.A4), QPageLayout.Orientation.Portrait,
                                     QMarginsF(15, 15, 15, 15), QPageLayout.Unit.Millimeter))
    doc.setPageSize(QSizeF(writer.width(), writer.height()))
    doc.print_(writer)
    del writer  # finishes the PDF into the buffer
    buffer.close()
    return bytes(data.data())


def write_memo_pdf(path: str | Path, memo: Memo, *, overwrite: bool = False) -> Path:
    """Write ``memo`` to ``path`` as PDF, atomically; an existing file only with ``overwrite``."""
    return atomic_write(path, memo_pdf_bytes(memo), overwrite=overwrite)
