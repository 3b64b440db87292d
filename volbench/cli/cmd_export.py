"""``volbench export``: write estimates, cone, scaling check, GARCH and comparison to a pricing sheet."""

from __future__ import annotations

import argparse
import sys

from volbench import validate
from volbench.cli.common import (
    add_annualization,
    add_as_of,
    add_file_options,
    import_options,
    load_from_args,
    window_or_all,
)
from volbench.errors import VolbenchError
from volbench.export import FORMATS, build_bundle, export_format, write_export
from volbench.export.atomic import check_destination
from volbench.types import check_window


def register(sub) -> None:
    p = sub.add_parser(
        "export", help="write the numbers behind a pricing vol to .xlsx, .csv or .json",
        description="Write the point estimates of every estimator (with confidence intervals and "
                    "provenance: file name and SHA-256, settings, data-quality choices), the "
                    "volatility cone, the Brownian-scaling check, optionally GARCH fits, and, given "
                    "a pricing vol and days, the comparison with the option's price impact. "
                    ".xlsx holds one sheet per table; .csv holds the estimates table; .json holds "
                    "every table. An existing file is never replaced without --force; writes are "
                    "atomic. Column schema: docs/EXPORT_SCHEMA.md.",
    )
    add_file_options(p)
    p.add_argument("--to", required=True, metavar="PATH",
                   help=f"output file; its suffix picks the format ({', '.join(FORMATS)})")
    p.add_argument("--window", default="all", metavar="N|all", type=window_or_all,
                   help="bars in the estimation window ending at the as-of date, or 'all' (default)")
    add_as_of(p, "last date used by every table (default: last row of each file)")
    add_annualization(p)
    g = p.add_argument_group("pricing vol comparison (needs both --pricing-vol and --days)")
    g.add_argument("--pricing-vol", type=validate.pricing_vol, default=None, metavar="V",
                   help="proposed annualized vol as a decimal below 5, e.g. 0.25")
    g.add_argument("--days", type=validate.days, default=None, metavar="D", help="option life in bars")
    g.add_argument("--strike", type=float, default=None, metavar="K", help="strike (default: at the money)")
    g.add_argument("--spot", type=float, default=None, metavar="S", help="spot (default: last close)")
    g.add_argument("--rate", type=float, default=0.0, metavar="R",
                   help="continuously compounded rate as a decimal (default 0)")
    g.add_argument("--dividend-yield", type=float, default=0.0, metavar="Q",
                   help="continuous dividend yield as a decimal (default 0)")
    g.add_argument("--type", dest="kind", choices=("call", "put"), default="call", help="option type (default call)")
    s = p.add_argument_group("sections")
    s.add_argument("--cone-estimator", default="close_to_close", metavar="KEY", type=validate.estimator,
                   help="estimator of the volatility cone (default close_to_close)")
    s.add_argument("--with-garch", action="store_true",
                   help="add GARCH, GJR and EGARCH fits (takes a few seconds per series)")
    s.add_argument("--no-scaling", action="store_true", help="leave out the Brownian-scaling check")
    p.add_argument("--force", action="store_true", help="replace the output file if it exists")
    p.set_defaults(func=run_export)


def _option_args(args: argparse.Namespace) -> dict | None:
    given = {k: getattr(args, k) for k in ("strike", "spot") if getattr(args, k) is not None}
    changed = [f"--{k.replace('_', '-')}" for k, d in (("rate", 0.0), ("dividend_yield", 0.0)) if getattr(args, k) != d]
    if args.kind != "call":
        changed.append("--type")
    if args.pricing_vol is None and args.days is None:
        extra = [f"--{k}" for k in given] + changed
        if extra:
            raise VolbenchError(f"{', '.join(extra)}: option settings apply only to a comparison; "
                                "also give --pricing-vol and --days")
        return None
    if args.pricing_vol is None or args.days is None:
        missing = "--days (the option's life in bars)" if args.days is None else "--pricing-vol (e.g. 0.25)"
        raise VolbenchError(f"a comparison needs both --pricing-vol and --days; missing {missing}")
    return {**given, "rate": args.rate, "dividend_yield": args.dividend_yield, "kind": args.kind}


def run_export(args: argparse.Namespace) -> int:
    fmt = export_format(args.to)  # fail fast, before any work
    target = check_destination(args.to, overwrite=args.force)
    window = check_window(args.window, minimum=1)
    option = _option_args(args)
    histories = load_from_args(args)
    bundle = build_bundle(
        histories, window=window, annualization=args.annualization, as_of=args.as_of,
        pricing_vol=args.pricing_vol, days=args.days, option=option,
        cone_estimator=args.cone_estimator, include_scaling=not args.no_scaling,
        include_garch=args.with_garch,
        import_settings=import_options(args).as_dict(),
    )
    path = write_export(target, bundle, overwrite=args.force)
    if fmt == ".csv":
        what = f"estimates table, {len(bundle.tables['estimates'])} rows"
    else:
        what = ", ".join(f"{n} ({len(t)} rows)" for n, t in bundle.tables.items())
    print(f"wrote {path}: {what}")
    missing = [f"{k} {s.text}" for k, s in bundle.sections.items() if s.status in ("partial", "not available")]
    if missing:
        print("volbench: note: " + "; ".join(missing), file=sys.stderr)
    return 0
