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
from volbench.models import GarchComparison, fit_models
from volbench.pricing.compare import Comparison, OptionSpec, compare
from volbench.pricing.cone import Cone, vol_cone
from volbench.scaling import ScalingResult, scaling_check
from volbench.settings import ConeSettings, GarchSettings, OptionSettings, ScalingSettings, Settings

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
    window = e.window if o is None else (o.window or o.days)
    garch = settings.garch.models[0] if settings.garch is not None and o is not None else None
    return event_study(history, ev.calendar, window=window, days=None if o is None else o.days, as_of=e.as_of,
                       annualization=e.annualization, confidence=e.confidence, garch=garch,
                       garch_dist=settings.garch.dist if garch else "normal")


CANDIDATE_PARTS: dict[str, Callable[[PriceHistory, Settings], CandidateSource]] = {
    "garch": garch_for,
    "scaling": scaling_for,
    "events": events_for,
}
"""Parts of a run whose results offer comparison candidates, by :class:`Settings` field, in table order."""


def option_spec(option: OptionSettings) -> OptionSpec:
    """The option of the settings as the pricing core takes it."""
    return OptionSpec(strike=option.strike, rate=option.rate, dividend_yield=option.dividend_yield,
                      kind=option.kind, spot=option.spot)


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
    return compare(history, o.pricing_vol, o.days, option=option_spec(o), annualization=settings.annualization,
                   window=o.window, sources=sources, cone_estimator=c.estimator, cone_windows=c.windows, cone=cone,
                   estimator_options=settings.estimation.options)
