"""``volbench cone``, ``volbench compare`` and ``volbench price``."""

from __future__ import annotations

import argparse
import math

from volbench import __version__, analysis, validate
from volbench.cli.common import (
    add_file_options,
    add_format,
    load_from_args,
    print_interval,
    print_json,
    render_table,
    with_import,
)
from volbench.cli.events_text import events_lines
from volbench.cli.options import (
    add_cone,
    add_decision,
    add_estimation,
    add_garch,
    add_life,
    add_option,
    add_scaling,
    life_from_args,
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
    add_decision(m)
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
    p.add_argument("--years", default=None, metavar="T",
                   help="years to expiry (or --expiry / --days with --as-of: years = calendar days / 365)")
    p.add_argument("--as-of", metavar="YYYY-MM-DD", default=None,
                   help="valuation date the life is counted from (with --expiry or --days)")
    add_life(p, title="the option's life by date (instead of --years)")
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
        print_interval(histories[i])
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
    given = analysis.candidate_parts(history, settings)
    try:
        cone = analysis.cone_for(history, settings)
    except VolbenchError:  # the comparison says why
        cone = None
    events = given.get("events")
    if isinstance(events, str):  # a requested events study that cannot be made: say why, exit 2
        raise VolbenchError(events)
    comp = analysis.comparison_for(history, settings, given=given, cone=cone)
    market = analysis.market_comparison_for(comp, given, cone)
    if args.format == "json":
        from volbench import provenance

        out = with_import(comp.as_dict(), history)
        if events is not None:
            out["events"] = events.as_dict()
        out["market"] = None if market is None else _market_json(market, given["quotes"])
        out["provenance"] = {"volbench_version": __version__, "settings": settings.as_dict(),
                             **provenance.record(settings, [history], getattr(args, "typed_argv", None))}
        if settings.decision is not None:
            out["decision"] = analysis.decision_for(history, settings, comp).as_dict()
        print_json(out)
        return 0
    h = history
    atm = " (at the money)" if math.isclose(comp.strike, comp.spot) else ""
    print(f"{h.name}  as of {comp.as_of}  ({h.source.name if h.source else ''}: {h.n} rows"
          f", flagged rows {'excluded' if h.exclude_flagged else 'kept'}{_findings_hint(h)})")
    print_interval(h)
    if comp.life is None:
        life = f"{comp.days} bars = {comp.years:.4f} years at {comp.annualization:g} bars/year"
    else:
        lf = comp.life
        life = (f"expiring {lf.expiry}: {lf.calendar_days} calendar days = {lf.years:.4f} years (ACT/365), "
                f"{lf.trading_days} trading days")
    print(f"{comp.kind} {life}; "
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
    if comp.life is not None:
        print(f"history's vols x {comp.basis_factor:.4f} = sqrt(({comp.days} trading days / {comp.annualization:g}) "
              f"/ {comp.years:.4f} years): the same variance on the ACT/365 basis of the pricing vol")
        for note in comp.life.notes:
            print(f"note: {note}")
    missing = dict(comp.unavailable)
    labels = {**{k: REGISTRY[k].label for k in REGISTRY}, "garch": "GARCH", "scaling": "scaling check",
              "bands": "price bands", "market": "market implied vol", "quotes": "market implied vol",
              "events": "event-aware vol"}
    hints = {"garch": "add --with-garch", "scaling": "add --with-scaling", "quotes": "add --quotes FILE",
             "events": "add --events FILE"}
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
    if market is not None:
        _print_market(market, given["quotes"])
    if settings.decision is not None:
        print("\ndecision record:")
        for line in analysis.decision_for(history, settings, comp).lines:
            print(f"- {line}")
    print(f"\n{CAUTION}")
    return 0


def _market_json(market, view) -> dict:
    """The market comparison with the quotes' term structure and each quoted expiry against the history."""
    surface = view.surface
    return {**market.as_dict(), "term_method": view.as_dict()["term_method"],
            "atm_method": surface.method, "source": dict(surface.source),
            "term_structure": [e.as_dict() for e in surface.expiries],
            "versus_history": None if view.versus is None else [r.as_dict() for r in view.versus.rows],
            "findings": [f.as_dict() for f in surface.findings]}


def _print_market(market, view) -> None:
    print()
    print(f"market: at-the-money implied vol from {view.surface.source.get('source_file')} "
          f"(vols on the ACT/365 basis; gaps in vol points)")
    rows = [["ATM implied", pct(market.atm_implied_vol), ""]]
    if market.atm_implied_vol is not None:
        rows.append(["implied - pricing vol", "", f"{market.implied_minus_pricing_points:+.2f}"])
        if market.realized_vol is not None:
            rows.append([f"implied - realized ({market.realized_label})", pct(market.realized_vol),
                         f"{market.implied_minus_realized_points:+.2f}"])
        if market.forecast_vol is not None:
            rows.append([f"implied - forecast ({market.forecast_label})", pct(market.forecast_vol),
                         f"{market.spread_points:+.2f}"])
        rows.append(["implied vol's cone percentile", "",
                     "n/a" if market.cone_percentile is None else f"{market.cone_percentile:.0f}"])
    print(render_table(["", "vol", "gap (pts)"], rows, "lrr"))
    term = [[e.expiry, e.life.trading_days, f"{e.life.years:.4f}", pct(e.atm_implied_vol),
             "" if e.forward_implied_vol is None else pct(e.forward_implied_vol),
             "CALENDAR ARBITRAGE" if e.calendar_arbitrage else ""] for e in view.surface.expiries]
    print("implied term structure (years = calendar days / 365; forward vol from the previous expiry):")
    print(render_table(["expiry", "trading days", "years", "ATM vol", "forward vol", ""], term, "lrrrrl"))
    for line in market.reading:
        print(f"- {line}")
    n = sum(f.severity == "error" for f in view.surface.findings)
    if n:
        print(f"note: {n} quote row{'s' if n != 1 else ''} left out; 'volbench implied' lists them")


# ---------------------------------------------------------------------------- price
def _price_life(args: argparse.Namespace):
    """Years to expiry and the life by date: --years T, or --expiry / --days (with --day-basis) and --as-of."""
    life_settings = life_from_args(args)
    if (args.years is None) == (life_settings is None):
        got = [o for o, v in (("--years", args.years), ("--expiry", args.expiry), ("--days", args.days)) if v]
        raise VolbenchError("give the option's life one way: --years T, or --expiry YYYY-MM-DD or --days N "
                            "(with --day-basis) and --as-of" + (f"; got {', '.join(got)}" if got else ""))
    if life_settings is None:
        return _number(args.years, "--years"), None
    if args.as_of is None:
        raise VolbenchError(f"{'--expiry' if args.expiry else '--days'} needs --as-of YYYY-MM-DD, the date "
                            "the life is counted from")
    validate.date(args.as_of, "as-of date")
    life = life_settings.life(args.as_of)
    return life.years, life


def run_price(args: argparse.Namespace) -> int:
    spot = _number(args.spot, "--spot")
    strike = _number(args.strike, "--strike")
    years, life = _price_life(args)
    vol = args.vol
    rate = check_rate(_number(args.rate, "--rate"), "--rate")
    q = check_rate(_number(args.dividend_yield, "--dividend-yield"), "--dividend-yield")
    out = {kind: bsm_greeks(spot, strike, years, rate, vol, q, kind) for kind in ("call", "put")}
    if args.format == "json":
        print_json({
            **{k: g.as_dict() for k, g in out.items()},
            "inputs": {"spot": spot, "strike": strike, "years": years, "rate": rate, "vol": vol,
                       "dividend_yield": q},
            "expiry": None if life is None else life.expiry,
            "calendar_days": None if life is None else life.calendar_days,
            "trading_days": None if life is None else life.trading_days,
            "years": years,
            "life": None if life is None else life.as_dict(),
            "units": {"vega": "per 1.00 of vol", "vega_point": "per vol point (0.01)",
                      "theta": "per year", "theta_day": "per calendar day (theta / 365)",
                      "rho": "per 1.00 of rate"},
        })
        return 0
    print(f"Black-Scholes-Merton: spot {spot:g}, strike {strike:g}, {years:g} years, rate {pct(rate)}, "
          f"dividend yield {pct(q)}, vol {pct(vol)}")
    if life is not None:
        print(f"life: {life.as_of} to {life.expiry}, {life.calendar_days} calendar days (years = days / 365), "
              f"{life.trading_days} trading days")
        for note in life.notes:
            print(f"note: {note}")
    names = [("price", "price"), ("delta", "delta"), ("gamma", "gamma"), ("vega", "vega (per 1.00 vol)"),
             ("vega_point", "vega (per vol point)"), ("theta", "theta (per year)"),
             ("theta_day", "theta (per calendar day)"), ("rho", "rho (per 1.00 rate)")]
    rows = [[label, number(getattr(out["call"], k)), number(getattr(out["put"], k))] for k, label in names]
    print(render_table(["", "call", "put"], rows, "lrr"))
    return 0
