"""``volbench memo``: write a vol memo (PDF) a validator can file with the chosen pricing vol."""

from __future__ import annotations

import argparse
import os
from pathlib import Path

from volbench.cli.cmd_pricing import _pick_series
from volbench.cli.common import add_file_options, load_from_args
from volbench.cli.options import (
    add_cone,
    add_decision,
    add_estimation,
    add_garch,
    add_option,
    settings_from_args,
)
from volbench.errors import VolbenchError
from volbench.export.atomic import check_destination


def register(sub) -> None:
    p = sub.add_parser(
        "memo", help="write a PDF vol memo for a pricing vol (estimates, cone, scaling, GARCH, comparison)",
        description="Write a PDF memo for one series and a proposed pricing vol: inputs and provenance "
                    "(file, SHA-256, settings, flagged rows and adjustments), the estimates with their "
                    "intervals, the volatility cone with the pricing vol, the Brownian-scaling verdicts, "
                    "optionally the GARCH forward-vol term structure, the comparison with its price "
                    "impact, the price bands and straddle, the data findings and the cautions. One "
                    "window (--window, default the option's life) serves the estimates and the "
                    "comparison. Runs without a display. An existing file is never replaced without "
                    "--force; the write is atomic.",
    )
    add_file_options(p, many=False)
    p.add_argument("--series", metavar="NAME", default=None, help="series to use when FILE holds several")
    add_option(p, required=True, window=True)
    add_cone(p)
    add_garch(p, full=True, switch="--with-garch",
              help_switch="add GARCH-family fits (--model, default all) and their term structure")
    add_estimation(p, as_of="last date used (default: the file's last row)")
    add_decision(p)
    p.add_argument("--to", required=True, metavar="PATH", help="the PDF to write (suffix .pdf)")
    p.add_argument("--force", action="store_true", help="replace the output file if it exists")
    p.set_defaults(func=run_memo)


def run_memo(args: argparse.Namespace) -> int:
    if Path(args.to).suffix.lower() != ".pdf":
        raise VolbenchError(f"{Path(args.to).name}: a memo is written as PDF; give a --to path ending in .pdf")
    target = check_destination(args.to, overwrite=args.force)  # fail fast, before any work
    settings = settings_from_args(args)
    history = _pick_series(load_from_args(args, settings), args.series)
    from volbench.memo import build_memo

    memo = build_memo(history, settings)
    # Qt draws the PDF; no display is needed or used
    os.environ["QT_QPA_PLATFORM"] = "offscreen"
    from volbench.gui import qt_problem

    problem = qt_problem()
    if problem:
        raise VolbenchError(f"the memo is drawn with Qt, which cannot start here: {problem}")
    from volbench.gui.memo_pdf import write_memo_pdf

    path = write_memo_pdf(target, memo, overwrite=args.force)
    print(f"wrote {path}: vol memo for {memo.provenance['series']} as of {memo.provenance['as_of']}, "
          f"{len(memo.sections)} sections")
    return 0
