"""``volbench scaling``: does each price history scale like the Brownian motion Black-Scholes assumes?"""

from __future__ import annotations

import argparse

from volbench.cli.common import (
    add_file_options,
    add_format,
    load_from_args,
    print_json,
    render_table,
    with_import,
)
from volbench.cli.options import add_estimation, add_life, add_scaling, settings_from_args
from volbench.format import number, p_value, pct
from volbench.intraday.sessions import format_interval
from volbench.scaling import ScalingResult, scaling_check

_LABELS = {
    "variance_proportional_to_horizon": "variance proportional to horizon",
    "normal_increments": "normal increments",
    "independent_increments": "independent increments",
    "negligible_drift": "negligible drift",
    "continuous_paths": "continuous paths (no jumps)",
}


def register(sub) -> None:
    p = sub.add_parser(
        "scaling", help="check that returns scale like Brownian motion (variance ratio, normality, ...)",
        description="For each series: variance of h-bar log returns against horizon with a log-log fit "
                    "(Hurst exponent), Lo-MacKinlay variance-ratio tests (plain and heteroskedasticity-robust) "
                    "with the Chow-Denning joint test, skewness/kurtosis/Jarque-Bera by horizon, Ljung-Box on "
                    "returns and squared returns, the drift t-test, the annualized vol each horizon actually "
                    "saw against sqrt-time scaling of the 1-bar vol, and a verdict on each property.",
        epilog="Verdicts come from the tests alone: 'consistent' when p >= alpha (the data do not "
               "contradict the property; they do not prove it); 'rejected' when the test rejects even "
               "after allowing for the five properties tested together (Holm); 'doubtful' when p < alpha "
               "on its own but not after that allowance. Effect sizes are described in the sentence. "
               "The output states how often a perfectly Brownian series of the same length gets at least "
               "one non-consistent verdict by chance. Statistical evidence, not advice.",
    )
    add_file_options(p)
    add_scaling(p, full=True)
    add_estimation(p)
    add_life(p, title="the option's life: the horizon vol over its trading days from each series' as-of date, "
                      "beside the check (docs/METHODS.md, Day counts and the option's life)")
    add_format(p)
    p.set_defaults(func=run_scaling)


def run_scaling(args: argparse.Namespace) -> int:
    settings = settings_from_args(args)
    s = settings.scaling
    histories = load_from_args(args, settings)
    results = [scaling_check(h, s.horizons, alpha=s.alpha, annualization=settings.annualization) for h in histories]
    lives = [None] * len(histories)
    if settings.life is not None:  # the life's horizon row, computed apart so the check's tests stay as they are
        from volbench.analysis import life_for

        lives = [_life_dict(h, r, life_for(h, settings), settings.annualization) for h, r in zip(histories, results)]
    if args.format == "json":
        print_json({"series": [with_import({**r.as_dict(), **({} if life is None else {"life": life})}, h)
                               for h, r, life in zip(histories, results, lives)]})
        return 0
    for i, r in enumerate(results):
        if i:
            print("\n")
        print(render_result(r))
        if lives[i] is not None:
            v = lives[i]
            print(f"\noption life: {v['trading_days']} trading days, {v['calendar_days']} calendar days, from "
                  f"{v['as_of']} to expiry {v['expiry']} (given as {v['given_as']}); horizon vol over it "
                  f"{pct(v['annualized_vol'])} against {pct(v['sqrt_time_vol'])} by sqrt-time scaling of the 1-bar vol")
    print("\nStatistical evidence under stated assumptions, not advice.")
    return 0


def _life_dict(h, r: ScalingResult, life, annualization: float) -> dict:
    """The life used and the annualized vol its trading days saw (the check's horizon row for that many bars)."""
    days = life.trading_days
    rows = r.horizons[r.horizons["h"] == days]
    if rows.empty:  # the same row the check gives when its horizons include the life
        rows = scaling_check(h, (days,), alpha=r.alpha, annualization=annualization).horizons
        rows = rows[rows["h"] == days]
    row = rows.iloc[0]
    return {**life.as_dict(), "annualized_vol": float(row["annualized_vol"]),
            "sqrt_time_vol": float(row["sqrt_time_vol"]), "vol_ratio": float(row["vol_ratio"])}


def render_result(r: ScalingResult) -> str:
    """Plain-text report of one series."""
    prov = r.provenance
    src = prov.get("source_file") or ""
    head = (f"{r.name}  ({src}{': ' if src else ''}{prov.get('rows')} rows, {prov.get('first_date')} to "
            f"{prov.get('last_date')}; {r.n_returns} returns; flagged rows "
            f"{'excluded' if r.exclude_flagged else 'kept'})")
    out = [head, *bars_line(prov), f"annualized with {r.annualization:g} bars/year; significance level {r.alpha:g}"]
    out += [f"note: {note}" for note in r.notes]
    out.append("")
    rows = []
    for t in r.horizons.itertuples(index=False):
        rows.append([t.h, pct(t.annualized_vol), pct(t.sqrt_time_vol), number(t.vol_ratio, 3),
                     number(t.variance_ratio, 3), number(t.z, 2), number(t.z_robust, 2),
                     p_value(t.p_value_robust), t.n_nonoverlap, number(t.skew, 2),
                     number(t.excess_kurtosis, 2), p_value(t.jarque_bera_p)])
    out.append("Horizon vol and variance ratio (z* robust to changing vol; skew/kurtosis on non-overlapping periods)")
    out.append(render_table(["h", "h-bar vol", "sqrt-time", "vol ratio", "VR", "z", "z*", "p(z*)", "indep. periods",
                             "skew", "ex.kurt", "JB p"], rows, "r" * 12))
    for h, why in r.dropped.items():
        out.append(f"horizon {h} left out: {why}")
    out.append(f"log-log slope {number(r.slope, 3)} ({1 - r.alpha:.0%} interval {number(r.slope_ci[0], 3)} to "
               f"{number(r.slope_ci[1], 3)}), Hurst {number(r.hurst, 3)} (Brownian: slope 1, Hurst 0.5); "
               f"Chow-Denning joint test max|z*| {number(r.chow_denning_stat, 2)}, p {p_value(r.chow_denning_p)}")
    out.append("")
    out.append("Ljung-Box (autocorrelation up to each lag)")
    out.append(render_table(["lag", "Q returns", "p", "Q squared", "p"],
                            [[t.lag, number(t.q_returns, 2), p_value(t.p_returns), number(t.q_squared, 2), p_value(t.p_squared)]
                             for t in r.ljung_box.itertuples(index=False)], "rrrrr"))
    d = r.drift
    out.append("")
    out.append(f"drift: mean {pct(d['mean_annualized'])} a year, t = {number(d['t_stat'], 2)}, p {p_value(d['p_value'])}; "
               f"vol {pct(d['vol_annualized'])} a year")
    out += intraday_lines(r)
    out.append("")
    out.append("Verdicts")
    for v in r.verdicts:
        out.append(f"  {_LABELS.get(v.property, v.property)}: {v.status.upper()}  "
                   f"(statistic {number(v.statistic, 2)}, p {p_value(v.p_value)})")
        out.append(f"    {v.message}")
    fa = r.family_false_alarm
    if fa:
        out.append(f"  {fa['sentence']}")
    return "\n".join(out)


def bars_line(provenance: dict) -> list[str]:
    """The bar interval from a result's provenance, for an intraday file analysed by day (none for daily bars)."""
    lay = provenance.get("intraday")
    if lay is None:
        return []
    return [(f"bars: {format_interval(lay['bar_interval_seconds'])} bars, {lay['bars_per_session']} a session, "
            f"{lay['sessions']} sessions (sessions by {lay['session_rule']}); analysed by day")]


def intraday_lines(r: ScalingResult) -> list[str]:
    """Signature plot and jump days of an intraday file analysed by day (none for daily bars)."""
    part = r.intraday
    if part is None:
        c = r.daily_continuity
        if c is None or not len(c.jump_days):
            return []
        jd = c.jump_days
        return ["", f"Jump days ({c.label}; {len(jd)} of {c.days_tested} returns at the {c.alpha:.0%} level)",
                render_table(["date", "z", "p"], [[d.strftime("%Y-%m-%d"), number(z, 2), p_value(p)]
                                                  for d, z, p in zip(jd["date"], jd["z"], jd["p_value"])], "lrr")]
    out = []
    if part.signature is not None:
        s = part.signature
        out += ["", (f"Signature plot (annualized whole-day realized vol by sampling interval, {s.days} days; flat = "
                    "free of microstructure noise)")]
        rows = [[format_interval(t.interval_seconds) if t.kind == "intraday" else "1-day close-to-close",
                 pct(t.annualized_vol)] for t in s.table.itertuples(index=False)]
        out.append(render_table(["interval", "vol"], rows, "lr"))
        out.append(f"suggested sampling: {format_interval(s.suggested_interval_seconds)}; {s.reason}")
    c = part.continuity
    if c is not None:
        jd = c.jump_days
        out += ["", f"Jump days ({c.label}; {len(jd)} of {c.days_tested} days at the {c.alpha:.0%} level)"]
        if len(jd):
            out.append(render_table(["date", "z", "p"], [[d.strftime("%Y-%m-%d"), number(z, 2), p_value(p)]
                                                         for d, z, p in zip(jd["date"], jd["z"], jd["p_value"])], "lrr"))
    out += [f"note: {k}: {why}" for k, why in part.unavailable.items()]
    return out
