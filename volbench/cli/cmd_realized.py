"""``volbench realized``: realized measures, signature plot, jumps and HAR forecast from intraday bars."""

from __future__ import annotations

import argparse
import math

from volbench.cli.common import (
    add_annualization,
    add_file_options,
    add_format,
    load_from_args,
    parse_int_list,
    print_json,
    render_table,
)
from volbench.cli.options import settings_from_args
from volbench.format import number, p_value, pct
from volbench.intraday.jumps import JUMP_ALPHA
from volbench.intraday.report import RealizedReport, realized_report
from volbench.intraday.sessions import format_interval
from volbench.models.term import DEFAULT_TERM_HORIZONS
from volbench.types import check_annualization


def register(sub) -> None:
    p = sub.add_parser(
        "realized", help="realized vol, signature plot, jump days and HAR forecast from intraday bars",
        description="For each intraday file: the bar interval and sessions read from the timestamps; per day "
                    "realized variance, bipower variation and a Parzen realized kernel from returns within the "
                    "session, the overnight return kept apart; whole-day vols with 95%% intervals; the signature "
                    "plot (vol against sampling interval) with a suggested interval; the ratio jump test with the "
                    "jump days and a verdict on continuous paths; and the HAR-RV forward-vol term structure. On a "
                    "file of daily bars only a low-power jump screen on daily returns is possible.",
        epilog="Vols are annualized per trading day. Statistical evidence under stated assumptions, not advice.",
    )
    add_file_options(p)
    p.add_argument("--sampling", default="bar", metavar="bar|auto|SECONDS",
                   help="sampling of the returns behind realized and bipower variance: every bar (default), the "
                        "signature plot's suggestion, or a multiple of the bar interval in seconds")
    p.add_argument("--jump-alpha", type=float, default=JUMP_ALPHA, metavar="P",
                   help="level of the per-day jump list (default %(default)s)")
    p.add_argument("--alpha", type=float, default=0.05, metavar="P",
                   help="significance level of the continuity verdict (default %(default)s)")
    p.add_argument("--horizons", default=",".join(str(h) for h in DEFAULT_TERM_HORIZONS), metavar="D,D,...",
                   help="option lives in trading days for the HAR term structure (default %(default)s)")
    add_annualization(p)
    add_format(p)
    p.set_defaults(func=run_realized)


def run_realized(args: argparse.Namespace) -> int:
    settings = settings_from_args(args)
    a = check_annualization(args.annualization)
    horizons = parse_int_list(args.horizons, "horizons")
    brk = settings.intraday.seconds if settings.intraday is not None else None
    reports = [realized_report(h.intraday.bars if h.intraday is not None else h, session_break=brk,
                               sampling=args.sampling, annualization=a, jump_alpha=args.jump_alpha,
                               verdict_alpha=args.alpha, horizons=horizons)
               for h in load_from_args(args, settings)]
    if args.format == "json":
        print_json({"series": [r.as_dict() for r in reports]})
        return 0
    for i, r in enumerate(reports):
        if i:
            print("\n")
        print(render_report(r))
    print("\nStatistical evidence under stated assumptions, not advice.")
    return 0


def render_report(r: RealizedReport) -> str:
    """Plain-text report of one series."""
    h, lay = r.history, r.layout
    prov = h.provenance()
    out = [(f"{h.name}  ({prov.get('source_file') or ''}: {h.n} rows, {h.first_date} to {h.last_date}; "
            f"flagged rows {'excluded' if h.exclude_flagged else 'kept'})")]
    rule = lay.as_dict()["session_rule"]
    out.append(f"{lay.describe()} (sessions by {rule}); analysed by day, annualized with {r.annualization:g} "
               "trading days a year")
    if not lay.intraday:
        out.append("realized measures, signature plot and HAR forecast: unavailable (needs intraday bars; the file "
                   "has one bar a day)")
    else:
        m = r.measures
        out.append(f"realized and bipower variance sampled at {format_interval(m.interval_seconds)} intervals; the "
                   "realized kernel uses every bar")
        out += [f"note: {n}" for n in m.notes]
        out.append("")
        out.append("Whole-day vol (session measure + squared overnight return)")
        rows = []
        for key, label in (("realized", "realized (RV + overnight)"), ("bipower", "bipower (BV + overnight)")):
            e = r.estimates.get(key)
            rows.append([label, pct(e.vol) if e else "n/a",
                         f"{pct(e.ci_low)} to {pct(e.ci_high)}" if e else r.unavailable.get(key, "")])
        rows.append(["realized kernel + overnight", pct(r.kernel_vol), ""])
        rows.append(["overnight share of variance", pct(r.overnight_share, 1), ""])
        out.append(render_table(["measure", "vol", "95% interval (approximate)"], rows, "lrl"))
        if r.signature:
            s = r.signature
            out.append("")
            out.append(f"Signature plot (annualized whole-day realized vol by sampling interval, {s.days} days)")
            srows = [[format_interval(t.interval_seconds) if t.kind == "intraday" else "1-day close-to-close",
                      pct(t.annualized_vol), f"{t.noise_share:+.1%}" if math.isfinite(t.noise_share) else ""]
                     for t in s.table.itertuples(index=False)]
            out.append(render_table(["interval", "vol", "noise share (estimated)"], srows, "lrr"))
            out.append(f"suggested sampling: {format_interval(s.suggested_interval_seconds)}; {s.reason}")
    c = r.continuity
    out.append("")
    if c is None:
        out.append(f"Continuity check: unavailable ({r.unavailable.get('continuity', '')})")
    else:
        out.append(f"Continuity check: {c.label}, jump days at the {c.alpha:.0%} level")
        jd = c.jump_days
        if len(jd):
            out.append(render_table(["date", "z", "p"], [[d.strftime("%Y-%m-%d"), number(z, 2), p_value(p)] for d, z, p in
                                                         zip(jd["date"], jd["z"], jd["p_value"])], "lrr"))
        else:
            out.append("no jump days")
        out.append(f"{c.days_tested} tested; {c.expected_false_alarms:.1f} false alarm(s) expected by chance, chance of "
                   f"at least one {c.family_false_alarm_rate:.0%}; jumps carry {c.jump_share:.1%} of total variance")
        out += [f"note: {n}" for n in c.notes]
        v = c.verdict
        out.append(f"  continuous paths: {v.status.upper()}  (statistic {number(v.statistic, 2)}, p {p_value(v.p_value)})")
        out.append(f"    {v.message}")
    if r.har is not None:
        hf = r.har
        out.append("")
        ps = ", ".join(f"{k} {hf.params[k]:.3g} ({hf.std_errors[k]:.2g})" for k in hf.params)
        out.append(f"HAR-RV forecast (lags 1, 5, 22 days; {hf.nobs} days regressed, R^2 {hf.r_squared:.2f}): {ps}")
        out.append(render_table(["horizon (days)", "forward vol"],
                                [[int(t.horizon), pct(t.vol)] for t in hf.term_structure.itertuples(index=False)], "rr"))
        out += [f"note: {n}" for n in hf.notes]
    elif lay.intraday:
        out.append("")
        out.append(f"HAR-RV forecast: unavailable ({r.unavailable.get('har', '')})")
    return "\n".join(out)
