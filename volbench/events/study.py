"""Ex-event vol, the event move and the event-aware vol over an option's life.

A history that includes scheduled events (results, reports) mixes ordinary days with a few days
whose moves are several times larger. :func:`event_study` separates them: every estimator on the
ordinary days only (the *ex-event* vol), the variance an event adds (the *event move*), the
number of events an option's life spans, and the vol that prices those events in.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import pandas as pd
from scipy import stats

from volbench.data.history import Finding, PriceHistory
from volbench.errors import EstimatorUnavailable, VolbenchError
from volbench.estimators import REGISTRY, Estimate, point_estimate
from volbench.events.calendar import EventCalendar
from volbench.events.mapping import EventMap, ex_event_history, map_events
from volbench.types import DEFAULT_ANNUALIZATION, check_annualization, check_window

MIN_EVENTS = 4
"""Fewer observed events than this draws a warning on the event move (common practice, no source)."""

EVENT_AWARE_BASIS = "close_to_close"
"""Ex-event estimator whose vol the event-aware vol builds on (the same returns as the event move)."""

ABS_MOVE_FACTOR = math.sqrt(2.0 / math.pi)
"""E|J| = sqrt(2/pi) sigma_E for a normal move J of standard deviation sigma_E."""


@dataclass(frozen=True)
class EventMove:
    """The variance one event adds to its day's return, with its interval.

    Attributes
    ----------
    variance
        sigma_E^2 = mean of event-day r^2 - ordinary per-bar variance, floored at 0 (a log-return
        variance per event, not annualized).
    ci_low, ci_high
        Interval for ``variance`` at ``confidence`` (floored at 0); see :func:`event_move`.
    expected_abs_move
        sqrt(2/pi) sigma_E: the mean absolute log move an event adds, for a normal move.
    n_events
        Event-day returns the estimate rests on.
    mean_sq_event_return, ordinary_variance
        The two terms of the estimate (per bar).
    raw_variance
        The difference before flooring (negative when event days moved less than ordinary days).
    """

    variance: float
    ci_low: float
    ci_high: float
    expected_abs_move: float
    n_events: int
    mean_sq_event_return: float
    ordinary_variance: float
    raw_variance: float
    confidence: float = 0.95
    method: str = "chi-square with n_events degrees of freedom on the event-day variance, less the ordinary variance"

    @property
    def vol(self) -> float:
        """sigma_E, the standard deviation of the event move."""
        return math.sqrt(self.variance)

    def as_dict(self) -> dict:
        return {"variance": self.variance, "ci_low": self.ci_low, "ci_high": self.ci_high,
                "expected_abs_move": self.expected_abs_move, "n_events": self.n_events}


def event_move(event_returns, ordinary_variance: float, *, confidence: float = 0.95) -> EventMove:
    """Event variance net of an ordinary day, from the returns of the event bars.

    Parameters
    ----------
    event_returns
        Close-to-close log returns of the event bars (at least one).
    ordinary_variance
        Per-bar variance of ordinary days (e.g. the ex-event close-to-close variance).
    confidence
        Level of the interval.

    Notes
    -----
    An event-day return is an ordinary day's move plus the event's move J:
    E[r_E^2] = sigma_ord^2 + sigma_E^2, so sigma_E^2 = mean(r_E^2) - sigma_ord^2 (docs/METHODS.md,
    "Events and hindsight"; common practice, e.g. Dubinsky, Johannes, Kaeck & Seeger 2019, Review
    of Financial Studies 32(2)). Interval: when event-day returns are normal with mean zero, k
    mean(r_E^2) / (sigma_ord^2 + sigma_E^2) ~ chi-square(k), which gives an exact interval for the
    event-day variance; the ordinary variance (estimated from many more days, relative error
    sqrt(2 / n_ord) against sqrt(2 / k)) is then subtracted as if known. Coverage is checked by a
    seeded simulation including the error of the ordinary variance (tests/events). Fat-tailed
    event moves make the interval too narrow.
    """
    r = np.asarray(event_returns, dtype=float)
    k = int(r.size)
    if k < 1:
        raise VolbenchError("the event move needs at least one event-day return")
    if not (0 < confidence < 1):
        raise VolbenchError(f"confidence must be between 0 and 1, got {confidence}")
    ov = float(ordinary_variance)
    if not (math.isfinite(ov) and ov >= 0):
        raise VolbenchError(f"ordinary variance must be a finite number >= 0, got {ordinary_variance!r}")
    msq = float(np.mean(r * r))
    alpha = 1.0 - confidence
    q_lo, q_hi = stats.chi2.ppf([alpha / 2, 1 - alpha / 2], k)
    raw = msq - ov
    var = max(raw, 0.0)
    return EventMove(variance=var, ci_low=max(k * msq / q_hi - ov, 0.0), ci_high=max(k * msq / q_lo - ov, 0.0),
                     expected_abs_move=ABS_MOVE_FACTOR * math.sqrt(var), n_events=k, mean_sq_event_return=msq,
                     ordinary_variance=ov, raw_variance=raw, confidence=confidence)


def event_aware_variance(ordinary_variance, event_variance, m, days):
    """Average per-bar variance over ``days`` bars that include ``m`` events (arrays broadcast).

    Notes
    -----
    Total variance over T bars with m events = sigma_ord^2 T + m sigma_E^2, with sigma_E^2 the
    event variance net of an ordinary day (:func:`event_move`). Equivalently
    sigma_ord^2 (T - m) + m (sigma_ord^2 + sigma_E^2): T - m ordinary days plus m event days each
    carrying its whole variance (docs/METHODS.md, "Events and hindsight"; common practice, Patell
    & Wolfson 1979, J. of Accounting and Economics 1).
    """
    return ordinary_variance + np.asarray(m, dtype=float) * event_variance / np.asarray(days, dtype=float)


def event_aware_vol(ordinary_vol: float, event_variance: float, m: int, days: int,
                    annualization: float = DEFAULT_ANNUALIZATION) -> float:
    """Annualized vol for an option living ``days`` bars that spans ``m`` events.

    sqrt((sigma_ex^2 T / A + m sigma_E^2) / (T / A)) with sigma_ex the annualized ex-event vol,
    sigma_E^2 the per-event variance net of an ordinary day, T = ``days`` and A the annualization
    (see :func:`event_aware_variance`).

    Raises
    ------
    VolbenchError
        ``days`` < 1, ``m`` outside 0..days, a negative vol or variance.
    """
    a = check_annualization(annualization)
    if isinstance(days, bool) or int(days) != days or days < 1:
        raise VolbenchError(f"days must be a whole number of bars >= 1, got {days!r}")
    if isinstance(m, bool) or int(m) != m or not 0 <= m <= days:
        raise VolbenchError(f"events in the option's life must be a whole number between 0 and {days}, got {m!r}")
    if not (ordinary_vol >= 0 and event_variance >= 0):
        raise VolbenchError(f"vol and event variance must be >= 0, got {ordinary_vol!r} and {event_variance!r}")
    per_bar = event_aware_variance(ordinary_vol**2 / a, event_variance, int(m), int(days))
    return float(math.sqrt(per_bar * a))


def events_in_life(calendar: EventCalendar, as_of, days: int) -> int:
    """How many of ``calendar``'s events move a bar in the ``days`` bars after ``as_of``.

    Bars after the as-of date are counted as weekdays (no exchange holidays): an event moves the
    k-th weekday after ``as_of`` where k counts weekdays in (as_of, e], e the event's bar day (the
    event day rolled to a weekday for before_open/during, the next weekday after it for
    after_close). It is in the life when 1 <= k <= ``days``.
    """
    if isinstance(days, bool) or int(days) != days or days < 1:
        raise VolbenchError(f"days must be a whole number of bars >= 1, got {days!r}")
    if not len(calendar):
        return 0
    start = np.datetime64(pd.Timestamp(as_of).date(), "D")
    d = calendar.dates
    after = np.array([t == "after_close" for t in calendar.timings])
    bar_day = np.busday_offset(np.where(after, d + np.timedelta64(1, "D"), d), 0, roll="forward")
    k = np.busday_count(start + np.timedelta64(1, "D"), bar_day + np.timedelta64(1, "D"))
    return int(np.count_nonzero((k >= 1) & (k <= int(days))))


@dataclass(frozen=True)
class EventGarch:
    """A GARCH fit on ex-event returns, with the events of an option's life added back.

    ``ex_event_vol`` is the fit's forward vol over ``days`` bars (ordinary days only);
    ``event_aware_vol`` adds ``m`` event variances to it as :func:`event_aware_vol` does.
    """

    model: str
    label: str
    days: int
    ex_event_vol: float
    event_aware_vol: float | None
    nobs: int
    fallback: str | None
    warnings: tuple[str, ...]
    lag_treatment: str = ("event-day returns removed and the series spliced: the return after an event "
                          "day follows the return before it in the variance recursion, so an event's move "
                          "does not raise the next day's conditional variance")

    def as_dict(self) -> dict:
        return {"model": self.model, "label": self.label, "days": self.days, "ex_event_vol": self.ex_event_vol,
                "event_aware_vol": self.event_aware_vol, "nobs": self.nobs, "fallback": self.fallback,
                "warnings": list(self.warnings), "lag_treatment": self.lag_treatment}


@dataclass(frozen=True, eq=False)
class EventReport:
    """Everything events change for one series at one as-of date.

    Attributes
    ----------
    name, as_of, window, annualization, confidence
        Series, last date used, estimator window (``None``: whole history), bars a year, level.
    count
        Event bars in the history up to ``as_of``.
    ex_event
        Estimator key -> estimate over the ordinary bars (window counted in ordinary bars).
    unavailable
        Estimator key -> why its ex-event estimate is missing.
    ordinary
        Whole-history ex-event close-to-close estimate, the ordinary variance of the event move.
    event_move
        :class:`EventMove`, ``None`` when no event falls in the history.
    days, events_in_life, event_aware_vol
        Option life in bars, events in it, and the event-aware vol on the ex-event
        close-to-close vol at ``window`` (``None`` when no life was given or no move is known).
    garch
        :class:`EventGarch` when asked for.
    event_map
        Where each event fell.
    warnings, findings
        Plain warnings on the result; findings of the events file and of placing events.
    """

    name: str
    as_of: str
    window: int | None
    annualization: float
    confidence: float
    count: int
    ex_event: dict[str, Estimate]
    unavailable: dict[str, str]
    ordinary: Estimate | None
    event_move: EventMove | None
    event_map: EventMap
    days: int | None = None
    events_in_life: int | None = None
    event_aware_vol: float | None = None
    garch: EventGarch | None = None
    warnings: tuple[str, ...] = ()
    findings: tuple[Finding, ...] = field(default=())

    @property
    def candidate_label(self) -> str:
        """The comparison row's label: "ex-event + m events"."""
        m = self.events_in_life or 0
        return f"ex-event + {m} event{'s' if m != 1 else ''}"

    def candidates(self, days: int):
        """The event-aware vols as comparison candidates (:class:`volbench.candidates.CandidateSource`).

        ``"events"``: the ex-event close-to-close vol at ``window`` plus ``events_in_life`` event
        variances over ``days`` bars (:func:`event_aware_vol`); ``"events:garch"``: the same added to
        the GARCH forward vol of the ex-event returns, when that fit was asked for.
        """
        from volbench.candidates import Candidate, CandidateSet
        from volbench.format import pct, sig

        if self.days is not None and int(days) != self.days:
            return CandidateSet.missing("events", f"the event study was made for {self.days} bars, not {days}")
        items, missing = [], {}
        m = self.events_in_life
        move = self.event_move
        if self.event_aware_vol is None:
            why = (self.warnings[-1] if self.warnings else "no event move or ex-event vol")
            missing["events"] = why
        else:
            base = self.ex_event[EVENT_AWARE_BASIS]
            note = (f"ex-event close-to-close {pct(base.vol)} over {base.n} ordinary returns, plus {m} event "
                    f"variance{'s' if m != 1 else ''} of {sig(move.variance, 3)} each (from {move.n_events} events) "
                    f"over {days} bars")
            if move.n_events < MIN_EVENTS:
                note += f"; fewer than {MIN_EVENTS} events: rough"
            items.append(Candidate("events", "events", self.candidate_label, self.event_aware_vol,
                                   window=self.window, note=note, headline=True))
        g = self.garch
        if g is not None and g.event_aware_vol is not None and g.event_aware_vol > 0:
            items.append(Candidate("events", "events:garch", f"{g.label} ex-event + {m} event{'s' if m != 1 else ''}",
                                   g.event_aware_vol, window=g.days,
                                   note=f"{g.label} fitted on {g.nobs} ex-event returns, forward vol "
                                        f"{pct(g.ex_event_vol)} over {g.days} bars, plus {m} event variance{'s' if m != 1 else ''}",
                                   fallback=g.fallback))
        return CandidateSet("events", tuple(items), missing, title="event-aware vol", what="vol")

    def as_dict(self) -> dict:
        """The JSON shape ``"events"`` of a series."""
        return {
            "count": self.count,
            "ex_event": {k: e.as_dict() for k, e in self.ex_event.items()},
            "event_move": None if self.event_move is None else self.event_move.as_dict(),
            "events_in_life": self.events_in_life,
            "event_aware": None if self.event_aware_vol is None else {
                "basis": EVENT_AWARE_BASIS, "window": self.window, "days": self.days, "vol": self.event_aware_vol},
            "garch": None if self.garch is None else self.garch.as_dict(),
            "window": "all" if self.window is None else self.window,
            "as_of": self.as_of,
            "unavailable": dict(self.unavailable),
            "warnings": list(self.warnings),
            "findings": [f.as_dict() for f in self.findings],
        }


def event_study(
    history: PriceHistory,
    calendar: EventCalendar,
    *,
    window: int | str | None = None,
    days: int | None = None,
    as_of=None,
    annualization: float = DEFAULT_ANNUALIZATION,
    confidence: float = 0.95,
    garch: str | None = None,
    garch_dist: str = "normal",
) -> EventReport:
    """Ex-event estimates, the event move and the event-aware vol of one series.

    Parameters
    ----------
    history
        Price history (rows already selected for the quality policy).
    calendar
        The instrument's events, past and future.
    window
        Estimator window in ordinary bars ending at ``as_of``; ``None``/``"all"`` for every bar.
    days
        Option life in bars; gives ``events_in_life`` and the event-aware vol.
    as_of
        Last date used (default: the last bar). Events after it count as future events.
    annualization, confidence
        Bars a year; interval level.
    garch
        A GARCH-family model key (``"garch"``, ``"gjr"``, ``"egarch"``) to fit on the ex-event
        returns; ``None`` for none. ``days`` is then required.
    garch_dist
        Its innovation distribution.

    Raises
    ------
    VolbenchError
        Bad window, life, annualization, confidence, as-of date or GARCH settings.

    Notes
    -----
    Event bars are left out of every estimator (close-to-close and EWMA lose the event-day
    return, the range estimators lose the whole event bar) and the other bars are spliced
    (:func:`volbench.events.mapping.ex_event_history`). The event move uses every event in the
    history up to ``as_of`` and the whole-history ex-event close-to-close variance.
    """
    a = check_annualization(annualization)
    w = check_window(window, minimum=1)
    if days is not None and (isinstance(days, bool) or int(days) != days or days < 1):
        raise VolbenchError(f"days must be a whole number of bars >= 1, got {days!r}")
    if garch is not None and days is None:
        raise VolbenchError("a GARCH fit on ex-event returns needs the option's life in bars (days)")
    h = history.up_to(as_of)
    emap = map_events(h, calendar)
    ex = ex_event_history(h, emap.bars)
    warnings: list[str] = []
    est: dict[str, Estimate] = {}
    unavailable: dict[str, str] = {}
    for key in REGISTRY:
        try:
            est[key] = point_estimate(ex, key, w, annualization=a, confidence=confidence)
        except EstimatorUnavailable as exc:
            unavailable[key] = exc.reason
    try:
        ordinary = point_estimate(ex, "close_to_close", None, annualization=a, confidence=confidence)
    except EstimatorUnavailable as exc:
        ordinary = None
        warnings.append(f"no ordinary close-to-close variance ({exc.reason}), so no event move")
    move = None
    if emap.count == 0:
        warnings.append(f"no event falls between {h.first_date} and {h.last_date}: no event move can be estimated")
    elif ordinary is not None:
        r = np.diff(np.log(h.close))[emap.bars - 1]
        move = event_move(r, ordinary.vol**2 / a, confidence=confidence)
        if move.n_events < MIN_EVENTS:
            warnings.append(f"the event move rests on {move.n_events} event{'s' if move.n_events != 1 else ''}, "
                            f"fewer than {MIN_EVENTS}: treat it as a rough guide")
        if move.raw_variance <= 0:
            warnings.append("event days moved no more than ordinary days: no event move is detected (set to 0)")
    m = None if days is None else events_in_life(calendar, h.dates[-1], int(days))
    aware = None
    if m is not None and move is not None and EVENT_AWARE_BASIS in est:
        aware = event_aware_vol(est[EVENT_AWARE_BASIS].vol, move.variance, m, int(days), a)
    elif m:
        warnings.append(f"{m} event{'s' if m != 1 else ''} in the option's life but no event move or ex-event "
                        "vol to price them with")
    eg = None
    if garch is not None:
        eg = _event_garch(ex, garch, garch_dist, int(days), a, move, m)
    return EventReport(
        name=h.name, as_of=h.last_date, window=w, annualization=a, confidence=confidence, count=emap.count,
        ex_event=est, unavailable=unavailable, ordinary=ordinary, event_move=move, event_map=emap,
        days=None if days is None else int(days), events_in_life=m, event_aware_vol=aware, garch=eg,
        warnings=tuple(warnings), findings=tuple(calendar.findings) + emap.findings,
    )


def _event_garch(ex: PriceHistory, model: str, dist: str, days: int, a: float, move: EventMove | None,
                 m: int | None) -> EventGarch:
    from volbench.models import fit_garch  # GARCH only when asked (arch's import is not free)
    from volbench.settings import GarchSettings

    fit = fit_garch(ex, model, GarchSettings(models=(model,), dist=dist, horizons=(days,)), annualization=a)
    vol = fit.forward_vol(days)
    aware = None if move is None or m is None else event_aware_vol(vol, move.variance, m, days, a)
    return EventGarch(fit.model, fit.label, days, vol, aware, fit.nobs, fit.fallback, fit.warnings)
