"""``volbench implied``: the implied vol of one premium, or of every quote in a quotes file."""

from __future__ import annotations

import argparse
import math
import sys

from volbench.cli.common import print_json, render_table
from volbench.errors import VolbenchError
from volbench.estimators import REGISTRY
from volbench.format import number, pct
from volbench.models import DIST_REGISTRY, MODEL_REGISTRY
from volbench.pricing.bsm import check_rate
from volbench.pricing.daycount import DAY_BASES, DEFAULT_DAY_BASIS, option_life, read_holidays
from volbench.pricing.implied import solve_implied_vol
from volbench.types import DEFAULT_ANNUALIZATION

CAUTION = ("Estimates are statistical and carry model risk; they are not advice. Your firm's "
           "model-validation policy governs their use.")
_SINGLE_ONLY = ("premium", "strike", "kind", "years", "expiry", "days")


def register(sub) -> None:
    p = sub.add_parser(
        "implied", help="implied vol of a premium, or of every quote in an option-quotes file",
        description="Two forms. With --premium: the Black-Scholes-Merton implied vol of one European "
                    "option's premium, its price check and vega; a premium on or outside the no-arbitrage "
                    "bounds, or one whose vega is negligible, exits 2 with the bounds. With QUOTES.csv "
                    "(columns expiry, strike, type and a mid or bid/ask): every quote's implied vol, the "
                    "at-the-money implied vol per expiry (interpolated in ln(K/F) between out-of-the-money "
                    "quotes, F from put-call parity), the implied term structure and forward implied vols "
                    "(negative forward variance flagged as calendar arbitrage), and with --prices each "
                    "expiry's realized vols, GARCH forward vol, cone percentile and implied-minus-forecast "
                    "spread. Years are calendar days / 365 (ACT/365); historical vols use the trading days "
                    "to each expiry.",
        epilog="Examples: volbench implied --spot 42 --strike 40 --rate 0.1 --years 0.5 --premium 4.76 "
               "--type call;  volbench implied quotes.csv --as-of 2024-10-18 --rate 0.03 --prices prices.csv",
    )
    p.add_argument("quotes", nargs="?", metavar="QUOTES.csv", default=None,
                   help="option-quotes file (omit for a single premium)")
    p.add_argument("--spot", metavar="S", default=None,
                   help="underlying price (with QUOTES and --prices: default the last close on or before --as-of)")
    p.add_argument("--rate", required=True, metavar="R", help="risk-free rate, continuous, decimal (0.05 = 5%%)")
    p.add_argument("--dividend-yield", default="0", metavar="Q",
                   help="dividend yield, continuous, decimal (default 0; with QUOTES used only for expiries "
                        "without a call/put pair)")
    p.add_argument("--as-of", metavar="YYYY-MM-DD", default=None, help="valuation date")
    p.add_argument("--holidays", metavar="FILE", default=None,
                   help="exchange holidays, one YYYY-MM-DD per line, left out of trading-day counts")
    single = p.add_argument_group("one premium")
    single.add_argument("--premium", metavar="P", default=None, help="option premium")
    single.add_argument("--strike", metavar="K", default=None, help="strike")
    single.add_argument("--type", dest="kind", choices=["call", "put"], default=None, help="option type")
    single.add_argument("--years", metavar="T", default=None, help="years to expiry")
    single.add_argument("--expiry", metavar="YYYY-MM-DD", default=None, help="expiry date (with --as-of)")
    single.add_argument("--days", metavar="N", default=None, help="days to expiry on --day-basis (with --as-of)")
    single.add_argument("--day-basis", choices=list(DAY_BASES), default=DEFAULT_DAY_BASIS,
                        help=f"what --days counts (default {DEFAULT_DAY_BASIS}: weekdays less holidays; "
                             "calendar: every day)")
    many = p.add_argument_group("a quotes file")
    many.add_argument("--prices", metavar="FILE", default=None,
                      help="price CSV of the underlying: adds realized, forecast and cone per expiry")
    many.add_argument("--series", metavar="NAME", default=None, help="series in --prices when it holds several")
    many.add_argument("--date-format", metavar="FMT", default=None,
                      help="strftime format of the quotes' expiry column when it is not ISO")
    many.add_argument("--model", choices=list(MODEL_REGISTRY), default="garch",
                      help="GARCH-family model for the forward vol (default garch)")
    many.add_argument("--dist", choices=list(DIST_REGISTRY), default="normal",
                      help="innovation distribution of the model (default normal)")
    many.add_argument("--cone-estimator", default="close_to_close", metavar="KEY",
                      help="estimator of the cone the implied vol is placed in (default close_to_close)")
    many.add_argument("--annualization", type=float, default=DEFAULT_ANNUALIZATION, metavar="A",
                      help="bars per year of the price history (default %(default)g)")
    p.add_argument("--format", choices=["table", "json", "csv"], default="table",
                   help="output format (default table; csv: the quotes table, quotes form only)")
    p.set_defaults(func=run_implied)


# ---------------------------------------------------------------------------- helpers
def _number(text, what: str) -> float:
    try:
        x = float(text)
    except (TypeError, ValueError):
        raise VolbenchError(f"{what} must be a number, got {text!r}") from None
    if not math.isfinite(x):
        raise VolbenchError(f"{what} must be a finite number, got {text!r}")
    return x


def _holidays(args):
    return None if args.holidays is None else read_holidays(args.holidays)


def run_implied(args: argparse.Namespace) -> int:
    rate = check_rate(_number(args.rate, "--rate"), "--rate")
    q = check_rate(_number(args.dividend_yield, "--dividend-yield"), "--dividend-yield")
    if args.quotes is None:
        return _run_single(args, rate, q)
    given = [f"--{n.replace('kind', 'type')}" for n in _SINGLE_ONLY if getattr(args, n) is not None]
    if given:
        raise VolbenchError(f"{', '.join(given)} belong{'s' if len(given) == 1 else ''} to the one-premium "
                            "form; with a quotes file each row gives its own strike, type, expiry and premium")
    return _run_quotes(args, rate, q)


# ---------------------------------------------------------------------------- one premium
def _life(args):
    ways = [w for w, v in (("--years", args.years), ("--expiry", args.expiry), ("--days", args.days)) if v is not None]
    if len(ways) != 1:
        raise VolbenchError("give the option's life one way: --years T, or --expiry YYYY-MM-DD with --as-of, or "
                            "--days N (with --day-basis) and --as-of" + (f"; got {', '.join(ways)}" if ways else ""))
    if args.years is not None:
        return _number(args.years, "--years"), None
    if args.as_of is None:
        raise VolbenchError(f"{ways[0]} needs --as-of YYYY-MM-DD, the date the life is counted from")
    life = option_life(args.as_of, expiry=args.expiry, days=args.days, basis=args.day_basis,
                       holidays=_holidays(args))
    return life.years, life


def _run_single(args, rate: float, q: float) -> int:
    missing = [n for n, v in (("--spot", args.spot), ("--strike", args.strike), ("--premium", args.premium),
                              ("--type", args.kind)) if v is None]
    if missing:
        raise VolbenchError(f"one premium needs {', '.join(missing)} (or give a QUOTES.csv file)")
    if args.format == "csv":
        raise VolbenchError("--format csv lists a quotes file; for one premium use table or json")
    spot, strike = _number(args.spot, "--spot"), _number(args.strike, "--strike")
    premium = _number(args.premium, "--premium")
    years, life = _life(args)
    res = solve_implied_vol(premium, spot, strike, years, rate, q, args.kind)
    bounds = f"bounds: {res.lower_bound:.6g} < {res.kind} < {res.upper_bound:.6g}"
    if args.format == "json":
        print_json({**res.as_dict(), "life": None if life is None else life.as_dict()})
        if not res.ok:
            print(f"volbench: {res.message} ({bounds})", file=sys.stderr)
            return 2
        return 0
    if not res.ok:
        raise VolbenchError(f"{res.message} ({bounds})")
    print(f"Black-Scholes-Merton implied vol of a {res.kind} at {premium:g}: spot {spot:g}, strike {strike:g}, "
          f"{years:.6g} years, rate {pct(rate)}, dividend yield {pct(q)}")
    if life is not None:
        print(f"life: {life.as_of} to {life.expiry}, {life.calendar_days} calendar days (years = days / 365), "
              f"{life.trading_days} trading days")
        for note in life.notes:
            print(f"note: {note}")
    rows = [["implied vol", pct(res.implied_vol, 4)], ["price check", number(res.price_check, 6)],
            ["vega (per 1.00 vol)", number(res.vega, 4)], ["vega (per vol point)", number(res.vega / 100, 4)],
            ["status", res.status], ["no-arbitrage bounds", f"{res.lower_bound:.6g} < {res.kind} < {res.upper_bound:.6g}"]]
    print(render_table(["", ""], rows, "lr"))
    return 0


# ---------------------------------------------------------------------------- a quotes file
def _history(args):
    from volbench.data import load_prices
    from volbench.intraday.days import by_days

    histories = [by_days(h) for h in load_prices(args.prices)]  # an intraday file is analysed by day
    if args.series is None:
        if len(histories) > 1:
            raise VolbenchError(f"{args.prices} holds {len(histories)} series "
                                f"({', '.join(h.name for h in histories)}); choose one with --series NAME")
        return histories[0]
    for h in histories:
        if h.name == args.series:
            return h
    raise VolbenchError(f"no series {args.series!r} in {args.prices}; it holds: "
                        f"{', '.join(h.name for h in histories)}")


def _run_quotes(args, rate: float, q: float) -> int:
    from volbench.market import implied_surface, read_quotes, versus_history

    if args.as_of is None:
        raise VolbenchError("a quotes file needs --as-of YYYY-MM-DD, the date the quotes were taken")
    if args.cone_estimator not in REGISTRY:
        raise VolbenchError(f"unknown estimator {args.cone_estimator!r}; choose one of: {', '.join(REGISTRY)}")
    holidays = _holidays(args)
    history = _history(args) if args.prices else None
    if args.spot is not None:
        spot, spot_from = _number(args.spot, "--spot"), "--spot"
    elif history is not None:
        h = history.up_to(args.as_of)
        spot, spot_from = float(h.close[-1]), f"last close of {h.name} on {h.last_date}"
    else:
        raise VolbenchError("a quotes file needs --spot S (or --prices FILE to take the last close)")
    quotes = read_quotes(args.quotes, date_format=args.date_format)
    surface = implied_surface(quotes, spot=spot, rate=rate, as_of=args.as_of, dividend_yield=q, holidays=holidays)
    versus = None
    if history is not None:
        versus = versus_history(surface, history, annualization=args.annualization, model=args.model,
                                dist=args.dist, cone_estimator=args.cone_estimator)
    if args.format == "json":
        doc = surface.as_dict()
        doc["spot_from"] = spot_from
        doc["versus_history"] = [] if versus is None else [r.as_dict() for r in versus.rows]
        doc["history"] = None if versus is None else {k: v for k, v in versus.as_dict().items() if k != "rows"}
        doc["holidays"] = None if holidays is None else holidays.as_dict()
        print_json(doc)
        return 0
    if args.format == "csv":
        from volbench.export.writers import csv_text

        table = surface.quotes.drop(columns=["message"]).copy()
        table["expiry"] = table["expiry"].dt.strftime("%Y-%m-%d")
        sys.stdout.write(csv_text(table))
        return 0
    _print_tables(args, surface, versus, spot, spot_from, holidays)
    return 0


def _print_tables(args, surface, versus, spot, spot_from, holidays) -> None:
    src = surface.source
    print(f"{src.get('source_file')}: {src.get('usable')} usable quotes of {src.get('rows')} rows, as of "
          f"{surface.as_of}; spot {spot:g} ({spot_from}), rate {pct(surface.rate)}")
    rows = []
    for r in surface.quotes.itertuples(index=False):
        rows.append([r.line, r.expiry.strftime("%Y-%m-%d"), f"{r.strike:g}", r.type, f"{r.premium:g}",
                     pct(r.implied_vol), pct(r.iv_bid), pct(r.iv_ask), "otm" if r.out_of_the_money else "itm",
                     r.status])
    print(render_table(["line", "expiry", "strike", "type", "premium", "implied vol", "at bid", "at ask", "side",
                        "status"], rows, "rlrlrrrrll"))
    refused = surface.quotes[surface.quotes.status != "ok"]
    for r in refused.itertuples(index=False):
        print(f"line {r.line}: {r.message}")
    print()
    rows = []
    for e in surface.expiries:
        flag = "CALENDAR ARBITRAGE" if e.calendar_arbitrage else ""
        fwd_iv = pct(e.forward_implied_vol) if e.forward_implied_vol is not None else (
            f"n/a (var {e.forward_variance:.4f})" if e.forward_variance is not None else "n/a")
        rows.append([e.expiry, e.life.calendar_days, e.life.trading_days, f"{e.life.years:.4f}", f"{e.forward:.4f}",
                     e.forward_source, pct(e.atm_implied_vol), fwd_iv, flag])
    print("implied term structure (years = calendar days / 365; forward vol from the previous expiry)")
    print(render_table(["expiry", "cal days", "trading days", "years", "forward", "forward from", "ATM vol",
                        "forward vol", ""], rows, "lrrrrlrrl"))
    for e in surface.expiries:
        if e.atm_note:
            print(f"{e.expiry}: no at-the-money vol: {e.atm_note}")
        if e.calendar_arbitrage:
            print(f"{e.expiry}: total implied variance falls from {e.previous_expiry} "
                  f"(forward variance {e.forward_variance:.6f} < 0): calendar arbitrage in the quotes")
        for note in e.life.notes:
            print(f"{e.expiry}: {note}")
    print(f"at-the-money method: {surface.method}")
    if versus is not None:
        print()
        print(f"against the history of {versus.series} to {versus.history_as_of} "
              f"(vols on the ACT/365 basis of the implied vols; spread = implied - forecast)")
        rows = []
        for r in versus.rows:
            rows.append([r.expiry, r.trading_days, pct(r.atm_implied_vol), pct(r.realized_vol),
                         r.realized_estimator or "", pct(r.forecast_vol), r.forecast_source or "",
                         "n/a" if r.cone_percentile is None else f"{r.cone_percentile:.0f}",
                         "n/a" if r.spread_points is None else f"{r.spread_points:+.2f}"])
        print(render_table(["expiry", "trading days", "ATM vol", "realized", "estimator", "forecast",
                            "forecast from", "cone pctl", "spread (pts)"], rows, "lrrrlrlrr"))
        for note in versus.notes:
            print(f"note: {note}")
    findings = list(surface.findings) + ([] if holidays is None else list(holidays.findings))
    if findings:
        print()
        print(f"{len(findings)} finding{'s' if len(findings) != 1 else ''}:")
        for f in findings:
            print(f"  {f.severity}: {f.message}")
    print(f"\n{CAUTION}")
