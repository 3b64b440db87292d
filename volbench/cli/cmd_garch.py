"""``volbench garch``: GARCH-family fits and the forward vol over an option's life."""

from __future__ import annotations

import argparse
import math
import sys

from volbench.cli.common import (
    add_file_options,
    add_format,
    load_from_args,
    print_interval,
    print_json,
    render_table,
    with_import,
)
from volbench.cli.options import add_estimation, add_garch, add_life, settings_from_args
from volbench.format import number, pct, sig
from volbench.models import DIST_REGISTRY, GarchComparison, GarchFit, fit_many

PARALLEL_FROM = 10
"""More series than this are fitted in worker processes unless --processes says otherwise."""


def register(sub) -> None:
    p = sub.add_parser(
        "garch", help="GARCH-family fits and forward vols over an option's life",
        description="Fit GARCH(1,1), GJR-GARCH(1,1,1) and/or EGARCH(1,1) (the registered GARCH-type models) "
                    "to each series' close-to-close "
                    "log returns (maximum likelihood, via the arch library), rank them by BIC, and show "
                    "the forward vol for each option life: the annualized square root of the average "
                    "expected variance over the next T bars. Fits that cannot be trusted (no convergence, "
                    "persistence at 1, parameters on a bound, too few or constant returns) say so and "
                    "fall back to EWMA (lambda 0.94).",
        epilog="Estimates are statistical and carry model risk; they are not advice.",
    )
    add_file_options(p)
    add_garch(p, full=True)
    add_estimation(p)
    add_life(p, title="the option's life, added to the --horizons as its trading days from each series' as-of date "
                      "(docs/METHODS.md, Day counts and the option's life)")
    p.add_argument("--processes", type=int, default=None, metavar="N",
                   help=f"worker processes (default: one per CPU when more than {PARALLEL_FROM} series, "
                        "else 1: starting workers costs a few seconds)")
    add_format(p)
    p.set_defaults(func=run_garch)


def run_garch(args: argparse.Namespace) -> int:
    settings = settings_from_args(args)
    histories = load_from_args(args, settings)
    processes = args.processes
    if processes is None:  # worker start-up (imports) costs seconds: only worth it for many series
        processes = None if len(histories) > PARALLEL_FROM else 1
    garch = settings.garch.with_changes(processes=processes)
    lives = [None] * len(histories)
    if settings.life is not None:  # each series' life in trading days joins the forecast horizons
        from volbench.analysis import life_for

        lives = [life_for(h, settings) for h in histories]
        garch = garch.with_changes(horizons=tuple(sorted(set(garch.horizons) | {v.trading_days for v in lives})))
    show = len(histories) > 1 and sys.stderr.isatty()

    def progress(done: int, total: int, name: str) -> None:
        sys.stderr.write(f"\rfitted {done}/{total}: {name[:40]:<40}")
        sys.stderr.flush()

    results = fit_many(histories, garch, annualization=settings.annualization,
                       progress=progress if show else None)
    if show:
        sys.stderr.write("\n")
    events = [None] * len(histories)
    if settings.events is not None:  # each model refitted on the ex-event returns, events added back
        from volbench.events.term import event_garch_term

        events = [event_garch_term(h, settings.events.calendar, [f.model for f in r.fits] or list(garch.models),
                                   garch.horizons, settings=garch, annualization=settings.annualization)
                  for h, r in zip(histories, results)]
    if args.format == "json":
        print_json({"series": [with_import({**r.as_dict(), **({} if ev is None else {
            "events": {"models": [t.as_dict() for t in ev], "file": settings.events.as_dict()}}),
            **({} if life is None else {"life": _life_dict(life, r)})}, h)
            for h, r, ev, life in zip(histories, results, events, lives)]})
        return 0
    for i, (h, r) in enumerate(zip(histories, results)):
        if i:
            print()
        print(f"{h.name}  ({h.source.name if h.source else ''}: {h.n} rows, {h.first_date} to {h.last_date})")
        print_interval(h)
        _print_comparison(r, settings.annualization)
        if lives[i] is not None:
            _print_life(lives[i], r)
        if events[i]:
            _print_events(events[i])
    print("\nForward vol: annualized sqrt of the average expected variance over bars 1..T after the last bar.")
    if any(f.fallback for r in results for f in r.fits):
        print("* fallback (EWMA, or the close-to-close vol when the fit finds no clustering), flat over every "
              "horizon; the warnings say why.")
    print("Estimates are statistical and carry model risk; they are not advice.")
    return 0


def _life_dict(life, r: GarchComparison) -> dict:
    """The life used and each model's forward vol over its trading days."""
    return {**life.as_dict(), "forward_vols": {f.model: f.forward_vol(life.trading_days) for f in r.fits}}


def _print_life(life, r: GarchComparison) -> None:
    vols = "  ".join(f"{f.label} {pct(f.forward_vol(life.trading_days))}" for f in r.fits)
    print(f"\noption life: {life.trading_days} trading days, {life.calendar_days} calendar days, from {life.as_of} "
          f"to expiry {life.expiry} (given as {life.given_as}); forward vol over it: {vols}")


def _print_events(terms) -> None:
    move = terms[0].move
    print()
    if move is None:
        print("ex-event fits: no event falls in the history, so no event move to add back")
    else:
        print(f"fitted again on the ex-event returns (event days removed, series spliced); event move variance "
              f"{sig(move.variance, 4)} per event from {move.n_events} events, added back per event in each life")
    heads = ["model", *[f"{g.days} bars" for g in terms[0].rows]]
    rows = [["events in life", *map(str, terms[0].events_in_life)]]
    for t in terms:
        rows.append([f"{t.rows[0].label} ex-event", *[pct(g.ex_event_vol) for g in t.rows]])
        rows.append([f"{t.rows[0].label} + events", *[pct(g.event_aware_vol) for g in t.rows]])
    print(render_table(heads, rows, "l" + "r" * (len(heads) - 1)))


def _status(f: GarchFit, preferred: str | None) -> str:
    if f.fallback:
        return f"{f.candidate_label.split(' → ')[-1]}*"
    tag = "preferred" if f.model == preferred else "ok"
    if f.forecast_method == "simulation":
        tag += f" ({f.simulations} paths)"
    return tag


def _print_comparison(r: GarchComparison, annualization: float) -> None:
    first = r.fits[0]
    print(f"{first.nobs} returns, {DIST_REGISTRY[first.dist].label} innovations, {first.mean} mean, "
          f"{annualization:g} bars/year, forecast from {first.as_of}")
    best = min((f.bic for f in r.fits if math.isfinite(f.bic)), default=float("nan"))
    rows = []
    for f in r.fits:
        dbic = f.bic - best if math.isfinite(f.bic) else float("nan")
        hl = "n/a" if not math.isfinite(f.half_life) else f"{f.half_life:.1f}"
        rows.append([f.label, number(f.loglik, 1), number(f.bic, 1), number(dbic, 1), number(f.persistence),
                     hl, pct(f.long_run_vol), pct(f.next_bar_vol), _status(f, r.preferred)])
    print(render_table(["model", "loglik", "BIC", "dBIC", "persistence", "half-life (bars)", "long-run vol",
                        "next-bar vol", "status"], rows, "lrrrrrrrl"))
    print()
    hz = [int(h) for h in first.term_structure["horizon"]]
    rows = [[f.label + ("*" if f.fallback else "")] + [pct(v) for v in f.term_structure["vol"]] for f in r.fits]
    print(render_table(["forward vol, bars:"] + [str(h) for h in hz], rows))
    fitted = [f for f in r.fits if f.fitted]
    if fitted:
        print("\nparameters in decimal units (mu, omega per bar), robust standard errors in brackets:")
        for f in fitted:
            items = "  ".join(f"{k} {number(v)} ({number(f.std_errors.get(k, float('nan')))})" for k, v in f.params.items())
            print(f"  {f.label}: {items}")
    print(f"\n{r.message[0].upper()}{r.message[1:]}.")
    for title, attr in (("warnings", "warnings"), ("notes", "notes")):
        lines = [f"  {f.label}: {w}" for f in r.fits for w in getattr(f, attr)]
        if lines:
            print(f"{title}:")
            print("\n".join(lines))
