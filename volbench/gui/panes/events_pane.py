"""Events: every estimator on the ordinary days beside the blended estimate, the event move and the
events in the option's life (the ``events`` job, :func:`volbench.analysis.events_for`; the same
numbers as the ``"events"`` block of ``volbench compare --events FILE --format json``)."""

from __future__ import annotations

import pandas as pd
from PySide6.QtWidgets import QLabel, QVBoxLayout, QWidget

from volbench.estimators import REGISTRY
from volbench.format import pct, sig
from volbench.gui.controller import Results
from volbench.gui.panes.base import Pane
from volbench.gui.state import WorkbenchState
from volbench.gui.widgets import Card, FrameTable
from volbench.names import estimator_name

EVENT_COLUMNS = ["estimator", "ex-event vol", "95% interval", "returns or bars", "blended vol (same window)"]


class EventsPane(Pane):
    key, title = "events", "Events"

    def __init__(self, state: WorkbenchState, results: Results, parent: QWidget | None = None) -> None:
        super().__init__(state, results, parent)
        self.table = FrameTable("events_table")
        self.reading = QLabel()
        self.reading.setObjectName("events_reading")
        self.reading.setProperty("role", "reading")
        self.reading.setWordWrap(True)
        body = QWidget()
        bl = QVBoxLayout(body)
        bl.setContentsMargins(0, 0, 0, 0)
        bl.addWidget(self.table, 1)
        bl.addWidget(self.reading)
        self.card = Card(body, "events_card")
        lay = QVBoxLayout(self)
        lay.addWidget(self.card)
        results.updated.connect(self._on_results)
        self.render()

    def _on_results(self, kinds) -> None:
        if kinds & {"events", "comparison"}:
            self.render()

    def render(self) -> None:
        r = self.results.get("events")
        if r is None:
            why = self.results.problem("events")
            self.card.show_message("Open an events file (File > Open events file…: date,label,timing) to see "
                                   "ex-event estimates and the event move." if why in (None, "not requested")
                                   else why)
            return
        comp = self.results.get("comparison")
        # the comparison's estimators over the same window, back on the history's own basis (the
        # comparison restates them per ACT/365 year by its basis factor; this table does not)
        blended = {} if comp is None else {k: v / comp.basis_factor for k, v in zip(comp.table["key"],
                                                                                    comp.table["vol"])
                                           if k in REGISTRY}
        rows, raw = [], []
        for key in REGISTRY:
            e = r.ex_event.get(key)
            if e is None:
                rows.append([estimator_name(key, self.state.ewma_lambda), "n/a", r.unavailable.get(key, ""), "", pct(blended.get(key))])
            else:
                rows.append([estimator_name(key, self.state.ewma_lambda), pct(e.vol), f"{pct(e.ci_low)} - {pct(e.ci_high)}", e.n,
                             pct(blended.get(key))])
            raw.append({"key": key, "vol": None if e is None else e.vol, "blended_vol": blended.get(key)})
        self.table.set_frame(pd.DataFrame(rows, columns=EVENT_COLUMNS), pd.DataFrame(raw), right=EVENT_COLUMNS[1:])
        lines = [(f"{r.name}: {r.count} event bars up to {r.as_of}; event-day returns left out of every estimator "
                 f"(range estimators lose the whole bar), window {r.window} ordinary bars.")]
        mv = r.event_move
        if mv is not None:
            lines.append(f"Event move: variance {sig(mv.variance, 4)} per event (95% interval {sig(mv.ci_low, 4)} to "
                         f"{sig(mv.ci_high, 4)}), expected absolute move {pct(mv.expected_abs_move)}, from "
                         f"{mv.n_events} events.")
        if r.events_in_life is not None:
            lines.append(f"Events in the option's life ({r.days} weekdays after {r.as_of}): {r.events_in_life}"
                         + ("" if r.event_aware_vol is None else
                            f"; event-aware vol {pct(r.event_aware_vol)} ({r.candidate_label})") + ".")
        if r.garch is not None and r.garch.event_aware_vol is not None:
            lines.append(f"{r.garch.label} on the ex-event returns: {pct(r.garch.ex_event_vol)}, "
                         f"{pct(r.garch.event_aware_vol)} with the events added back.")
        lines += [f"Warning: {w}." for w in r.warnings]
        lines += [f"Events file: {f.message}." for f in r.findings]
        lines.append("Estimates are statistical and carry model risk; they are not advice.")
        self.reading.setText(" ".join(lines))
        self.card.show_content()
