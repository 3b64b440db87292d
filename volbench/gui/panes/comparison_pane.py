"""The comparison table, always visible: each candidate vol, its gap to the pricing vol, the option
price at that vol, and the plain reading."""

from __future__ import annotations

import pandas as pd
from PySide6.QtCore import Qt
from PySide6.QtWidgets import QFrame, QLabel, QScrollArea, QSplitter, QVBoxLayout, QWidget

from volbench.format import number, pct
from volbench.gui import palette
from volbench.gui.controller import Results
from volbench.gui.panes.base import Pane
from volbench.gui.state import WorkbenchState
from volbench.gui.widgets import Card, FrameTable
from volbench.names import estimator_name

COMPARE_COLUMNS = ["candidate", "window (bars)", "vol", "95% interval", "pricing vol inside?", "gap (vol points)",
                   "option price", "price difference", "vega estimate", "note"]
PENDING_WORDS = {"garch": "GARCH forward vol", "scaling": "scaling-check horizon vol"}


def inside_words(pricing_vol: float, lo, hi) -> str:
    """Whether the pricing vol lies in a candidate's interval: "yes", "no: above", "no: below", or ""
    when the candidate has no interval."""
    if lo is None or hi is None or pd.isna(lo) or pd.isna(hi):
        return ""
    if pricing_vol > hi:
        return "no: above"
    if pricing_vol < lo:
        return "no: below"
    return "yes"


def interval_words(lo, hi) -> str:
    return "" if lo is None or hi is None or pd.isna(lo) or pd.isna(hi) else f"{pct(lo)} to {pct(hi)}"


def candidate_colour(source: str, key: str) -> str | None:
    """The colour of a candidate's swatch: its model's or estimator's plot colour."""
    if source == "garch":
        return palette.model_colour(key.split(":", 1)[1])
    if source == "pricing":
        return palette.PRICING_VOL
    if source == "estimator":
        return palette.estimator_colour(key)
    return palette.REFERENCE


def window_words(window: int, linked: bool, days: int) -> str:
    """Which window the comparison's estimators use, in words (one window of truth per screen)."""
    if linked:
        return f"Estimators over the last {window} bars: the Window, as in the estimates table and rolling plot."
    return (f"Estimators over the last {window} bars: the option's life (unlinked from the Window; the "
            "estimates table uses the Window).")


class ComparisonPane(Pane):
    key, title, place = "comparison", "Comparison with the pricing vol", "bottom"

    def __init__(self, state: WorkbenchState, results: Results, parent: QWidget | None = None) -> None:
        super().__init__(state, results, parent)
        self.heading = QLabel("Comparison")
        self.heading.setObjectName("comparison_heading")
        self.heading.setProperty("role", "heading")
        self.heading.setWordWrap(True)
        self.table = FrameTable("comparison_table")
        self.reading = QLabel()
        self.reading.setObjectName("comparison_reading")
        self.reading.setProperty("role", "reading")
        self.reading.setWordWrap(True)
        self.reading.setTextFormat(Qt.TextFormat.RichText)
        self.reading.setAlignment(Qt.AlignmentFlag.AlignTop | Qt.AlignmentFlag.AlignLeft)
        reading_scroll = QScrollArea()
        reading_scroll.setObjectName("comparison_reading_scroll")
        reading_scroll.setWidgetResizable(True)
        reading_scroll.setFrameShape(QFrame.Shape.NoFrame)
        reading_scroll.setWidget(self.reading)  # a long reading scrolls; it is never clipped
        split = QSplitter(Qt.Orientation.Horizontal)
        split.setObjectName("comparison_split")
        split.addWidget(self.table)
        split.addWidget(reading_scroll)
        split.setSizes([760, 420])
        body = QWidget()
        bl = QVBoxLayout(body)
        bl.setContentsMargins(0, 0, 0, 0)
        bl.addWidget(self.heading)
        bl.addWidget(split, 1)
        self.card = Card(body, "comparison_card")
        lay = QVBoxLayout(self)
        lay.setContentsMargins(4, 2, 4, 4)
        lay.addWidget(self.card)
        results.updated.connect(self._on_results)
        self.render()

    def _on_results(self, kinds) -> None:
        if kinds & {"comparison", "garch", "scaling"}:
            self.render()

    def render(self) -> None:
        c = self.results.get("comparison")
        if c is None:
            self.card.show_message(self.results.problem("comparison") or "Load a price file to begin.")
            return
        rows, swatch = [], {}
        for i, rec in enumerate(c.table.to_dict(orient="records")):
            win = rec["window"]
            pricing = rec["source"] == "pricing"
            label = estimator_name(rec["key"], self.state.ewma_lambda) if rec["source"] == "estimator" else rec["label"]
            rows.append([label, "" if win is None or pd.isna(win) else int(win), pct(rec["vol"]),
                         "" if pricing else interval_words(rec["ci_low"], rec["ci_high"]),
                         "" if pricing else inside_words(c.pricing_vol, rec["ci_low"], rec["ci_high"]),
                         "" if rec["source"] == "pricing" else number(rec["gap_points"], 2, signed=True),
                         number(rec["price"], grouping=True),
                         "" if rec["source"] == "pricing" else number(rec["price_diff"], signed=True),
                         "" if rec["source"] == "pricing" else number(rec["vega_approx_diff"], signed=True),
                         rec["note"] or ""])
            colour = candidate_colour(str(rec["source"]), str(rec["key"]))
            if colour:
                swatch[i] = colour
        self.table.set_frame(pd.DataFrame(rows, columns=COMPARE_COLUMNS), c.table, swatch=swatch,
                             right=COMPARE_COLUMNS[1:9])
        strike = "at the money" if abs(c.strike - c.spot) < 1e-12 else f"strike {c.strike:,.4g}"
        life = (f"{c.days}-bar {c.kind}" if c.life is None else
                f"{c.kind} expiring {c.life.expiry} ({c.life.calendar_days} calendar days = {c.years:.4f} years, "
                f"{c.days} trading days; history's vols x {c.basis_factor:.4f})")
        self.heading.setText(
            f"Pricing vol {pct(c.pricing_vol)} for a {life} on {c.name} ({strike}, spot "
            f"{c.spot:,.4g}, rate {pct(c.rate)}, yield {pct(c.dividend_yield)}), as of {c.as_of}: price "
            f"{c.price:,.4f}. " + window_words(c.window, self.state.linked, c.days))
        lines = [f"<li>{t[0].upper() + t[1:]}{'' if t.endswith('.') else '.'}</li>" for t in c.full_reading]
        lines += [f"<li>Note: {t}.</li>" for t in c.caveats]
        missing = []
        for kind, words in PENDING_WORDS.items():
            if self.results.is_pending(kind):
                missing.append(f"{words}: computing…")
            elif self.results.problem(kind):
                missing.append(f"{words}: {self.results.problem(kind)}")
            elif kind in c.unavailable and c.unavailable[kind] != "not requested":
                missing.append(f"{words}: {c.unavailable[kind]}")
        for key, why in c.unavailable.items():
            if key not in PENDING_WORDS and key != "cone" and why != "not requested":
                missing.append(f"{key.replace('_', ' ')}: {why}")
        extra = ("<p style='color:#5A5F56'>Not shown: " + "; ".join(missing) + "</p>") if missing else ""
        self.reading.setText("<b>Reading</b><ul style='margin-left:-20px'>" + "".join(lines) + "</ul>" + extra
                             + "<p style='color:#5A5F56'>Statistical estimates with model risk, not advice; "
                               "your firm's validation policy governs their use.</p>")
        self.card.show_content()
