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

from volbench.data.options import DECIMALS, DELIMITER_NAMES, THOUSANDS, ImportOptions
from volbench.data.quality import QualitySettings
from volbench.errors import VolbenchError
from volbench.estimators import ESTIMATOR_KEYS
from volbench.models.family import DIST_REGISTRY, MEANS, MODEL_REGISTRY
from volbench.settings import (
    ConeSettings,
    EstimationSettings,
    EventsSettings,
    GarchSettings,
    OptionSettings,
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
    _register(p, "import_options")


def import_from_args(args: argparse.Namespace) -> ImportOptions:
    return ImportOptions(
        delimiter=args.delimiter, decimal=args.decimal, thousands=args.thousands,
        date_format=args.date_format, use_adjusted=args.adjusted, adjust_splits=args.adjust_splits,
        exclude_flagged=args.exclude_flagged, quality=QualitySettings(gap_days=args.gap_days),
    )


# ---------------------------------------------------------------------------- estimation
def add_estimation(p: argparse.ArgumentParser, *, window: str | None = None, as_of: str | None = None) -> None:
    """``--annualization``; with ``window`` (its default, e.g. ``"all"``) ``--window``; with ``as_of``
    (its help text) ``--as-of``."""
    p.add_argument("--annualization", default=DEFAULT_ANNUALIZATION, metavar="A",
                   help="bars per year used to annualize (default %(default)g; 365 for markets open every day)")
    if window is not None:
        p.add_argument("--window", default=window, metavar="N|all",
                       help=f"bars in the estimation window ending at the as-of date, or 'all' (default {window})")
    if as_of is not None:
        p.add_argument("--as-of", metavar="YYYY-MM-DD|last", default=None,
                       help=as_of + "; a date outside a file's range is refused")
    _register(p, "estimation", window=window is not None)


def estimation_from_args(args: argparse.Namespace, window: bool = False) -> EstimationSettings:
    return EstimationSettings(window=args.window if window else None, annualization=args.annualization,
                              as_of=getattr(args, "as_of", None))


# ---------------------------------------------------------------------------- cone
def add_cone(p: argparse.ArgumentParser, *, flag: str = "--cone-estimator", windows: bool = False,
             date_range: bool = False, hodges_tompkins: bool = False, switch: str | None = None) -> None:
    """The cone's estimator (as ``flag``), optionally its windows, date range and Hodges-Tompkins
    widening; ``switch`` names an on/off option (``--no-cone``) when the cone is optional."""
    p.add_argument(flag, dest="cone_estimator", default="close_to_close", metavar="KEY",
                   help=f"estimator of the volatility cone (default close_to_close; one of: "
                        f"{', '.join(ESTIMATOR_KEYS)})")
    if windows:
        p.add_argument("--windows", dest="cone_windows", default=",".join(map(str, DEFAULT_CONE_WINDOWS)),
                       metavar="W,W,...", help="window lengths in bars (default %(default)s)")
    if date_range:
        p.add_argument("--start", metavar="YYYY-MM-DD", default=None,
                       help="first date of the range (default: first row)")
        p.add_argument("--end", metavar="YYYY-MM-DD", default=None,
                       help="last date of the range (default: last row); a date outside the file's range is refused")
    if hodges_tompkins:
        p.add_argument("--hodges-tompkins", action="store_true",
                       help="widen each column's spread for overlapping windows (Hodges & Tompkins 2002)")
    _register(p, "cone")


def cone_from_args(args: argparse.Namespace) -> ConeSettings:
    windows = getattr(args, "cone_windows", None)
    return ConeSettings(
        estimator=args.cone_estimator,
        windows=DEFAULT_CONE_WINDOWS if windows is None else tuple(int_list(windows, "--windows")),
        hodges_tompkins=bool(getattr(args, "hodges_tompkins", False)),
        start=getattr(args, "start", None), end=getattr(args, "end", None))


# ---------------------------------------------------------------------------- scaling
def add_scaling(p: argparse.ArgumentParser, *, full: bool = False, switch: str | None = None) -> None:
    """The scaling check: ``full`` adds ``--horizons`` and ``--alpha``; ``switch`` is ``"--with-scaling"``
    (off unless given) or ``"--no-scaling"`` (on unless given)."""
    if full:
        from volbench.scaling.check import DEFAULT_HORIZONS

        p.add_argument("--horizons", dest="scaling_horizons", default=",".join(str(h) for h in DEFAULT_HORIZONS),
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
              help_switch: str = "add GARCH-family forward vols for the option's life") -> None:
    """GARCH-type fits: ``full`` adds every model option (--model, --dist, --mean, --horizons, --seed,
    --simulations); ``switch`` (``--with-garch``) makes the fits optional."""
    if full:
        keys = "|".join([*MODEL_REGISTRY, "all"])
        p.add_argument("--model", default="all", metavar=keys,
                       help="model to fit, or all of them ranked by BIC (default all)")
        p.add_argument("--dist", default="normal", metavar="|".join(DIST_REGISTRY),
                       help="innovation distribution: normal or Student-t (default normal)")
        p.add_argument("--mean", default="constant", metavar="|".join(MEANS),
                       help="mean return: constant (estimated) or zero (default constant)")
        p.add_argument("--horizons", dest="garch_horizons", default=",".join(map(str, DEFAULT_TERM_HORIZONS)),
                       metavar="LIST", help="option lives in bars for the forward vol, comma separated "
                                            "(default %(default)s)")
        p.add_argument("--seed", type=int, default=DEFAULT_SEED, metavar="N",
                       help="seed of the simulated (EGARCH) forecast (default %(default)s)")
        p.add_argument("--simulations", type=int, default=DEFAULT_SIMULATIONS, metavar="N",
                       help="paths of the simulated (EGARCH) forecast (default %(default)s)")
    if switch is not None:
        p.add_argument(switch, dest="garch_on", action="store_true", help=help_switch)
    _register(p, "garch", switch=switch is not None)


def garch_from_args(args: argparse.Namespace, switch: bool = False) -> GarchSettings | None:
    if switch and not args.garch_on:
        return None
    horizons = getattr(args, "garch_horizons", None)
    return GarchSettings(
        models=getattr(args, "model", "all"), dist=getattr(args, "dist", "normal"),
        mean=getattr(args, "mean", "constant"),
        horizons=DEFAULT_TERM_HORIZONS if horizons is None else tuple(int_list(horizons, "horizons")),
        seed=getattr(args, "seed", DEFAULT_SEED), simulations=getattr(args, "simulations", DEFAULT_SIMULATIONS))


# ---------------------------------------------------------------------------- the option
OPTION_ARGS = ("strike", "spot", "rate", "dividend_yield", "kind")


def add_option(p: argparse.ArgumentParser, *, required: bool = True, window: bool = False,
               title: str | None = None) -> None:
    """The option and the proposed vol: --pricing-vol and --days (``required``, or both-or-neither),
    --strike, --spot, --rate, --dividend-yield, --type; with ``window`` the candidates' --window."""
    g = p.add_argument_group(title) if title else p
    g.add_argument("--pricing-vol", required=required, default=None, metavar="V",
                   help="proposed annualized vol as a decimal below 5, e.g. 0.25")
    g.add_argument("--days", required=required, default=None, metavar="N",
                   help="option life in bars (bars to expiry), e.g. 30")
    g.add_argument("--strike", default=None, metavar="K", help="strike (default: at the money)")
    g.add_argument("--spot", default=None, metavar="S", help="spot (default: last close)")
    g.add_argument("--rate", default=None, metavar="R",
                   help="risk-free rate, continuously compounded, as a decimal (default 0)")
    g.add_argument("--dividend-yield", default=None, metavar="Q",
                   help="dividend yield, continuously compounded, as a decimal (default 0)")
    g.add_argument("--type", dest="kind", choices=["call", "put"], default=None, help="option type (default call)")
    if window:
        g.add_argument("--window", dest="option_window", default=None, metavar="N",
                       help="bars behind each estimator's candidate vol (default: --days, the option's life)")
    _register(p, "option", required=required)


def option_from_args(args: argparse.Namespace, required: bool = True) -> OptionSettings | None:
    given = [f"--{k.replace('_', '-') if k != 'kind' else 'type'}" for k in OPTION_ARGS
             if getattr(args, k) is not None]
    if not required and args.pricing_vol is None and args.days is None:
        if given:
            raise VolbenchError(f"{', '.join(given)}: option settings apply only to a comparison; "
                                "also give --pricing-vol and --days")
        return None
    if args.pricing_vol is None or args.days is None:
        missing = "--days (the option's life in bars)" if args.days is None else "--pricing-vol (e.g. 0.25)"
        raise VolbenchError(f"a comparison needs both --pricing-vol and --days; missing {missing}")
    return OptionSettings(
        pricing_vol=args.pricing_vol, days=args.days, strike=args.strike, spot=args.spot,
        rate=0.0 if args.rate is None else args.rate,
        dividend_yield=0.0 if args.dividend_yield is None else args.dividend_yield,
        kind=args.kind or "call", window=getattr(args, "option_window", None))


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


# ---------------------------------------------------------------------------- the groups
@dataclass(frozen=True)
class OptionGroup:
    """A settings group on the command line: the :class:`Settings` field it fills, the helper
    that adds its options to a parser, the one that builds its object from the arguments, and
    whether every data command takes it (added by ``add_file_options``)."""

    field: str
    add: Callable[..., None]
    build: Callable[..., object]
    every: bool = False


GROUPS: dict[str, OptionGroup] = {
    g.field: g for g in (
        OptionGroup("import_options", add_import, import_from_args, every=True),
        OptionGroup("estimation", add_estimation, estimation_from_args),
        OptionGroup("cone", add_cone, cone_from_args),
        OptionGroup("scaling", add_scaling, scaling_from_args),
        OptionGroup("garch", add_garch, garch_from_args),
        OptionGroup("option", add_option, option_from_args),
        OptionGroup("events", add_events, events_from_args, every=True),
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
