"""``volbench estimate`` and ``volbench check``."""

from __future__ import annotations

import argparse
import csv
import sys

from volbench import analysis
from volbench.cli.common import (
    add_file_options,
    add_format,
    adjustments_line,
    load_from_args,
    print_interval,
    print_json,
    render_table,
    with_import,
)
from volbench.cli.events_text import events_lines
from volbench.cli.options import add_estimation, settings_from_args
from volbench.estimators import REGISTRY, estimate_all
from volbench.format import pct


def register(sub) -> None:
    p = sub.add_parser(
        "estimate", help="point estimates of every volatility estimator",
        description="Annualized volatility of each estimator (close-to-close, Parkinson, Garman-Klass, "
                    "Rogers-Satchell, Yang-Zhang, EWMA) over the last N bars or the whole file, "
                    "with 95% confidence intervals. Estimators whose columns are missing, or whose "
                    "inputs carry no information (high = low on every bar, closes that never move), are "
                    "listed with the reason.",
        epilog="Intervals: exact chi-square for close-to-close; for the others a chi-square with "
               "effective degrees of freedom whose 95%% coverage is checked by simulation (docs/METHODS.md, Confidence intervals and their coverage). "
               "Range estimators (Parkinson, Garman-Klass, Rogers-Satchell, Yang-Zhang) read low on "
               "discretely traded prices: with M trades a bar about 0.7/sqrt(M) to 0.95/sqrt(M) in vol "
               "(-3%% to -4%% at 500 trades); the intervals do not include this bias.",
    )
    add_file_options(p)
    add_estimation(p, window="all", as_of="last date of the window (default: last row of each file)")
    add_format(p, ("table", "json", "csv"))
    p.set_defaults(func=run_estimate)

    c = sub.add_parser(
        "check", help="data-quality findings for price files",
        description="List data-quality findings: missing or non-numeric values, non-positive prices, "
                    "high below low, open/close outside the range, duplicate dates, calendar gaps, "
                    "stale closes and jumps that look like unadjusted splits or bad ticks (genuine large "
                    "moves are noted, not flagged), rows whose field count differs from the header's, "
                    "and how the numbers were read.",
    )
    add_file_options(c)
    add_format(c)
    c.set_defaults(func=run_check)


def run_estimate(args: argparse.Namespace) -> int:
    settings = settings_from_args(args)
    e = settings.estimation
    histories = load_from_args(args, settings)
    reports = [estimate_all(h, e.window, as_of=e.as_of, annualization=e.annualization, confidence=e.confidence,
                            **e.options) for h in histories]
    events = [None if settings.events is None else analysis.events_for(h, settings) for h in histories]
    if args.format == "json":
        print_json({"series": [with_import({**r.as_dict(), **({} if ev is None else {"events": ev.as_dict()})},
                                           r.history) for r, ev in zip(reports, events)]})
        return 0
    if args.format == "csv":
        w = csv.writer(sys.stdout, lineterminator="\n")
        w.writerow(["series", "as_of", "estimator", "window", "annualization", "vol", "ci_low", "ci_high", "n",
                    "flagged_rows", "unavailable_reason"])
        for r, ev in zip(reports, events):
            win = "all" if r.window is None else r.window
            flag = "excluded" if r.history.exclude_flagged else "kept"
            for k in REGISTRY:
                if k in r.estimates:
                    e = r.estimates[k]
                    w.writerow([r.history.name, r.as_of, k, win, r.annualization, f"{e.vol:.10g}",
                                f"{e.ci_low:.10g}", f"{e.ci_high:.10g}", e.n, flag, ""])
                elif k in r.unavailable:
                    w.writerow([r.history.name, r.as_of, k, win, r.annualization, "", "", "", "", flag,
                                r.unavailable[k]])
                if ev is not None and k in ev.ex_event:  # the ex-event estimate as its own row
                    x = ev.ex_event[k]
                    w.writerow([r.history.name, ev.as_of, f"{k}:ex_event", win, r.annualization, f"{x.vol:.10g}",
                                f"{x.ci_low:.10g}", f"{x.ci_high:.10g}", x.n, flag, ""])
        return 0
    for i, r in enumerate(reports):
        h = r.history
        if i:
            print()
        win = "whole history" if r.window is None else f"last {r.window} bars"
        print(f"{h.name}  ({h.source.name if h.source else ''}: {h.n} rows, {h.first_date} to {h.last_date})")
        print(f"as of {r.as_of}, {win}, annualized with {r.annualization:g} bars/year; "
              f"flagged rows {'excluded' if h.exclude_flagged else 'kept'}"
              + (f" ({len([f for f in h.findings if f.severity != 'info'])} findings: run 'volbench check')"
                 if any(f.severity != "info" for f in h.findings) else ""))
        print_interval(h)
        if adjustments_line(h):
            print(adjustments_line(h))
        rows = []
        for k, spec in REGISTRY.items():
            if k in r.estimates:
                e = r.estimates[k]
                ci = f"{pct(e.ci_low)} - {pct(e.ci_high)}" + ("" if spec.ci_exact else " ~")
                rows.append([spec.label, pct(e.vol), ci, e.n])
            elif k in r.unavailable:
                rows.append([spec.label, "n/a", r.unavailable[k], ""])
        print(render_table(["estimator", "vol", "95% interval", "n"], rows, "lrlr"))
        if events[i] is not None:
            print()
            print("\n".join(events_lines(events[i], r.estimates)))
    print("\n~ approximate interval (effective degrees of freedom, coverage checked by simulation).")
    if any(e.note for r in reports for e in r.estimates.values()):
        print("Range estimators read low on discretely traded prices (about -3% to -4% in vol at 500 trades "
              "a bar); the intervals do not include that bias.")
    print("Estimates are statistical, not advice.")
    return 0


def run_check(args: argparse.Namespace) -> int:
    settings = settings_from_args(args)
    histories = load_from_args(args, settings)
    ev = settings.events
    if args.format == "json":
        doc = {"series": [with_import({"name": h.name, "source": str(h.source) if h.source else None,
                                       "rows": _file_rows(h), "findings": [f.as_dict() for f in h.findings]}, h)
                          for h in histories]}
        if ev is not None:
            doc["events_file"] = ev.as_dict()
        print_json(doc)
        return 0
    if ev is not None:
        print(f"events file {ev.file}: {len(ev.calendar)} usable events, {len(ev.calendar.findings)} findings")
        for f in ev.calendar.findings:
            print(f"  {f.severity}: {f.message}")
        print()
    for i, h in enumerate(histories):
        if i:
            print()
        counts = {s: sum(f.severity == s for f in h.findings) for s in ("error", "warning", "info")}
        print(f"{h.name}  ({h.source.name if h.source else ''}: {_file_rows(h)} usable rows, {h.first_date} to {h.last_date}) "
              f"- {counts['error']} errors, {counts['warning']} warnings, {counts['info']} notes")
        print_interval(h)
        if adjustments_line(h):
            print(adjustments_line(h))
        if h.findings:
            rows = [[f.severity, f.kind, f.line or "", f.date or "", f.column or "", f.message] for f in h.findings]
            print(render_table(["severity", "kind", "line", "date", "column", "message"], rows, "llrlll"))
        else:
            print("no findings")
    return 0


def _file_rows(h) -> int:
    """Usable rows of the file: the intraday bars behind a history analysed by day."""
    return h.intraday.bars.n if h.intraday is not None else h.n
