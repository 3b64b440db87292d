"""GARCH forward vols of the ex-event returns at several option lives, each with its events added back.

:func:`volbench.events.event_study` fits one model for one option life; ``volbench garch
--events FILE`` wants the whole term structure, so :func:`event_garch_term` fits each model once
on the ex-event history and reads every horizon from that fit.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from volbench.data.history import PriceHistory
from volbench.errors import VolbenchError
from volbench.estimators import point_estimate
from volbench.events.calendar import EventCalendar
from volbench.events.mapping import ex_event_history, map_events
from volbench.events.study import EventGarch, EventMove, event_aware_vol, event_move, events_in_life
from volbench.types import DEFAULT_ANNUALIZATION


@dataclass(frozen=True)
class EventGarchTerm:
    """One model fitted on the ex-event returns, at every horizon (``rows``: one :class:`EventGarch`
    per horizon, the events of each life added back with the event move ``move``)."""

    name: str
    model: str
    rows: tuple[EventGarch, ...]
    events_in_life: tuple[int, ...]
    move: EventMove | None

    def as_dict(self) -> dict:
        return {"model": self.model,
                "term": [{**g.as_dict(), "events_in_life": m} for g, m in zip(self.rows, self.events_in_life)],
                "event_move": None if self.move is None else self.move.as_dict()}


def event_garch_term(history: PriceHistory, calendar: EventCalendar, models: Sequence[str],
                     horizons: Sequence[int], *, settings=None,
                     annualization: float = DEFAULT_ANNUALIZATION) -> tuple[EventGarchTerm, ...]:
    """Each of ``models`` fitted once on the ex-event returns; forward vols at every horizon.

    Notes
    -----
    Event-day returns are removed and the series spliced (:func:`ex_event_history`); the event
    move is the event-day mean square less the whole-history ex-event close-to-close variance
    (:func:`volbench.events.event_move`); each horizon's event-aware vol adds the events of that
    life (:func:`events_in_life`) as :func:`event_aware_vol` does (docs/METHODS.md, "Events and
    hindsight").
    """
    import numpy as np

    from volbench.models import fit_garch
    from volbench.settings import GarchSettings

    if not horizons:
        raise VolbenchError("give at least one horizon in bars for the ex-event GARCH forward vols")
    emap = map_events(history, calendar)
    ex = ex_event_history(history, emap.bars)
    move = None
    if emap.count:
        ordinary = point_estimate(ex, "close_to_close", None, annualization=annualization).vol ** 2 / annualization
        move = event_move(np.diff(np.log(history.close))[emap.bars - 1], ordinary)
    lives = tuple(events_in_life(calendar, history.dates[-1], int(h)) for h in horizons)
    out = []
    for model in models:
        gs = settings.with_changes(models=(model,), horizons=tuple(horizons)) if settings is not None else \
            GarchSettings(models=(model,), horizons=tuple(horizons))
        fit = fit_garch(ex, model, gs, annualization=annualization)
        rows = []
        for h, m in zip(horizons, lives):
            vol = fit.forward_vol(int(h))
            aware = None if move is None else event_aware_vol(vol, move.variance, m, int(h), annualization)
            rows.append(EventGarch(fit.model, fit.label, int(h), vol, aware, fit.nobs, fit.fallback, fit.warnings))
        out.append(EventGarchTerm(history.name, model, tuple(rows), lives, move))
    return tuple(out)
