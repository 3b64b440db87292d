"""The window's jobs in one table: what each result depends on, how it is computed, where it runs.

Qt-free. Each :class:`Job` names the inputs it depends on (state fields such as ``"window"``, the
``"view"`` of the selected history, or other jobs such as ``"cone"``), the function that computes
it through the core (:mod:`volbench.analysis` and friends: the calls the command line makes), the
type of its result, whether it runs in the background, and whether it runs on demand (files to
read, an export, a batch fit) instead of whenever an input changes. The controller
(:mod:`volbench.gui.controller`) reads only this table: a new result for a new pane is one entry
here. Derived numbers (the pricing vol's place in the cone, each fit's forward vol at the
option's life, the band curves) are jobs too, so panes only render.

Every background job takes ``progress(done, total, text)`` and ``cancel()`` and stops with
:class:`~volbench.errors.Cancelled` when asked to.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from pathlib import Path
from types import MappingProxyType
from typing import Any

import pandas as pd

from volbench import analysis
from volbench.candidates import CandidateSet
from volbench.data.history import PriceHistory
from volbench.data.load import Loaded
from volbench.data.options import ImportOptions
from volbench.errors import Cancelled, VolbenchError
from volbench.estimators import EstimateReport
from volbench.events import EventReport
from volbench.export import ExportBundle, build_bundle, write_export
from volbench.gui.loading import load_files
from volbench.hindsight import Hindsight
from volbench.market.candidate import MarketComparison, MarketView
from volbench.memo import Memo, build_memo
from volbench.models import GarchComparison, fit_many
from volbench.pricing.bands import band_fan
from volbench.pricing.compare import Comparison
from volbench.pricing.cone import Cone, ConePlacement
from volbench.pricing.daycount import OptionLife
from volbench.pricing.implied import ImpliedVol, solve_implied_vol
from volbench.pricing.promise_summary import PromiseSummary, promise_summary
from volbench.scaling import ScalingResult
from volbench.settings import DecisionSettings, GarchSettings, Settings
from volbench.survey import DEFAULT_DAYS, SurveyResult, SurveySettings, run_survey

Progress = Callable[[int, int, str], None]
Cancel = Callable[[], bool]

VIEW_INPUTS = frozenset({"histories", "selected", "exclude_flagged", "as_of"})
"""State fields that change the history every result is computed on (the input ``"view"``)."""


@dataclass(frozen=True)
class Context:
    """What a job runs on.

    Attributes
    ----------
    view
        The selected history with the flagged-rows policy and the as-of date applied.
    settings
        Every setting, as the command line would build it (:meth:`Choices.settings`).
    results
        The current result of each other job for this view, or the reason it has none
        (``"computing…"`` while a background job runs).
    request
        What an on-demand job was asked to do (:class:`LoadRequest`, :class:`ExportRequest`,
        :class:`BatchRequest`).
    """

    view: PriceHistory | None
    settings: Settings
    results: Mapping[str, Any] = field(default_factory=dict)
    request: Any = None

    def result(self, kind: str, of: type | tuple[type, ...]):
        """The result of job ``kind``; its reason as a :class:`VolbenchError` when there is none."""
        value = self.results.get(kind)
        if isinstance(value, of):
            return value
        raise VolbenchError(value if isinstance(value, str) else f"{kind} is not computed yet")


# ------------------------------------------------------------------------ derived results
@dataclass(frozen=True)
class ConePosition:
    """The pricing vol's place in the cone column of the option's life (or why it has none)."""

    pricing_vol: float
    days: int
    placement: ConePlacement | None
    problem: str | None = None


@dataclass(frozen=True)
class ForwardVols:
    """Each fit's forward vol over the option's life; ``reasons`` for the fits that have none."""

    days: int
    vols: Mapping[str, float]
    reasons: Mapping[str, str] = field(default_factory=dict)

    def of(self, model: str) -> float | None:
        return self.vols.get(model)


@dataclass(frozen=True)
class BandFans:
    """Band prices from today to expiry (:func:`volbench.pricing.bands.band_fan`) of every vol of
    the comparison, by candidate key (``"pricing"`` first)."""

    days: int
    fans: Mapping[str, pd.DataFrame]


@dataclass(frozen=True)
class BatchFits:
    """A batch fit of every loaded series: the comparisons, and each preferred forward vol at ``days``."""

    days: int
    comparisons: tuple[GarchComparison, ...]
    forward: tuple[float | None, ...]


def forward_vols(fits, days: int) -> ForwardVols:
    vols, reasons = {}, {}
    for f in fits:
        try:
            vols[f.model] = f.forward_vol(days)
        except VolbenchError as exc:
            reasons[f.model] = str(exc)
    return ForwardVols(days, MappingProxyType(vols), MappingProxyType(reasons))


@dataclass(frozen=True)
class Absent:
    """A result not asked for (no premium entered, no quotes file open): the pane shows ``reason``,
    the status line stays quiet (it is not a failure)."""

    reason: str


# ------------------------------------------------------------------------ requests
@dataclass(frozen=True)
class LoadRequest:
    paths: tuple[str, ...]
    options: ImportOptions
    taken: frozenset[str] = frozenset()
    session_break: float | None = None


@dataclass(frozen=True)
class ExportRequest:
    """Write ``views`` to ``path``; ``given`` holds results already on screen, ``{section: {series: result}}``."""

    path: Path
    views: tuple[PriceHistory, ...]
    overwrite: bool = False
    given: Mapping[str, Mapping[str, Any]] = field(default_factory=dict)
    decision: DecisionSettings | None = None


@dataclass(frozen=True)
class MemoRequest:
    """Build the vol memo of the view shown, to be drawn to ``path`` (``overwrite``: the user agreed)."""

    path: Path
    overwrite: bool = False


@dataclass(frozen=True)
class MemoReady:
    """A built memo and where to draw it (the PDF is drawn in the GUI thread: Qt's painters)."""

    memo: Memo
    path: Path
    overwrite: bool


@dataclass(frozen=True)
class BatchRequest:
    views: tuple[PriceHistory, ...]
    processes: int | None = None


@dataclass(frozen=True)
class SurveyRequest:
    """Survey ``paths`` (files, folders, patterns) with the window's settings; ``workers`` local
    processes (``None``: one per CPU; 1: in the worker thread); ``with_garch`` adds the GARCH fits."""

    paths: tuple[str, ...]
    workers: int | None = None
    with_garch: bool = False


@dataclass(frozen=True)
class HindsightGarchRequest:
    """Re-run the Hindsight tab's scoring of ``view`` with the GARCH(1,1) candidate: ``days``-bar
    periods every ``step`` bars, GARCH refitted every ``refit_every`` bars (rounded up to a multiple
    of ``step``) with its parameters kept in between (``volbench hindsight --with-garch``)."""

    view: PriceHistory
    days: int
    step: int
    refit_every: int


def survey_settings(settings: Settings, with_garch: bool = False, view=None) -> SurveySettings:
    """The survey the window's settings ask for: every group as chosen (GARCH only when asked),
    the option's life and its pricing vol for every series.

    The survey counts the life in bars of each file: the option's trading days, counted from the
    shown series' as-of date when the life is an expiry or calendar days (``view``), else the days
    as given."""
    o, life = settings.option, settings.life
    days = None if o is None else o.days
    if days is None and life is not None:
        if life.days is not None and life.basis == "trading":
            days = life.days
        elif view is not None:
            days = analysis.option_days(view, settings)
    groups = settings.with_groups(garch=(settings.garch or GarchSettings()) if with_garch else None)
    return SurveySettings(groups=groups, days=days or DEFAULT_DAYS,
                          pricing_vol=o.pricing_vol if o is not None else None)


# ------------------------------------------------------------------------ job functions
def _checkpoint(cancel: Cancel) -> None:
    if cancel():
        raise Cancelled("stopped")


def _rolling(ctx: Context, progress: Progress, cancel: Cancel):
    return analysis.rolling_for(ctx.view, ctx.settings)


def _estimates(ctx: Context, progress: Progress, cancel: Cancel):
    return analysis.estimates_for(ctx.view, ctx.settings)


def _cone(ctx: Context, progress: Progress, cancel: Cancel):
    return analysis.cone_for(ctx.view, ctx.settings)


def _life(ctx: Context, progress: Progress, cancel: Cancel):
    life = analysis.life_for(ctx.view, ctx.settings)
    if life is None:
        raise VolbenchError("no option life in the settings")
    return life


def _option_days(ctx: Context) -> tuple[int, float]:
    """The option's life in bars (trading days) and the factor onto the pricing vol's ACT/365 basis."""
    life = ctx.result("life", OptionLife)
    if life.trading_days < 1:
        raise VolbenchError(f"no trading day between {life.as_of} and the expiry {life.expiry}")
    return life.trading_days, life.pricing_basis_factor(ctx.settings.annualization)


def _placement(ctx: Context, progress: Progress, cancel: Cancel):
    o = ctx.settings.option
    cone = ctx.result("cone", Cone)
    days, factor = _option_days(ctx)
    vol = o.pricing_vol / factor  # on the cone's trading-bar basis, as the comparison places it
    try:
        return ConePosition(vol, days, cone.place(vol, days))
    except VolbenchError as exc:
        return ConePosition(vol, days, None, str(exc))


def _scaling(ctx: Context, progress: Progress, cancel: Cancel):
    _checkpoint(cancel)
    progress(0, 1, f"Running the scaling check on {ctx.view.name}")
    result = analysis.scaling_for(ctx.view, ctx.settings)
    _checkpoint(cancel)
    return result


def _garch(ctx: Context, progress: Progress, cancel: Cancel):
    _checkpoint(cancel)
    result = analysis.garch_for(ctx.view, ctx.settings, progress, cancel)
    _checkpoint(cancel)
    return result


def _forward(ctx: Context, progress: Progress, cancel: Cancel):
    return forward_vols(ctx.result("garch", GarchComparison).fits, _option_days(ctx)[0])


def _comparison(ctx: Context, progress: Progress, cancel: Cancel):
    given = {part: ctx.results.get(part) for part in analysis.CANDIDATE_PARTS}
    cone = ctx.results.get("cone")
    return analysis.comparison_for(ctx.view, ctx.settings, given=given,
                                   cone=cone if isinstance(cone, Cone) else None)


def _bands(ctx: Context, progress: Progress, cancel: Cancel):
    c = ctx.result("comparison", Comparison)
    a = c.annualization if c.life is None else c.days / c.years  # vol x sqrt(years) over the life, as priced
    fans = {row.key: band_fan(c.spot, row.vol, c.days, a)
            for row in c.table.itertuples(index=False) if math.isfinite(row.vol)}
    return BandFans(c.days, MappingProxyType(fans))


def _implied(ctx: Context, progress: Progress, cancel: Cancel):
    """The implied vol of the option's observed premium, on the comparison's spot, strike and years."""
    premium = ctx.settings.option.premium
    if premium is None:
        return Absent("Enter the option's premium to solve for its implied vol.")
    c = ctx.result("comparison", Comparison)
    return solve_implied_vol(premium, c.spot, c.strike, c.years, c.rate, c.dividend_yield, c.kind)


def _quotes(ctx: Context, progress: Progress, cancel: Cancel):
    """The quotes file's implied vols at the view's last date and the ATM vol for the option's expiry."""
    _checkpoint(cancel)
    if ctx.settings.quotes is None:
        return CandidateSet.missing("quotes", "not requested")
    progress(0, 1, f"Solving the quotes' implied vols against {ctx.view.name}")
    view = analysis.market_for(ctx.view, ctx.settings)
    _checkpoint(cancel)
    return view


def _market(ctx: Context, progress: Progress, cancel: Cancel):
    view = ctx.result("quotes", (MarketView, CandidateSet))
    if not isinstance(view, MarketView):
        return Absent("Open a quotes file to compare with the market's implied vols.")
    garch = ctx.results.get("garch")
    cone = ctx.results.get("cone")
    return analysis.market_comparison_for(ctx.result("comparison", Comparison),
                                          {"quotes": view, "garch": garch if isinstance(garch, GarchComparison)
                                           else None}, cone if isinstance(cone, Cone) else None)


def _promise(ctx: Context, progress: Progress, cancel: Cancel):
    return promise_summary(ctx.result("comparison", Comparison))


def _events(ctx: Context, progress: Progress, cancel: Cancel):
    _checkpoint(cancel)
    if ctx.settings.events is None:
        raise VolbenchError("not requested")
    progress(0, 1, f"Studying the events of {ctx.view.name}")
    result = analysis.events_for(ctx.view, ctx.settings)
    _checkpoint(cancel)
    return result


def _hindsight(ctx: Context, progress: Progress, cancel: Cancel):
    from volbench.hindsight import hindsight

    s = ctx.settings
    calendar = None if s.events is None else s.events.calendar
    _checkpoint(cancel)
    days = _option_days(ctx)[0]
    step = max(1, days // 5)  # a few as-of dates per option life: quick enough to follow the controls
    progress(0, 1, f"Scoring past forecasts of {ctx.view.name}")
    return hindsight(ctx.view, days, step=step, events=calendar, annualization=s.annualization,
                     progress=progress, cancel=cancel)


def _hindsight_garch(ctx: Context, progress: Progress, cancel: Cancel):
    """The hindsight run with GARCH (many fits: on demand, with progress and Cancel)."""
    from volbench.hindsight import hindsight

    _checkpoint(cancel)
    r: HindsightGarchRequest | None = ctx.request
    if r is None:
        raise VolbenchError("Nothing to score yet: open a price file first.")
    s = ctx.settings
    calendar = None if s.events is None else s.events.calendar
    progress(0, 1, f"Refitting GARCH through {r.view.name}'s history")
    return hindsight(r.view, r.days, step=r.step, with_garch=True, refit_every=r.refit_every, events=calendar,
                     annualization=s.annualization, progress=progress, cancel=cancel)


def _load(ctx: Context, progress: Progress, cancel: Cancel):
    r: LoadRequest = ctx.request
    return load_files(r.paths, r.options, taken=r.taken, progress=progress, cancel=cancel,
                      session_break=r.session_break)


def _export(ctx: Context, progress: Progress, cancel: Cancel):
    r: ExportRequest = ctx.request

    def step(done: int, total: int, text: str) -> None:
        _checkpoint(cancel)
        progress(done, total, f"Exporting: {text}")

    _checkpoint(cancel)
    settings = ctx.settings if r.decision is None else ctx.settings.with_groups(decision=r.decision)
    bundle: ExportBundle = build_bundle(r.views, settings, given=r.given, progress=step)
    _checkpoint(cancel)
    return write_export(r.path, bundle, overwrite=r.overwrite)


def _memo(ctx: Context, progress: Progress, cancel: Cancel):
    r: MemoRequest = ctx.request
    if ctx.view is None:
        raise VolbenchError("Nothing to write a memo about yet: open a price file first.")
    _checkpoint(cancel)
    progress(0, 1, f"Building the vol memo of {ctx.view.name}")
    memo = build_memo(ctx.view, ctx.settings)
    _checkpoint(cancel)
    return MemoReady(memo, r.path, r.overwrite)


def _garch_all(ctx: Context, progress: Progress, cancel: Cancel):
    r: BatchRequest = ctx.request
    _checkpoint(cancel)
    settings = ctx.settings.garch.with_changes(processes=r.processes)
    comps = fit_many(r.views, settings, annualization=ctx.settings.annualization, progress=progress, cancel=cancel)
    days = analysis.option_days(r.views[0], ctx.settings) if r.views else 1  # trading days of the first series
    forward = []
    for v, c in zip(r.views, comps):
        try:
            forward.append(c.forward_vol(analysis.option_days(v, ctx.settings)) if c.fits else None)
        except VolbenchError:
            forward.append(None)
    return BatchFits(days, tuple(comps), tuple(forward))


def _survey(ctx: Context, progress: Progress, cancel: Cancel):
    r: SurveyRequest = ctx.request
    _checkpoint(cancel)
    settings = survey_settings(ctx.settings, r.with_garch, ctx.view)
    return run_survey(r.paths, settings, jobs=r.workers, progress=lambda done, total, name: progress(
        done, total, f"Surveying: {done} of {total} files ({name})"), cancel=cancel)


# ------------------------------------------------------------------------ the table
@dataclass(frozen=True)
class Job:
    """One result the window computes.

    Attributes
    ----------
    kind
        Its name (the key panes read from :class:`~volbench.gui.controller.Results`).
    inputs
        State fields, ``"view"`` (the selected history as shown) and other jobs it depends on.
    run
        ``run(context, progress, cancel)`` through the core; raises :class:`VolbenchError` with
        the reason when there is no result, :class:`Cancelled` when stopped.
    returns
        The type of its result (checked when it is stored).
    background
        Runs in a worker thread (long work), with progress and Cancel in the status bar.
    on_demand
        Runs when asked (a menu, a button), not when an input changes.
    busy
        What the status line says while it runs (``{name}``: the series).
    """

    kind: str
    inputs: frozenset[str]
    run: Callable[[Context, Progress, Cancel], Any]
    returns: type | tuple[type, ...]
    background: bool = False
    on_demand: bool = False
    busy: str = ""


def _job(kind, inputs, run, returns, **kw) -> Job:
    return Job(kind, frozenset(inputs), run, returns, **kw)


LIFE = ("days", "day_basis", "expiry", "holidays_file")
OPTION = ("pricing_vol", *LIFE, "strike", "rate", "dividend_yield", "kind")
WINDOW = ("window", "linked", "ewma_lambda")
"""What decides the comparison's estimator candidates besides the option (one window per screen)."""

JOBS: dict[str, Job] = {j.kind: j for j in (
    _job("rolling", ("view", "window", "annualization", "ewma_lambda"), _rolling, analysis.RollingSet),
    _job("estimates", ("view", "window", "annualization", "ewma_lambda"), _estimates, EstimateReport),
    _job("cone", ("view", "annualization", "cone_estimator", "hodges_tompkins"), _cone, Cone),
    _job("life", ("view", *LIFE), _life, OptionLife),
    _job("placement", ("cone", "pricing_vol", "life", "annualization"), _placement, ConePosition),
    _job("scaling", ("view", "annualization"), _scaling, ScalingResult, background=True,
         busy="Running the scaling check on {name}…"),
    _job("garch", ("view", "annualization", "garch_model", "garch_dist"), _garch, GarchComparison,
         background=True, busy="Fitting GARCH models to {name}…"),
    _job("forward", ("garch", "life"), _forward, ForwardVols),
    _job("quotes", ("view", "annualization", "quotes_file", *LIFE, "rate", "dividend_yield", "cone_estimator"), _quotes,
         (MarketView, CandidateSet), background=True, busy="Solving the quotes' implied vols for {name}…"),
    _job("events", ("view", "annualization", "life", "garch_model", "garch_dist", "events_file"),
         _events, EventReport, background=True, busy="Studying the events of {name}…"),
    _job("comparison", ("view", "annualization", *OPTION, "cone_estimator", "cone", "scaling", "garch", "quotes",
                        "events", *WINDOW),
         _comparison, Comparison),
    _job("market", ("comparison", "quotes"), _market, (MarketComparison, Absent)),
    _job("bands", ("comparison",), _bands, BandFans),
    _job("implied", ("comparison", "premium"), _implied, (ImpliedVol, Absent)),
    _job("promise", ("comparison",), _promise, PromiseSummary),
    _job("hindsight", ("view", "annualization", "life", "events_file"), _hindsight, Hindsight, background=True,
         busy="Scoring past forecasts of {name}…"),
    _job("load", (), _load, Loaded, background=True, on_demand=True, busy="Reading {files}…"),
    _job("export", (), _export, Path, background=True, on_demand=True, busy="Exporting to {file}…"),
    _job("garch_all", (), _garch_all, BatchFits, background=True, on_demand=True,
         busy="Fitting {count} series…"),
    _job("survey", (), _survey, SurveyResult, background=True, on_demand=True, busy="Surveying {count} files…"),
    _job("memo", (), _memo, MemoReady, background=True, on_demand=True, busy="Building the vol memo…"),
    _job("hindsight_garch", (), _hindsight_garch, Hindsight, background=True, on_demand=True,
         busy="Refitting GARCH through the history…"),
)}
"""Every job of the window, each listed after the jobs it depends on. Add a job with one entry."""


def automatic(jobs: Mapping[str, Job] = JOBS) -> list[str]:
    """Jobs recomputed when their inputs change, in run order."""
    return [k for k, j in jobs.items() if not j.on_demand]


def jobs_for(names, jobs: Mapping[str, Job] = JOBS) -> list[str]:
    """Automatic jobs that depend on any of ``names`` (directly, through the view or another job), in order."""
    touched = set(names)
    if touched & VIEW_INPUTS:
        touched.add("view")
    for kind in automatic(jobs):  # the table lists every job after the jobs it depends on
        if jobs[kind].inputs & touched:
            touched.add(kind)
    return [k for k in automatic(jobs) if k in touched]


def depends_on_view(kind: str, jobs: Mapping[str, Job] = JOBS) -> bool:
    """Whether ``kind`` depends on the selected history, directly or through another job."""
    inputs = jobs[kind].inputs
    return "view" in inputs or any(i in jobs and depends_on_view(i, jobs) for i in inputs)
