"""``volbench cone``, ``volbench compare`` and ``volbench price``."""

from __future__ import annotations

import argparse
import math

from volbench import analysis, validate
from volbench.cli.common import (
    add_file_options,
    add_format,
    load_from_args,
    print_json,
    render_table,
    with_import,
)
from volbench.cli.events_text import events_lines
from volbench.cli.options import (
    add_cone,
    add_estimation,
    add_garch,
    add_option,
    add_scaling,
    settings_from_args,
)
from volbench.errors import VolbenchError
from volbench.estimators import REGISTRY
from volbench.format import number, pct
from volbench.pricing.bsm import bsm_greeks, check_rate
from volbench.pricing.cone import PERCENTILES

CAUTION = "Estimates are statistical and carry model risk; they are not advice."


def register(sub) -> None:
    c = sub.add_parser(
        "cone", help="volatility cone: percentiles of rolling realized vol per window",
        description="For each window, the min, 10th, 25th, 50th, 75th, 90th percentile and max of rolling "
                    "realized vol over the history (or a date range), today's value and its percentile, "
                    "and how many overlapping and independent windows stand behind each column.",
    )
    add_file_options(c)
    add_cone(c, flag="--estimator", windows=True, date_range=True, hodges_tompkins=True)
    add_estimation(c)
    add_format(c)
    c.set_defaults(func=run_cone)

    m = sub.add_parser(
        "compare", help="set a proposed pricing vol against the history and reprice the option",
        description="Places the pricing vol in the volatility cone at the option's life, lists every "
                    "estimator's latest vol over that many bars (plus GARCH and the scaling check on "
                    "request) with the gap in vol points, reprices the option at each vol with "
                    "Black-Scholes-Merton, and checks what each vol promises about the price (bands, "
                    "straddle, breakeven) against the history's moves.",
    )
    add_file_options(m, many=False)
    m.add_argument("--series", metavar="NAME", default=None, help="series to use when FILE holds several")
    add_option(m, required=True, window=True)
    add_cone(m)
    add_garch(m, switch="--with-garch")
    add_scaling(m, switch="--with-scaling")
    add_estimation(m)
    add_format(m)
    m.set_defaults(func=run_compare)

    p = sub.add_parser(
        "price", help="Black-Scholes-Merton price and greeks of a call and a put",
        description="Price, delta, gamma, vega, theta and rho of a European call and put with a "
                    "continuous dividend yield. Vega per 1.00 of vol and per vol point; theta per year "
                    "and per calendar day (/365); rho per 1.00 of rate.",
    )
    p.add_argument("--spot", required=True, metavar="S", help="spot price")
    p.add_argument("--strike", required=True, metavar="K", help="strike price")
    p.add_argument("--rate", required=True, metavar="R", help="risk-free rate, continuous, decimal (0.05 = 5%%)")
    p.add_argument("--vol", required=True, metavar="V", type=validate.pricing_vol,
                   help="volatility, decimal below 5 (0.25 = 25%%)")
    p.add_argument("--years", required=True, metavar="T", help="years to expiry")
    p.add_argument("--dividend-yield", default="0", metavar="Q", help="dividend yield, continuous, decimal (default 0)")
    add_format(p)
    p.set_defaults(func=run_price)


# ---------------------------------------------------------------------------- helpers
def _number(text: str, what: str) -> float:
    try:
        x = float(text)
    except (TypeError, ValueError):
        raise VolbenchError(f"{what} must be a number, got {text!r}") from None
    if not math.isfinite(x):
        raise VolbenchError(f"{what} must be a finite number, got {text!r}")
    return x


def _findings_hint(h) -> str:
    n = sum(f.severity != "info" for f in h.findings)
    return f"; {n} data-quality finding{'s' if n != 1 else ''}: run 'volbench check'" if n else ""


# ---------------------------------------------------------------------------- cone
def run_cone(args: argparse.Namespace) -> int:
    settings = settings_from_args(args)
    histories = load_from_args(args, settings)
    cones = [analysis.cone_for(h, settings) for h in histories]
    if args.format == "json":
        print_json({"series": [with_import(c.as_dict(), h) for h, c in zip(histories, cones)]})
        return 0
    for i, c in enumerate(cones):
        if i:
            print()
        print(f"{c.name}  {c.label.lower()} vol cone, {c.start} to {c.end} ({c.rows} rows), "
              f"annualized with {c.annualization:g} bars/year{_findings_hint(histories[i])}")
        suffix = "_adj" if c.hodges_tompkins else ""
        heads = ["window", "min", "10%", "25%", "median", "75%", "90%", "max", "today", "today pctl",
                 "windows", "independent"]
        rows = []
        for w, r in c.table.iterrows():
            row = [w] + [pct(r[f"{k}{suffix}"], 1) for k in PERCENTILES]
            row += [pct(r["current"], 1), f"{r['current_percentile']:.0f}", int(r["n_windows"]),
                    int(r["n_independent"])]
            if c.hodges_tompkins:
                row.append(f"{r['ht_factor']:.3f}")
            rows.append(row)
        if c.hodges_tompkins:
            heads.append("HT factor")
        print(render_table(heads, rows, "r" * len(heads)))
        if c.hodges_tompkins:
            print("percentiles widened for overlapping windows (Hodges & Tompkins 2002): "
                  "mean + factor x (raw - mean); raw values with --format json")
        for w, reason in c.dropped.items():
            print(f"dropped window {w}: {reason}")
        for note in c.notes:
            print(f"note: {note}")
    print(f"\n'windows' counts overlapping windows, 'independent' non-overlapping ones. {CAUTION}")
    return 0


# ---------------------------------------------------------------------------- compare
def _pick_series(histories, name):
    if name is None:
        if len(histories) > 1:
            raise VolbenchError(f"the file holds {len(histories)} series ({', '.join(h.name for h in histories)}); "
                                "choose one with --series NAME")
        return histories[0]
    for h in histories:
        if h.name == name:
            return h
    raise VolbenchError(f"no series {name!r} in the file; it holds: {', '.join(h.name for h in histories)}")


def run_compare(args: argparse.Namespace) -> int:
    settings = settings_from_args(args)
    history = _pick_series(load_from_args(args, settings), args.series)
    events = None if settings.events is None else analysis.events_for(history, settings)
    comp = analysis.comparison_for(history, settings, given=None if events is None else {"events": events})
    if args.format == "json":
        print_json(with_import({**comp.as_dict(), **({} if events is None else {"events": events.as_dict()})},
                               history))
        return 0
    h = history
    atm = " (at the money)" if math.isclose(comp.strike, comp.spot) else ""
    print(f"{h.name}  as of {comp.as_of}  ({h.source.name if h.source else ''}: {h.n} rows"
          f", flagged rows {'excluded' if h.exclude_flagged else 'kept'}{_findings_hint(h)})")
    print(f"{comp.kind} {comp.days} bars = {comp.years:.4f} years at {comp.annualization:g} bars/year; "
          f"spot {comp.spot:g}{' (last close)' if settings.option.spot is None else ''}, strike {comp.strike:g}{atm}, "
          f"rate {pct(comp.rate)}, dividend yield {pct(comp.dividend_yield)}")
    print()
    rows = []
    for r in comp.table.itertuples(index=False):
        is_p = r.source == "pricing"
        rows.append([r.label, pct(r.vol), "" if is_p else f"{r.gap_points:+.2f}", number(r.price),
                     "" if is_p else number(r.price_diff, signed=True),
                     "" if is_p else number(r.vega_approx_diff, signed=True),
                     number(r.vega_point), r.note])
    print(render_table(["vol source", "vol", "gap (pts)", "price", "price diff", "vega approx", "vega/pt", "note"],
                       rows, "lrrrrrrl"))
    print(f"estimators over the last {comp.window} bars; gap = candidate - pricing vol; price diff = exact "
          "repricing; vega approx = vega x gap")
    missing = dict(comp.unavailable)
    labels = {**{k: REGISTRY[k].label for k in REGISTRY}, "garch": "GARCH", "scaling": "scaling check",
              "bands": "price bands", "events": "event-aware vol"}
    hints = {"garch": "add --with-garch", "scaling": "add --with-scaling", "events": "add --events FILE"}
    if missing:
        parts = []
        for k, why in missing.items():
            if k == "cone":
                continue
            extra = f"; {hints[k]}" if why == "not requested" and k in hints else ""
            parts.append(f"{labels.get(k, k)} ({why}{extra})")
        if parts:
            print("not shown: " + ", ".join(parts))
    if events is not None:
        print()
        print("\n".join(events_lines(events)))
    print()
    if "cone" in missing:
        print(f"cone: not available ({missing['cone']})")
    for line in comp.full_reading:
        print(f"- {line}")
    for line in comp.caveats:
        print(f"note: {line}")
    print(f"\n{CAUTION}")
    return 0


# ---------------------------------------------------------------------------- price
def run_price(args: argparse.Namespace) -> int:
    spot = _number(args.spot, "--spot")
    strike = _number(args.strike, "--strike")
    years = _number(args.years, "--years")
    vol = args.vol
    rate = check_rate(_number(args.rate, "--rate"), "--rate")
    q = check_rate(_number(args.dividend_yield, "--dividend-yield"), "--dividend-yield")
    out = {kind: bsm_greeks(spot, strike, years, rate, vol, q, kind) for kind in ("call", "put")}
    if args.format == "json":
        print_json({
            **{k: g.as_dict() for k, g in out.items()},
            "inputs": {"spot": spot, "strike": strike, "years": years, "rate": rate, "vol": vol,
                       "dividend_yield": q},
            "units": {"vega": "per 1.00 of vol", "vega_point": "per vol point (0.01)",
                      "theta": "per year", "theta_day": "per calendar day (theta / 365)",
                      "rho": "per 1.00 of rate"},
        })
        return 0
    print(f"Black-Scholes-Merton: spot {spot:g}, strike {strike:g}, {years:g} years, rate {pct(rate)}, "
          f"dividend yield {pct(q)}, vol {pct(vol)}")
    names = [("price", "price"), ("delta", "delta"), ("gamma", "gamma"), ("vega", "vega (per 1.00 vol)"),
             ("vega_point", "vega (per vol point)"), ("theta", "theta (per year)"),
             ("theta_day", "theta (per calendar day)"), ("rho", "rho (per 1.00 rate)")]
    rows = [[label, number(getattr(out["call"], k)), number(getattr(out["put"], k))] for k, label in names]
    print(render_table(["", "call", "put"], rows, "lrr"))
    return 0
