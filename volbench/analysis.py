"""Run what a :class:`~volbench.settings.Settings` asks for on one history, the same way for every
front end: the command line, the export and the window all call these functions, so they show
the same numbers for the same settings.

Each function takes the history and the settings and returns the core's result (or raises
:class:`~volbench.errors.VolbenchError`). :data:`CANDIDATE_PARTS` lists the parts whose results
offer comparison candidates (:class:`volbench.candidates.CandidateSource`); a new one (a HAR
forecast, an event-aware vol, an at-the-money implied vol) is one entry there and one field of
:class:`~volbench.settings.Settings`.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass

import numpy as np

from volbench.candidates import CandidateSet, CandidateSource
from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError
from volbench.estimators import (
    ESTIMATOR_KEYS,
    EstimateReport,
    RollingVol,
    estimate_all,
    rolling_all,
)
from volbench.events import EventReport, event_study
from volbench.intraday.candidate import HarCandidates, har_candidates
from volbench.models import GarchComparison, fit_models
from volbench.pricing.compare import Comparison, OptionSpec, compare
from volbench.pricing.cone import Cone, vol_cone
from volbench.pricing.daycount import OptionLife
from volbench.scaling import ScalingResult, scaling_check
from volbench.settings import (
    ConeSettings,
    GarchSettings,
    HarSettings,
    OptionSettings,
    ScalingSettings,
    Settings,
)

Progress = Callable[[int, int, str], None]
Cancel = Callable[[], bool]


@dataclass(frozen=True)
class RollingSet:
    """Rolling vols of every estimator for one setting; ``unavailable`` holds the reasons for the rest.

    ``span`` is the first and last date of the history (the x range of a plot, whatever the window).
    """

    window: int
    annualization: float
    series: dict[str, RollingVol]
    unavailable: dict[str, str]
    span: tuple[np.datetime64, np.datetime64] | None = None


def rolling_for(history: PriceHistory, settings: Settings, keys: Sequence[str] = ESTIMATOR_KEYS) -> RollingSet:
    """:func:`~volbench.estimators.rolling_all` (every estimator on shared terms) over the estimation window."""
    e = settings.estimation
    if e.window is None:
        raise VolbenchError("a rolling series needs a window in bars, not 'all'")
    report = rolling_all(history, e.window, keys=tuple(keys), annualization=e.annualization, **e.options)
    series, unavailable = report.series, report.unavailable
    span = (history.dates[0], history.dates[-1]) if history.n else None
    return RollingSet(e.window, e.annualization, series, unavailable, span)


def estimates_for(history: PriceHistory, settings: Settings) -> EstimateReport:
    """Every estimator over the estimation window at the as-of date (:func:`estimate_all`)."""
    e = settings.estimation
    return estimate_all(history, e.window, as_of=e.as_of, annualization=e.annualization,
                        confidence=e.confidence, **e.options)


def cone_for(history: PriceHistory, settings: Settings) -> Cone:
    """The volatility cone of the settings' estimator and windows (:func:`vol_cone`)."""
    c = settings.cone or ConeSettings()
    return vol_cone(history, c.estimator, c.windows, start=c.start, end=c.end,
                    annualization=settings.annualization, hodges_tompkins=c.hodges_tompkins)


def scaling_for(history: PriceHistory, settings: Settings) -> ScalingResult:
    """The Brownian-scaling check (:func:`scaling_check`)."""
    s = settings.scaling or ScalingSettings()
    return scaling_check(history, s.horizons, alpha=s.alpha, annualization=settings.annualization)


def garch_for(history: PriceHistory, settings: Settings, progress: Progress | None = None,
              cancel: Cancel | None = None) -> GarchComparison:
    """Every model of the GARCH settings, ranked by BIC (:func:`fit_models`; progress and cancel per model)."""
    return fit_models(history, settings.garch or GarchSettings(), annualization=settings.annualization,
                      progress=progress, cancel=cancel)


def market_for(history: PriceHistory, settings: Settings):
    """The quotes file's implied vols at the history's last date, and the at-the-money implied vol
    for the option's expiry (:class:`volbench.market.candidate.MarketView`), with every quoted
    expiry set against the history (:func:`volbench.market.versus_history`; left out with a note
    when it cannot be computed).

    The quotes are solved at the option's spot (default the last close), rate and dividend yield.
    """
    from volbench.market import implied_surface, versus_history
    from volbench.market.candidate import market_view
    from volbench.pricing.daycount import option_life

    q, o = settings.quotes, settings.option
    if q is None or o is None:
        raise VolbenchError("market quotes need a comparison: a pricing vol and the option's life")
    life = life_for(history, settings)
    if life is None:
        life = option_life(str(history.last_date)[:10], days=o.days, basis="trading")
    spot = float(history.close[-1]) if o.spot is None else o.spot
    holidays = None if settings.life is None else settings.life.holidays
    surface = implied_surface(q.file, spot=spot, rate=o.rate, as_of=life.as_of, dividend_yield=o.dividend_yield,
                              holidays=holidays)
    c = settings.cone or ConeSettings()
    try:
        versus = versus_history(surface, history, annualization=settings.annualization, model=q.model,
                                cone_estimator=c.estimator, cone_windows=c.windows)
    except VolbenchError:
        versus = None
    return market_view(surface, life, versus)


def har_for(history: PriceHistory, settings: Settings) -> HarCandidates:
    """The HAR-RV forward vol of an intraday file analysed by day (nothing offered for daily bars),
    over the settings' horizons and the option's life (:func:`~volbench.intraday.candidate.har_candidates`)."""
    hz = tuple((settings.har or HarSettings()).horizons)
    days = option_days(history, settings)
    if days is not None:
        hz = tuple(sorted({*hz, days}))
    return har_candidates(history, hz, annualization=settings.annualization)


def events_for(history: PriceHistory, settings: Settings) -> EventReport:
    """Ex-event estimates, the event move and the events in the option's life
    (:func:`volbench.events.event_study`) for the settings' events file.

    The estimator window is the comparison's (``option.window``, else the option's life) when an
    option is set, else the estimation window; with GARCH settings and an option, the first of
    the settings' models is also fitted on the ex-event returns, its event variance added back.
    """
    ev = settings.events
    if ev is None:
        raise VolbenchError("no events file given; add --events FILE (date,label,timing)")
    e, o = settings.estimation, settings.option
    days = option_days(history, settings)
    window = e.window if o is None else (o.window or days)
    garch = settings.garch.models[0] if settings.garch is not None and o is not None else None
    return event_study(history, ev.calendar, window=window, days=None if o is None else days, as_of=e.as_of,
                       annualization=e.annualization, confidence=e.confidence, garch=garch,
                       garch_dist=settings.garch.dist if garch else "normal")


CANDIDATE_PARTS: dict[str, Callable[[PriceHistory, Settings], CandidateSource]] = {
    "garch": garch_for,
    "scaling": scaling_for,
    "quotes": market_for,
    "har": har_for,
    "events": events_for,
}
"""Parts of a run whose results offer comparison candidates, by :class:`Settings` field, in table order."""


def candidate_parts(history: PriceHistory, settings: Settings) -> dict[str, CandidateSource | str | None]:
    """Every requested candidate part computed once (its result, or the reason it failed), ``None``
    for a part not requested: pass it as ``given`` to :func:`comparison_for` and to
    :func:`market_comparison_for`."""
    out: dict[str, CandidateSource | str | None] = {}
    for name, run in CANDIDATE_PARTS.items():
        if getattr(settings, name) is None:
            out[name] = None
            continue
        try:
            out[name] = run(history, settings)
        except VolbenchError as exc:
            out[name] = str(exc)
    return out


def market_comparison_for(comparison: Comparison, parts: Mapping[str, CandidateSource | str | None],
                          cone: Cone | None = None):
    """The market's implied vol against the comparison (:func:`volbench.market.candidate.market_comparison`),
    with the GARCH-family headline forward vol as the forecast when it was fitted (else EWMA);
    ``None`` without a market view in ``parts``."""
    from volbench.market.candidate import MarketView, market_comparison

    view = parts.get("quotes")
    if not isinstance(view, MarketView):
        return None
    garch = parts.get("garch")
    forecast = garch.candidates(comparison.days).headline if isinstance(garch, CandidateSource) else None
    return market_comparison(comparison, view, forecast=forecast, cone=cone)


def option_spec(option: OptionSettings) -> OptionSpec:
    """The option of the settings as the pricing core takes it."""
    return OptionSpec(strike=option.strike, rate=option.rate, dividend_yield=option.dividend_yield,
                      kind=option.kind, spot=option.spot)


def life_for(history: PriceHistory, settings: Settings) -> OptionLife | None:
    """The option's life from the history's last date (the as-of date of a comparison) to the
    expiry, counted in calendar days, ACT/365 years and trading days (``None`` without a life group).

    Raises
    ------
    VolbenchError
        An expiry on or before the history's last date, an empty history.
    """
    if settings.life is None:
        return None
    if not history.n:
        raise VolbenchError(f"{history.name}: no rows, so no as-of date to count the option's life from")
    return settings.life.life(history.last_date)


def option_days(history: PriceHistory, settings: Settings) -> int | None:
    """The option's life in bars for ``history``: its trading days with a life group, else ``option.days``."""
    life = life_for(history, settings)
    if life is not None:
        return life.trading_days
    return None if settings.option is None else settings.option.days


def comparison_for(history: PriceHistory, settings: Settings, *,
                   given: Mapping[str, CandidateSource | str | None] | None = None,
                   cone: Cone | None = None) -> Comparison:
    """The pricing vol against every candidate, with the option's price impact and price promises.

    Parameters
    ----------
    history, settings
        The series and the run's settings; ``settings.option`` must be set.
    given
        Results already computed for candidate parts (``{"garch": GarchComparison}``), or the
        reason a part has no result (``{"garch": "too few rows"}``). A part whose settings are
        ``None`` is "not requested"; a requested part not given is computed here.
    cone
        The cone already built on this history with these settings (else built here).

    Raises
    ------
    VolbenchError
        No option in the settings, or a bad one.
    """
    o = settings.option
    if o is None:
        raise VolbenchError("a comparison needs a pricing vol and the option's life in days")
    life = life_for(history, settings)
    if life is None and o.days is None:
        raise VolbenchError("a comparison needs the option's life: days, or an expiry date")
    if life is not None and life.trading_days < 1:
        raise VolbenchError(f"no trading day between {life.as_of} and the expiry {life.expiry}: the option sees "
                            "no more price moves, so no historical vol applies; choose a later expiry")
    days = o.days if life is None else life.trading_days
    given = dict(given or {})
    sources: list[CandidateSource] = []
    for name, run in CANDIDATE_PARTS.items():
        value = given.get(name)
        if isinstance(value, str):
            sources.append(CandidateSet.missing(name, value))
        elif value is not None:
            sources.append(value)
        elif getattr(settings, name) is None:
            sources.append(CandidateSet.missing(name, "not requested"))
        else:
            try:
                sources.append(run(history, settings))
            except VolbenchError as exc:
                sources.append(CandidateSet.missing(name, str(exc)))
    c = settings.cone or ConeSettings()
    return compare(history, o.pricing_vol, days, option=option_spec(o), annualization=settings.annualization,
                   window=o.window, sources=sources, cone_estimator=c.estimator, cone_windows=c.windows, cone=cone,
                   estimator_options=settings.estimation.options, life=life)


def decision_for(history: PriceHistory, settings: Settings, comparison: Comparison | None = None, *,
                 scaling: ScalingResult | str | None = None, cone: Cone | None = None):
    """The decision record of ``settings.decision`` on this history
    (:func:`volbench.pricing.decision.decision_record`).

    The comparison, the scaling check and the cone already computed are used when given; a
    requested part not given is computed here (a failure is recorded as not available).

    Raises
    ------
    VolbenchError
        No decision in the settings.
    """
    from volbench.pricing.decision import decision_record

    if settings.decision is None:
        raise VolbenchError("a decision record needs --decision-vol, --rationale or --prepared-by")
    missing: dict[str, str] = {}
    if comparison is None and settings.option is not None:
        comparison = comparison_for(history, settings)
    if scaling is None and settings.scaling is not None:
        try:
            scaling = scaling_for(history, settings)
        except VolbenchError as exc:
            scaling = str(exc)
    if isinstance(scaling, str):
        missing["scaling"] = scaling
        scaling = None
    if cone is None and settings.option is not None and settings.decision.vol is not None:
        c = settings.cone or ConeSettings()
        try:
            cone = vol_cone(history, c.estimator, c.windows, annualization=settings.annualization)
        except VolbenchError as exc:
            missing["cone"] = str(exc)
    verdicts = () if scaling is None else tuple(scaling.verdicts)
    return decision_record(history.name, settings.decision, comparison, cone=cone, verdicts=verdicts,
                           as_of=history.last_date, unavailable=missing)
