"""``volbench export``: write estimates, cone, scaling check, GARCH and comparison to a pricing sheet."""

from __future__ import annotations

import argparse
import sys

from volbench.cli.common import add_file_options, load_from_args
from volbench.cli.options import (
    add_cone,
    add_decision,
    add_estimation,
    add_garch,
    add_option,
    add_scaling,
    settings_from_args,
)
from volbench.errors import VolbenchError
from volbench.export import FORMATS, build_bundle, export_format, write_export
from volbench.export.atomic import check_destination


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
    add_estimation(p, window="all", as_of="last date used by every table (default: last row of each file)",
                   options=True)
    add_option(p, required=False, title="pricing vol comparison (needs --pricing-vol and --days or --expiry)",
               window=True, window_flag="--candidate-window")
    s = p.add_argument_group("sections")
    add_cone(s, windows=True, date_range=True, hodges_tompkins=True, switch="--no-cone", prefix="cone-")
    add_garch(s, full=True, switch="--with-garch", horizons_flag="--garch-horizons",
              help_switch="add GARCH, GJR and EGARCH fits (takes a few seconds per series)")
    add_scaling(s, full=True, switch="--no-scaling", horizons_flag="--scaling-horizons")
    add_decision(p)
    p.add_argument("--force", action="store_true", help="replace the output file if it exists")
    p.set_defaults(func=run_export)


def run_export(args: argparse.Namespace) -> int:
    fmt = export_format(args.to)  # fail fast, before any work
    target = check_destination(args.to, overwrite=args.force)
    settings = settings_from_args(args)
    histories = load_from_args(args, settings)
    if settings.quotes is not None and len(histories) > 1:
        raise VolbenchError(f"--quotes holds one underlying's options, but the export has {len(histories)} series "
                            f"({', '.join(h.name for h in histories)}); export that series alone with its quotes")
    bundle = build_bundle(histories, settings, command=getattr(args, "typed_argv", None))
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
