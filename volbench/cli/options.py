"""The command line's settings groups: one helper adds a group's options to a parser, one builds
the group's settings object from the parsed arguments.

A command says which groups it takes (``add_estimation(p, window="all")``, ``add_option(p)``...);
:func:`settings_from_args` then builds one :class:`~volbench.settings.Settings` with every group
the command registered, each object validating its values with :mod:`volbench.validate`. Options
keep the raw text the user typed (no ``type=`` conversion here), so a bad value is refused once,
by the settings object, with the message every other command and the window give.

Adding a group to every data command is one entry in :data:`GROUPS` (its ``add`` and ``build``
functions) with ``every=True``, and one field of :class:`~volbench.settings.Settings`:
:func:`volbench.cli.common.add_file_options`, which every data command calls, adds it.
"""

from __future__ import annotations

import argparse
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import ClassVar

from volbench.data.options import DECIMALS, DELIMITER_NAMES, THOUSANDS, ImportOptions
from volbench.data.quality import QualitySettings
from volbench.errors import VolbenchError
from volbench.estimators import ESTIMATOR_KEYS
from volbench.models.family import DIST_REGISTRY, MEANS, MODEL_REGISTRY
from volbench.settings import (
    ConeSettings,
    DecisionSettings,
    EstimationSettings,
    EventsSettings,
    GarchSettings,
    HarSettings,
    IntradaySettings,
    LifeSettings,
    OptionSettings,
    QuotesSettings,
    ScalingSettings,
    Settings,
    group_types,
)
from volbench.types import (
    DEFAULT_ANNUALIZATION,
    DEFAULT_CONE_WINDOWS,
    DEFAULT_SEED,
    DEFAULT_SIMULATIONS,
    DEFAULT_TERM_HORIZONS,
    EWMA_LAMBDA,
)

_GROUPS_ATTR = "_settings_groups"


def _register(p: argparse.ArgumentParser, name: str, **config) -> None:
    """Remember that ``p`` takes group ``name`` (and how it was configured) for :func:`settings_from_args`."""
    groups = dict(p.get_default(_GROUPS_ATTR) or {})
    groups[name] = config
    p.set_defaults(**{_GROUPS_ATTR: groups})


def int_list(text, what: str) -> list[int]:
    """``"1,2,5"`` -> ``[1, 2, 5]`` (a list or tuple passes through); a clear error naming ``what``."""
    if not isinstance(text, str):
        return list(text)
    try:
        values = [int(x) for x in text.replace(" ", "").split(",") if x]
    except ValueError:
        raise VolbenchError(f"{what} must be whole numbers separated by commas, e.g. 5,21,63; got {text!r}") from None
    if not values or any(v < 1 for v in values):
        raise VolbenchError(f"{what} must be positive whole numbers separated by commas; got {text!r}")
    return values


# ---------------------------------------------------------------------------- reading the files
def add_import(p: argparse.ArgumentParser) -> None:
    """How files are read (:class:`~volbench.data.options.ImportOptions`)."""
    g = p.add_argument_group("reading the files (docs/METHODS.md, Import)")
    g.add_argument("--date-format", metavar="FMT", default=None,
                   help="strftime format of the date column when it is not ISO, e.g. %%d/%%m/%%Y; "
                        "'excel' for spreadsheet serial day numbers")
    g.add_argument("--delimiter", metavar="D", default=None,
                   choices=[*DELIMITER_NAMES, "tab"],
                   help="field separator: ',', ';', tab or '|' (default: inferred from the header line)")
    g.add_argument("--decimal", choices=list(DECIMALS), default=None,
                   help="decimal mark (default: inferred from every number; refused when the file does not say)")
    g.add_argument("--thousands", choices=list(THOUSANDS), default=None,
                   help="thousands separator, or none (default: inferred from every number)")
    g.add_argument("--adjusted", action="store_true",
                   help="use the adjusted close (open/high/low scaled to match) when the file has one")
    g.add_argument("--adjust-splits", action="store_true",
                   help="back-adjust every detected unadjusted split (earlier prices divided by the ratio, "
                        "volume multiplied by it); each adjustment is reported")
    g.add_argument("--exclude-flagged", action="store_true",
                   help="leave out rows flagged by data-quality warnings (kept by default; the choice is reported)")
    g.add_argument("--gap-days", type=int, default=QualitySettings.gap_days, metavar="D",
                   help="report calendar gaps longer than D days (default %(default)s)")
    g.add_argument("--stale-run", type=int, default=QualitySettings.stale_run, metavar="N",
                   help="report N or more identical closes in a row as stale (default %(default)s)")
    g.add_argument("--jump-z", type=float, default=QualitySettings.jump_z, metavar="Z",
                   help="report a return whose robust z-score exceeds Z as a jump (default %(default)s)")
    g.add_argument("--jump-min", type=float, default=QualitySettings.jump_min, metavar="R",
                   help="...and whose absolute log return exceeds R (default %(default)s)")
    _register(p, "import_options")


def import_from_args(args: argparse.Namespace) -> ImportOptions:
    return ImportOptions(
        delimiter=args.delimiter, decimal=args.decimal, thousands=args.thousands,
        date_format=args.date_format, use_adjusted=args.adjusted, adjust_splits=args.adjust_splits,
        exclude_flagged=args.exclude_flagged,
        quality=QualitySettings(gap_days=args.gap_days,
                                stale_run=getattr(args, "stale_run", QualitySettings.stale_run),
                                jump_z=getattr(args, "jump_z", QualitySettings.jump_z),
                                jump_min=getattr(args, "jump_min", QualitySettings.jump_min)),
    )


# ---------------------------------------------------------------------------- estimation
def add_estimation(p: argparse.ArgumentParser, *, window: str | None = None, as_of: str | None = None,
                   options: bool = False) -> None:
    """``--annualization``; with ``window`` (its default, e.g. ``"all"``) ``--window``; with ``as_of``
    (its help text) ``--as-of``; with ``options`` ``--confidence``, ``--zero-mean`` and ``--ewma-lambda``."""
    p.add_argument("--annualization", default=DEFAULT_ANNUALIZATION, metavar="A",
                   help="bars per year used to annualize (default %(default)g; 365 for markets open every day)")
    if window is not None:
        p.add_argument("--window", default=window, metavar="N|all",
                       help=f"bars in the estimation window ending at the as-of date, or 'all' (default {window})")
    if as_of is not None:
        p.add_argument("--as-of", metavar="YYYY-MM-DD|last", default=None,
                       help=as_of + "; a date outside a file's range is refused")
    if options:
        p.add_argument("--confidence", default="0.95", metavar="C",
                       help="level of the estimators' intervals, between 0 and 1 (default %(default)s)")
        p.add_argument("--zero-mean", action="store_true",
                       help="close-to-close about zero instead of the sample mean")
        p.add_argument("--ewma-lambda", dest="lam", default=str(EWMA_LAMBDA), metavar="L",
                       help="EWMA decay, between 0 and 1 (default %(default)s)")
    _register(p, "estimation", window=window is not None)


def estimation_from_args(args: argparse.Namespace, window: bool = False) -> EstimationSettings:
    return EstimationSettings(window=args.window if window else None, annualization=args.annualization,
                              as_of=getattr(args, "as_of", None), confidence=getattr(args, "confidence", 0.95),
                              zero_mean=bool(getattr(args, "zero_mean", False)),
                              lam=getattr(args, "lam", EWMA_LAMBDA))


# ---------------------------------------------------------------------------- cone
def add_cone(p: argparse.ArgumentParser, *, flag: str = "--cone-estimator", windows: bool = False,
             date_range: bool = False, hodges_tompkins: bool = False, switch: str | None = None,
             prefix: str = "") -> None:
    """The cone's estimator (as ``flag``), optionally its windows, date range and Hodges-Tompkins
    widening; ``switch`` names an on/off option (``--no-cone``) when the cone is optional; ``prefix``
    (``"cone-"``) names the windows and dates ``--cone-windows``, ``--cone-start``, ``--cone-end``
    where other groups take the plain names."""
    p.add_argument(flag, dest="cone_estimator", default="close_to_close", metavar="KEY",
                   help=f"estimator of the volatility cone (default close_to_close; one of: "
                        f"{', '.join(ESTIMATOR_KEYS)})")
    if windows:
        p.add_argument(f"--{prefix}windows", dest="cone_windows", default=",".join(map(str, DEFAULT_CONE_WINDOWS)),
                       metavar="W,W,...", help="window lengths in bars (default %(default)s)")
    if date_range:
        p.add_argument(f"--{prefix}start", dest="start", metavar="YYYY-MM-DD", default=None,
                       help="first date of the range (default: first row)")
        p.add_argument(f"--{prefix}end", dest="end", metavar="YYYY-MM-DD", default=None,
                       help="last date of the range (default: last row); a date outside the file's range is refused")
    if hodges_tompkins:
        p.add_argument("--hodges-tompkins", action="store_true",
                       help="widen each column's spread for overlapping windows (Hodges & Tompkins 2002)")
    if switch is not None:
        p.add_argument(switch, dest="cone_on", action="store_false", help="leave out the volatility cone")
    _register(p, "cone", **({"switch": True} if switch is not None else {}))


def cone_from_args(args: argparse.Namespace, switch: bool = False) -> ConeSettings | None:
    if switch and not args.cone_on:
        return None
    windows = getattr(args, "cone_windows", None)
    return ConeSettings(
        estimator=args.cone_estimator,
        windows=DEFAULT_CONE_WINDOWS if windows is None else tuple(int_list(windows, "--windows")),
        hodges_tompkins=bool(getattr(args, "hodges_tompkins", False)),
        start=getattr(args, "start", None), end=getattr(args, "end", None))


# ---------------------------------------------------------------------------- scaling
def add_scaling(p: argparse.ArgumentParser, *, full: bool = False, switch: str | None = None,
                horizons_flag: str = "--horizons") -> None:
    """The scaling check: ``full`` adds ``--horizons`` (named ``horizons_flag``) and ``--alpha``;
    ``switch`` is ``"--with-scaling"`` (off unless given) or ``"--no-scaling"`` (on unless given)."""
    if full:
        from volbench.scaling.check import DEFAULT_HORIZONS

        p.add_argument(horizons_flag, dest="scaling_horizons", default=",".join(str(h) for h in DEFAULT_HORIZONS),
                       metavar="H,H,...", help="horizons in bars (default %(default)s; 1 is always included as the base)")
        p.add_argument("--alpha", default="0.05", metavar="P",
                       help="significance level of the verdicts, between 0 and 0.5 (default %(default)s)")
    if switch == "--with-scaling":
        p.add_argument(switch, dest="scaling_on", action="store_true", help="add the scaling check's horizon vol")
    elif switch == "--no-scaling":
        p.add_argument(switch, dest="scaling_on", action="store_false", help="leave out the Brownian-scaling check")
    _register(p, "scaling", switch=switch is not None)


def scaling_from_args(args: argparse.Namespace, switch: bool = False) -> ScalingSettings | None:
    if switch and not args.scaling_on:
        return None
    horizons = getattr(args, "scaling_horizons", None)
    return ScalingSettings(horizons=None if horizons is None else tuple(int_list(horizons, "horizons")),
                           alpha=getattr(args, "alpha", 0.05))


# ---------------------------------------------------------------------------- GARCH
def add_garch(p: argparse.ArgumentParser, *, full: bool = False, switch: str | None = None,
              help_switch: str = "add GARCH-family forward vols for the option's life",
              horizons_flag: str = "--horizons") -> None:
    """GARCH-type fits: ``full`` adds every model option (--model, --dist, --mean, --horizons (named
    ``horizons_flag``), --seed, --simulations, --max-iterations); ``switch`` (``--with-garch``) makes
    the fits optional."""
    if full:
        keys = "|".join([*MODEL_REGISTRY, "all"])
        p.add_argument("--model", default="all", metavar=keys,
                       help="model to fit, or all of them ranked by BIC (default all)")
        p.add_argument("--dist", default="normal", metavar="|".join(DIST_REGISTRY),
                       help="innovation distribution: normal or Student-t (default normal)")
        p.add_argument("--mean", default="constant", metavar="|".join(MEANS),
                       help="mean return: constant (estimated) or zero (default constant)")
        p.add_argument(horizons_flag, dest="garch_horizons", default=",".join(map(str, DEFAULT_TERM_HORIZONS)),
                       metavar="LIST", help="option lives in bars for the forward vol, comma separated "
                                            "(default %(default)s)")
        p.add_argument("--seed", type=int, default=DEFAULT_SEED, metavar="N",
                       help="seed of the simulated (EGARCH) forecast (default %(default)s)")
        p.add_argument("--simulations", type=int, default=DEFAULT_SIMULATIONS, metavar="N",
                       help="paths of the simulated (EGARCH) forecast (default %(default)s)")
        p.add_argument("--max-iterations", type=int, default=None, metavar="N",
                       help="optimizer iteration cap (default: the library's)")
    if switch is not None:
        p.add_argument(switch, dest="garch_on", action="store_true", help=help_switch)
    _register(p, "garch", switch=switch is not None)


def garch_from_args(args: argparse.Namespace, switch: bool = False) -> GarchSettings | None:
    if switch and not args.garch_on:
        return None
    horizons = getattr(args, "garch_horizons", None)
    models = getattr(args, "model", "all")
    if isinstance(models, str) and "," in models:
        models = tuple(m.strip() for m in models.split(",") if m.strip())
    return GarchSettings(
        models=models, dist=getattr(args, "dist", "normal"),
        mean=getattr(args, "mean", "constant"),
        horizons=DEFAULT_TERM_HORIZONS if horizons is None else tuple(int_list(horizons, "horizons")),
        seed=getattr(args, "seed", DEFAULT_SEED), simulations=getattr(args, "simulations", DEFAULT_SIMULATIONS),
        max_iterations=getattr(args, "max_iterations", None))


# ---------------------------------------------------------------------------- the option
OPTION_ARGS = ("strike", "spot", "rate", "dividend_yield", "kind")


def add_option(p: argparse.ArgumentParser, *, required: bool = True, window: bool = False,
               title: str | None = None, window_flag: str = "--window") -> None:
    """The option and the proposed vol: --pricing-vol and the option's life (``required``, or
    both-or-neither; the life's options come from :func:`add_life`), --strike, --spot, --rate,
    --dividend-yield, --type; with ``window`` the candidates' window (named ``window_flag``)."""
    g = p.add_argument_group(title) if title else p
    g.add_argument("--pricing-vol", required=required, default=None, metavar="V",
                   help="proposed annualized vol as a decimal below 5, e.g. 0.25")
    g.add_argument("--strike", default=None, metavar="K", help="strike (default: at the money)")
    g.add_argument("--spot", default=None, metavar="S", help="spot (default: last close)")
    g.add_argument("--rate", default=None, metavar="R",
                   help="risk-free rate, continuously compounded, as a decimal (default 0)")
    g.add_argument("--dividend-yield", default=None, metavar="Q",
                   help="dividend yield, continuously compounded, as a decimal (default 0)")
    g.add_argument("--type", dest="kind", choices=["call", "put"], default=None, help="option type (default call)")
    if window:
        g.add_argument(window_flag, dest="option_window", default=None, metavar="N",
                       help="bars behind each estimator's candidate vol (default: the option's life in trading days)")
    _register(p, "option", required=required)
    add_life(p, title="the option's life (docs/METHODS.md, Day counts and the option's life)")
    add_quotes(p)


def _life_given(args: argparse.Namespace) -> bool:
    return getattr(args, "days", None) is not None or getattr(args, "expiry", None) is not None


def option_from_args(args: argparse.Namespace, required: bool = True) -> OptionSettings | None:
    given = [f"--{k.replace('_', '-') if k != 'kind' else 'type'}" for k in OPTION_ARGS
             if getattr(args, k) is not None]
    if not required and args.pricing_vol is None and not _life_given(args):
        if given:
            raise VolbenchError(f"{', '.join(given)}: option settings apply only to a comparison; "
                                "also give --pricing-vol and --days (or --expiry)")
        return None
    if args.pricing_vol is None or not _life_given(args):
        missing = ("--days (the option's life in days) or --expiry YYYY-MM-DD" if not _life_given(args)
                   else "--pricing-vol (e.g. 0.25)")
        raise VolbenchError(f"a comparison needs both --pricing-vol and --days (or --expiry); missing {missing}")
    return OptionSettings(
        pricing_vol=args.pricing_vol, days=None, strike=args.strike, spot=args.spot,
        rate=0.0 if args.rate is None else args.rate,
        dividend_yield=0.0 if args.dividend_yield is None else args.dividend_yield,
        kind=args.kind or "call", window=getattr(args, "option_window", None))


# ---------------------------------------------------------------------------- the decision record
def add_decision(p: argparse.ArgumentParser, *, title: str | None = "decision record") -> None:
    """The decision an output documents: --decision-vol, --rationale, --prepared-by."""
    g = p.add_argument_group(title) if title else p
    g.add_argument("--decision-vol", default=None, metavar="V",
                   help="the vol chosen for pricing, a decimal below 5 (recorded with its gap to every candidate)")
    g.add_argument("--rationale", default=None, metavar="TEXT", help="why this vol (recorded as written)")
    g.add_argument("--prepared-by", default=None, metavar="TEXT", help="who prepared the record")
    _register(p, "decision")


def decision_from_args(args: argparse.Namespace) -> DecisionSettings | None:
    vol, why, who = args.decision_vol, args.rationale, args.prepared_by
    if vol is None and not why and not who:
        return None
    return DecisionSettings(vol=vol, rationale=why or "", prepared_by=who or "")


# ---------------------------------------------------------------------------- the equivalent command
# The export command's flags for every setting of a group (``volbench export`` is the one command
# that takes them all): the window writes the command it is equivalent to, ``volbench replay``
# runs it again. Every value is written out, defaults included, so the record never says "default".
def _num(v) -> str:
    return repr(float(v)) if isinstance(v, float) else str(v)


def _ints(values) -> str:
    return ",".join(str(int(v)) for v in values)


def import_argv(o: ImportOptions) -> list[str]:
    out: list[str] = []
    if o.delimiter is not None:
        out += ["--delimiter", "tab" if o.delimiter == "\t" else o.delimiter]
    for flag, value in (("--decimal", o.decimal), ("--thousands", o.thousands), ("--date-format", o.date_format)):
        if value is not None:
            out += [f"{flag}={value}"]
    for flag, on in (("--adjusted", o.use_adjusted), ("--adjust-splits", o.adjust_splits),
                     ("--exclude-flagged", o.exclude_flagged)):
        out += [flag] if on else []
    q = o.quality
    return out + ["--gap-days", _num(q.gap_days), "--stale-run", _num(q.stale_run), "--jump-z", _num(q.jump_z),
                  "--jump-min", _num(q.jump_min)]


def estimation_argv(e: EstimationSettings) -> list[str]:
    out = ["--annualization", _num(e.annualization), "--window", "all" if e.window is None else str(e.window)]
    if e.as_of is not None:
        out += ["--as-of", e.as_of]
    out += ["--confidence", _num(e.confidence), "--ewma-lambda", _num(e.lam)]
    return out + (["--zero-mean"] if e.zero_mean else [])


def cone_argv(c: ConeSettings | None) -> list[str]:
    if c is None:
        return ["--no-cone"]
    out = ["--cone-estimator", c.estimator, "--cone-windows", _ints(c.windows)]
    out += ["--hodges-tompkins"] if c.hodges_tompkins else []
    for flag, value in (("--cone-start", c.start), ("--cone-end", c.end)):
        out += [flag, value] if value is not None else []
    return out


def scaling_argv(s: ScalingSettings | None) -> list[str]:
    if s is None:
        return ["--no-scaling"]
    return ["--scaling-horizons", _ints(s.horizons), "--alpha", _num(s.alpha)]


def garch_argv(g: GarchSettings | None) -> list[str]:
    if g is None:
        return []
    models = "all" if tuple(g.models) == tuple(MODEL_REGISTRY) else ",".join(g.models)
    out = ["--with-garch", "--model", models, "--dist", g.dist, "--mean", g.mean,
           "--garch-horizons", _ints(g.horizons), "--seed", str(g.seed), "--simulations", str(g.simulations)]
    return out + (["--max-iterations", str(g.max_iterations)] if g.max_iterations is not None else [])


def option_argv(o: OptionSettings | None) -> list[str]:
    if o is None:
        return []
    out = ["--pricing-vol", _num(o.pricing_vol)]
    out += ["--days", str(o.days)] if o.days is not None else []  # else the life group's flags
    for flag, value in (("--strike", o.strike), ("--spot", o.spot)):
        out += [flag, _num(value)] if value is not None else []
    out += ["--rate", _num(o.rate), "--dividend-yield", _num(o.dividend_yield), "--type", o.kind]
    return out + (["--candidate-window", str(o.window)] if o.window is not None else [])


def decision_argv(d: DecisionSettings | None) -> list[str]:
    if d is None:
        return []
    out = ["--decision-vol", _num(d.vol)] if d.vol is not None else []
    out += [f"--rationale={d.rationale}"] if d.rationale else []  # "=": text may start with "-"
    return out + ([f"--prepared-by={d.prepared_by}"] if d.prepared_by else [])


# ---------------------------------------------------------------------------- the option's life
def add_life(p, *, title: str | None = None) -> None:
    """The option's life: --expiry, or --days with --day-basis, and --holidays (:class:`LifeSettings`)."""
    from volbench.pricing.daycount import DEFAULT_DAY_BASIS

    g = p.add_argument_group(title) if title else p
    g.add_argument("--expiry", metavar="YYYY-MM-DD", default=None,
                   help="expiry date; the life runs from the as-of date (the last row used) to it")
    g.add_argument("--days", default=None, metavar="N",
                   help="option life as a number of days on --day-basis, e.g. 30 (instead of --expiry)")
    g.add_argument("--day-basis", default=None, metavar="trading|calendar",
                   help=f"what --days counts (default {DEFAULT_DAY_BASIS}: weekdays less --holidays, one bar "
                        "each of daily data; calendar: every day)")
    g.add_argument("--holidays", metavar="FILE", default=None,
                   help="exchange holidays, one YYYY-MM-DD per line, left out of the trading-day count")
    _register(p, "life")


def life_from_args(args: argparse.Namespace) -> LifeSettings | None:
    """The life group, or ``None`` when no life was given (a --day-basis or --holidays alone is refused)."""
    if not _life_given(args):
        extra = [o for o, k in (("--day-basis", "day_basis"), ("--holidays", "holidays"))
                 if getattr(args, k, None) is not None]
        if extra:
            raise VolbenchError(f"{', '.join(extra)} describe the option's life: also give --days N or --expiry "
                                "YYYY-MM-DD")
        return None
    return LifeSettings(expiry=args.expiry, days=args.days, basis=args.day_basis or "trading",
                        holidays=args.holidays)


# ---------------------------------------------------------------------------- market quotes
def add_quotes(p: argparse.ArgumentParser) -> None:
    """--quotes FILE (an option-quotes CSV whose at-the-money implied vol joins the comparison)."""
    g = p.add_argument_group("market quotes (docs/METHODS.md, Implied vol and option quotes)")
    g.add_argument("--quotes", metavar="FILE", default=None,
                   help="option quotes (expiry, strike, type, mid or bid/ask) taken at the as-of date: adds the "
                        "at-the-money implied vol for the option's expiry as a candidate and sets it against "
                        "the realized vol and the forecast (implied minus forecast: the variance risk premium)")
    g.add_argument("--quotes-date-format", metavar="FMT", default=None,
                   help="strftime format of the quotes' expiry column when it is not ISO")
    g.add_argument("--quotes-model", metavar="MODEL", default=None, choices=list(MODEL_REGISTRY),
                   help="GARCH-family model whose forecast is set against each quoted expiry (default garch)")
    _register(p, "quotes")


def quotes_from_args(args: argparse.Namespace) -> QuotesSettings | None:
    if args.quotes is None:
        extra = [o for o, k in (("--quotes-date-format", "quotes_date_format"), ("--quotes-model", "quotes_model"))
                 if getattr(args, k, None) is not None]
        if extra:
            raise VolbenchError(f"{', '.join(extra)} describe a quotes file: also give --quotes FILE")
        return None
    if getattr(args, "pricing_vol", None) is None:
        raise VolbenchError("--quotes joins a comparison: also give --pricing-vol and --days (or --expiry)")
    return QuotesSettings(file=args.quotes, date_format=args.quotes_date_format, model=args.quotes_model or "garch")


def life_argv(life: LifeSettings | None) -> list[str]:
    if life is None:
        return []
    out = ["--expiry", life.expiry] if life.expiry is not None else ["--days", str(life.days)]
    out += ["--day-basis", life.basis]
    h = life.holidays
    return out + (["--holidays", str(Path(h.source).absolute())] if h is not None and h.source else [])


def quotes_argv(q: QuotesSettings | None) -> list[str]:
    if q is None:
        return []
    out = ["--quotes", str(Path(q.file.source).absolute())] if q.file.source else []
    out += [f"--quotes-date-format={q.date_format}"] if q.date_format else []
    return out + ["--quotes-model", q.model]


# ---------------------------------------------------------------------------- intraday sessions
def add_intraday(p: argparse.ArgumentParser) -> None:
    """``--session-break``: how intraday files are cut into sessions (:class:`IntradaySettings`)."""
    g = p.add_argument_group("intraday files (analysed by day; docs/METHODS.md, Intraday data, realized "
                             "measures and jumps)")
    g.add_argument("--session-break", metavar="DURATION", default=None,
                   help="a pause between bars longer than this starts a new session, e.g. 4h (default: one "
                        "session per calendar date); for sessions that cross midnight")
    _register(p, "intraday")


def intraday_from_args(args: argparse.Namespace) -> IntradaySettings:
    return IntradaySettings(session_break=getattr(args, "session_break", None))


def add_har(p: argparse.ArgumentParser) -> None:
    """The HAR-RV forecast (:class:`HarSettings`): on for every data command; it offers a candidate
    only for intraday files."""
    p.add_argument("--har-horizons", metavar="N,N,...", default=None,
                   help="HAR-RV forward-vol horizons in trading days, intraday files only (default "
                        f"{','.join(str(h) for h in HarSettings().horizons)})")
    _register(p, "har")


def har_from_args(args: argparse.Namespace) -> HarSettings:
    hz = getattr(args, "har_horizons", None)
    return HarSettings() if hz is None else HarSettings(horizons=tuple(int_list(hz, "--har-horizons")))


def intraday_argv(s: IntradaySettings | None) -> list[str]:
    return [] if s is None or s.session_break is None else [f"--session-break={s.session_break}"]


def har_argv(h: HarSettings | None) -> list[str]:
    return [] if h is None else ["--har-horizons", _ints(h.horizons)]


# ---------------------------------------------------------------------------- events
def add_events(p: argparse.ArgumentParser) -> None:
    """``--events FILE``: the instrument's scheduled events (every data command)."""
    p.add_argument("--events", metavar="FILE", default=None,
                   help="events CSV of the instrument (date[,label][,timing]; timing before_open or "
                        "after_close; dates as --date-format says, ISO by default): ex-event estimates, "
                        "the event move and the events in the option's life (docs/METHODS.md, Events and "
                        "hindsight)")
    command = p.prog.split()[-1]
    _register(p, "events", used=command if command in EVENTS_USED_BY else None)


EVENTS_USED_BY = ("estimate", "check", "compare", "garch", "export", "hindsight")
"""Commands that read ``--events``; the others refuse it rather than ignore it."""


def events_from_args(args: argparse.Namespace, used: str | None = None) -> EventsSettings | None:
    if getattr(args, "events", None) is None:
        return None
    if used is None:
        raise VolbenchError(f"--events is read by {', '.join(EVENTS_USED_BY)}; this command does not use "
                            "events yet: leave --events out")
    fmt = getattr(args, "date_format", None)
    return EventsSettings(file=args.events, date_format=None if fmt in (None, "excel") else fmt)


def events_argv(e: EventsSettings | None) -> list[str]:
    """The events file by its absolute path (its date format is the import group's --date-format)."""
    return [] if e is None else ["--events", str(Path(e.file).absolute())]


# ---------------------------------------------------------------------------- the groups
@dataclass(frozen=True)
class OptionGroup:
    """A settings group on the command line: the :class:`Settings` field it fills, the helper
    that adds its options to a parser, the one that builds its object from the arguments,
    whether every data command takes it (added by ``add_file_options``), and ``argv``: the
    export command's flags for a group object (the equivalent command a replay runs)."""

    field: str
    add: Callable[..., None]
    build: Callable[..., object]
    every: bool = False
    argv: Callable[..., list[str]] | None = None

    NOT_ON_EXPORT: ClassVar[frozenset[str]] = frozenset({"garch.processes", "option.premium"})
    """Settings that change how the work is spread, never a number (``garch.processes``), or that
    only the window's premium solver reads and no export holds (``option.premium``): not recorded
    as flags (their values are still in the inputs sheet)."""


GROUPS: dict[str, OptionGroup] = {
    g.field: g for g in (
        OptionGroup("import_options", add_import, import_from_args, every=True, argv=import_argv),
        OptionGroup("estimation", add_estimation, estimation_from_args, argv=estimation_argv),
        OptionGroup("cone", add_cone, cone_from_args, argv=cone_argv),
        OptionGroup("scaling", add_scaling, scaling_from_args, argv=scaling_argv),
        OptionGroup("garch", add_garch, garch_from_args, argv=garch_argv),
        OptionGroup("option", add_option, option_from_args, argv=option_argv),
        OptionGroup("decision", add_decision, decision_from_args, argv=decision_argv),
        OptionGroup("life", add_life, life_from_args, argv=life_argv),
        OptionGroup("quotes", add_quotes, quotes_from_args, argv=quotes_argv),
        OptionGroup("intraday", add_intraday, intraday_from_args, every=True, argv=intraday_argv),
        OptionGroup("har", add_har, har_from_args, every=True, argv=har_argv),
        OptionGroup("events", add_events, events_from_args, every=True, argv=events_argv),
    )
}
"""Every settings group the command line knows, by :class:`Settings` field."""


def add_every(p: argparse.ArgumentParser) -> None:
    """The groups every data command takes (called by ``add_file_options``), registered for
    :func:`settings_from_args` whether or not their ``add`` helper registers itself."""
    for group in GROUPS.values():
        if group.every:
            group.add(p)
            if group.field not in (p.get_default(_GROUPS_ATTR) or {}):
                _register(p, group.field)


def settings_from_args(args: argparse.Namespace) -> Settings:
    """One :class:`Settings` holding every group the command registered; the others are off
    (``None``), except the import options and the estimation settings, which always exist."""
    registered = getattr(args, _GROUPS_ATTR, None) or {}
    built: dict[str, object] = {name: None for name in group_types() if name != "import_options"}
    built["estimation"] = EstimationSettings(annualization=getattr(args, "annualization", DEFAULT_ANNUALIZATION))
    for name, config in registered.items():  # in the order the command added them
        built[name] = GROUPS[name].build(args, **config)
    return Settings(**built)


def export_argv(settings: Settings, files) -> list[str]:
    """The ``volbench export`` arguments (after ``export``) that rebuild ``settings`` on ``files``
    (absolute paths): every group's flags, every value written out. ``--to`` is left to the caller."""
    out = [str(f) for f in files]
    for name in group_types():
        group = GROUPS.get(name)
        if group is None or group.argv is None:
            raise VolbenchError(f"settings group {name!r} has no export flags (add its argv to GROUPS)")
        out += group.argv(getattr(settings, name))
    return out
