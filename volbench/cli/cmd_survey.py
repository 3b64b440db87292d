"""``volbench survey``: every series in many files at once, on this machine's cores or a Dask cluster."""

from __future__ import annotations

import argparse
import sys
import time

from volbench.cli.common import (
    add_annualization,
    add_file_options,
    render_table,
)
from volbench.cli.options import add_cone, add_garch, add_life, add_scaling, settings_from_args
from volbench.errors import VolbenchError
from volbench.format import pct
from volbench.survey.report import VERDICT_ORDER

CAUTION = "Estimates are statistical and carry model risk; they are not advice."
VERDICT_MARKS = {"consistent": "+", "doubtful": "?", "rejected": "x"}


def register(sub) -> None:
    p = sub.add_parser(
        "survey", help="survey many series at once: estimates, cone, scaling verdicts (and GARCH)",
        description="For every series in the files, folders or patterns given: each estimator's vol over "
                    "the window with its 95%% interval, the cone percentile of the series' current vol (and "
                    "of its pricing vol) at the option's life, the Brownian-scaling verdicts, optionally the "
                    "GARCH forward vol, and the data-quality counts. The numbers are those of 'volbench "
                    "estimate', 'cone', 'compare', 'scaling' and 'garch' for the same settings. Runs on this "
                    "machine's cores, or on a Dask cluster with --scheduler or DASK_SCHEDULER_ADDRESS. A file "
                    "or series that fails is a row with its error; the survey carries on.",
        epilog="Exit status 0 when at least one series was surveyed, 2 when none was. " + CAUTION,
    )
    add_file_options(p)
    for action in p._actions:  # the shared FILE positional, reworded: a survey also takes folders and patterns
        if action.dest == "files":
            action.metavar = "PATH"
            action.help = ("price files, folders (their *.csv and *.tsv files) or glob patterns such as "
                           "'data/**/*.csv'; a file with a symbol column holds several series")
    p.add_argument("--window", default=None, metavar="N",
                   help="bars in the estimation window (default: --days, the option's life)")
    add_life(p, title="the option's life: the cone column and GARCH horizon, resolved per series from its as-of "
                      "date (default 21 trading days; docs/METHODS.md, Day counts and the option's life)")
    add_annualization(p)
    vols = p.add_mutually_exclusive_group()
    vols.add_argument("--pricing-vol", default=None, metavar="V",
                      help="one proposed pricing vol for every series, decimal (0.25 = 25%%)")
    vols.add_argument("--pricing-vols", default=None, metavar="FILE",
                      help="CSV of symbol,pricing_vol lines (a header line is allowed): a pricing vol per series")
    add_garch(p, switch="--with-garch",
              help_switch="fit GARCH and report its forward vol over --days bars (slower: a fit per series)")
    p.add_argument("--garch-model", default="garch", metavar="MODEL|all",
                   help="model fitted with --with-garch (a registered GARCH-type model: garch, gjr, egarch, ...); "
                        "'all' ranks them all by BIC (default garch)")
    add_cone(p, windows=True)
    add_scaling(p, full=True)
    p.add_argument("--jobs", type=int, default=None, metavar="N",
                   help="worker processes on this machine (default: one per CPU; 1 runs in this process)")
    p.add_argument("--scheduler", default=None, metavar="ADDRESS",
                   help="run on a Dask cluster: tcp://HOST:PORT of its scheduler, or 'local' for a cluster on "
                        "this machine ('processes' forces the local pool); default: DASK_SCHEDULER_ADDRESS "
                        "when set. Needs pip install 'volbench[cluster]'")
    p.add_argument("--format", choices=["table", "json", "csv"], default="table", help="output format (default table)")
    p.add_argument("--to", default=None, metavar="FILE",
                   help="write the output to FILE (atomically; never over an existing file without --force)")
    p.add_argument("--force", action="store_true", help="with --to, replace FILE if it exists")
    p.set_defaults(func=run_survey_command)


def _settings(args: argparse.Namespace):
    """The survey's settings: the run's settings groups, built and validated as for every command
    (a group added for every data command comes along), plus the survey's own option life and
    pricing vols."""
    from volbench.survey import DEFAULT_DAYS, SURVEY_GARCH, SurveySettings, read_pricing_vols

    base = settings_from_args(args)
    changes = {"estimation": base.estimation.with_changes(window=args.window)}
    if base.garch is not None:
        changes["garch"] = SURVEY_GARCH.with_changes(models=args.garch_model)
    per_series = read_pricing_vols(args.pricing_vols) if args.pricing_vols else {}
    return SurveySettings(groups=base.with_groups(**changes), days=_days(base.life, DEFAULT_DAYS),
                          pricing_vol=args.pricing_vol, pricing_vols=per_series)


def _days(life, default: int):
    """The survey's days before per-series resolution: --days on the trading basis, else the default
    (an expiry or calendar days become trading days per series, in the worker)."""
    if life is None or life.expiry is not None or life.basis != "trading":
        return default
    return life.days


def _life_text(s) -> str:
    life = s.groups.life
    if life is None or (life.expiry is None and life.basis == "trading"):
        return f"option life {s.days} bars"
    given = f"to expiry {life.expiry}" if life.expiry is not None else f"{life.days} {life.basis} days"
    return f"option life {given}, in trading days from each series' as-of date (JSON: life)"


class _Bar:
    """A one-line progress bar on stderr (only drawn when stderr is a terminal)."""

    WIDTH = 24

    def __init__(self) -> None:
        self.start = time.perf_counter()
        self.drawn = False

    def __call__(self, done: int, total: int, name: str) -> None:
        filled = int(self.WIDTH * done / max(total, 1))
        bar = "#" * filled + "-" * (self.WIDTH - filled)
        sys.stderr.write(f"\rsurvey [{bar}] {done}/{total} files, {time.perf_counter() - self.start:.1f} s "
                         f"{name[:30]:<30}")
        sys.stderr.flush()
        self.drawn = True

    def close(self) -> None:
        if self.drawn:
            sys.stderr.write("\n")
            sys.stderr.flush()


def run_survey_command(args: argparse.Namespace) -> int:
    from volbench.export.atomic import atomic_write, check_destination
    from volbench.survey import run_survey

    settings = _settings(args)
    if args.to is not None:
        check_destination(args.to, overwrite=args.force)  # fail before the work, not after
    elif args.force:
        raise VolbenchError("--force only applies with --to FILE")
    bar = _Bar() if sys.stderr.isatty() else None
    try:
        result = run_survey(args.files, settings, jobs=args.jobs, scheduler=args.scheduler, progress=bar)
    finally:
        if bar is not None:
            bar.close()
    text = render(result, args.format)
    if args.to is None:
        sys.stdout.write(text)
    else:
        path = atomic_write(args.to, text, overwrite=args.force)
        print(f"surveyed {len(result.records)} series ({result.failed} failed) in {result.elapsed_s:.1f} s "
              f"{_engine_text(result)}; wrote {path}")
    unmatched = [k for k in settings.pricing_vols if k not in {r.name for r in result.records}]
    if unmatched:
        print(f"volbench: note: {args.pricing_vols} gives pricing vols for {len(unmatched)} symbol(s) not in the "
              f"survey: {', '.join(unmatched[:10])}{' ...' if len(unmatched) > 10 else ''}", file=sys.stderr)
    if result.succeeded == 0:
        first = next((r.error for r in result.records if r.error), "no series found")
        print(f"volbench: no series could be surveyed ({len(result.records)} failed); first: {first}",
              file=sys.stderr)
        return 2
    return 0


# ---------------------------------------------------------------------------- output
def render(result, fmt: str) -> str:
    """The survey as table, JSON or CSV text."""
    from volbench.survey.report import survey_csv, survey_json

    if fmt == "json":
        return survey_json(result)
    if fmt == "csv":
        return survey_csv(result)
    return _table(result)


def _table(result) -> str:
    s = result.settings
    garch = s.with_garch
    head = ["series", "rows", "as of", f"c-c vol ({s.estimate_window})", "95% interval", "cone pctl",
            "pricing vol", "its pctl", "VNID"]
    if garch:
        head += ["fwd vol", "source"]
    head += ["findings e/w/i"]
    rows, failures = [], []
    for r in result.records:
        if not r.ok:
            failures.append(r)
            continue
        e = r.estimates.get("close_to_close")
        marks = "".join(VERDICT_MARKS.get(r.verdicts.get(p, ""), "-") for p in VERDICT_ORDER)
        row = [r.name, r.rows, r.as_of, pct(e.vol if e else None),
               f"{pct(e.ci_low)} - {pct(e.ci_high)}" if e else "n/a",
               _p(r.cone_percentile), pct(r.pricing_vol), _p(r.pricing_vol_percentile), marks]
        if garch:
            src = r.forward_vol_source or ""
            row += [pct(r.forward_vol), src.split(", because")[0] + " fallback" if ", because" in src else src]
        row += ["/".join(str(r.findings.get(k, 0)) for k in ("error", "warning", "info"))]
        rows.append(row)
    head_line = (f"survey of {len(result.records)} series ({result.failed} failed) in {result.elapsed_s:.1f} s "
                 f"{_engine_text(result)}; window {s.estimate_window} bars, {_life_text(s)}, annualized "
                 f"with {s.annualization:g} bars/year, flagged rows "
                 f"{'excluded' if s.import_options.exclude_flagged else 'kept'}")
    out = [head_line]
    if rows:
        out += ["", render_table(head, rows, "lrl" + "r" * (len(head) - 3))]
    if failures:
        out += ["", "not surveyed:"] + [f"  {r.name}: {r.error}" for r in failures]
    cone_line = (f"cone pctl: percentile of the series' {s.cone_estimator.replace('_', '-')} vol over the last "
                 f"{_cone_days(s)} bars in its own cone at {_cone_days(s)} bars; its pctl: the pricing vol's percentile there.")
    verdict_line = ("VNID: variance proportional to horizon, normal, independent increments, negligible drift "
                    "(+ consistent, ? doubtful, x rejected, - not available; 'volbench scaling' explains).")
    out += ["", cone_line, verdict_line,
            "Figures a series lacks are listed with their reasons in --format json or csv. " + CAUTION]
    return "\n".join(out) + "\n"


def _cone_days(s) -> str:
    return str(s.days) if _life_text(s).endswith("bars") else "the life's trading"


def _engine_text(result) -> str:
    n = result.workers
    if result.engine == "serial":
        return "in this process"
    what = "Dask worker" if result.engine == "dask" else "worker process"
    return f"on {n} {what}{'es' if n != 1 and what.endswith('s') else 's' if n != 1 else ''}"


def _p(x) -> str:
    return "n/a" if x is None else f"{x:.0f}"
