"""``volbench hindsight``: which candidate vol would have forecast best on this history."""

from __future__ import annotations

import argparse
import csv
import math
import sys

from volbench.cli.common import (
    add_annualization,
    add_file_options,
    add_format,
    load_from_args,
    parse_int_list,
    print_interval,
    print_json,
    render_table,
)
from volbench.cli.options import add_life, settings_from_args
from volbench.errors import VolbenchError
from volbench.hindsight import (
    DEFAULT_REFIT_EVERY,
    DEFAULT_WINDOWS,
    SCORE_COLUMNS,
    Hindsight,
    hindsight,
)


def register(sub) -> None:
    p = sub.add_parser(
        "hindsight", help="how each candidate vol would have forecast the vol that followed",
        description="Roll the as-of date through the history every K bars; at each, every candidate "
                    "(each estimator at each window, EWMA, optionally GARCH and event-aware vols) forecasts "
                    "the vol of the next N bars, which is set against the close-to-close vol those bars "
                    "realized. Candidates are ranked by QLIKE loss, with bias and RMSE in vol points, "
                    "coverage of their 95%% interval, the at-the-money price error and a Diebold-Mariano "
                    "test against the best.",
        epilog="Past forecast accuracy is evidence, not a guarantee. Estimates are statistical and carry "
               "model risk; they are not advice.",
    )
    add_file_options(p)
    add_life(p, title="the option's life: bars in each forecast period (docs/METHODS.md, Day counts and the "
                      "option's life)")
    g = p.add_mutually_exclusive_group()
    g.add_argument("--window", metavar="W", default=None, help="one estimator window in bars")
    g.add_argument("--windows", metavar="LIST", default=None,
                   help=f"estimator windows in bars, comma separated (default {','.join(map(str, DEFAULT_WINDOWS))})")
    p.add_argument("--step", type=int, default=1, metavar="K", help="bars between as-of dates (default 1)")
    p.add_argument("--with-garch", action="store_true",
                   help="add the GARCH(1,1) forward vol (refitted every --refit-every bars; slower)")
    p.add_argument("--refit-every", type=int, default=DEFAULT_REFIT_EVERY, metavar="R",
                   help="bars between GARCH refits; parameters are kept in between (default %(default)s)")
    add_annualization(p)
    add_format(p, ("table", "json", "csv"))
    p.set_defaults(func=run_hindsight)


def _windows(args: argparse.Namespace) -> tuple[int, ...]:
    if args.window is not None:
        return tuple(parse_int_list(str(args.window), "--window"))
    if args.windows is not None:
        return tuple(parse_int_list(args.windows, "--windows"))
    return DEFAULT_WINDOWS


def run_hindsight(args: argparse.Namespace) -> int:
    windows = _windows(args)
    settings = settings_from_args(args)  # --events is read here, with every other setting
    calendar = None if settings.events is None else settings.events.calendar
    histories = load_from_args(args, settings)
    if calendar is not None and len(histories) > 1:
        raise VolbenchError(f"--events lists the events of one instrument; give one price series "
                            f"(got {len(histories)}: {', '.join(h.name for h in histories)})")
    if settings.life is None:
        raise VolbenchError("hindsight needs the option's life: give --days N (trading days by default) or "
                            "--expiry YYYY-MM-DD")
    from volbench.analysis import life_for

    lives = [life_for(h, settings) for h in histories]  # resolved per series from its own as-of date
    results = [hindsight(h, life.trading_days, windows=windows, step=args.step, with_garch=args.with_garch,
                         events=calendar, annualization=args.annualization, refit_every=args.refit_every)
               for h, life in zip(histories, lives)]
    if args.format == "json":
        doc = {"series": [{**r.as_dict(), "life": life.as_dict()} for r, life in zip(results, lives)]}
        if calendar is not None:
            doc["events_file"] = {"source": str(calendar.source), "sha256": calendar.sha256, "events": len(calendar),
                                  "findings": [f.as_dict() for f in calendar.findings]}
        print_json(doc)
        return 0
    if args.format == "csv":
        w = csv.writer(sys.stdout, lineterminator="\n")
        w.writerow(["series", "days", "step", "periods", *SCORE_COLUMNS, "best"])
        for r in results:
            for rec in r.scores.to_dict(orient="records"):
                w.writerow([r.name, r.days, r.step, r.periods,
                            *(_csv_cell(rec[c]) for c in SCORE_COLUMNS), int(rec["key"] == r.best)])
        return 0
    if calendar is not None and calendar.findings:
        print(f"events file {calendar.source}: {len(calendar.findings)} finding(s)")
        for f in calendar.findings:
            print(f"  {f.severity}: {f.message}")
        print()
    for i, r in enumerate(results):
        if i:
            print()
        _print_table(r, histories[i])
        print(_life_line(lives[i]))
    print("\nQLIKE ranks (lower is better); bias and RMSE in vol points; DM p: Diebold-Mariano against the best.\n"
          "Past forecast accuracy is evidence, not a guarantee. Estimates are statistical, not advice.")
    return 0


def _life_line(life) -> str:
    return (f"option life: {life.trading_days} trading days, {life.calendar_days} calendar days, from "
            f"{life.as_of} to expiry {life.expiry} (given as {life.given_as})")


def _csv_cell(v):
    if v is None:
        return ""
    if isinstance(v, float):
        return "" if not math.isfinite(v) else f"{v:.10g}"
    try:
        import pandas as pd

        if pd.isna(v):
            return ""
    except (TypeError, ValueError):
        pass
    return v


def _print_table(r: Hindsight, h) -> None:
    d = r.as_dict()
    print(f"{r.name}  ({h.source.name if h.source else ''}: {h.n} rows, {h.first_date} to {h.last_date})")
    print_interval(h)
    print(f"{r.days}-bar periods, as-of every {r.step} bar{'s' if r.step != 1 else ''}: {r.periods} periods "
          f"from {d['first_as_of']} to {d['last_as_of']}; annualized with {r.annualization:g} bars/year; "
          f"flagged rows {'excluded' if h.exclude_flagged else 'kept'}")
    rows = []
    for c in d["candidates"]:
        p = c["dm_p_value"]
        rows.append([c["rank"], c["label"], f"{c['bias']:+.2f}", f"{c['rmse']:.2f}", f"{c['qlike']:.4f}",
                     f"{100 * c['coverage']:.0f}%", f"{c['price_error']:.4g}", f"{100 * c['price_error_share']:.1f}%",
                     "best" if c["key"] == r.best else f"{p:.3f}"])
    print(render_table(["#", "candidate", "bias", "RMSE", "QLIKE", "in 95%", "price err", "of premium", "DM p"],
                       rows, "rlrrrrrrr"))
    for note in r.notes:
        print(f"note: {note}")
    missing = {k: v for k, v in r.unavailable.items() if v != "not requested"}
    for k, v in missing.items():
        print(f"not available: {k}: {v}")
