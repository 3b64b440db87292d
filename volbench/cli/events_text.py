"""Table output of the events part (``--events FILE``): shared by estimate, compare, garch and export."""

from __future__ import annotations

from volbench.cli.common import render_table
from volbench.estimators import REGISTRY
from volbench.events import EventReport
from volbench.format import pct, sig


def events_lines(report: EventReport, blended: dict | None = None) -> list[str]:
    """Lines describing ``report``: ex-event estimates beside the blended ones (``blended``: key ->
    :class:`~volbench.estimators.Estimate` over the same window, when the caller has them), the event
    move with its interval, the events in the option's life and the event-aware vols."""
    r = report
    win = "whole history" if r.window is None else f"last {r.window} ordinary bars"
    lines = [(f"events: {r.count} event bar{'s' if r.count != 1 else ''} in the history up to {r.as_of} "
             f"(event-day returns left out of every estimator; range estimators lose the whole bar); {win}")]
    rows = []
    lvl = f"{100 * r.confidence:g}%"
    for key, spec in REGISTRY.items():
        b = (blended or {}).get(key)
        if key in r.ex_event:
            e = r.ex_event[key]
            row = [spec.label, pct(e.vol), f"{pct(e.ci_low)} - {pct(e.ci_high)}", e.n]
        else:
            row = [spec.label, "n/a", r.unavailable.get(key, ""), ""]
        if blended is not None:
            row.append("n/a" if b is None else pct(b.vol))
        rows.append(row)
    heads = ["estimator", "ex-event vol", f"{lvl} interval", "n"] + (["blended vol"] if blended is not None else [])
    lines.append(render_table(heads, rows, "lrlr" + ("r" if blended is not None else "")))
    mv = r.event_move
    if mv is not None:
        lines.append(f"event move: variance {sig(mv.variance, 4)} per event ({lvl} interval {sig(mv.ci_low, 4)} to "
                     f"{sig(mv.ci_high, 4)}), sd {pct(mv.vol)}, expected absolute move {pct(mv.expected_abs_move)}, "
                     f"from {mv.n_events} event{'s' if mv.n_events != 1 else ''} (event-day r² mean "
                     f"{sig(mv.mean_sq_event_return, 4)} less the ordinary day's {sig(mv.ordinary_variance, 4)})")
    if r.events_in_life is not None:
        lines.append(f"events in the option's life ({r.days} bars after {r.as_of}, counted on weekdays): "
                     f"{r.events_in_life}")
    if r.event_aware_vol is not None:
        lines.append(f"event-aware vol ({r.candidate_label}): {pct(r.event_aware_vol)} = "
                     f"sqrt((ex-event variance x (T - m) + m x (ordinary + event variance)) / T)")
    if r.garch is not None:
        g = r.garch
        lines.append(f"{g.label} on {g.nobs} ex-event returns: forward vol {pct(g.ex_event_vol)} over {g.days} bars"
                     + ("" if g.event_aware_vol is None else f", {pct(g.event_aware_vol)} with the events added back")
                     + (f" [{g.fallback}]" if g.fallback else "") + f"; {g.lag_treatment}")
    for w in r.warnings:
        lines.append(f"warning: {w}")
    for f in r.findings:
        lines.append(f"events file: {f.severity}: {f.message}")
    return lines
